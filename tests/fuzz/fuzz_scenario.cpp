// Fuzz target: the generator's scenario loader (devices/scenario_file.cpp).
#include "devices/scenario_file.hpp"
#include "dsp/errors.hpp"
#include "fuzz/fuzz_support.hpp"

extern "C" int LLVMFuzzerTestOneInput(const std::uint8_t* data, std::size_t size) {
    try {
        const hb::Scenario sc = hb::parse_scenario(hb::fuzz::as_text(data, size), "fuzz-scenario.toml");
        if (!hb::validate_scenario(sc).empty()) __builtin_trap();  // a loaded scenario is a valid one
    } catch (const hb::InputError&) {
    }
    return 0;
}
