// The demo sets in recordings/ through the real command line: each bench's key figures against values computed here
// from its scenario (the injected levels) and published formulas, exit codes, byte-identical reports run to run, and
// recordings that `hetbench synth` makes again from the committed scenarios giving the same measurements.
#include <gtest/gtest.h>

#include <cmath>
#include <nlohmann/json.hpp>

#include "devices/session.hpp"
#include "dsp/filter_model.hpp"
#include "dsp/mixer.hpp"
#include "support/test_support.hpp"

namespace hb {
namespace {

using test::run_hetbench;
using test::TempDir;

std::string recordings(const std::string& name) {
    return (test::source_dir() / "recordings" / name).string();
}

double db(std::complex<double> h) {
    return 20.0 * std::log10(std::abs(h));
}

struct Verified {
    int exit_code = -1;
    nlohmann::json report;
    std::string out, err;
};

Verified verify(const std::string& session, const TempDir& d, const std::string& stem,
                std::vector<std::string> extra = {}) {
    std::vector<std::string> args{"verify", session, "--out", d.path.string(), "--stem", stem};
    args.insert(args.end(), extra.begin(), extra.end());
    const auto r = run_hetbench(args);
    Verified v{r.exit_code, {}, r.out, r.err};
    const auto json = d.file(stem + ".json");
    if (std::filesystem::exists(json)) v.report = nlohmann::json::parse(test::read_file(json));
    return v;
}

double number(const nlohmann::json& j) {
    return j.is_number() ? j.get<double>() : std::nan("");
}

const nlohmann::json* unexplained_with(const nlohmann::json& report, const std::string& response) {
    for (const auto& u : report["unexplained"])
        if (u["response"].is_object() && u["response"]["label"] == response) return &u;
    return nullptr;
}

// MF superhet: wanted CW −30 dBm at 1000 kHz (scenarios/mf-bench.toml: full scale 0 dBm, gain 0, so −30 dBFS);
// the passive diode ring converts with its conversion gain; the preselector and the IF filter pass the wanted
// with their own responses. The image-band carrier (1912 kHz) converts with the same switching coefficient, so the
// image rejection is the preselector's attenuation at 1912 kHz over 1000 kHz plus the IF filter's at 457 kHz over
// 455 kHz. The preselector is a 3rd-order Butterworth band-pass: 10·log10(1 + Ω^6) with the band-pass transform
// Ω = (f² − f0²)/(f·B), f0² = f1·f2 (reference-values B1; Zverev 1967, from memory).
TEST(DemoSets, MfSuperhetFromItsRecording) {
    TempDir d;
    const Verified v = verify(recordings("demo.toml"), d, "mf");
    ASSERT_EQ(v.exit_code, 0) << v.out << v.err;
    const hb::Setup s = load_session(recordings("demo.toml"));
    const MixerPreset* ring = find_mixer_preset("diode-ring");
    ASSERT_NE(ring, nullptr);
    ASSERT_TRUE(ring->values.conversion_gain_db.has_value());
    const FilterSpec& rf = s.rf_filter;
    const FilterSpec& iff = s.if_filters.at(0);
    const double wanted =
        -30.0 + *ring->values.conversion_gain_db + db(filter_response(rf, 1000e3)) + db(filter_response(iff, 455e3));
    EXPECT_NEAR(number(v.report["wanted"]["level_dbfs"]), wanted, 0.5);

    const double f1 = rf.center_hz - rf.bandwidth_hz / 2, f2 = rf.center_hz + rf.bandwidth_hz / 2;
    auto butterworth_db = [&](double f) {
        const double w = (f * f - f1 * f2) / (f * rf.bandwidth_hz);
        return 10.0 * std::log10(1.0 + std::pow(w, 2 * rf.order));
    };
    const double rf_part = butterworth_db(1912e3) - butterworth_db(1000e3);
    EXPECT_NEAR(rf_part, db(filter_response(rf, 1000e3)) - db(filter_response(rf, 1912e3)), 0.1);
    const double image = rf_part + db(filter_response(iff, 455e3)) - db(filter_response(iff, 457e3));
    EXPECT_NEAR(number(v.report["image"]["rejection_db"]), image, 0.5);
    EXPECT_EQ(v.report["image"]["status"], "pass");
    EXPECT_NEAR(number(v.report["image"]["rf_hz"]), 1912e3, 50.0);

    // The carrier inside the IF passband (458 kHz) is explained as the IF (0×1) response and judged.
    const nlohmann::json* feed = unexplained_with(v.report, "IF");
    ASSERT_NE(feed, nullptr);
    EXPECT_NEAR(number((*feed)["response"]["rf_hz"]), 458e3, 50.0);
    EXPECT_EQ((*feed)["response"]["status"], "pass");
    // The wanted's products outside the 300 kS/s IF span are listed, not dropped.
    int not_observable = 0;
    for (const auto& p : v.report["products"]) not_observable += p["status"] == "not-observable";
    EXPECT_GT(not_observable, 10);
    EXPECT_TRUE(std::filesystem::exists(d.file("mf.html")));
    EXPECT_TRUE(std::filesystem::exists(d.file("mf.png")));
}

// VHF bench: the single-diode mixer behind a band-wide preselector (4th-order Butterworth 87.5–108.5 MHz). The image
// tone is injected by a second source (the bench generator) at 116.002 MHz; the rejection is the preselector's
// attenuation there over the channel's, plus the ceramic filter's at 10.698 over 10.7 MHz. It is under the 60 dB limit:
// exit 1.
TEST(DemoSets, VhfBenchFailsItsImageLimitByTheFiltersAttenuation) {
    TempDir d;
    const Verified v = verify(recordings("vhf-demo.toml"), d, "vhf");
    EXPECT_EQ(v.exit_code, 1) << v.out << v.err;
    const hb::Setup s = load_session(recordings("vhf-demo.toml"));
    const FilterSpec& rf = s.rf_filter;
    const FilterSpec& iff = s.if_filters.at(0);
    const double f1 = rf.center_hz - rf.bandwidth_hz / 2, f2 = rf.center_hz + rf.bandwidth_hz / 2;
    auto butterworth_db = [&](double f) {
        const double w = (f * f - f1 * f2) / (f * rf.bandwidth_hz);
        return 10.0 * std::log10(1.0 + std::pow(w, 2 * rf.order));
    };
    const double image = butterworth_db(116.002e6) - butterworth_db(94.6e6) + db(filter_response(iff, 10.7e6)) -
                         db(filter_response(iff, 10.698e6));
    EXPECT_NEAR(number(v.report["image"]["rejection_db"]), image, 0.5);
    EXPECT_EQ(v.report["image"]["status"], "fail");
    EXPECT_EQ(v.report["verdict"], "fail");
    // Wanted: −50 dBm at the port, the capture's 0 dBFS is −10 dBm.
    const MixerPreset* diode = find_mixer_preset("single-diode");
    ASSERT_NE(diode, nullptr);
    ASSERT_TRUE(diode->values.conversion_gain_db.has_value());
    const double wanted_dbm =
        -50.0 + *diode->values.conversion_gain_db + db(filter_response(rf, 94.6e6)) + db(filter_response(iff, 10.7e6));
    EXPECT_NEAR(number(v.report["wanted"]["level_dbm"]), wanted_dbm, 0.5);
    // The LO (105.3 MHz) and its harmonics are far outside the 600 kS/s IF span: reported not observable.
    bool lo_listed = false;
    for (const auto& p : v.report["products"])
        if (p["m"] == 1 && p["n"] == 0) {
            lo_listed = true;
            EXPECT_EQ(p["status"], "not-observable");
        }
    EXPECT_TRUE(lo_listed);
}

// Two-tone bench: the emulated cell is set to IIP3 +2 dBm and IIP2 +45 dBm; at −30 dBm per tone (3 % of the
// intercept amplitude) the extrapolations IIP3 = P_in + ΔIM3/2 and IIP2 = P_in + ΔIM2 are within 0.01 dB of the
// polynomial's intercepts (reference-values I4, Razavi 2012 §2.2). A limit above the part fails.
TEST(DemoSets, TwoToneBenchReadsTheIntercepts) {
    TempDir d;
    const Verified v = verify(recordings("two-tone.toml"), d, "tt");
    ASSERT_EQ(v.exit_code, 0) << v.out << v.err;
    const auto& t = v.report["two_tone"];
    EXPECT_NEAR(number(t["tone_rf_dbfs"]), -30.0, 0.1);
    EXPECT_NEAR(number(t["iip3_dbm"]), 2.0, 0.5);
    EXPECT_NEAR(number(t["iip2_dbm"]), 45.0, 0.5);
    // IM3 at −30 dBm per tone: 2·(P_in − IIP3) = −64 dBc, both sides (I4).
    EXPECT_NEAR(number(t["im3_low_dbfs"]) - number(t["fundamental_if_dbfs"]), -64.0, 0.5);
    EXPECT_NEAR(number(t["im3_high_dbfs"]) - number(t["fundamental_if_dbfs"]), -64.0, 0.5);

    // The same bench held to IIP3 ≥ +5 dBm fails: exit 1.
    hb::Setup s = load_session(recordings("two-tone.toml"));
    s.plan.limits.iip3_min_dbm = 5.0;
    s.sources[0].path = recordings("two-tone-bench.sigmf-meta");
    save_session(s, d.file("strict.toml").string());
    const Verified strict = verify(d.file("strict.toml").string(), d, "strict");
    EXPECT_EQ(strict.exit_code, 1) << strict.out << strict.err;
    EXPECT_EQ(strict.report["two_tone"]["iip3_status"], "fail");
}

// Audio-rate I/Q WAV through an image-reject mixer of 0.3 dB / 2° imbalance: the image rejection is
// IRR = (1 + 2g·cosθ + g²)/(1 − 2g·cosθ + g²) (reference-values §4; Razavi, RF Microelectronics).
TEST(DemoSets, AudioIqWavImageIsTheImbalancesRejection) {
    TempDir d;
    const Verified v = verify(recordings("audio-iq.toml"), d, "aiq");
    ASSERT_EQ(v.exit_code, 0) << v.out << v.err;
    const double g = std::pow(10.0, 0.3 / 20.0), th = 2.0 * 3.14159265358979323846 / 180.0;
    const double irr = 10.0 * std::log10((1 + 2 * g * std::cos(th) + g * g) / (1 - 2 * g * std::cos(th) + g * g));
    EXPECT_NEAR(irr, 32.2, 0.05);
    EXPECT_NEAR(number(v.report["image"]["rejection_db"]), irr, 0.5);
    EXPECT_NEAR(number(v.report["image"]["rf_hz"]), 6450.0, 5.0);
}

TEST(DemoSets, SameInputSameReportByteForByte) {
    TempDir a, b;
    ASSERT_EQ(verify(recordings("demo.toml"), a, "r").exit_code, 0);
    ASSERT_EQ(verify(recordings("demo.toml"), b, "r").exit_code, 0);
    EXPECT_EQ(test::read_file(a.file("r.json")), test::read_file(b.file("r.json")));
    EXPECT_EQ(test::read_file(a.file("r.csv")), test::read_file(b.file("r.csv")));
}

TEST(DemoSets, RecordingsAreMadeAgainByTheirScenarios) {
    // The committed MF capture and one made now from its scenario give the same measurements (the samples may differ
    // in their last bits between CPUs, so the check is on the figures, not a checksum).
    TempDir d;
    const auto made = d.file("mf").string();
    const auto r = run_hetbench({"synth", recordings("scenarios/mf-bench.toml"), "--frequency", "1.2M", "--rate",
                                 "2.4M", "--seconds", "0.2", "--format", "ci16_le", "--out", made});
    ASSERT_EQ(r.exit_code, 0) << r.err;
    const Verified fresh = verify(recordings("demo.toml"), d, "fresh", {"--input", made + ".sigmf-meta"});
    const Verified committed = verify(recordings("demo.toml"), d, "committed");
    ASSERT_EQ(fresh.exit_code, 0) << fresh.err;
    EXPECT_NEAR(number(fresh.report["wanted"]["level_dbfs"]), number(committed.report["wanted"]["level_dbfs"]), 0.05);
    EXPECT_NEAR(number(fresh.report["image"]["rejection_db"]), number(committed.report["image"]["rejection_db"]), 0.05);
    // The scenario travels in the metadata.
    const auto meta = nlohmann::json::parse(test::read_file(made + ".sigmf-meta"));
    EXPECT_EQ(meta["global"]["hetbench:scenario"].get<std::string>(),
              test::read_file(recordings("scenarios/mf-bench.toml")));
}

TEST(DemoSets, SeveralInputsInParallelJobs) {
    TempDir d;
    const auto r =
        run_hetbench({"verify", recordings("demo.toml"), "--input", recordings("mf-bench.sigmf-meta"), "--input",
                      recordings("mf-bench.sigmf-data"), "--jobs", "2", "--out", d.path.string()});
    EXPECT_EQ(r.exit_code, 0) << r.out << r.err;
    EXPECT_TRUE(std::filesystem::exists(d.file("mf-bench.json")));
    EXPECT_TRUE(std::filesystem::exists(d.file("mf-bench_.json")));
    EXPECT_TRUE(std::filesystem::exists(d.file("index.html")));
    // The two name the same recording by its two files: everything but the names agrees.
    auto figures = [&](const char* f) {
        nlohmann::json j = nlohmann::json::parse(test::read_file(d.file(f)));
        for (const char* k : {"source", "description", "setup"}) j.erase(k);
        return j;
    };
    EXPECT_TRUE(figures("mf-bench.json") == figures("mf-bench_.json"));
}

TEST(DemoSets, MalformedSessionIsExitTwoNamingTheKey) {
    TempDir d;
    test::write_file(d.file("bad.toml"), "[plan]\nwanted_hz = 1e6\nif_hz = -455e3\nif_bandwidth_hz = 10e3\n");
    const auto r = run_hetbench({"verify", d.file("bad.toml").string(), "--out", d.path.string()});
    EXPECT_EQ(r.exit_code, 2);
    EXPECT_NE(r.err.find("plan.if_hz"), std::string::npos) << r.err;
    const auto missing = run_hetbench(
        {"verify", recordings("demo.toml"), "--input", d.file("nope.sigmf-meta").string(), "--out", d.path.string()});
    EXPECT_EQ(missing.exit_code, 2);
    EXPECT_NE(missing.err.find("nope.sigmf-meta"), std::string::npos) << missing.err;
}

}  // namespace
}  // namespace hb
