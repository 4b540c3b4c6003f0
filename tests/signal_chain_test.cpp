// The signal chain end to end: sources onto RF windows, RF filter, mixer, IF chain, analyzer, plan check.
// Expected values come from the filter's own response (checked against scipy in the filter tests) and from
// closed forms (switching-mixer conversion gain 2/π: reference-values M2).
#include "dsp/signal_chain.hpp"

#include <gtest/gtest.h>

#include <cmath>
#include <complex>
#include <vector>

#include "devices/filter_setup.hpp"
#include "devices/session.hpp"
#include "dsp/units.hpp"

namespace hb {
namespace {

using cvec = std::vector<std::complex<float>>;

// Tones at absolute frequencies seen through a window (centre fc, rate fs); amplitude a reads 20log10(a) dBFS.
cvec tones(double fc, double fs, std::size_t n, std::vector<std::pair<double, double>> f_and_amp) {
    cvec x(n);
    for (const auto& [f, a] : f_and_amp) {
        const double w = kTwoPi * (f - fc) / fs;
        for (std::size_t i = 0; i < n; ++i) {
            const double ph = std::fmod(w * static_cast<double>(i), kTwoPi);
            x[i] += std::complex<float>(static_cast<float>(a * std::cos(ph)), static_cast<float>(a * std::sin(ph)));
        }
    }
    return x;
}

double db20(std::complex<double> h) {
    return 20.0 * std::log10(std::abs(h));
}

const char* kMf = R"(
[mixer]
model = "bipolar"
[analyzer]
fft_size = 16384
window = "blackman-harris"
averages = 4
[plan]
rf_low_hz = 530e3
rf_high_hz = 1700e3
wanted_hz = 1000e3
if_hz = 455e3
if_bandwidth_hz = 10e3
injection = "high"
max_order = 5
[plan.limits]
image_rejection_db = 30
spur_dbc = -60
)";

TEST(SignalChain, MfImageRejectionEqualsRfFilterAttenuation) {
    const std::string text =
        std::string(kMf) + "[rf_filter]\ntype = \"butterworth\"\ncenter_hz = 1e6\nbandwidth_hz = 300e3\norder = 3\n";
    const hb::Setup s = parse_session(text, "mf.toml");
    const double fc = 1.2e6, fs = 2.4e6, f_img = 1.914e6;
    const RfInput in{fc, fs, 0.0};
    SignalChain chain = SignalChain::make(s, std::span<const RfInput>(&in, 1), {}, filter_loader(s));
    const cvec x = tones(fc, fs, 1 << 17, {{1.0e6, 0.1}, {f_img, 0.1}});
    chain.process(x);
    const ChainAnalysis a = chain.analyze();

    EXPECT_NEAR(a.wanted_rf_dbfs, -20.0, 0.1);
    ASSERT_EQ(a.check.wanted.status, LineStatus::pass) << a.check.wanted.note;
    EXPECT_NEAR(a.check.wanted.freq_hz, 455e3, 50.0);
    // A ±1 switching LO converts with 2/π (-3.92 dB, reference-values M2); the Butterworth band-pass passes its
    // centre with |H| = 1.
    EXPECT_NEAR(a.check.wanted.level_dbfs, -20.0 + 20 * std::log10(2 / kPi), 0.15);
    // Wanted and image convert with the same switching coefficient, so the image rejection is the RF filter's
    // attenuation at the image relative to the wanted (its own response).
    const double expected = db20(filter_response(s.rf_filter, 1.0e6)) - db20(filter_response(s.rf_filter, f_img));
    ASSERT_GT(expected, 30.0);
    ASSERT_EQ(a.image.status, LineStatus::pass) << a.image.note;
    EXPECT_NEAR(a.image.rf_hz, f_img, 100.0);
    EXPECT_NEAR(a.image.rejection_db, expected, 0.3);
}

TEST(SignalChain, NoRfFilterMeansNoImageRejection) {
    const hb::Setup s = parse_session(kMf, "mf.toml");
    const double fc = 1.2e6, fs = 2.4e6;
    const RfInput in{fc, fs, 0.0};
    SignalChain chain = SignalChain::make(s, std::span<const RfInput>(&in, 1));
    chain.process(tones(fc, fs, 1 << 17, {{1.0e6, 0.1}, {1.914e6, 0.05}}));
    const ChainAnalysis a = chain.analyze();
    // A single switching mixer alone converts the image as well as the wanted: 0 dB, below the 30 dB limit.
    EXPECT_NEAR(a.image.rejection_db, 0.0, 0.15);
    EXPECT_EQ(a.image.status, LineStatus::fail);
    EXPECT_FALSE(a.check.passed() && a.image.status == LineStatus::pass);
}

TEST(SignalChain, NoPhantomLinesFromStationsAcrossTheCapture) {
    // A second station at 550 kHz in the MF capture (1.2 MHz centre, 2.4 MS/s): the ±1 switch puts it at
    // |f_LO − 550 kHz| = 905 kHz (derivable), through the conjugate term. Synthesised at the input rate, the other
    // member of that term (centred at −255 kHz) would fold its −905 kHz content round to −905 + 2400 = 1495 kHz: a
    // phantom line a real mixer never makes. The 905 kHz line is a real other signal (unexplained by the plan of
    // the 1 MHz channel); nothing may show near 1495 kHz.
    const hb::Setup s = parse_session(kMf, "mf.toml");
    const double fc = 1.2e6, fs = 2.4e6;
    const RfInput in{fc, fs, 0.0};
    SignalChain chain = SignalChain::make(s, std::span<const RfInput>(&in, 1));
    chain.process(tones(fc, fs, 1 << 17, {{1.0e6, 0.1}, {0.55e6, 0.1}}));
    const ChainAnalysis a = chain.analyze();
    ASSERT_EQ(a.check.wanted.status, LineStatus::pass);
    bool real_other = false;
    for (const UnexplainedPeak& u : a.check.unexplained) {
        // The emulator's filters hold what would fold 100 dB down (its header): nothing above that.
        if (u.level_dbc > -100.0) {
            EXPECT_GT(std::abs(u.freq_hz - 1495e3), 5e3)
                << "phantom at " << u.freq_hz << " Hz, " << u.level_dbc << " dBc";
        }
        if (std::abs(u.freq_hz - 905e3) < 100.0) {
            real_other = true;
            EXPECT_NEAR(u.level_dbfs, -20.0 + 20 * std::log10(2 / kPi), 0.15);  // 2/π: reference-values M2
        }
    }
    EXPECT_TRUE(real_other);
    const Tone phantom = measure_tone(a.if_out, 1490e3, 1500e3);
    EXPECT_FALSE(phantom.level_dbfs >= a.check.wanted.level_dbfs - 100.0)
        << phantom.level_dbfs << " dBFS at " << phantom.freq_hz << " Hz";
}

TEST(SignalChain, FarImageSourceGetsItsOwnZone) {
    // VHF: the wanted at 100 MHz in a 2.4 MS/s capture; a test tone near the image (121.4 MHz) from a second
    // source that cannot share the capture's window.
    const hb::Setup s = parse_session(R"(
[mixer]
model = "bipolar"
[rf_filter]
type = "butterworth"
center_hz = 100e6
bandwidth_hz = 10e6
order = 4
[analyzer]
fft_size = 16384
averages = 4
[plan]
wanted_hz = 100e6
if_hz = 10.7e6
if_bandwidth_hz = 200e3
injection = "high"
max_order = 5
[plan.limits]
image_rejection_db = 40
)",
                                      "vhf.toml");
    const double fs = 2.4e6, f_img = 121.402e6;
    const std::vector<RfInput> in{{100e6, fs, 0.0}, {121.4e6, fs, 0.0}};
    SignalChain chain = SignalChain::make(s, in, {}, filter_loader(s));
    ASSERT_EQ(chain.layout().zones.size(), 2u);
    EXPECT_EQ(chain.layout().zone_of_source[1], 1);
    const cvec a0 = tones(100e6, fs, 1 << 17, {{100e6, 0.1}});
    const cvec a1 = tones(121.4e6, fs, 1 << 17, {{f_img, 0.1}});
    const std::vector<std::span<const std::complex<float>>> blocks{a0, a1};
    chain.process(blocks);
    const ChainAnalysis a = chain.analyze();
    ASSERT_EQ(a.check.wanted.status, LineStatus::pass);
    const double expected = db20(filter_response(s.rf_filter, 100e6)) - db20(filter_response(s.rf_filter, f_img));
    ASSERT_GT(expected, 40.0);
    ASSERT_NE(a.image.status, LineStatus::not_observable) << a.image.note;
    // The realised RF filter meets its own response within 0.05 dB + 1e-4 of the peak (filter tests): at −47 dB
    // that allows about 0.2 dB.
    EXPECT_NEAR(a.image.rejection_db, expected, 0.4);
    EXPECT_EQ(a.image.status, LineStatus::pass);
}

TEST(SignalChain, SecondSourceIsResampledShiftedAndScaled) {
    const hb::Setup s = parse_session(kMf, "mf.toml");
    const double fs = 2.4e6;
    // Source 1 runs at half the rate, centred 300 kHz above the capture centre, calibrated 6 dB hotter
    // (its full scale is 6 dB more dBm), so its tone must read 6 dB above its own dBFS.
    const std::vector<RfInput> in{{1.2e6, fs, 0.0}, {1.5e6, fs / 2, 6.0}};
    SignalChain chain = SignalChain::make(s, in);
    ASSERT_EQ(chain.layout().zones.size(), 1u);
    const cvec a0 = tones(1.2e6, fs, 1 << 17, {{1.0e6, 0.1}});
    const cvec a1 = tones(1.5e6, fs / 2, 1 << 16, {{1.6e6, 0.1}});
    const std::vector<std::span<const std::complex<float>>> blocks{a0, a1};
    chain.process(blocks);
    const ChainAnalysis a = chain.analyze();
    const Tone t = measure_tone(a.rf, 1.59e6, 1.61e6);
    ASSERT_TRUE(t.found);
    EXPECT_NEAR(t.freq_hz, 1.6e6, 20.0);
    EXPECT_NEAR(t.level_dbfs, -20.0 + 6.0, 0.2);
}

TEST(SignalChain, UpdateRebuildsOnlyWhatChanged) {
    hb::Setup s = parse_session(kMf, "mf.toml");
    const double fc = 1.2e6, fs = 2.4e6;
    const RfInput in{fc, fs, 0.0};
    SignalChain chain = SignalChain::make(s, std::span<const RfInput>(&in, 1));
    const cvec x = tones(fc, fs, 1 << 17, {{1.0e6, 0.1}});
    chain.process(x);
    const double before = chain.analyze().check.wanted.level_dbfs;
    s.if_chain.gain_db = 10.0;
    chain.update(s);
    chain.process(x);
    const double after = chain.analyze().check.wanted.level_dbfs;
    EXPECT_NEAR(after - before, 10.0, 0.05);
    hb::Setup other = s;
    other.sources.push_back({});
    EXPECT_THROW(chain.update(other), InputError);
}

TEST(SignalChain, BypassMeasuresTheInputAsTheIf) {
    // The input already is a real mixer's IF (455 kHz centre): lines are measured where the plan puts them.
    const hb::Setup s = parse_session(std::string(kMf) + "", "mf.toml");
    hb::Setup b = s;
    b.mixer.model = MixerModel::bypass;
    const double fc = 455e3, fs = 200e3;
    const RfInput in{fc, fs, 0.0};
    SignalChain chain = SignalChain::make(b, std::span<const RfInput>(&in, 1));
    // Wanted at 455 kHz, the LO (1.455 MHz) is outside; a 3rd-order product 3RF-2LO at 90 kHz is outside too;
    // put an unexplained tone at 480 kHz.
    chain.process(tones(fc, fs, 1 << 17, {{455e3, 0.1}, {480e3, 0.01}}));
    const ChainAnalysis a = chain.analyze();
    EXPECT_EQ(a.check.wanted.status, LineStatus::pass);
    EXPECT_NEAR(a.check.wanted.level_dbfs, -20.0, 0.1);
    ASSERT_FALSE(a.check.unexplained.empty());
    EXPECT_NEAR(a.check.unexplained.front().freq_hz, 480e3, 50.0);
}

TEST(SignalChain, NonFiniteSamplesAreReplacedAndCounted) {
    const hb::Setup s = parse_session(kMf, "mf.toml");
    const RfInput in{1.2e6, 2.4e6, 0.0};
    SignalChain chain = SignalChain::make(s, std::span<const RfInput>(&in, 1));
    cvec x = tones(1.2e6, 2.4e6, 1 << 16, {{1.0e6, 0.1}});
    x[10] = {std::nanf(""), 0.0f};
    x[20] = {0.0f, INFINITY};
    chain.process(x);
    EXPECT_EQ(chain.counters().non_finite, 2u);
    const ChainAnalysis a = chain.analyze();
    EXPECT_TRUE(std::isfinite(a.check.wanted.level_dbfs));
}

}  // namespace
}  // namespace hb
