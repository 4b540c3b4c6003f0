// The spurious-response sweep (dsp/sweep, hetbench sweep): image rejection against the RF filter's own response,
// where the half-IF and the IF feedthrough responses sit, the square-wave LO's harmonic responses, the two
// methods against the order law, and the command line's exit codes and reports.
//
// Sources of the expected values:
//  - the RF filter's own response hb::filter_response (checked against scipy.signal in filter_design_test);
//  - reference-values M3/M4 (image f_RF ± 2·IF, half-IF f_RF ± IF/2, derivable), F1 (±1 square wave: a_n = 4/(πn),
//    3rd harmonic −9.542 dB, 5th −13.979 dB re the fundamental), F2 (0/1 switch of duty d: DC d,
//    a_n = 2|sin πnd|/(πn));
//  - the power-series law of a memoryless nonlinearity: an n-th order product grows n dB per dB of input
//    (Razavi, RF Microelectronics, 2nd ed. 2012, §2.2, from memory), from which fixed-level rejection falls n − 1 dB
//    per dB of tone level and equal-output rejection is the fixed-level figure (at the wanted's level) over n.
#include "dsp/sweep.hpp"

#include <gtest/gtest.h>

#include <cmath>
#include <fstream>
#include <nlohmann/json.hpp>
#include <set>
#include <sstream>

#include "devices/filter_setup.hpp"
#include "devices/session.hpp"
#include "dsp/units.hpp"
#include "support/test_support.hpp"

namespace hb {
namespace {

// An invented medium-wave bench: 1 MHz wanted, 455 kHz IF, high-side LO.
const char* kPlan = R"(
[plan]
rf_low_hz = 0.5e6
rf_high_hz = 1.7e6
wanted_hz = 1.0e6
channel_spacing_hz = 10e3
if_hz = 455e3
if_bandwidth_hz = 10e3
injection = "high"
max_order = 5
[plan.limits]
image_rejection_db = 40
spur_dbc = -50
)";

// The session the contract checker runs.
const char* kFilterAndSource = R"(
[mixer]
model = "bipolar"
[rf_filter]
type = "butterworth"
center_hz = 1.0e6
bandwidth_hz = 200e3
order = 4
[[source]]
kind = "generator"
frequency_hz = 1.2e6
sample_rate_hz = 2.4e6
)";

// The plan with a low-side LO, for the wanted channel alone (across the whole band a low-side LO of the 910 kHz
// channel would sit in the IF passband, which the plan check refuses).
std::string low_side(std::string plan) {
    plan.replace(plan.find("\"high\""), 6, "\"low\"");
    plan.replace(plan.find("channel_spacing_hz = 10e3"), 25, "channel_spacing_hz = 0");
    plan.replace(plan.find("rf_low_hz = 0.5e6"), 17, "rf_low_hz = 1.0e6");
    plan.replace(plan.find("rf_high_hz = 1.7e6"), 18, "rf_high_hz = 1.0e6");
    return plan;
}

Setup session(const std::string& text) {
    return parse_session(text, "sweep.toml");
}

SweepResult sweep(const Setup& s) {
    return run_sweep(s, filter_loader(s));
}

double db20(std::complex<double> h) {
    return 20.0 * std::log10(std::abs(h));
}

const SweepResponse* find(const SweepResult& r, int m, int n, double near_hz) {
    const SweepResponse* best = nullptr;
    for (const SweepResponse& x : r.responses)
        if (x.response.m == m && x.response.n == n &&
            (!best || std::abs(x.response.rf_hz - near_hz) < std::abs(best->response.rf_hz - near_hz)))
            best = &x;
    return best;
}

// The grid points whose tone was seen in the IF passband (not a lower bound), inside [lo, hi].
std::vector<double> responding(const SweepResult& r, double lo, double hi) {
    std::vector<double> f;
    for (const ToneMeasurement& p : r.points)
        if (!p.lower_bound && p.rf_hz >= lo && p.rf_hz <= hi) f.push_back(p.rf_hz);
    return f;
}

TEST(Sweep, ImageRejectionIsTheRfFilterAttenuationAtTheImage) {
    const hb::Setup s = session(std::string(kPlan) + kFilterAndSource);
    const SweepResult r = sweep(s);
    ASSERT_GE(r.image, 0);
    const SweepResponse& img = r.responses[static_cast<std::size_t>(r.image)];
    // M3: high-side injection puts the image at f_RF + 2·IF.
    EXPECT_NEAR(img.response.rf_hz, 1.0e6 + 2 * 455e3, 1e-6);
    // A switching mixer converts wanted and image with the same LO coefficient, so the rejection is the filter's
    // own response at the wanted over that at the image.
    const double expected = db20(filter_response(s.rf_filter, 1.0e6)) - db20(filter_response(s.rf_filter, 1.91e6));
    ASSERT_GT(expected, 60.0);
    EXPECT_FALSE(img.measured.lower_bound);
    EXPECT_NEAR(img.measured.rejection_db, expected, 0.5);
    EXPECT_EQ(img.status, LineStatus::pass);
    // The ±1 switch converts with 2/π (−3.92 dB, reference-values M2); the filter passes its centre with |H| = 1.
    EXPECT_NEAR(r.wanted_gain_db, 20 * std::log10(2 / kPi), 0.05);
    // The grid points inside the image band read the same (no IF filter: flat across the passband).
    int in_band = 0;
    for (const ToneMeasurement& p : r.points)
        if (std::abs(p.rf_hz - 1.91e6) < 4e3) {
            ++in_band;
            const double e = db20(filter_response(s.rf_filter, 1.0e6)) - db20(filter_response(s.rf_filter, p.rf_hz));
            EXPECT_NEAR(p.rejection_db, e, 0.5) << p.rf_hz;
        }
    EXPECT_GE(in_band, 1);
    EXPECT_EQ(r.verdict(), "pass");
}

TEST(Sweep, ImageRejectionWithoutASourceAndLowSideInjection) {
    // No [[source]]: the sweep chooses its own window rate. Low-side LO (545 kHz): the image at f_RF − 2·IF (M3).
    std::string plan = low_side(kPlan);
    const hb::Setup s = session(plan + R"(
[mixer]
model = "bipolar"
[rf_filter]
type = "chebyshev1"
center_hz = 1.0e6
bandwidth_hz = 300e3
order = 3
ripple_db = 0.5
)");
    const SweepResult r = sweep(s);
    ASSERT_GE(r.image, 0);
    const SweepResponse& img = r.responses[static_cast<std::size_t>(r.image)];
    EXPECT_NEAR(img.response.rf_hz, 1.0e6 - 2 * 455e3, 1e-6);
    const double expected = db20(filter_response(s.rf_filter, 1.0e6)) - db20(filter_response(s.rf_filter, 90e3));
    ASSERT_GT(expected, 30.0);
    EXPECT_NEAR(img.measured.rejection_db, expected, 0.5);
}

TEST(Sweep, ImageRejectionUnchangedByANarrowIfFilterAndDecimation) {
    // The IF filter weighs wanted and image alike (both land on the IF centre), so only the chain's settling is
    // at stake: a transient left in the FFT frame would spoil a figure 67 dB down.
    const hb::Setup s = session(std::string(kPlan) + kFilterAndSource + R"(
[[if_filter]]
preset = "ceramic-455k"
[if_chain]
decimation = 4
)");
    const SweepResult r = sweep(s);
    ASSERT_GE(r.image, 0);
    const double expected = db20(filter_response(s.rf_filter, 1.0e6)) - db20(filter_response(s.rf_filter, 1.91e6));
    EXPECT_NEAR(r.responses[static_cast<std::size_t>(r.image)].measured.rejection_db, expected, 0.5);
    EXPECT_NEAR(r.if_rate_hz, 2.4e6 / 4, 1e-6);
}

// A single-ended switch (0/1, duty 0.3: even LO harmonics and an RF feedthrough) with a second-order RF port.
std::string single_ended(const std::string& plan, const std::string& sweep_keys) {
    return plan + "[mixer]\nmodel = \"unipolar\"\nduty_cycle = 0.3\niip2_dbm = 10\n[sweep]\n" + sweep_keys;
}

TEST(Sweep, HalfIfResponseSitsMidwayBetweenWantedAndLo) {
    for (const char* side : {"high", "low"}) {
        const bool high = std::string(side) == "high";
        const std::string plan = high ? std::string(kPlan) : low_side(kPlan);
        // M4: f_RF + IF/2 for high-side injection, f_RF − IF/2 for low-side.
        const double f_half = high ? 1.0e6 + 455e3 / 2 : 1.0e6 - 455e3 / 2;
        const double lo = f_half - 30e3, hi = f_half + 30e3;
        const hb::Setup s = session(single_ended(
            plan, "rf_low_hz = " + std::to_string(lo) + "\nrf_high_hz = " + std::to_string(hi) + "\nstep_hz = 250\n"));
        const SweepResult r = sweep(s);
        ASSERT_GE(r.half_if, 0) << side;
        const SweepResponse& h = r.responses[static_cast<std::size_t>(r.half_if)];
        EXPECT_NEAR(h.response.rf_hz, f_half, 1e-6) << side;
        EXPECT_FALSE(h.measured.lower_bound) << side;
        // The grid finds the response there: the tones that reach the passband form one band centred on f_half,
        // B/|n| = 5 kHz wide (the 10 kHz passband mapped back through n = 2).
        const std::vector<double> f = responding(r, lo, hi);
        ASSERT_GE(f.size(), 10u) << side;
        EXPECT_NEAR((f.front() + f.back()) / 2, f_half, 250.0) << side;
        EXPECT_NEAR(f.back() - f.front(), 5e3, 2 * 250.0) << side;
        for (std::size_t i = 1; i < f.size(); ++i) EXPECT_NEAR(f[i] - f[i - 1], 250.0, 1.0) << "one band, " << side;
    }
}

TEST(Sweep, IfFeedthroughSitsAtTheIfWithTheSwitchsMeanValue) {
    const hb::Setup s = session(single_ended(kPlan, "rf_low_hz = 400e3\nrf_high_hz = 510e3\nstep_hz = 250\n"));
    const SweepResult r = sweep(s);
    ASSERT_GE(r.if_feedthrough, 0);
    const SweepResponse& x = r.responses[static_cast<std::size_t>(r.if_feedthrough)];
    EXPECT_NEAR(x.response.rf_hz, 455e3, 1e-6);
    // F2: the 0/1 switch passes RF with its mean value d and converts with a_1/2 = sin(πd)/π, so the IF
    // feedthrough sits 20·log10(sin(πd)/(πd)) from the wanted (−1.33 dB at d = 0.3: the RF gets through better).
    const double d = 0.3;
    EXPECT_NEAR(x.measured.rejection_db, 20 * std::log10(std::sin(kPi * d) / (kPi * d)), 0.05);
    EXPECT_EQ(x.status, LineStatus::fail);
    // (The (1, −2) response at (f_LO − IF)/2 = 500 kHz is in the grid too; the IF band alone is looked at.)
    const std::vector<double> f = responding(r, 420e3, 490e3);
    ASSERT_GE(f.size(), 10u);
    EXPECT_NEAR((f.front() + f.back()) / 2, 455e3, 250.0);
    EXPECT_NEAR(f.back() - f.front(), 10e3, 2 * 250.0);
}

TEST(Sweep, IdealSwitchWithoutRfFilterHasNoImageRejectionAndOddHarmonicResponses) {
    std::string plan = kPlan;
    plan.replace(plan.find("max_order = 5"), 13, "max_order = 6");
    const hb::Setup s = session(plan + "[mixer]\nmodel = \"bipolar\"\n");
    const SweepResult r = sweep(s);
    ASSERT_GE(r.image, 0);
    EXPECT_NEAR(r.responses[static_cast<std::size_t>(r.image)].measured.rejection_db, 0.0, 0.05);
    EXPECT_EQ(r.responses[static_cast<std::size_t>(r.image)].status, LineStatus::fail);
    // F1: the ±1 square wave's harmonics fall as 1/n: 3LO ± IF reads 9.542 dB, 5LO ± IF 13.979 dB below the
    // wanted, at (m·f_LO ∓ IF) for |n| = 1.
    const double lo = 1.455e6;
    for (const auto& [m, db] : {std::pair{3, 9.542}, std::pair{5, 13.979}})
        for (double f : {m * lo - 455e3, m * lo + 455e3}) {
            const SweepResponse* x = find(r, m, -1, f);
            ASSERT_NE(x, nullptr) << m;
            EXPECT_NEAR(x->response.rf_hz, f, 1e-6);
            EXPECT_FALSE(x->measured.lower_bound) << m << " " << f;
            EXPECT_NEAR(x->measured.rejection_db, db, 0.05) << m << " " << f;
        }
    // A balanced switch at 50 % duty has no even harmonics (F1): 2LO ± IF gives nothing in the passband.
    const SweepResponse* even = find(r, 2, -1, 2 * lo - 455e3);
    ASSERT_NE(even, nullptr);
    EXPECT_TRUE(even->measured.lower_bound);
    EXPECT_GT(even->measured.rejection_db, 80.0);
    EXPECT_EQ(r.verdict(), "fail");
}

TEST(Sweep, QuadratureMixerImageRejectionFollowsItsGainAndPhaseErrors) {
    // reference-values R3: IRR = (1 + 2g·cosθ + g²)/(1 − 2g·cosθ + g²), g = 10^(ΔG/20): 0.5 dB and 3° give
    // 28.20 dB, 0.2 dB and 2° give 33.59 dB. No RF filter, so the mixer's own rejection is all there is.
    struct Case {
        bool high;
        double gain_db, phase_deg, table_db;
    };
    for (const Case& c : {Case{true, 0.5, 3.0, 28.20}, Case{false, 0.2, 2.0, 33.59}}) {
        const std::string plan = c.high ? std::string(kPlan) : low_side(kPlan);
        const hb::Setup s =
            session(plan + "[mixer]\nmodel = \"quadrature\"\niq_gain_error_db = " + std::to_string(c.gain_db) +
                    "\niq_phase_error_deg = " + std::to_string(c.phase_deg) + "\n");
        const SweepResult r = sweep(s);
        ASSERT_GE(r.image, 0);
        const SweepResponse& img = r.responses[static_cast<std::size_t>(r.image)];
        EXPECT_NEAR(img.response.rf_hz, c.high ? 1.91e6 : 90e3, 1e-6);
        const double g = std::pow(10.0, c.gain_db / 20), th = c.phase_deg * kPi / 180;
        const double irr = 10 * std::log10((1 + 2 * g * std::cos(th) + g * g) / (1 - 2 * g * std::cos(th) + g * g));
        EXPECT_NEAR(irr, c.table_db, 0.005);
        EXPECT_NEAR(img.measured.rejection_db, irr, 0.05) << (c.high ? "high" : "low");
    }
}

TEST(Sweep, BothMethodsAgreeForALinearMixer) {
    const std::string text = std::string(kPlan) + kFilterAndSource;
    const SweepResult fixed = sweep(session(text));
    const SweepResult equal = sweep(session(text + "[sweep]\nmethod = \"equal-output\"\n"));
    ASSERT_EQ(fixed.responses.size(), equal.responses.size());
    int compared = 0;
    for (const SweepResponse& a : fixed.responses) {
        if (a.measured.lower_bound) continue;
        const SweepResponse* b = find(equal, a.response.m, a.response.n, a.response.rf_hz);
        ASSERT_NE(b, nullptr);
        ASSERT_FALSE(b->measured.lower_bound) << a.response.label;
        EXPECT_NEAR(b->measured.rejection_db, a.measured.rejection_db, 0.02) << a.response.label;
        // Equal output: the tone sits the rejection above the wanted.
        EXPECT_NEAR(b->measured.tone_dbfs - equal.reference_dbfs, b->measured.rejection_db, 0.02);
        ++compared;
    }
    EXPECT_GE(compared, 3);  // the image and the two 3LO responses at least
}

TEST(Sweep, MethodsDifferByTheOrderOfTheResponse) {
    // A second- and third-order RF port (IIP2 and IIP3 −10 dBFS at 0 dB calibration: equal output is reached
    // below the intercept, where the search stops) and a 0/1 switch of duty 0.3. Fixed level at the wanted's level R:
    // rejection_f = G1 − Gn − (n − 1)·R; equal output solves Gn + n·T = G1 + R, so rejection_e = T − R = rejection_f /
    // n.
    std::string plan = kPlan;
    plan.replace(plan.find("max_order = 5"), 13, "max_order = 4");
    const std::string mixer = "[mixer]\nmodel = \"unipolar\"\nduty_cycle = 0.3\niip2_dbm = -10\niip3_dbm = -10\n";
    const std::string grid = "rf_low_hz = 1.0e6\nrf_high_hz = 1.001e6\nstep_hz = 1e3\n";
    const SweepResult fixed = sweep(session(plan + mixer + "[sweep]\n" + grid));
    const SweepResult fixed10 = sweep(session(plan + mixer + "[sweep]\ntone_dbfs = -20\n" + grid));
    const SweepResult equal = sweep(session(plan + mixer + "[sweep]\nmethod = \"equal-output\"\n" + grid));
    std::set<int> orders;
    for (const SweepResponse& a : fixed.responses) {
        const int n = std::abs(a.response.n);
        if (a.measured.lower_bound || n < 2 || a.response.rf_hz < 50e3) continue;
        const SweepResponse* e = find(equal, a.response.m, a.response.n, a.response.rf_hz);
        const SweepResponse* f10 = find(fixed10, a.response.m, a.response.n, a.response.rf_hz);
        ASSERT_NE(e, nullptr);
        ASSERT_NE(f10, nullptr);
        if (e->measured.lower_bound || f10->measured.lower_bound) continue;
        // n dB per dB of input: 10 dB more tone, (n − 1)·10 dB less fixed-level rejection.
        EXPECT_NEAR(a.measured.rejection_db - f10->measured.rejection_db, (n - 1) * 10.0, 0.05) << a.response.label;
        EXPECT_NEAR(e->measured.rejection_db, a.measured.rejection_db / n, 0.05) << a.response.label;
        orders.insert(n);
    }
    EXPECT_TRUE(orders.count(2)) << "no second-order response compared";
    EXPECT_TRUE(orders.count(3)) << "no third-order response compared";
}

TEST(Sweep, GridDefaultsTakeInEveryResponse) {
    const hb::Setup s = session(std::string(kPlan) + kFilterAndSource);
    ResponseQuery q;
    q.lo_hz = 1.455e6;
    q.max_order = 5;
    q.if_band = {455e3, 10e3};
    q.wanted_rf_hz = 1.0e6;
    q.rf_low_hz = 0.5e6;
    q.rf_high_hz = 1.7e6;
    const std::vector<Response> rs = spurious_responses(q);
    const SweepGrid g = sweep_grid(s.sweep, s.plan, rs);
    EXPECT_EQ(g.points, kSweepDefaultPoints);
    EXPECT_GT(g.low_hz, 0.0);
    for (const Response& r : rs) {
        EXPECT_LE(g.low_hz, r.rf_low_hz) << r.label;
        EXPECT_GE(g.high_hz, r.rf_high_hz) << r.label;
    }
    SweepSpec w;
    w.rf_low_hz = 1e6;
    w.rf_high_hz = 2e6;
    w.step_hz = 1e-3;
    EXPECT_THROW(sweep_grid(w, s.plan, rs), InputError);
}

// ---- The command line -----------------------------------------------------------------------------------------

nlohmann::json read_json(const std::filesystem::path& p) {
    std::ifstream f(p);
    return nlohmann::json::parse(f);
}

TEST(SweepCli, PassWritesTheReportsAndExitsZero) {
    test::TempDir dir;
    test::write_file(dir.file("mw.toml"),
                     std::string("[bench]\nname = \"mw <bench> & co\"\n") + kPlan + kFilterAndSource);
    const test::RunResult r =
        test::run_hetbench({"sweep", dir.file("mw.toml").string(), "--out", dir.file("out").string()});
    ASSERT_EQ(r.exit_code, 0) << r.out << r.err;
    EXPECT_NE(r.out.find("points/s"), std::string::npos) << r.out;
    const nlohmann::json j = read_json(dir.file("out") / "mw-sweep.json");
    EXPECT_EQ(j["schema"], "hetbench.sweep/1");
    EXPECT_EQ(j["verdict"], "pass");
    ASSERT_FALSE(j["responses"].empty());
    for (const char* k : {"label", "m", "n", "rf_hz", "rejection_db", "limit_db", "status"})
        EXPECT_TRUE(j["responses"][0].contains(k)) << k;
    // Worst margin first.
    double prev = -1e300;
    for (const auto& x : j["responses"]) {
        if (!x["margin_db"].is_number()) continue;
        EXPECT_GE(x["margin_db"].get<double>(), prev);
        prev = x["margin_db"].get<double>();
    }
    EXPECT_TRUE(j["image"]["rejection_db"].is_number());
    EXPECT_EQ(j["image"]["status"], "pass");
    EXPECT_EQ(j["sweep"].size(), kSweepDefaultPoints);
    EXPECT_TRUE(j.contains("setup"));
    const std::string text = j.dump();
    for (const char* bad : {"NaN", "nan", "Infinity"}) EXPECT_EQ(text.find(bad), std::string::npos) << bad;
    // CSV: one header and the same number of fields on every line.
    std::istringstream csv(test::read_file(dir.file("out") / "mw-sweep.csv"));
    std::string line;
    std::getline(csv, line);
    const auto commas = std::count(line.begin(), line.end(), ',');
    std::size_t rows = 0;
    while (std::getline(csv, line)) {
        EXPECT_EQ(std::count(line.begin(), line.end(), ','), commas) << line;
        ++rows;
    }
    EXPECT_EQ(rows, j["responses"].size() + kSweepDefaultPoints);
    // HTML: self-contained, the plot inline, the bench name escaped.
    const std::string html = test::read_file(dir.file("out") / "mw-sweep.html");
    EXPECT_NE(html.find("<svg"), std::string::npos);
    EXPECT_NE(html.find("mw &lt;bench&gt; &amp; co"), std::string::npos);
    EXPECT_EQ(html.find("<script"), std::string::npos);
    const std::string png = test::read_file(dir.file("out") / "mw-sweep.png");
    ASSERT_GT(png.size(), 8u);
    EXPECT_EQ(png.substr(1, 3), "PNG");
}

TEST(SweepCli, FailingLimitExitsOne) {
    test::TempDir dir;
    test::write_file(dir.file("bare.toml"), std::string(kPlan) + "[mixer]\nmodel = \"bipolar\"\n");
    const test::RunResult r =
        test::run_hetbench({"sweep", dir.file("bare.toml").string(), "--out", dir.file("out").string()});
    EXPECT_EQ(r.exit_code, 1) << r.out << r.err;
    const nlohmann::json j = read_json(dir.file("out") / "bare-sweep.json");
    EXPECT_EQ(j["verdict"], "fail");
    EXPECT_EQ(j["image"]["status"], "fail");
}

TEST(SweepCli, BadSessionsExitTwoNamingTheKey) {
    test::TempDir dir;
    struct Case {
        const char* name;
        std::string text;
        const char* key;
    };
    const std::vector<Case> cases{
        {"method", std::string(kPlan) + kFilterAndSource + "[sweep]\nmethod = \"sideways\"\n", "sweep.method"},
        {"step", std::string(kPlan) + kFilterAndSource + "[sweep]\nstep_hz = -5\n", "sweep.step_hz"},
        {"fine", std::string(kPlan) + kFilterAndSource + "[sweep]\nstep_hz = 0.01\n", "sweep.step_hz"},
        {"level", std::string(kPlan) + kFilterAndSource + "[sweep]\nreference_dbfs = 12\n", "sweep.reference_dbfs"},
        {"unknown", std::string(kPlan) + kFilterAndSource + "[sweep]\nspan_hz = 1e6\n", "span_hz"},
        {"bypass", std::string(kPlan) + "[mixer]\nmodel = \"bypass\"\n", "mixer.model"},
    };
    for (const Case& c : cases) {
        const auto path = dir.file(std::string(c.name) + ".toml");
        test::write_file(path, c.text);
        const test::RunResult r = test::run_hetbench({"sweep", path.string(), "--out", dir.file("out").string()});
        EXPECT_EQ(r.exit_code, 2) << c.name << ": " << r.out << r.err;
        EXPECT_NE(r.err.find(c.key), std::string::npos) << c.name << ": " << r.err;
    }
}

}  // namespace
}  // namespace hb
