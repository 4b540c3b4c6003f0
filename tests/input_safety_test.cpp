// Text from inputs that is not what the writers expect: bytes that are not UTF-8 (a file name in another
// encoding), control characters and markup. The reports stay well-formed (HTML escapes, JSON valid with
// U+FFFD in place of the bad bytes), and a recording of such a file is still written with valid metadata.
#include <gtest/gtest.h>

#include <cmath>
#include <complex>
#include <nlohmann/json.hpp>

#include "devices/recording.hpp"
#include "dsp/measure.hpp"
#include "dsp/spectrum.hpp"
#include "report/plan_report.hpp"
#include "support/test_support.hpp"

namespace hb {
namespace {

const std::string kNotUtf8 =
    "caf\xe9 \xff\xfe \xc0\xaf \xed\xa0\x80 \xf4\x90\x80\x80";  // Latin-1, stray, overlong, surrogate, > U+10FFFF
const std::string kFffd = "\xEF\xBF\xBD";

// A strict JSON reader: Python's json module, with NaN/Infinity refused; prints the value at a key path.
std::optional<std::string> strict_json_field(const std::filesystem::path& file, const std::string& expr) {
    const auto py = test::python_with_scipy();
    if (!py) return std::nullopt;
    const auto r = test::run({*py, "-c",
                              "import json, sys\n"
                              "def no(x): raise ValueError('non-finite ' + x)\n"
                              "d = json.load(open(sys.argv[1], encoding='utf-8', errors='strict'), parse_constant=no)\n"
                              "print(ascii(eval(sys.argv[2])))\n",
                              file.string(), expr});
    if (r.exit_code != 0) return "INVALID: " + r.err;
    return r.out;
}

TEST(InputSafety, HtmlEscapeReplacesBytesThatAreNotUtf8AndControls) {
    EXPECT_EQ(html_escape("caf\xc3\xa9 \xe2\x89\xa4 \xf0\x9f\x93\xbb"),
              "caf\xc3\xa9 \xe2\x89\xa4 \xf0\x9f\x93\xbb");  // valid: kept
    EXPECT_EQ(html_escape("caf\xe9"), "caf" + kFffd);
    EXPECT_EQ(html_escape("\xc0\xaf"), kFffd + kFffd);              // an overlong "/" (RFC 3629 §3: must be refused)
    EXPECT_EQ(html_escape("\xed\xa0\x80"), kFffd + kFffd + kFffd);  // a UTF-16 surrogate
    EXPECT_EQ(html_escape("\xe2\x89"), kFffd + kFffd);              // cut off mid-sequence
    EXPECT_EQ(html_escape(std::string("a\0b\x1b[31m", 8)), "a" + kFffd + "b" + kFffd + "[31m");
    EXPECT_EQ(html_escape("line\nnext\ttab"), "line\nnext\ttab");
    EXPECT_EQ(html_escape("<\xff>"), "&lt;" + kFffd + "&gt;");
}

TEST(InputSafety, ReportsFromTextThatIsNotUtf8AreValid) {
    hb::Setup setup;
    // The Setup itself comes from TOML or JSON, which are UTF-8 by definition; the title, description and
    // source name come from anywhere (a recording's text, a file name).
    setup.bench.name = "bench <i>";
    setup.plan.wanted_hz = 1e6;
    setup.plan.if_hz = 455e3;
    setup.plan.if_bandwidth_hz = 10e3;
    setup.analyzer.fft_size = 1024;
    setup.analyzer.averages = 1;
    Welch w = Welch::make(setup.analyzer, 455e3, 100e3);
    std::vector<std::complex<float>> x(1024);
    for (std::size_t i = 0; i < x.size(); ++i) x[i] = std::polar(0.5f, 0.3f * static_cast<float>(i));
    w.push(x);
    const Spectrum s = w.read();
    const std::vector<ExpectedLine> lines{
        {"RF-LO \xff", 1, -1, LineKind::wanted, 455e3 + 4774.6, std::nan(""), std::nan("")}};
    const PlanCheck check = check_plan(s, lines);
    const PlanReport r{
        setup, s, check, std::nullopt, "bench " + kNotUtf8, "desc <b>" + kNotUtf8, "/data/" + kNotUtf8 + ".wav"};

    test::TempDir d;
    const ReportPaths p = write_plan_reports(r, d.path, "report");
    const std::string html = test::read_file(p.html);
    EXPECT_EQ(html.find("\xff"), std::string::npos);
    EXPECT_EQ(html.find("\xe9 "), std::string::npos);
    EXPECT_EQ(html.find("<b>"), std::string::npos);
    EXPECT_EQ(html.find("<i>"), std::string::npos);
    EXPECT_NE(html.find("caf" + kFffd), std::string::npos);

    const auto title = strict_json_field(p.json, "d['title']");
    if (!title) GTEST_SKIP() << "python3 not found: the strict JSON check is skipped";
    // Each bad byte (or maximal bad prefix, as the JSON library counts them) is one U+FFFD; the rest is kept.
    EXPECT_EQ(title->rfind("'bench caf\\ufffd \\ufffd\\ufffd", 0), 0u) << *title;
    EXPECT_EQ(strict_json_field(p.json, "d['source'].startswith('/data/caf\\ufffd')"), "True\n");
    EXPECT_EQ(strict_json_field(p.json, "d['description']")->rfind("'desc <b>caf\\ufffd", 0), 0u);
    EXPECT_EQ(strict_json_field(p.json, "d['products'][0]['label'] if d['products'] else d['wanted']['label']"),
              "'RF-LO \\ufffd'\n");
}

TEST(InputSafety, RecordingAFileWhoseNameIsNotUtf8WritesValidMetadata) {
    // The description in the metadata is the source's file name; JSON must be UTF-8, so the bad bytes become
    // U+FFFD instead of failing the recording.
    test::TempDir d;
    const auto wav = d.path / ("caf\xe9.wav");
    std::vector<cf32> x(100, cf32(0.25f, -0.5f));
    write_wav(wav.string(), x, 48000, 2, WavEncoding::pcm16);
    const auto r = test::run_hetbench({"record", "--source", wav.string(), "--out", d.file("out").string()});
    ASSERT_EQ(r.exit_code, 0) << r.out << r.err;
    const SigmfMeta m = read_sigmf_meta(d.file("out.sigmf-meta").string());
    EXPECT_EQ(m.description, "caf" + kFffd + ".wav");
    EXPECT_EQ(m.sample_count, 100u);
    const auto desc = strict_json_field(d.file("out.sigmf-meta"), "d['global']['core:description']");
    if (!desc) GTEST_SKIP() << "python3 not found: the strict JSON check is skipped";
    EXPECT_EQ(*desc, "'caf\\ufffd.wav'\n");
}

}  // namespace
}  // namespace hb
