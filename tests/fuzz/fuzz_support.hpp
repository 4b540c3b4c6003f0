// Shared by the fuzz targets: the entry point libFuzzer calls, and what counts as a finding.
//
// A parser may refuse any input, but only with hb::InputError (a message naming the file and the problem).
// Anything else it throws escapes the target and is a finding, as are crashes, sanitizer reports, hangs
// (libFuzzer's -timeout) and runaway memory (-rss_limit_mb).
#pragma once

#include <cstddef>
#include <cstdint>
#include <string_view>

extern "C" int LLVMFuzzerTestOneInput(const std::uint8_t* data, std::size_t size);

namespace hb::fuzz {

inline std::string_view as_text(const std::uint8_t* data, std::size_t size) {
    return {reinterpret_cast<const char*>(data), size};
}

}  // namespace hb::fuzz
