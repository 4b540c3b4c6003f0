// Plan-check reports: the JSON document (fields, statuses, no NaN for any input), the CSV table, the HTML page
// (escaping of everything that comes from inputs) and the PNG.
#include <gtest/gtest.h>
#include <stb_image.h>

#include <cmath>
#include <complex>
#include <random>

#include "devices/setup_json.hpp"
#include "dsp/errors.hpp"
#include "dsp/units.hpp"
#include "report/plan_report.hpp"
#include "report/plot.hpp"
#include "support/test_support.hpp"

namespace hb {
namespace {

using cf = std::complex<float>;

// An invented bench: a 455 kHz IF captured at 200 kS/s, the wanted output at +5 kHz, a strong 2×2 product that
// fails −60 dBc, the LO feedthrough, a line under the floor, one outside the span and one unexplained tone.
struct Fixture {
    Setup setup;
    Spectrum spectrum;
    PlanCheck check;
    std::vector<ExpectedLine> lines;

    Fixture() {
        setup.bench.name = "bench <7> & \"friends\"";
        setup.plan.wanted_hz = 1.0e6;
        setup.plan.if_hz = 455e3;
        setup.plan.if_bandwidth_hz = 10e3;
        setup.plan.rf_low_hz = 0.5e6;
        setup.plan.rf_high_hz = 1.7e6;
        setup.analyzer.fft_size = 4096;
        setup.analyzer.averages = 8;
        setup.analyzer.unit = LevelUnit::dbm;
        setup.analyzer.calibration_db = -40.0;
        const double fs = 200e3, fc = 455e3;
        struct T {
            double f, dbfs;
        };
        const std::vector<T> tones{{5e3, -10}, {21.3e3, -48}, {-61.7e3, -45}, {37.1e3, -80}};
        const std::size_t len = 4096 + 7 * 2048;
        std::vector<cf> x(len);
        std::mt19937_64 rng(3);
        std::normal_distribution<double> g(0.0, std::sqrt(power_from_db(-130.0) * fs / 2));
        for (std::size_t i = 0; i < len; ++i) {
            std::complex<double> z = 0;
            for (const T& t : tones)
                z += std::polar(amplitude_from_db(t.dbfs), kTwoPi * std::fmod(t.f * static_cast<double>(i) / fs, 1.0));
            x[i] = cf(static_cast<float>(z.real() + g(rng)), static_cast<float>(z.imag() + g(rng)));
        }
        Welch wl = Welch::make(setup.analyzer, fc, fs);
        wl.push(x);
        spectrum = wl.read();
        const double nan = std::nan("");
        lines = {{"RF\u2212LO", 1, -1, LineKind::wanted, fc + 5e3, nan, nan},
                 {"2LO\u22122RF, <b>x</b>", 2, -2, LineKind::spur, fc + 21.3e3, -40, -60},
                 {"LO", 1, 0, LineKind::lo_feedthrough, fc - 61.7e3, -30, -30},
                 {"=3LO-3RF", 3, -3, LineKind::spur, fc + 44.4e3, -100, -60},
                 {"\u00bdIF", 2, -2, LineKind::half_if, fc + 150e3, -70, -60}};
        check = check_plan(spectrum, lines);
    }
    PlanReport report(std::string description = "an invented bench capture") const {
        return PlanReport{setup,          spectrum, check, std::nullopt, setup.bench.name, std::move(description),
                          "if.sigmf-meta"};
    }
};

bool has_bad_number(const std::string& text) {
    for (const char* bad : {"NaN", "nan", "Infinity", "inf"})
        if (text.find(bad) != std::string::npos) return true;
    return false;
}

TEST(Report, JsonCarriesTheContractFields) {
    const Fixture f;
    const nlohmann::json j = plan_report_json(f.report());
    EXPECT_EQ(j["schema"], "hetbench.plan-check/1");
    for (const char* key : {"wanted", "products", "unexplained", "image", "noise_floor", "rbw_hz", "setup", "verdict"})
        EXPECT_TRUE(j.contains(key)) << key;
    for (const char* key : {"label", "freq_hz", "level_dbfs", "level_dbm"})
        EXPECT_TRUE(j["wanted"].contains(key)) << key;
    ASSERT_EQ(j["products"].size(), 4u);
    for (const auto& p : j["products"]) {
        for (const char* key : {"label", "m", "n", "freq_hz", "level_dbfs", "level_dbc", "limit_dbc", "status"})
            EXPECT_TRUE(p.contains(key)) << key;
        const std::string st = p["status"];
        EXPECT_TRUE(st == "pass" || st == "fail" || st == "below-floor" || st == "not-observable") << st;
    }
    // The values are the check's: the 2×2 product at −38 dBc fails −60, the LO passes −30, the line under the
    // floor has no level but an upper bound, the ½IF line is outside the ±100 kHz span.
    EXPECT_EQ(j["products"][0]["status"], "fail");
    EXPECT_NEAR(j["products"][0]["level_dbc"].get<double>(), -38.0, 0.3);
    EXPECT_NEAR(j["products"][0]["level_dbm"].get<double>(), -48.0 - 40.0, 0.3);  // dBm = dBFS − 40 dB
    EXPECT_EQ(j["products"][1]["status"], "pass");
    EXPECT_EQ(j["products"][2]["status"], "below-floor");
    EXPECT_TRUE(j["products"][2]["level_dbfs"].is_null());
    EXPECT_TRUE(j["products"][2]["upper_bound_dbc"].is_number());
    EXPECT_EQ(j["products"][3]["status"], "not-observable");
    EXPECT_EQ(j["verdict"], "fail");
    ASSERT_EQ(j["unexplained"].size(), 1u);
    EXPECT_NEAR(j["unexplained"][0]["freq_hz"].get<double>(), 455e3 + 37.1e3, 10.0);
    EXPECT_EQ(j["image"]["status"], "not-observable");
    EXPECT_TRUE(j["image"]["rejection_db"].is_null());
    EXPECT_NEAR(j["noise_floor"]["dbfs_per_hz"].get<double>(), -130.0, 0.3);
    EXPECT_NEAR(j["noise_floor"]["dbm_per_hz"].get<double>(), -170.0, 0.3);
    EXPECT_NEAR(j["rbw_hz"].get<double>(), 2.0044 * 200e3 / 4096, 0.01);
    EXPECT_EQ(j["setup"], setup_to_json(f.setup));
    EXPECT_FALSE(has_bad_number(j.dump()));
}

TEST(Report, JsonHasNoNaNForAnyInput) {
    // A spectrum of zeros (every level −inf), one with NaN and infinite bins, and a check whose every number is
    // NaN or infinite.
    const Fixture f;
    Spectrum zero = f.spectrum;
    std::fill(zero.power.begin(), zero.power.end(), 0.0);
    const PlanCheck zc = check_plan(zero, f.lines);
    Spectrum broken = f.spectrum;
    for (std::size_t k = 0; k < broken.power.size(); k += 3)
        broken.power[k] = k % 2 ? std::nan("") : std::numeric_limits<double>::infinity();
    const PlanCheck bc = check_plan(broken, f.lines);
    const PlanReport br{f.setup, broken, bc, std::nullopt, "", "", ""};
    EXPECT_FALSE(has_bad_number(plan_report_json(br).dump()));
    EXPECT_NO_THROW((void)plan_report_png(br, 400, 300));
    EXPECT_NO_THROW((void)plan_report_html(br));
    PlanCheck junk;
    junk.wanted.line.freq_hz = std::numeric_limits<double>::infinity();
    junk.wanted.level_dbfs = -std::numeric_limits<double>::infinity();
    junk.lines.resize(2);
    junk.lines[1].line.predicted_dbc = std::nan("");
    junk.unexplained.resize(1);
    junk.floor.dbfs_per_hz = std::numeric_limits<double>::infinity();
    ImageRejection im;
    im.rejection_db = std::nan("");
    for (const PlanCheck* c : std::vector<const PlanCheck*>{&zc, &junk, &f.check}) {
        const PlanReport r{f.setup, zero, *c, im, "", "", ""};
        const std::string text = plan_report_json(r).dump();
        EXPECT_FALSE(has_bad_number(text)) << text.substr(0, 300);
        EXPECT_TRUE(nlohmann::json::accept(text));
        // The CSV writes them as empty cells, the HTML as dashes.
        EXPECT_FALSE(has_bad_number(plan_report_csv(r))) << plan_report_csv(r);
        EXPECT_NO_THROW((void)plan_report_png(r, 400, 300));
    }
    // A strict reader agrees: Python's json module with NaN/Infinity rejected (parse_constant raises).
    const auto py = test::python_with_scipy();
    if (!py) GTEST_SKIP() << "python3 not found";
    test::TempDir tmp;
    test::write_file(tmp.file("r.json"), plan_report_json(PlanReport{f.setup, zero, zc, im, "", "", ""}).dump());
    const auto res = test::run({*py, "-c",
                                "import json,sys\n"
                                "def no(c): raise ValueError('non-finite ' + c)\n"
                                "json.load(open(sys.argv[1]), parse_constant=no)\n",
                                tmp.file("r.json").string()});
    EXPECT_EQ(res.exit_code, 0) << res.err;
}

// Splits one CSV record (RFC 4180 quoting), for checking the writer from outside.
std::vector<std::string> csv_fields(const std::string& line) {
    std::vector<std::string> out(1);
    bool quoted = false;
    for (std::size_t i = 0; i < line.size(); ++i) {
        const char ch = line[i];
        if (quoted) {
            if (ch == '"' && i + 1 < line.size() && line[i + 1] == '"') {
                out.back() += '"';
                ++i;
            } else if (ch == '"') {
                quoted = false;
            } else {
                out.back() += ch;
            }
        } else if (ch == '"') {
            quoted = true;
        } else if (ch == ',') {
            out.emplace_back();
        } else {
            out.back() += ch;
        }
    }
    return out;
}

TEST(Report, CsvTableIsRectangularAndQuoted) {
    const Fixture f;
    const std::string csv = plan_report_csv(f.report());
    std::vector<std::vector<std::string>> rows;
    std::size_t start = 0;
    while (start < csv.size()) {
        const std::size_t end = csv.find("\r\n", start);
        ASSERT_NE(end, std::string::npos);
        rows.push_back(csv_fields(csv.substr(start, end - start)));
        start = end + 2;
    }
    ASSERT_EQ(rows.size(), 1u + 1u + 4u + 1u);  // header, wanted, products, unexplained
    for (const auto& r : rows) EXPECT_EQ(r.size(), rows[0].size());
    EXPECT_EQ(rows[0][0], "row");
    EXPECT_EQ(rows[0][17], "status");
    EXPECT_EQ(rows[1][0], "wanted");
    EXPECT_EQ(rows[2][1], "2LO\u22122RF, <b>x</b>");  // the comma survived by quoting
    EXPECT_EQ(rows[2][17], "fail");
    EXPECT_EQ(rows[4][1], "'=3LO-3RF");  // not a spreadsheet formula
    EXPECT_EQ(rows[4][8], "");           // below floor: no level
    EXPECT_EQ(rows[6][0], "unexplained");
    EXPECT_NEAR(std::stod(rows[2][10]), -38.0, 0.3);
    EXPECT_EQ(csv_text("a\"b"), "\"a\"\"b\"");  // RFC 4180: a quote forces quoting, and is doubled
    EXPECT_EQ(csv_text("a\"b,c"), "\"a\"\"b,c\"");
}

TEST(Report, HtmlEscapesEverythingFromInputs) {
    const Fixture f;
    const std::string html = plan_report_html(f.report("capture <script>alert('x')</script> & more"));
    EXPECT_NE(html.find("&lt;script&gt;alert(&#39;x&#39;)&lt;/script&gt; &amp; more"), std::string::npos);
    EXPECT_EQ(html.find("<script"), std::string::npos);   // no script element anywhere
    EXPECT_EQ(html.find("<b>x</b>"), std::string::npos);  // a label's markup is text, not markup
    EXPECT_NE(html.find("2LO\u22122RF, &lt;b&gt;x&lt;/b&gt;"), std::string::npos);
    EXPECT_NE(html.find("bench &lt;7&gt; &amp; &quot;friends&quot;"), std::string::npos);
    EXPECT_NE(html.find("<svg"), std::string::npos);
    EXPECT_NE(html.find("class=\"st fail\""), std::string::npos);
    EXPECT_NE(html.find("class=\"verdict fail\""), std::string::npos);
    EXPECT_EQ(html_escape("<a href=\"x\">'&'</a>"), "&lt;a href=&quot;x&quot;&gt;&#39;&amp;&#39;&lt;/a&gt;");

    // The inline SVG is well-formed XML (Python's xml.etree, a strict parser), with one marker per line in
    // the span plus the unexplained peak.
    const auto py = test::python_with_scipy();
    if (!py) GTEST_SKIP() << "python3 not found";
    const auto a = html.find("<svg"), b = html.find("</svg>");
    ASSERT_NE(b, std::string::npos);
    test::TempDir tmp;
    test::write_file(tmp.file("plot.svg"), html.substr(a, b + 6 - a));
    const auto r =
        test::run({*py, "-c",
                   "import sys, xml.etree.ElementTree as et\n"
                   "ns = '{http://www.w3.org/2000/svg}'\n"
                   "root = et.parse(sys.argv[1]).getroot()\n"
                   "print(len(root.findall('.//' + ns + 'circle')), len(root.findall('.//' + ns + 'path')))\n",
                   tmp.file("plot.svg").string()});
    ASSERT_EQ(r.exit_code, 0) << r.err;
    EXPECT_EQ(r.out, "4 1\n");  // wanted, 2×2, LO, the bounded line; one unexplained
}

TEST(Report, PngShowsTheTraceAndTheFailingMarker) {
    const Fixture f;
    const std::vector<std::uint8_t> png = plan_report_png(f.report(), 1000, 500);
    ASSERT_GT(png.size(), 8u);
    EXPECT_EQ(std::string(png.begin(), png.begin() + 8), std::string("\x89PNG\r\n\x1a\n", 8));
    int w = 0, h = 0, comp = 0;
    unsigned char* img = stbi_load_from_memory(png.data(), static_cast<int>(png.size()), &w, &h, &comp, 3);
    ASSERT_NE(img, nullptr);
    EXPECT_EQ(w, 1000);
    EXPECT_EQ(h, 500);
    auto count = [&](plot::Rgb c) {
        long n = 0;
        for (int i = 0; i < w * h; ++i) n += img[3 * i] == c.r && img[3 * i + 1] == c.g && img[3 * i + 2] == c.b;
        return n;
    };
    EXPECT_GT(count(plot::kTrace), 500);       // the trace spans the plot
    EXPECT_GT(count(plot::kFail), 20);         // the failing 2×2 product's marker and label
    EXPECT_GT(count(plot::kUnexplained), 10);  // the unexplained peak
    EXPECT_GT(count(plot::kLimit), 10);        // limit bars
    stbi_image_free(img);

    // Labels outside printable ASCII (the segment font indexes a table by character: sanitizer builds catch a
    // stray byte) are drawn with substitutes.
    PlanCheck odd = f.check;
    odd.lines[0].line.label = "2LO\u22122RF \u00bd \U0001F4E1 \x01\x7f end";
    odd.wanted.line.label = "\xff\xfe";
    const PlanReport r{f.setup, f.spectrum, odd, std::nullopt, "t\u00e9st \u2264", "", ""};
    EXPECT_GT(plan_report_png(r, 800, 400).size(), 1000u);
}

TEST(Report, WritesAllFourFilesAndNamesAnUnwritablePath) {
    const Fixture f;
    test::TempDir tmp;
    const ReportPaths p = write_plan_reports(f.report(), tmp.path / "out", "plan-check");
    for (const auto& file : {p.json, p.csv, p.html, p.png}) {
        EXPECT_TRUE(std::filesystem::exists(file)) << file;
        EXPECT_GT(std::filesystem::file_size(file), 100u) << file;
    }
    EXPECT_EQ(nlohmann::json::parse(test::read_file(p.json))["schema"], "hetbench.plan-check/1");
    test::write_file(tmp.file("blocker"), "a file where a folder should be");
    try {
        (void)write_plan_reports(f.report(), tmp.file("blocker") / "sub", "x");
        ADD_FAILURE() << "no error";
    } catch (const InputError& e) {
        EXPECT_NE(std::string(e.what()).find("blocker"), std::string::npos) << e.what();
    }
}

}  // namespace
}  // namespace hb
