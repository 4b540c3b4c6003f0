// Session files: good files load and round-trip; every bad file is refused with a message that names
// the file, the key path and what was expected.
#include <gtest/gtest.h>

#include "devices/session.hpp"
#include "support/test_support.hpp"

namespace hb {
namespace {

const char* kGood = R"(
[bench]
name = "VHF bench, invented plan"
seed = 42

[[source]]
kind = "generator"
scenario = "scenarios/vhf.toml"
frequency_hz = "100M"
sample_rate_hz = 2.4e6
level_offset_db = -10

[[source]]
kind = "recording"
path = "rec/vhf.sigmf-meta"
loop = true

[rf_filter]
type = "butterworth"
center_hz = 100e6
bandwidth_hz = 8e6
order = 5

[mixer]
model = "bipolar"
preset = "diode-ring"
duty_cycle = 0.51
harmonics = 9
iip3_dbm = 15

[mixer.lo]
level_dbm = 7
phase_noise = [[1e3, -80], [1e5, -120]]

[[if_filter]]
type = "chebyshev1"
center_hz = "10.7 MHz"
bandwidth_hz = 200e3
order = 4
ripple_db = 0.5
sections = 2

[if_chain]
decimation = 4
gain_db = 20

[analyzer]
fft_size = 8192
window = "flat-top"
overlap = 0.5
averages = 8
unit = "dBm"
calibration_db = -3.5

[plan]
rf_low_hz = 88e6
rf_high_hz = 108e6
channel_spacing_hz = 200e3
wanted_hz = 100e6
if_hz = 10.7e6
if_bandwidth_hz = 200e3
injection = "high"
max_order = 9

[plan.limits]
image_rejection_db = 50
spur_dbc = -60
lo_feedthrough_dbc = -40
)";

TEST(Session, GoodFileLoads) {
    const hb::Setup s = parse_session(kGood, "/bench/good.toml");
    EXPECT_EQ(s.bench.name, "VHF bench, invented plan");
    EXPECT_EQ(s.bench.seed, 42u);
    ASSERT_EQ(s.sources.size(), 2u);
    EXPECT_EQ(s.sources[0].kind, SourceKind::generator);
    EXPECT_DOUBLE_EQ(*s.sources[0].frequency_hz, 100e6);  // "100M" read with its unit
    EXPECT_DOUBLE_EQ(s.sources[0].level_offset_db, -10);
    EXPECT_TRUE(s.sources[1].loop);
    EXPECT_EQ(s.rf_filter.type, FilterType::butterworth);
    EXPECT_EQ(s.mixer.model, MixerModel::bipolar);
    EXPECT_DOUBLE_EQ(*s.mixer.duty_cycle, 0.51);
    EXPECT_EQ(*s.mixer.harmonics, 9);
    EXPECT_FALSE(s.mixer.iip2_dbm.has_value());
    ASSERT_EQ(s.mixer.lo.phase_noise.size(), 2u);
    EXPECT_DOUBLE_EQ(s.mixer.lo.phase_noise[1].dbc_per_hz, -120);
    ASSERT_EQ(s.if_filters.size(), 1u);
    EXPECT_DOUBLE_EQ(s.if_filters[0].center_hz, 10.7e6);
    EXPECT_EQ(s.if_filters[0].sections, 2);
    EXPECT_EQ(s.analyzer.window, WindowType::flat_top);
    EXPECT_EQ(s.analyzer.unit, LevelUnit::dbm);
    EXPECT_DOUBLE_EQ(s.plan.limits.image_rejection_db, 50);
    EXPECT_EQ(s.base_dir, "/bench");
    EXPECT_EQ(resolve_path(s, s.sources[1].path), "/bench/rec/vhf.sigmf-meta");
    // High-side injection: LO = wanted + IF.
    EXPECT_DOUBLE_EQ(lo_frequency_hz(s), 110.7e6);
}

TEST(Session, RoundTripIsIdentical) {
    const hb::Setup a = parse_session(kGood, "/bench/good.toml");
    const std::string text = session_to_toml(a);
    const hb::Setup b = parse_session(text, "/bench/good.toml");
    EXPECT_EQ(a, b);
    EXPECT_EQ(text, session_to_toml(b));  // the normalised text is a fixed point
}

TEST(Session, RoundTripThroughAFile) {
    test::TempDir dir;
    const hb::Setup a = parse_session(kGood, (dir.path / "s.toml").string());
    save_session(a, (dir.path / "s.toml").string());
    const hb::Setup b = load_session((dir.path / "s.toml").string());
    EXPECT_EQ(a, b);
    EXPECT_FALSE(std::filesystem::exists(dir.path / "s.toml.tmp"));
}

TEST(Session, MinimalPlanGetsDefaults) {
    const hb::Setup s = parse_session("[plan]\nwanted_hz = 1e6\nif_hz = 455e3\nif_bandwidth_hz = 10e3\n", "m.toml");
    EXPECT_DOUBLE_EQ(s.plan.rf_low_hz, 1e6);  // a plan without a band is the wanted channel only
    EXPECT_DOUBLE_EQ(s.plan.rf_high_hz, 1e6);
    EXPECT_EQ(s.mixer.model, MixerModel::ideal);
    EXPECT_EQ(s.analyzer.fft_size, 4096);
}

TEST(Session, MissingFileIsNamed) {
    try {
        load_session("/nonexistent/dir/session.toml");
        FAIL() << "expected an error";
    } catch (const InputError& e) {
        EXPECT_NE(std::string(e.what()).find("/nonexistent/dir/session.toml"), std::string::npos);
    }
}

// One bad session: text appended to (or replacing) a valid plan, and what the message must contain.
struct BadCase {
    const char* name;
    std::string text;
    std::vector<std::string> expect;  // every one must appear in the message
};

const std::string kPlan = "[plan]\nwanted_hz = 1e6\nif_hz = 455e3\nif_bandwidth_hz = 10e3\n";

std::vector<BadCase> bad_cases() {
    return {
        {"WrongType", kPlan + "[analyzer]\nfft_size = \"big\"\n", {"analyzer.fft_size", "\"big\"", "an integer"}},
        {"NegativeRate", kPlan + "[[source]]\nkind = \"generator\"\nsample_rate_hz = -2.4e6\n",
         {"source[0].sample_rate_hz", "-2400000", "above 0"}},
        {"IfOfZero", "[plan]\nwanted_hz = 1e6\nif_hz = 0\nif_bandwidth_hz = 10e3\n", {"plan.if_hz", "got 0"}},
        {"UnknownKey", kPlan + "[mixer]\nmodel = \"ideal\"\nlo_levle_dbm = 7\n",
         {"mixer.lo_levle_dbm", "unknown key", "conversion_gain_db"}},
        {"UnknownSection", kPlan + "[mixr]\nmodel = \"ideal\"\n", {"mixr", "unknown key", "[mixer]"}},
        {"MissingRequiredKey", "[plan]\nwanted_hz = 1e6\nif_bandwidth_hz = 10e3\n", {"plan.if_hz", "missing required"}},
        {"MissingPlan", "[bench]\nname = \"x\"\n", {"[plan]", "missing required section"}},
        {"NaN", kPlan + "[mixer.lo]\nlevel_dbm = nan\n", {"mixer.lo.level_dbm", "nan", "finite"}},
        {"Infinity", kPlan + "[if_chain]\ngain_db = inf\n", {"if_chain.gain_db", "finite"}},
        {"HugeOrder", "[plan]\nwanted_hz = 1e6\nif_hz = 455e3\nif_bandwidth_hz = 10e3\nmax_order = 100000\n",
         {"plan.max_order", "100000", "from 1 to 31"}},
        {"AbsurdOrderOverflow", "[plan]\nwanted_hz = 1e6\nif_hz = 455e3\nif_bandwidth_hz = 10e3\nmax_order = 9999999999999\n",
         {"plan.max_order", "far outside"}},
        {"BadEnum", kPlan + "[mixer]\nmodel = \"magic\"\n", {"mixer.model", "\"magic\"", "bypass|ideal|unipolar|bipolar|quadrature"}},
        {"BadInjection", "[plan]\nwanted_hz = 1e6\nif_hz = 455e3\nif_bandwidth_hz = 10e3\ninjection = \"sideways\"\n",
         {"plan.injection", "low|high"}},
        {"FftNotPowerOfTwo", kPlan + "[analyzer]\nfft_size = 1000\n", {"analyzer.fft_size", "1000", "power of two"}},
        {"DutyCycleOutOfRange", kPlan + "[mixer]\nduty_cycle = 1.5\n", {"mixer.duty_cycle", "1.5", "below 1"}},
        {"LowSideLoNegative", "[plan]\nwanted_hz = 300e3\nif_hz = 455e3\nif_bandwidth_hz = 10e3\ninjection = \"low\"\n",
         {"plan.injection", "-155000", "injection = \"high\""}},
        {"IfBandContainsZero", "[plan]\nwanted_hz = 1e6\nif_hz = 455e3\nif_bandwidth_hz = 1e6\n",
         {"plan.if_bandwidth_hz", "contain 0 Hz"}},
        {"LoInsideIfBand", kPlan + "[mixer.lo]\nfrequency_hz = 456e3\n", {"mixer.lo.frequency_hz", "inside the IF passband"}},
        {"WantedOutsideBand", "[plan]\nrf_low_hz = 2e6\nrf_high_hz = 3e6\nwanted_hz = 1e6\nif_hz = 455e3\nif_bandwidth_hz = 10e3\n",
         {"plan.wanted_hz", "inside the RF band"}},
        {"BandInverted", "[plan]\nrf_low_hz = 3e6\nrf_high_hz = 2e6\nwanted_hz = 2.5e6\nif_hz = 455e3\nif_bandwidth_hz = 10e3\n",
         {"plan.rf_high_hz", "at least rf_low_hz"}},
        {"SourceWithoutKind", kPlan + "[[source]]\npath = \"x.sigmf-meta\"\n", {"source[0].kind", "missing required"}},
        {"RecordingWithoutPath", kPlan + "[[source]]\nkind = \"recording\"\n", {"source[0].path", "needs the path"}},
        {"SourceAsTable", kPlan + "[source]\nkind = \"generator\"\n", {"source", "[[source]]"}},
        {"BadFrequencyText", kPlan + "[[source]]\nkind = \"generator\"\nfrequency_hz = \"ten MHz\"\n",
         {"source[0].frequency_hz", "\"ten MHz\"", "frequency in Hz"}},
        {"PhaseNoiseShape", kPlan + "[mixer.lo]\nphase_noise = [1e3, -80]\n", {"mixer.lo.phase_noise", "pairs"}},
        {"PhaseNoiseOrder", kPlan + "[mixer.lo]\nphase_noise = [[1e5, -120], [1e3, -80]]\n",
         {"mixer.lo.phase_noise[1].offset_hz", "increasing"}},
        {"NegativeSeed", kPlan + "[bench]\nseed = -1\n", {"bench.seed", "-1"}},
        {"FilterWithoutBandwidth", kPlan + "[rf_filter]\ntype = \"elliptic\"\ncenter_hz = 1e6\n",
         {"rf_filter.bandwidth_hz", "above 0"}},
        {"TouchstoneWithoutPath", kPlan + "[[if_filter]]\ntype = \"touchstone\"\n", {"if_filter[0].path", ".s2p"}},
        {"NotToml", "[plan\nwanted_hz = 1e6\n", {"not valid TOML"}},
        {"DecimationZero", kPlan + "[if_chain]\ndecimation = 0\n", {"if_chain.decimation", "got 0"}},
    };
}

void PrintTo(const BadCase& c, std::ostream* os) { *os << c.name; }

class BadSession : public ::testing::TestWithParam<BadCase> {};

TEST_P(BadSession, IsRefusedWithAClearMessage) {
    const BadCase& c = GetParam();
    try {
        parse_session(c.text, "sessions/bad.toml");
        FAIL() << "accepted a bad session: " << c.name;
    } catch (const InputError& e) {
        const std::string msg = e.what();
        EXPECT_NE(msg.find("sessions/bad.toml"), std::string::npos) << msg;  // the file is named
        for (const auto& part : c.expect) EXPECT_NE(msg.find(part), std::string::npos) << "missing '" << part << "' in:\n" << msg;
    }
}

INSTANTIATE_TEST_SUITE_P(Cases, BadSession, ::testing::ValuesIn(bad_cases()),
                         [](const ::testing::TestParamInfo<BadCase>& i) { return std::string(i.param.name); });

TEST(Session, AllProblemsReportedTogetherWithLines) {
    try {
        parse_session(kPlan + "[mixer]\nbogus = 1\nmodel = \"nope\"\n", "s.toml");
        FAIL();
    } catch (const InputError& e) {
        const std::string msg = e.what();
        EXPECT_NE(msg.find("2 problems"), std::string::npos) << msg;
        EXPECT_NE(msg.find("s.toml:6: mixer.bogus"), std::string::npos) << msg;
        EXPECT_NE(msg.find("s.toml:7: mixer.model"), std::string::npos) << msg;
    }
}

TEST(Session, CheckCommandPrintsNormalisedSession) {
    test::TempDir dir;
    test::write_file(dir.file("s.toml"), kGood);
    const auto r = test::run_hetbench({"check", dir.file("s.toml").string()});
    EXPECT_EQ(r.exit_code, 0) << r.err;
    EXPECT_NE(r.out.find("[plan.limits]"), std::string::npos);
    EXPECT_NE(r.out.find("frequency_hz = 100000000"), std::string::npos) << r.out;
}

TEST(Session, CheckCommandExitsTwoOnBadSession) {
    test::TempDir dir;
    test::write_file(dir.file("s.toml"), kPlan + "frobnicate = 1\n");
    const auto r = test::run_hetbench({"check", dir.file("s.toml").string()});
    EXPECT_EQ(r.exit_code, 2);
    EXPECT_NE(r.err.find("plan.frobnicate"), std::string::npos) << r.err;
}

}  // namespace
}  // namespace hb
