// Fuzz target: the Touchstone v1 parser (dsp/touchstone.cpp) and the S21 interpolation built on it.
#include <cmath>

#include "dsp/errors.hpp"
#include "dsp/touchstone.hpp"
#include "fuzz/fuzz_support.hpp"

extern "C" int LLVMFuzzerTestOneInput(const std::uint8_t* data, std::size_t size) {
    try {
        const hb::TouchstoneData d = hb::parse_touchstone(hb::fuzz::as_text(data, size), "fuzz.s2p");
        if (d.freq_hz.size() < 2 || d.s.size() != d.freq_hz.size()) __builtin_trap();
        for (std::size_t i = 1; i < d.freq_hz.size(); ++i)
            if (!(d.freq_hz[i] > d.freq_hz[i - 1])) __builtin_trap();  // parsed frequencies strictly increase
        const hb::S21Table t = hb::s21_table(d);
        const double lo = d.freq_hz.front(), hi = d.freq_hz.back();
        for (double f : {lo - 1.0, lo, 0.5 * (lo + hi), hi, hi + 1.0}) {
            (void)t.at(f);
            (void)t.group_delay_s(f);
        }
        (void)t.peak_gain();
    } catch (const hb::InputError&) {
    }
    return 0;
}
