// Fuzz target: the TOML session loader (devices/session.cpp) and its normalised writer: a session that loads
// must print back (hetbench check) as a session that loads to the same Setup.
#include "devices/session.hpp"
#include "dsp/errors.hpp"
#include "fuzz/fuzz_support.hpp"

extern "C" int LLVMFuzzerTestOneInput(const std::uint8_t* data, std::size_t size) {
    try {
        const hb::Setup s = hb::parse_session(hb::fuzz::as_text(data, size), "/nonexistent/fuzz.toml");
        const std::string back = hb::session_to_toml(s);
        const hb::Setup again = hb::parse_session(back, "/nonexistent/fuzz.toml");
        if (!(again == s)) __builtin_trap();  // the round trip the loader promises
    } catch (const hb::InputError&) {
    }
    return 0;
}
