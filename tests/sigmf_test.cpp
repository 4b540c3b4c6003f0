// SigMF recordings: the datatype grammar, decoding every datatype against numpy, the reader's refusals
// (reference-values §9), captures/annotations/truncation, and the writer against the published schema.
#include <gtest/gtest.h>

#include <cmath>
#include <fstream>
#include <random>
#include <regex>

#include "devices/recording.hpp"
#include "devices/session.hpp"
#include "devices/setup_json.hpp"
#include "recording_support.hpp"

namespace hb {
namespace {

using test::error_of;
using test::read_all;
using test::TempDir;
using test::write_file;

// Source: SigMF v1.2.5 specification, "Dataset format" ABNF (reference-values §9 S4).
TEST(SigmfDatatype, GrammarAcceptsEveryProductionAndNothingElse) {
    // Every string the grammar produces: 2 x (6 bodies x 2 endians + 2 byte types) = 28.
    std::vector<std::string> all;
    for (const char* rc : {"r", "c"}) {
        for (const char* body : {"f32", "f64", "i32", "i16", "u32", "u16"})
            for (const char* e : {"_le", "_be"}) all.push_back(std::string(rc) + body + e);
        all.push_back(std::string(rc) + "i8");
        all.push_back(std::string(rc) + "u8");
    }
    ASSERT_EQ(all.size(), 28u);
    for (const auto& s : all) {
        ASSERT_TRUE(test::matches_datatype_abnf(s)) << s;
        const auto f = parse_datatype(s);
        ASSERT_TRUE(f) << s;
        EXPECT_EQ(datatype_name(*f), s);
    }
    // The examples of S4: accepted.
    for (const char* s : {"cf32_le", "ci16_le", "cu8", "ri8", "cf64_be"}) EXPECT_TRUE(parse_datatype(s)) << s;
    // S4's rejects (the schema's looser regex accepts some of these) and more near misses.
    for (const char* s : {"cf32", "cu8_le", "cf16_le", "CF32_LE", "", "c", "cf32_le_x", "ci16_le ", " cf32_le", "xf32_le",
                          "ci8_le", "ci64_le", "cf32_LE", "cf32-le", "cf32le", "rc16_le", "cu8_be"}) {
        EXPECT_FALSE(test::matches_datatype_abnf(s)) << s;
        EXPECT_FALSE(parse_datatype(s)) << "accepted \"" << s << "\"";
    }
    EXPECT_EQ(parse_datatype("cf32_le")->sample_bytes(), 8u);  // width is per component (S4)
    EXPECT_EQ(parse_datatype("ci16_be")->sample_bytes(), 4u);
    EXPECT_EQ(parse_datatype("ru8")->sample_bytes(), 1u);
    EXPECT_EQ(parse_datatype("rf64_le")->sample_bytes(), 8u);
    const std::string msg = error_of([] { require_datatype("cf16_le", "x.sigmf-meta: global.core:datatype"); });
    EXPECT_NE(msg.find("x.sigmf-meta"), std::string::npos) << msg;
    EXPECT_NE(msg.find("cf16_le"), std::string::npos) << msg;
}

// Every datatype written by numpy (its own dtypes for each width and byte order) and the expected complex
// values computed by numpy with the scaling hetbench documents (signed / 2^(b-1); unsigned offset by
// 2^(b-1) first, e.g. 128 = zero for u8, reference-values §10 V4).
TEST(SigmfRead, EveryDatatypeDecodesAsNumpySays) {
    const auto py = test::python_with_scipy();
    if (!py) GTEST_SKIP() << "/usr/bin/python3 with numpy is not available";
    TempDir dir;
    const char* code = R"PY(
import json, os, sys
import numpy as np
d = sys.argv[1]
rng = np.random.default_rng(5)
n = 257
types = {}
for p in ('c', 'r'):
    for body, base, half in (('f32', 'f4', None), ('f64', 'f8', None), ('i32', 'i4', 2**31), ('i16', 'i2', 2**15),
                             ('u32', 'u4', 2**31), ('u16', 'u2', 2**15)):
        types[p + body + '_le'] = ('<' + base, half)
        types[p + body + '_be'] = ('>' + base, half)
    types[p + 'i8'] = ('i1', 2**7)
    types[p + 'u8'] = ('u1', 2**7)
for name, (dt, half) in types.items():
    comp = 2 if name[0] == 'c' else 1
    if half is None:
        raw = rng.uniform(-1.5, 1.5, n * comp).astype(dt)
    else:
        info = np.iinfo(np.dtype(dt))
        raw = rng.integers(info.min, info.max, n * comp, endpoint=True, dtype=np.int64).astype(dt)
        raw[0], raw[1] = info.min, info.max
    raw.tofile(os.path.join(d, name + '.sigmf-data'))
    v = raw.astype(np.float64)
    if half is not None:
        v = (v - half) / half if np.dtype(dt).kind == 'u' else v / half
    z = v[0::2] + 1j * v[1::2] if comp == 2 else v + 0j
    z.astype('<c16').tofile(os.path.join(d, name + '.expected'))
    json.dump({'global': {'core:datatype': name, 'core:version': '1.2.5', 'core:sample_rate': 48000},
               'captures': [{'core:sample_start': 0, 'core:frequency': 1e6}], 'annotations': []},
              open(os.path.join(d, name + '.sigmf-meta'), 'w'))
print(len(types))
)PY";
    const auto r = test::run({*py, "-c", code, dir.path.string()});
    ASSERT_EQ(r.exit_code, 0) << r.err;
    ASSERT_EQ(std::stoi(r.out), 28);
    int checked = 0;
    for (const auto& e : std::filesystem::directory_iterator(dir.path)) {
        if (e.path().extension() != ".sigmf-meta") continue;
        const std::string name = e.path().stem().string();
        SourceSpec spec;
        spec.kind = SourceKind::recording;
        spec.path = e.path().string();
        auto src = open_recording(spec, hb::Setup{});
        EXPECT_EQ(src->info().sample_rate_hz, 48000.0);
        EXPECT_EQ(src->info().center_hz, 1e6);
        const auto got = read_all(*src, 100);
        const std::string expected_bytes = test::read_file(dir.file(name + ".expected"));
        const std::size_t n = expected_bytes.size() / 16;
        ASSERT_EQ(got.samples.size(), n) << name;
        for (std::size_t i = 0; i < n; ++i) {
            double re, im;
            std::memcpy(&re, expected_bytes.data() + 16 * i, 8);
            std::memcpy(&im, expected_bytes.data() + 16 * i + 8, 8);
            // float32 carries 24 bits: 1e-6 is well above its rounding at |x| <= 1.5.
            ASSERT_NEAR(got.samples[i].real(), re, 1e-6) << name << " sample " << i;
            ASSERT_NEAR(got.samples[i].imag(), im, 1e-6) << name << " sample " << i;
        }
        ++checked;
    }
    EXPECT_EQ(checked, 28);
}

// A small valid recording: n cf32 samples whose real part is the sample index.
struct Rec {
    std::filesystem::path meta, data;
};
Rec make_recording(const TempDir& d, const std::string& name, const std::string& meta_text, std::size_t n) {
    Rec r{d.file(name + ".sigmf-meta"), d.file(name + ".sigmf-data")};
    write_file(r.meta, meta_text);
    std::string bytes(n * 8, '\0');
    for (std::size_t i = 0; i < n; ++i) {
        const float iq[2] = {static_cast<float>(i), -0.5f};
        std::memcpy(bytes.data() + 8 * i, iq, 8);
    }
    write_file(r.data, bytes);
    return r;
}

std::unique_ptr<SampleSource> open_path(const std::filesystem::path& p, SourceSpec spec = {}) {
    spec.kind = SourceKind::recording;
    spec.path = p.string();
    return open_recording(spec, hb::Setup{});
}

const char* kGood = R"({"global": {"core:datatype": "cf32_le", "core:version": "1.2.5", "core:sample_rate": 1e6},
 "captures": [{"core:sample_start": 0, "core:frequency": 100e6}], "annotations": []})";

TEST(SigmfRead, EitherFileOfThePairOpensIt) {
    TempDir d;
    const Rec r = make_recording(d, "pair", kGood, 100);
    for (const auto& p : {r.meta, r.data}) {
        auto s = open_path(p);
        EXPECT_EQ(s->info().total_samples, 100u);
        EXPECT_EQ(s->info().center_hz, 100e6);
        EXPECT_EQ(s->info().sample_rate_hz, 1e6);
        EXPECT_FALSE(s->info().live);
        const auto* det = recording_details(*s);
        ASSERT_NE(det, nullptr);
        EXPECT_EQ(det->kind, "SigMF");
        EXPECT_EQ(det->datatype, "cf32_le");
    }
}

// Each negative case: the reader refuses with an InputError naming the file and the problem.
// S3 (reference-values §9): missing annotations, "v1.2.5", sample_rate 0, an extra top-level key;
// S4: cf32, cu8_le, cf16_le, CF32_LE; and what hetbench itself requires (sample_rate present and sane,
// captures ascending, datasets inside the recording's folder, one channel).
TEST(SigmfRead, RefusesEachNegativeCaseWithAClearMessage) {
    TempDir d;
    struct Case {
        const char* what;
        std::string meta;
        const char* expect;  // must appear in the message
    };
    auto g = [](const std::string& global_extra, const std::string& rest = R"("captures": [{"core:sample_start": 0}], "annotations": [])") {
        return R"({"global": {"core:version": "1.2.5")" + global_extra + "}, " + rest + "}";
    };
    const std::string dt = R"(, "core:datatype": "cf32_le")";
    const std::string sr = R"(, "core:sample_rate": 1e6)";
    const std::vector<Case> cases = {
        {"missing annotations", R"({"global": {"core:datatype": "cf32_le", "core:version": "1.2.5", "core:sample_rate": 1e6}, "captures": []})", "annotations"},
        {"missing captures", R"({"global": {"core:datatype": "cf32_le", "core:version": "1.2.5", "core:sample_rate": 1e6}, "annotations": []})", "captures"},
        {"missing global", R"({"captures": [], "annotations": []})", "global"},
        {"extra top-level key", R"({"global": {"core:datatype": "cf32_le", "core:version": "1.2.5", "core:sample_rate": 1e6}, "captures": [], "annotations": [], "extra": 1})", "extra"},
        {"version with a v", R"({"global": {"core:datatype": "cf32_le", "core:version": "v1.2.5", "core:sample_rate": 1e6}, "captures": [], "annotations": []})", "core:version"},
        {"version 2", R"({"global": {"core:datatype": "cf32_le", "core:version": "2.0.0", "core:sample_rate": 1e6}, "captures": [], "annotations": []})", "core:version"},
        {"missing version", R"({"global": {"core:datatype": "cf32_le", "core:sample_rate": 1e6}, "captures": [], "annotations": []})", "core:version"},
        {"sample rate 0", g(dt + R"(, "core:sample_rate": 0)"), "core:sample_rate"},
        {"sample rate missing", g(dt), "core:sample_rate"},
        {"sample rate negative", g(dt + R"(, "core:sample_rate": -2.4e6)"), "core:sample_rate"},
        {"sample rate absurd", g(dt + R"(, "core:sample_rate": 1e15)"), "core:sample_rate"},
        {"sample rate as text", g(dt + R"(, "core:sample_rate": "NaN")"), "core:sample_rate"},
        {"NaN literal (not JSON)", g(dt + R"(, "core:sample_rate": NaN)"), "not valid JSON"},
        {"datatype cf32", g(R"(, "core:datatype": "cf32")" + sr), "core:datatype"},
        {"datatype cu8_le", g(R"(, "core:datatype": "cu8_le")" + sr), "core:datatype"},
        {"datatype cf16_le", g(R"(, "core:datatype": "cf16_le")" + sr), "core:datatype"},
        {"datatype CF32_LE", g(R"(, "core:datatype": "CF32_LE")" + sr), "core:datatype"},
        {"datatype missing", g(sr), "core:datatype"},
        {"datatype a number", g(R"(, "core:datatype": 32)" + sr), "core:datatype"},
        {"captures out of order", g(dt + sr, R"("captures": [{"core:sample_start": 0}, {"core:sample_start": 50}, {"core:sample_start": 20}], "annotations": [])"), "ascending"},
        {"captures repeated start", g(dt + sr, R"("captures": [{"core:sample_start": 0}, {"core:sample_start": 0}], "annotations": [])"), "ascending"},
        {"capture without sample_start", g(dt + sr, R"("captures": [{"core:frequency": 1e6}], "annotations": [])"), "core:sample_start"},
        {"capture negative start", g(dt + sr, R"("captures": [{"core:sample_start": -1}], "annotations": [])"), "core:sample_start"},
        {"capture fractional start", g(dt + sr, R"("captures": [{"core:sample_start": 1.5}], "annotations": [])"), "core:sample_start"},
        {"frequency as text", g(dt + sr, R"("captures": [{"core:sample_start": 0, "core:frequency": "100M"}], "annotations": [])"), "core:frequency"},
        {"annotation without start", g(dt + sr, R"("captures": [], "annotations": [{"core:label": "x"}])"), "annotations[0]"},
        {"captures not an array", g(dt + sr, R"("captures": {}, "annotations": [])"), "captures"},
        {"dataset leaves the folder", g(dt + sr + R"(, "core:dataset": "../other.sigmf-data")"), "core:dataset"},
        {"dataset absolute", g(dt + sr + R"(, "core:dataset": "/etc/hostname")"), "core:dataset"},
        {"dataset in a subfolder", g(dt + sr + R"(, "core:dataset": "sub/x.bin")"), "core:dataset"},
        {"two channels", g(dt + sr + R"(, "core:num_channels": 2)"), "core:num_channels"},
        {"unknown required extension", g(dt + sr + R"(, "core:extensions": [{"name": "antenna-steering", "version": "1.0.0", "optional": false}])"), "antenna-steering"},
        {"metadata only", g(dt + sr + R"(, "core:metadata_only": true)"), "metadata_only"},
        {"not an object", "[1, 2, 3]", "JSON object"},
        {"not JSON", "global: cf32", "not valid JSON"},
    };
    for (const Case& c : cases) {
        const Rec r = make_recording(d, "neg", c.meta, 16);
        const std::string msg = error_of([&] { open_path(r.meta); });
        EXPECT_NE(msg.find("neg.sigmf-meta"), std::string::npos) << c.what << ": " << msg;
        EXPECT_NE(msg.find(c.expect), std::string::npos) << c.what << ": " << msg;
    }
}

TEST(SigmfRead, RefusesMissingOrEmptyDataArchivesAndCollections) {
    TempDir d;
    write_file(d.file("lonely.sigmf-meta"), kGood);
    std::string msg = error_of([&] { open_path(d.file("lonely.sigmf-meta")); });
    EXPECT_NE(msg.find("lonely.sigmf-data"), std::string::npos) << msg;
    EXPECT_NE(msg.find("cannot open"), std::string::npos) << msg;

    make_recording(d, "empty", kGood, 0);
    msg = error_of([&] { open_path(d.file("empty.sigmf-meta")); });
    EXPECT_NE(msg.find("holds no"), std::string::npos) << msg;

    msg = error_of([&] { open_path(d.file("rec.sigmf")); });
    EXPECT_NE(msg.find("archives"), std::string::npos) << msg;
    msg = error_of([&] { open_path(d.file("rec.sigmf-collection")); });
    EXPECT_NE(msg.find("collections"), std::string::npos) << msg;

    std::filesystem::create_directory(d.file("dir.sigmf-data"));
    write_file(d.file("dir.sigmf-meta"), kGood);
    msg = error_of([&] { open_path(d.file("dir.sigmf-meta")); });
    EXPECT_NE(msg.find("not a regular file"), std::string::npos) << msg;
}

// Several captures: blocks never span two captures, and info().center_hz follows the capture.
TEST(SigmfRead, CapturesSplitTheStreamAndCarryTheirFrequency) {
    TempDir d;
    const Rec r = make_recording(d, "caps", R"({"global": {"core:datatype": "cf32_le", "core:version": "1.2.5",
      "core:sample_rate": 250000, "core:extensions": [{"name": "hetbench", "version": "1.0.0", "optional": false}]},
      "captures": [{"core:sample_start": 0, "core:frequency": 100e6, "core:datetime": "2024-05-01T10:00:00.000Z"},
                   {"core:sample_start": 1000, "core:frequency": 101e6, "core:global_index": 1500},
                   {"core:sample_start": 2500, "core:frequency": 99.5e6, "core:datetime": "yesterday"}],
      "annotations": [{"core:sample_start": 1000, "core:sample_count": 0, "core:label": "gap",
                       "core:comment": "500 samples lost", "hetbench:lost_samples": 500},
                      {"core:sample_start": 2600, "core:sample_count": 100, "core:freq_lower_edge": 99.4e6,
                       "core:freq_upper_edge": 99.6e6, "core:label": "carrier"}]})",
                                 3000);
    auto s = open_path(r.meta);
    EXPECT_EQ(s->info().center_hz, 100e6);
    EXPECT_EQ(s->info().total_samples, 3000u);
    const auto got = read_all(*s, 700);
    ASSERT_EQ(got.samples.size(), 3000u);
    const std::vector<std::pair<std::size_t, double>> expect = {{700, 100e6}, {300, 100e6}, {700, 101e6},
                                                                {700, 101e6}, {100, 101e6}, {500, 99.5e6}};
    EXPECT_EQ(got.blocks, expect);
    for (std::size_t i = 0; i < 3000; ++i) ASSERT_EQ(got.samples[i].real(), static_cast<float>(i));

    const auto* det = recording_details(*s);
    ASSERT_TRUE(det && det->sigmf);
    const SigmfMeta& m = *det->sigmf;
    ASSERT_EQ(m.captures.size(), 3u);
    EXPECT_EQ(m.captures[1].global_index, 1500u);
    EXPECT_EQ(m.captures[0].datetime, "2024-05-01T10:00:00.000Z");
    ASSERT_EQ(m.annotations.size(), 2u);
    EXPECT_EQ(m.annotations[0].label, "gap");
    EXPECT_EQ(m.annotations[0].lost_samples, 500u);
    EXPECT_EQ(m.annotations[1].sample_count, 100u);
    EXPECT_EQ(m.annotations[1].freq_lower_edge_hz, 99.4e6);
    EXPECT_EQ(m.annotations[1].label, "carrier");
    // "yesterday" is not RFC 3339: tolerated with a warning naming the key.
    ASSERT_EQ(det->warnings.size(), 1u);
    EXPECT_NE(det->warnings[0].find("captures[2].core:datetime"), std::string::npos) << det->warnings[0];

    // Rewinding starts again at capture 0.
    ASSERT_TRUE(s->rewind());
    EXPECT_EQ(s->info().center_hz, 100e6);
    EXPECT_EQ(read_all(*s, 4096).samples.size(), 3000u);
}

TEST(SigmfRead, ShortDataAndOddByteCountsAreTruncatedWithAWarning) {
    TempDir d;
    // The captures promise 5000 samples, the data holds 3000 and 5 stray bytes.
    const Rec r = make_recording(d, "short", R"({"global": {"core:datatype": "cf32_le", "core:version": "1.2.5",
      "core:sample_rate": 1e6}, "captures": [{"core:sample_start": 0, "core:frequency": 1e6},
      {"core:sample_start": 2000, "core:frequency": 2e6}, {"core:sample_start": 5000, "core:frequency": 3e6}],
      "annotations": []})", 3000);
    {
        std::ofstream out(r.data, std::ios::binary | std::ios::app);
        out.write("\x01\x02\x03\x04\x05", 5);
    }
    auto s = open_path(r.data);
    const auto* det = recording_details(*s);
    ASSERT_NE(det, nullptr);
    std::string all;
    for (const auto& w : det->warnings) all += w + "\n";
    EXPECT_NE(all.find("truncated"), std::string::npos) << all;
    EXPECT_EQ(s->info().total_samples, 3000u);
    const auto got = read_all(*s, 4096);
    ASSERT_EQ(got.samples.size(), 3000u);
    EXPECT_EQ(got.samples[2999].real(), 2999.0f);
    EXPECT_EQ(got.blocks.back().second, 2e6);

    // A single capture whose data ends mid-sample (a recording cut off during a write).
    const Rec r2 = make_recording(d, "odd", kGood, 10);
    {
        std::ofstream out(r2.data, std::ios::binary | std::ios::app);
        out.write("\x01\x02\x03", 3);
    }
    auto s2 = open_path(r2.meta);
    ASSERT_EQ(recording_details(*s2)->warnings.size(), 1u);
    EXPECT_NE(recording_details(*s2)->warnings[0].find("3 trailing byte(s)"), std::string::npos);
    EXPECT_EQ(read_all(*s2).samples.size(), 10u);
}

// A non-conforming dataset: named by core:dataset beside the metadata, with a header and a footer.
TEST(SigmfRead, NonConformingDatasetWithHeaderAndTrailingBytes) {
    TempDir d;
    std::string bytes(16, 'H');
    for (int i = 0; i < 20; ++i) {
        const std::int16_t iq[2] = {static_cast<std::int16_t>(i * 100), static_cast<std::int16_t>(-i * 100)};
        bytes.append(reinterpret_cast<const char*>(iq), 4);
    }
    bytes.append(8, 'T');
    write_file(d.file("capture.bin"), bytes);
    write_file(d.file("ncd.sigmf-meta"), R"({"global": {"core:datatype": "ci16_le", "core:version": "1.2.5",
      "core:sample_rate": 8000, "core:dataset": "capture.bin", "core:trailing_bytes": 8},
      "captures": [{"core:sample_start": 0, "core:header_bytes": 16}], "annotations": []})");
    SourceSpec spec;
    spec.frequency_hz = 7.1e6;  // the file has no core:frequency: the source's is used
    auto s = open_path(d.file("ncd.sigmf-meta"), spec);
    EXPECT_EQ(s->info().center_hz, 7.1e6);
    const auto got = read_all(*s);
    ASSERT_EQ(got.samples.size(), 20u);
    for (int i = 0; i < 20; ++i) {
        EXPECT_FLOAT_EQ(got.samples[i].real(), i * 100 / 32768.0f);
        EXPECT_FLOAT_EQ(got.samples[i].imag(), -i * 100 / 32768.0f);
    }
}

TEST(SigmfRead, SessionValuesThatContradictTheFileAreErrors) {
    TempDir d;
    const Rec r = make_recording(d, "c", kGood, 10);
    SourceSpec spec;
    spec.frequency_hz = 99e6;
    std::string msg = error_of([&] { open_path(r.meta, spec); });
    EXPECT_NE(msg.find("100 MHz"), std::string::npos) << msg;
    EXPECT_NE(msg.find("99 MHz"), std::string::npos) << msg;
    spec = {};
    spec.sample_rate_hz = 2e6;
    msg = error_of([&] { open_path(r.meta, spec); });
    EXPECT_NE(msg.find("sample rate"), std::string::npos) << msg;
    spec.sample_rate_hz = 1e6;  // agreeing is fine
    EXPECT_NO_THROW(open_path(r.meta, spec));
    spec.format = "ci16_le";  // a raw file's setting, contradicting the metadata
    msg = error_of([&] { open_path(r.meta, spec); });
    EXPECT_NE(msg.find("cf32_le"), std::string::npos) << msg;
    EXPECT_NE(msg.find("raw files only"), std::string::npos) << msg;
}

// The writer's output: valid against the published schema, the datatype grammar, RFC 3339 times, and it
// reads back to the same metadata (including an embedded setup).
SigmfMeta sample_meta() {
    SigmfMeta m;
    m.format = *parse_datatype("ci16_le");
    m.sample_rate_hz = 2.048e6;
    m.description = "invented bench: 100.1 MHz test carrier";
    m.hw = "bench generator";
    m.captures.push_back({0, 100.1e6, std::nullopt, iso8601_utc(std::chrono::system_clock::now()), 0});
    m.captures.push_back({4096, 100.1e6, 6000, iso8601_utc(std::chrono::system_clock::now()), 0});
    SigmfAnnotation a;
    a.sample_start = 4096;
    a.sample_count = 0;
    a.label = "gap";
    a.comment = "1904 samples lost before this sample";
    a.lost_samples = 1904;
    m.annotations.push_back(a);
    m.setup = setup_to_json(parse_session(R"([plan]
wanted_hz = 100.1e6
if_hz = 10.7e6
if_bandwidth_hz = 200e3
)", "bench.toml"));
    return m;
}

TEST(SigmfWrite, OutputValidatesAgainstThePublishedSchema) {
    HB_REQUIRE_SCHEMA(python, schema);
    TempDir d;
    const auto meta = d.file("w.sigmf-meta");
    write_sigmf_meta(sample_meta(), meta.string());
    EXPECT_EQ(test::schema_errors(*python, *schema, meta), "");
    // The harness itself must be able to fail: S3's invalid documents are rejected by the schema.
    for (const char* bad : {R"({"global":{"core:datatype":"cf32_le","core:version":"1.2.5"},"captures":[{"core:sample_start":0}]})",
                            R"({"global":{"core:datatype":"cf32_le","core:version":"v1.2.5"},"captures":[],"annotations":[]})",
                            R"({"global":{"core:datatype":"cf32_le","core:version":"1.2.5","core:sample_rate":0},"captures":[],"annotations":[]})",
                            R"({"global":{"core:datatype":"cf32_le","core:version":"1.2.5"},"captures":[],"annotations":[],"x":1})"}) {
        write_file(d.file("bad.sigmf-meta"), bad);
        EXPECT_NE(test::schema_errors(*python, *schema, d.file("bad.sigmf-meta")), "") << bad;
    }
    // S3's minimal document is valid.
    write_file(d.file("min.sigmf-meta"),
               R"({"global":{"core:datatype":"cf32_le","core:version":"1.2.5"},"captures":[{"core:sample_start":0}],"annotations":[]})");
    EXPECT_EQ(test::schema_errors(*python, *schema, d.file("min.sigmf-meta")), "");
}

TEST(SigmfWrite, FieldsGrammarAndRoundTrip) {
    TempDir d;
    const SigmfMeta m = sample_meta();
    const auto path = d.file("rt.sigmf-meta");
    write_sigmf_meta(m, path.string());
    EXPECT_FALSE(std::filesystem::exists(path.string() + ".tmp"));
    const auto j = nlohmann::json::parse(test::read_file(path));
    EXPECT_EQ(j["global"]["core:version"], "1.2.5");
    EXPECT_EQ(j["global"]["core:recorder"], "hetbench");
    EXPECT_TRUE(test::matches_datatype_abnf(j["global"]["core:datatype"].get<std::string>()));
    EXPECT_EQ(j["global"]["core:extensions"][0]["name"], "hetbench");
    EXPECT_EQ(j["global"]["core:extensions"][0]["optional"], true);
    // RFC 3339 with "Z", as SigMF requires for core:datetime.
    const std::regex rfc3339(R"(^\d{4}-\d{2}-\d{2}T\d{2}:\d{2}:\d{2}(\.\d+)?Z$)");
    for (const auto& c : j["captures"]) EXPECT_TRUE(std::regex_match(c["core:datetime"].get<std::string>(), rfc3339));
    EXPECT_EQ(j["annotations"][0]["core:label"], "gap");
    EXPECT_EQ(j["annotations"][0]["hetbench:lost_samples"], 1904);

    const SigmfMeta back = read_sigmf_meta(path.string());
    EXPECT_EQ(back.format, m.format);
    EXPECT_EQ(back.sample_rate_hz, m.sample_rate_hz);
    EXPECT_EQ(back.description, m.description);
    EXPECT_EQ(back.hw, m.hw);
    ASSERT_EQ(back.captures.size(), 2u);
    EXPECT_EQ(back.captures[1].global_index, 6000u);
    EXPECT_EQ(back.captures[1].frequency_hz, 100.1e6);
    ASSERT_EQ(back.annotations.size(), 1u);
    EXPECT_EQ(back.annotations[0].comment, m.annotations[0].comment);
    ASSERT_TRUE(back.setup);
    EXPECT_EQ(setup_from_json(*back.setup, "rt.sigmf-meta"), parse_session(R"([plan]
wanted_hz = 100.1e6
if_hz = 10.7e6
if_bandwidth_hz = 200e3
)", "rt.sigmf-meta"));
}

// Bad input never crashes: every prefix of a valid metadata file and seeded random byte changes either
// parse or raise InputError (nothing else).
TEST(SigmfRead, CorruptMetadataOnlyEverRaisesInputError) {
    const std::string good = sigmf_meta_to_json(sample_meta()).dump(1);
    auto outcome = [](const std::string& text) {
        try {
            parse_sigmf_meta(text, "fuzz.sigmf-meta");
            return 0;
        } catch (const InputError& e) {
            return std::string(e.what()).find("fuzz.sigmf-meta") != std::string::npos ? 1 : 2;
        } catch (...) {
            return 3;
        }
    };
    EXPECT_EQ(outcome(good), 0);
    for (std::size_t n = 0; n < good.size(); ++n) ASSERT_EQ(outcome(good.substr(0, n)), 1) << "prefix " << n;
    std::mt19937 rng(7);
    for (int i = 0; i < 2000; ++i) {
        std::string t = good;
        for (int k = 0; k < 3; ++k) t[rng() % t.size()] = static_cast<char>(rng() % 128);
        ASSERT_LE(outcome(t), 1) << t;
    }
}

// POSIX time 0 and 1e9 s are 1970-01-01T00:00:00Z and 2001-09-09T01:46:40Z (derivable: 11 574 days
// and 6400 s after the epoch).
TEST(SigmfWrite, Iso8601Utc) {
    using namespace std::chrono;
    EXPECT_EQ(iso8601_utc(system_clock::time_point{}), "1970-01-01T00:00:00.000Z");
    EXPECT_EQ(iso8601_utc(system_clock::time_point{seconds(1000000000) + milliseconds(250)}),
              "2001-09-09T01:46:40.250Z");
}

}  // namespace
}  // namespace hb
