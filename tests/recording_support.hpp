// Helpers for the recording tests (sigmf_test, wav_test, raw_test, recorder_test): validating SigMF
// metadata against the published schema, the datatype grammar written out independently of the code,
// and reading a whole recording.
#pragma once

#include <gtest/gtest.h>
#include <unistd.h>

#include <functional>
#include <optional>
#include <regex>
#include <string>
#include <vector>

#include "devices/recording.hpp"
#include "dsp/errors.hpp"
#include "support/test_support.hpp"

namespace hb::test {

// The SigMF v1.2.5 datatype ABNF  (r/c)((f32/f64/i32/i16/u32/u16)(_le/_be) / i8 / u8)  as a regex,
// written from the spec text (reference-values §9 S4), not from devices/sample_format.cpp.
inline bool matches_datatype_abnf(const std::string& s) {
    static const std::regex re("^[rc]((f32|f64|i32|i16|u32|u16)_(le|be)|i8|u8)$");
    return std::regex_match(s, re);
}

// /usr/bin/python3 with jsonschema, or nothing.
inline std::optional<std::string> python_with_jsonschema() {
    if (::access("/usr/bin/python3", X_OK) != 0) return std::nullopt;
    if (run({"/usr/bin/python3", "-c", "import jsonschema"}).exit_code != 0) return std::nullopt;
    return std::string("/usr/bin/python3");
}

// The published SigMF schema (../shared/standards/sigmf-schema.json), or nothing where ../shared is absent.
inline std::optional<std::filesystem::path> sigmf_schema() {
    const auto shared = shared_dir();
    if (!shared) return std::nullopt;
    const auto p = *shared / "standards" / "sigmf-schema.json";
    if (!std::filesystem::exists(p)) return std::nullopt;
    return p;
}

// Validates a metadata file with python3-jsonschema (Draft 2020-12, as the schema declares).
// Returns the validator's message on failure, "" when valid.
inline std::string schema_errors(const std::string& python, const std::filesystem::path& schema,
                                 const std::filesystem::path& meta) {
    const char* code =
        "import json, sys, jsonschema\n"
        "schema = json.load(open(sys.argv[1]))\n"
        "doc = json.load(open(sys.argv[2]))\n"
        "errs = sorted(jsonschema.Draft202012Validator(schema).iter_errors(doc), key=str)\n"
        "print('\\n'.join(e.message + ' at ' + '/'.join(map(str, e.path)) for e in errs))\n"
        "sys.exit(1 if errs else 0)\n";
    const auto r = run({python, "-c", code, schema.string(), meta.string()});
    if (r.exit_code == 0) return "";
    return r.out + r.err + (r.out.empty() && r.err.empty() ? "validator failed" : "");
}

// Skips the calling test (with a message) unless the schema and jsonschema are both there.
#define HB_REQUIRE_SCHEMA(python, schema)                                                                  \
    const auto python = ::hb::test::python_with_jsonschema();                                                \
    const auto schema = ::hb::test::sigmf_schema();                                                          \
    if (!schema) GTEST_SKIP() << "../shared/standards/sigmf-schema.json is absent: schema check skipped";  \
    if (!python) GTEST_SKIP() << "python3-jsonschema is not installed: schema check skipped"

// Reads a whole source (up to `limit` samples) with the given block size; also returns the centre
// frequency reported after each block.
struct ReadAll {
    std::vector<cf32> samples;
    std::vector<std::pair<std::size_t, double>> blocks;  // (count, info().center_hz after the read)
    ReadStatus last = ReadStatus::ok;
};
inline ReadAll read_all(SampleSource& s, std::size_t block = 4096, std::size_t limit = SIZE_MAX) {
    ReadAll out;
    std::vector<cf32> buf(block);
    while (out.samples.size() < limit) {
        const auto r = s.read(std::span<cf32>(buf.data(), std::min(block, limit - out.samples.size())), 1.0);
        out.last = r.status;
        if (r.status == ReadStatus::end || r.status == ReadStatus::error) break;
        out.samples.insert(out.samples.end(), buf.begin(), buf.begin() + static_cast<std::ptrdiff_t>(r.count));
        out.blocks.emplace_back(r.count, s.info().center_hz);
    }
    return out;
}

inline std::string error_of(const std::function<void()>& f) {
    try {
        f();
    } catch (const InputError& e) {
        return e.what();
    }
    return "(no InputError thrown)";
}

}  // namespace hb::test
