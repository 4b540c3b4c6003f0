// `hetbench filter` and the filter keys of a session: presets, overrides, refusals, the CSV against closed forms.
#include <gtest/gtest.h>

#include <cmath>
#include <sstream>

#include "devices/session.hpp"
#include "dsp/errors.hpp"
#include "dsp/filter_presets.hpp"
#include "support/test_support.hpp"

namespace hb {
namespace {

const std::string kPlan = R"(
[plan]
wanted_hz = 1.0e6
if_hz = 455e3
if_bandwidth_hz = 10e3
)";

std::vector<std::vector<std::string>> read_csv(const std::filesystem::path& p) {
    std::istringstream in(test::read_file(p));
    std::vector<std::vector<std::string>> rows;
    for (std::string line; std::getline(in, line);) {
        std::vector<std::string> cells;
        std::istringstream ls(line);
        for (std::string c; std::getline(ls, c, ',');) cells.push_back(c);
        rows.push_back(cells);
    }
    return rows;
}

TEST(FilterCommand, ButterworthFiguresAndCsvMatchTheClosedForm) {
    // The contract's own session (an order-4 Butterworth band-pass, 10 kHz at 455 kHz). The CSV's if_chain_db is
    // checked row by row against 10 log10(1 + W^8), W = (f^2 - f0^2)/(f B) (RV B1 with the band-pass transform).
    test::TempDir tmp;
    const auto session = tmp.file("s.toml"), csv = tmp.file("r.csv");
    test::write_file(
        session, kPlan + "[[if_filter]]\ntype = \"butterworth\"\ncenter_hz = 455e3\nbandwidth_hz = 10e3\norder = 4\n");
    const auto r = test::run_hetbench({"filter", session.string(), "--csv", csv.string()});
    ASSERT_EQ(r.exit_code, 0) << r.err;
    // -60 dB width = (10^6 - 1)^(1/8) * 10 kHz = 56.23413 kHz; shape factor 56.234/9.994 = 5.627.
    EXPECT_NE(r.out.find("-60 dB bandwidth      56.23413 kHz"), std::string::npos) << r.out;
    EXPECT_NE(r.out.find("shape factor          5.627"), std::string::npos) << r.out;
    EXPECT_NE(r.out.find("RF filter [rf_filter]: none"), std::string::npos);
    const auto rows = read_csv(csv);
    ASSERT_GT(rows.size(), 1000u);
    ASSERT_EQ(rows[0][0], "freq_hz");
    ASSERT_EQ(rows[0][1], "if_chain_db");
    ASSERT_EQ(rows[0][3], "if_chain_group_delay_s");
    const double f0sq = 450e3 * 460e3;
    double prev = -1;
    for (std::size_t i = 1; i < rows.size(); ++i) {
        const double f = std::stod(rows[i][0]), db = std::stod(rows[i][1]);
        ASSERT_GT(f, prev);
        prev = f;
        const double w = (f * f - f0sq) / (f * 10e3);
        const double want = -10 * std::log10(1 + std::pow(w, 8));
        if (want > -300) {
            ASSERT_NEAR(db, want, 1e-4) << f;
        }
        ASSERT_GT(std::stod(rows[i][3]), 0.0);  // a Butterworth band-pass delays at every frequency
    }
}

TEST(FilterCommand, PresetsAreShownWithTheirFigures) {
    test::TempDir tmp;
    const auto csv = tmp.file("p.csv");
    const auto r = test::run_hetbench({"filter", "--presets", "--csv", csv.string()});
    ASSERT_EQ(r.exit_code, 0) << r.err;
    for (const auto& p : filter_presets()) EXPECT_NE(r.out.find(std::string(p.name) + ": "), std::string::npos);
    EXPECT_NE(r.out.find("stop-band rejection   50.0 dB"), std::string::npos) << r.out;  // the ceramic floors
    const auto rows = read_csv(csv);
    ASSERT_GT(rows.size(), 100u);
    EXPECT_EQ(rows[0][1], "ceramic_10m7_db");
    EXPECT_EQ(test::run_hetbench({"filter"}).exit_code, 2);  // neither a session nor --presets
}

TEST(FilterCommand, ContractScriptPassesTheFilterItem) {
    const auto shared = test::shared_dir();
    if (!shared) GTEST_SKIP() << "../shared is absent (a fresh clone): the interface contract script is not here";
    const auto r =
        test::run({"/usr/bin/python3", (*shared / "checks" / "contract.py").string(), test::hetbench_exe().string()});
    EXPECT_NE(r.out.find("ok        filter --csv FILE"), std::string::npos) << r.out << r.err;
}

TEST(FilterSession, PresetFillsKeysAndExplicitKeysOverride) {
    const hb::Setup s = parse_session(kPlan +
                                          "[rf_filter]\npreset = \"ceramic-10m7\"\norder = 2\ncenter_hz = \"10.65M\"\n"
                                          "[[if_filter]]\npreset = \"ceramic-455k\"\nsections = 2\n",
                                      "p.toml");
    const FilterSpec ceramic = *filter_preset("ceramic-10m7");
    EXPECT_EQ(s.rf_filter.type, ceramic.type);
    EXPECT_EQ(s.rf_filter.order, 2);
    EXPECT_EQ(s.rf_filter.center_hz, 10.65e6);
    EXPECT_EQ(s.rf_filter.bandwidth_hz, ceramic.bandwidth_hz);
    EXPECT_EQ(s.rf_filter.stop_atten_db, ceramic.stop_atten_db);
    EXPECT_EQ(s.rf_filter.insertion_loss_db, ceramic.insertion_loss_db);
    EXPECT_EQ(s.rf_filter.preset, "ceramic-10m7");
    ASSERT_EQ(s.if_filters.size(), 1u);
    EXPECT_EQ(s.if_filters[0].type, FilterType::elliptic);
    EXPECT_EQ(s.if_filters[0].sections, 2);
    // Saved and read back: the same Setup (the preset refills, the saved keys override it with the same values).
    EXPECT_EQ(parse_session(session_to_toml(s), "p.toml"), s);
}

void expect_refused(const std::string& body, const std::vector<std::string>& needles) {
    try {
        parse_session(kPlan + body, "bad.toml");
        ADD_FAILURE() << "accepted:\n" << body;
    } catch (const InputError& e) {
        for (const auto& n : needles) EXPECT_NE(std::string(e.what()).find(n), std::string::npos) << e.what();
    }
}

TEST(FilterSession, BadFilterValuesAreRefusedWithTheirKeyPath) {
    expect_refused("[[if_filter]]\npreset = \"ceramic-11m\"\n",
                   {"if_filter[0].preset", "ceramic-11m", "ceramic-10m7|ceramic-455k"});
    expect_refused(
        "[rf_filter]\ntype = \"elliptic\"\ncenter_hz = 1e6\nbandwidth_hz = 1e5\nripple_db = 3\nstop_atten_db = 3\n",
        {"rf_filter.stop_atten_db", "more stop-band attenuation than ripple"});
    expect_refused(
        "[[if_filter]]\ntype = \"fir\"\nfir_method = \"parks-mcclellan\"\ncenter_hz = 455e3\nbandwidth_hz = 1e4\n"
        "ripple_db = 0\n",
        {"if_filter[0].ripple_db"});
    expect_refused("[[if_filter]]\ntype = \"touchstone\"\npath = \"f.s2p\"\nsections = 0\n", {"if_filter[0].sections"});
}

TEST(FilterCommand, BadTouchstoneFileExitsTwoNamingTheFile) {
    test::TempDir tmp;
    const auto session = tmp.file("t.toml");
    test::write_file(session, kPlan + "[[if_filter]]\ntype = \"touchstone\"\npath = \"ceramic.s2p\"\n");
    auto r = test::run_hetbench({"filter", session.string()});
    EXPECT_EQ(r.exit_code, 2);
    EXPECT_NE(r.err.find((tmp.path / "ceramic.s2p").string()), std::string::npos) << r.err;
    test::write_file(tmp.file("ceramic.s2p"), "# MHz S DB R 50\n10.6 -20 0 -3 10 -3 10 -20 0\n10.7 -20 0 -1 0 -1\n");
    r = test::run_hetbench({"filter", session.string()});
    EXPECT_EQ(r.exit_code, 2);
    EXPECT_NE(r.err.find("ceramic.s2p:3:"), std::string::npos) << r.err;
    // An FIR that cannot be built on the session's IF window: exit 2, naming the filter.
    test::write_file(session, kPlan +
                                  "[if_chain]\nsample_rate_hz = 20e3\n[[if_filter]]\ntype = \"fir\"\n"
                                  "center_hz = 455e3\nbandwidth_hz = 10e3\ntransition_hz = 8e3\n");
    r = test::run_hetbench({"filter", session.string()});
    EXPECT_EQ(r.exit_code, 2);
    EXPECT_NE(r.err.find("if_filter[0]"), std::string::npos) << r.err;
}

TEST(FilterCommand, ShowsTheRealisationOnTheSessionWindows) {
    test::TempDir tmp;
    const auto session = tmp.file("w.toml");
    test::write_file(session, kPlan +
                                  "[[source]]\nkind = \"generator\"\nfrequency_hz = 1.2e6\nsample_rate_hz = 2.4e6\n"
                                  "[rf_filter]\ntype = \"butterworth\"\ncenter_hz = 1e6\nbandwidth_hz = 200e3\n"
                                  "[[if_filter]]\npreset = \"ceramic-455k\"\n[if_chain]\ndecimation = 8\n");
    const auto r = test::run_hetbench({"filter", session.string()});
    ASSERT_EQ(r.exit_code, 0) << r.err;
    EXPECT_NE(r.out.find("realised on the RF window 1.2 MHz"), std::string::npos) << r.out;
    EXPECT_NE(r.out.find("realised on the IF window 455 kHz"), std::string::npos) << r.out;
    EXPECT_NE(r.out.find("anti-alias"), std::string::npos) << r.out;
    EXPECT_NE(r.out.find("decimates by 8 to 300 kHz"), std::string::npos) << r.out;
    EXPECT_EQ(r.out.find("OUTSIDE"), std::string::npos) << r.out;
}

}  // namespace
}  // namespace hb
