// Fuzz target: the SigMF metadata parser (devices/recording_sigmf.cpp), and the hetbench:setup it may carry
// (devices/setup_json.cpp), as hetbench reads a recording made by someone else.
#include "devices/recording.hpp"
#include "devices/setup_json.hpp"
#include "dsp/errors.hpp"
#include "fuzz/fuzz_support.hpp"

extern "C" int LLVMFuzzerTestOneInput(const std::uint8_t* data, std::size_t size) {
    const std::string text(hb::fuzz::as_text(data, size));
    try {
        const hb::SigmfMeta m = hb::parse_sigmf_meta(text, "fuzz.sigmf-meta");
        // What a successful parse promises the reader: sorted captures, at least one.
        if (m.captures.empty()) __builtin_trap();
        for (std::size_t i = 1; i < m.captures.size(); ++i)
            if (m.captures[i].sample_start <= m.captures[i - 1].sample_start) __builtin_trap();
        if (!(m.sample_rate_hz >= 1.0 && m.sample_rate_hz <= hb::kMaxFrequencyHz)) __builtin_trap();
        if (m.setup) (void)hb::setup_from_json(*m.setup, "fuzz.sigmf-meta");
        // Writing it back must give metadata that parses again.
        (void)hb::parse_sigmf_meta(hb::sigmf_meta_to_json(m).dump(), "again.sigmf-meta");
    } catch (const hb::InputError&) {
    }
    return 0;
}
