// The generator's synthesiser (dsp/synth) and its per-sample kernels (dsp/fast_math): levels, frequencies,
// tuning windows, modulation spectra, noise statistics and determinism, each against an outside reference
// named beside the check.
#include <gtest/gtest.h>

#include <cmath>
#include <complex>
#include <numeric>
#include <random>
#include <vector>

#include "dsp/errors.hpp"
#include "dsp/fast_math.hpp"
#include "dsp/synth.hpp"
#include "support/tone_check.hpp"

namespace hb {
namespace {

using cf32 = std::complex<float>;
using test::ToneWindow;

std::vector<cf32> run(Synth& s, std::size_t blocks) {
    std::vector<cf32> x(blocks * kSynthBlock);
    for (std::size_t b = 0; b < blocks; ++b) s.process(std::span<cf32>(x).subspan(b * kSynthBlock, kSynthBlock));
    return x;
}

SignalSpec cw(double f, double dbm) {
    SignalSpec s;
    s.type = SignalType::cw;
    s.frequency_hz = f;
    s.level_dbm = dbm;
    return s;
}

Scenario quiet(double full_scale_dbm = -10) {
    Scenario sc;
    sc.full_scale_dbm = full_scale_dbm;
    sc.noise_floor_dbm_per_hz = -200;  // far below every check
    return sc;
}

Tuning tuned(double fc, double fs, double gain = 0) {
    Tuning t;
    t.center_hz = fc;
    t.sample_rate_hz = fs;
    t.gain_db = gain;
    return t;
}

// ---- fast_math --------------------------------------------------------------------------------------

TEST(FastMath, SplitMix64FirstOutputs) {
    // SplitMix64 seeded with 0: first output 0xe220a8397b1dcdaf (Steele, Lea & Flood, OOPSLA 2014; the value is
    // from memory of the reference generator's output, and matches an independent run of its published
    // algorithm in Python).
    EXPECT_EQ(fastmath::random_word(0, 0), 0xe220a8397b1dcdafULL);
}

TEST(FastMath, CosSinAgreeWithLibm) {
    double worst = 0;
    for (int i = -200000; i <= 200000; ++i) {
        const float cyc = static_cast<float>(i) * 1.37e-5f;
        float c, s;
        fastmath::cos_sin_cycles(cyc, c, s);
        const double th = 2 * M_PI * static_cast<double>(cyc);
        worst = std::max({worst, std::abs(c - std::cos(th)), std::abs(s - std::sin(th))});
    }
    EXPECT_LT(worst, 1e-6);  // float rounding of the reduced phase dominates (6e-8 cycle -> 4e-7)
}

TEST(FastMath, LogAgreesWithLibm) {
    double worst = 0;
    for (std::uint32_t k = 1; k < (1u << 24); k += 97) {
        const float u = static_cast<float>(k) * 0x1p-24f;
        worst = std::max(worst, std::abs(double(fastmath::log(u)) - std::log(double(u))));
    }
    EXPECT_LT(worst, 3e-6);  // relative to |ln u| up to 16.6: about float precision
}

// ---- levels and frequencies -------------------------------------------------------------------------

TEST(Synth, ToneLevelAndFrequencyOnExactBin) {
    // fs = 1.024 MS/s, N = 65536: 15.625 Hz bins; the tone sits 100 kHz above the centre, bin 6400.
    // Level mapping (dsp/synth.hpp): dBFS = dBm - full_scale_dbm + gain = -50 - (-10) + 20 = -20 dBFS.
    Scenario sc = quiet(-10);
    sc.signals.push_back(cw(100.1e6, -50));
    Synth s(sc, 7);
    s.tune(tuned(100e6, 1.024e6, 20));
    const auto x = run(s, 16);
    const auto sp = test::tone_spectrum(x, 1.024e6, ToneWindow::rectangular);
    EXPECT_EQ(sp.peak(), sp.bin_of(100e3));
    EXPECT_NEAR(sp.level_db_near(100e3, 0), -20.0, 0.01);
    EXPECT_NEAR(s.contents().level_offset_db, -30.0, 1e-12);  // dBm = dBFS + (-10 - 20)
}

TEST(Synth, ToneBetweenBinsReadsWithinFlatTopScalloping) {
    Scenario sc = quiet(0);
    sc.signals.push_back(cw(50e6 - 123456.7, -6));
    Synth s(sc, 3);
    s.tune(tuned(50e6, 2e6, 0));
    const auto x = run(s, 8);  // 32768 samples, bin 61.04 Hz, the tone 0.5 bin off-centre or so
    const auto sp = test::tone_spectrum(x, 2e6, ToneWindow::flat_top);
    EXPECT_NEAR(sp.frequency(sp.peak()), -123456.7, sp.bin_hz);
    // Flat-top scalloping loss 0.0098 dB (reference-values W7; D'Antona & Ferrero 2006).
    EXPECT_NEAR(sp.level_db_near(-123456.7, 1), -6.0, 0.02);
}

TEST(Synth, GainMovesSignalsAndFloorTogether) {
    Scenario sc = quiet(0);
    sc.noise_floor_dbm_per_hz = -120;
    sc.signals.push_back(cw(10e6 + 256e3, -40));
    Synth s(sc, 1);
    s.tune(tuned(10e6, 1.024e6, 0));
    const double p0 = s.contents().white_noise_power;
    const auto a = test::tone_spectrum(run(s, 16), 1.024e6, ToneWindow::rectangular);
    s.tune(tuned(10e6, 1.024e6, 13.5));
    const auto b = test::tone_spectrum(run(s, 16), 1.024e6, ToneWindow::rectangular);
    EXPECT_NEAR(b.level_db_near(256e3, 0) - a.level_db_near(256e3, 0), 13.5, 0.01);
    EXPECT_NEAR(10 * std::log10(s.contents().white_noise_power / p0), 13.5, 1e-9);
}

TEST(Synth, RetuningMovesTheToneAsATunerWould) {
    // Baseband offset = f_RF - f_centre: tuning 40 kHz up moves the tone 40 kHz down.
    Scenario sc = quiet(0);
    sc.signals.push_back(cw(433.05e6, -20));
    Synth s(sc, 1);
    s.tune(tuned(433e6, 1.024e6));
    auto sp = test::tone_spectrum(run(s, 16), 1.024e6, ToneWindow::rectangular);
    EXPECT_EQ(sp.peak(), sp.bin_of(50e3));
    s.tune(tuned(433.04e6, 1.024e6));
    sp = test::tone_spectrum(run(s, 16), 1.024e6, ToneWindow::rectangular);
    EXPECT_EQ(sp.peak(), sp.bin_of(10e3));
    EXPECT_NEAR(sp.level_db_near(10e3, 0), -20.0, 0.01);
    s.tune(tuned(433.1e6, 1.024e6));
    sp = test::tone_spectrum(run(s, 16), 1.024e6, ToneWindow::rectangular);
    EXPECT_EQ(sp.peak(), sp.bin_of(-50e3));
}

TEST(Synth, SignalsOutsideTheWindowDoNotFoldIn) {
    // A tone at +0.6 fs would alias to -0.4 fs if it were synthesised; a tuner's filters keep it out.
    Scenario sc = quiet(0);
    sc.noise_floor_dbm_per_hz = -150;
    sc.signals.push_back(cw(100e6 + 0.6 * 1.024e6, 0));
    SignalSpec fm;  // an FM carrier straddling the upper edge: left out, not folded
    fm.type = SignalType::fm;
    fm.frequency_hz = 100e6 + 0.5 * 1.024e6 - 5e3;
    fm.level_dbm = 0;
    fm.deviation_hz = 10e3;
    fm.tone_hz = 1e3;
    sc.signals.push_back(fm);
    Synth s(sc, 1);
    s.tune(tuned(100e6, 1.024e6));
    EXPECT_EQ(s.contents().tones, 0);
    EXPECT_EQ(s.contents().carriers, 0);
    EXPECT_EQ(s.contents().left_out, 1);
    const auto sp = test::tone_spectrum(run(s, 16), 1.024e6, ToneWindow::flat_top);
    EXPECT_LT(20 * std::log10(sp.amplitude[sp.peak()]), -90.0);  // only the floor (-150 dBFS/Hz)
}

TEST(Synth, BandwidthNarrowsTheWindow) {
    Scenario sc = quiet(0);
    sc.signals.push_back(cw(1e6 + 300e3, -20));
    Synth s(sc, 1);
    Tuning t = tuned(1e6, 1.024e6);
    s.tune(t);
    EXPECT_EQ(s.contents().tones, 1);
    t.bandwidth_hz = 500e3;  // +-250 kHz
    s.tune(t);
    EXPECT_EQ(s.contents().tones, 0);
}

TEST(Synth, TwoTonePairLevelsAndSpacing) {
    Scenario sc = quiet(0);
    SignalSpec tt;
    tt.type = SignalType::two_tone;
    tt.frequency_hz = 145e6;
    tt.spacing_hz = 25e3;
    tt.level_dbm = -30;
    sc.signals.push_back(tt);
    Synth s(sc, 11);
    s.tune(tuned(145e6 - 100e3, 1.024e6));
    const auto sp = test::tone_spectrum(run(s, 16), 1.024e6, ToneWindow::rectangular);
    EXPECT_NEAR(sp.level_db_near(100e3 - 12.5e3, 0), -30.0, 0.01);
    EXPECT_NEAR(sp.level_db_near(100e3 + 12.5e3, 0), -30.0, 0.01);
}

TEST(Synth, ClipLimitsIAndQAtFullScale) {
    Scenario sc = quiet(0);
    sc.signals.push_back(cw(1e6 + 1e3, 10));  // +10 dBFS: |z| = 3.16
    Synth s(sc, 1);
    s.tune(tuned(1e6, 1e5));
    auto x = run(s, 1);
    float peak = 0;
    for (auto z : x) peak = std::max({peak, std::abs(z.real()), std::abs(z.imag())});
    EXPECT_FLOAT_EQ(peak, 1.0f);
    sc.clip = false;
    Synth u(sc, 1);
    u.tune(tuned(1e6, 1e5));
    x = run(u, 1);
    peak = 0;
    for (auto z : x) peak = std::max(peak, std::abs(z));
    EXPECT_NEAR(peak, std::pow(10.0, 10.0 / 20), 1e-3);
}

// ---- modulation -------------------------------------------------------------------------------------

TEST(Synth, AmByToneSidebandsAtHalfTheDepth) {
    // (1 + m cos wm t) carrier: sidebands of m/2 each, i.e. 20 log10(m/2) dBc = -12.04 dBc for m = 0.5
    // (derivable: cos a = (e^ja + e^-ja)/2).
    Scenario sc = quiet(0);
    SignalSpec am;
    am.type = SignalType::am;
    am.frequency_hz = 7e6;
    am.level_dbm = -20;
    am.tone_hz = 1000;
    am.depth = 0.5;
    sc.signals.push_back(am);
    Synth s(sc, 5);
    s.tune(tuned(7e6 - 64e3, 1.024e6));
    const auto sp = test::tone_spectrum(run(s, 16), 1.024e6, ToneWindow::rectangular);
    EXPECT_NEAR(sp.level_db_near(64e3, 0), -20.0, 0.01);
    EXPECT_NEAR(sp.level_db_near(65e3, 0), -20.0 + 20 * std::log10(0.25), 0.01);
    EXPECT_NEAR(sp.level_db_near(63e3, 0), -20.0 + 20 * std::log10(0.25), 0.01);
}

TEST(Synth, FmByToneFollowsBesselFunctions) {
    // exp(j beta sin wm t) = sum_k J_k(beta) exp(j k wm t) (Jacobi-Anger expansion). beta = 1: J0 = 0.7651977,
    // J1 = 0.4400506, J2 = 0.1149035 (Abramowitz & Stegun, Handbook of Mathematical Functions, 1964, Table 9.1);
    // cross-checked with libstdc++'s std::cyl_bessel_j.
    Scenario sc = quiet(0);
    SignalSpec fm;
    fm.type = SignalType::fm;
    fm.frequency_hz = 50e6;
    fm.level_dbm = 0;
    fm.tone_hz = 2000;
    fm.deviation_hz = 2000;  // beta = 1
    sc.signals.push_back(fm);
    Synth s(sc, 9);
    s.tune(tuned(50e6 + 128e3, 1.024e6));
    ASSERT_EQ(s.contents().carriers, 1);
    const auto sp = test::tone_spectrum(run(s, 16), 1.024e6, ToneWindow::rectangular);
    const double j[3] = {0.7651977, 0.4400506, 0.1149035};
    for (int k = 0; k < 3; ++k) EXPECT_NEAR(std::cyl_bessel_j(double(k), 1.0), j[k], 1e-7);
    for (int k = -2; k <= 2; ++k)
        EXPECT_NEAR(sp.level_db_near(-128e3 + k * 2000.0, 0), 20 * std::log10(j[std::abs(k)]), 0.01) << "k=" << k;
}

TEST(Synth, FmByNoiseHasTheRmsDeviation) {
    // Instantaneous frequency from the phase step between samples: its rms is the rms deviation.
    Scenario sc = quiet(0);
    sc.noise_floor_dbm_per_hz = -250;
    SignalSpec fm;
    fm.type = SignalType::fm;
    fm.frequency_hz = 20e6;
    fm.level_dbm = -10;
    fm.modulation = ModSource::noise;
    fm.modulation_bandwidth_hz = 3000;
    fm.deviation_hz = 4000;
    sc.signals.push_back(fm);
    Synth s(sc, 4);
    s.tune(tuned(20e6, 256e3));
    const auto x = run(s, 64);
    double sum2 = 0, sum = 0;
    for (std::size_t i = 1; i < x.size(); ++i) {
        const double f = std::arg(std::complex<double>(x[i]) * std::conj(std::complex<double>(x[i - 1]))) * 256e3 / (2 * M_PI);
        sum += f;
        sum2 += f * f;
    }
    const double n = double(x.size() - 1), mean = sum / n;
    EXPECT_NEAR(std::sqrt(sum2 / n - mean * mean), 4000.0, 4000.0 * 0.1);  // 1 s of a 3 kHz process: ~5 % spread
    EXPECT_NEAR(std::abs(x[1000]), std::pow(10.0, -10.0 / 20), 1e-4);  // constant envelope
}

TEST(Synth, AmByNoiseHasTheRmsDepth) {
    Scenario sc = quiet(0);
    sc.noise_floor_dbm_per_hz = -250;
    SignalSpec am;
    am.type = SignalType::am;
    am.frequency_hz = 1e6;
    am.level_dbm = -6;
    am.modulation = ModSource::noise;
    am.modulation_bandwidth_hz = 2000;
    am.depth = 0.3;
    sc.signals.push_back(am);
    Synth s(sc, 4);
    s.tune(tuned(1e6 + 10e3, 256e3));
    const auto x = run(s, 64);
    const double a = std::pow(10.0, -6.0 / 20);
    double sum = 0, sum2 = 0;
    for (auto z : x) {
        const double e = std::abs(z) / a - 1;  // m x(t) while 1 + m x > 0 (|x| < 3.3 sigma here)
        sum += e;
        sum2 += e * e;
    }
    const double n = double(x.size());
    EXPECT_NEAR(sum / n, 0.0, 0.03);
    EXPECT_NEAR(std::sqrt(sum2 / n - (sum / n) * (sum / n)), 0.3, 0.3 * 0.1);
}

// ---- noise ------------------------------------------------------------------------------------------

TEST(Synth, NoiseFloorDensityAndGaussianStatistics) {
    // Complex white noise of density D (full-scale power per Hz) has E|z|^2 = D fs. For a circular complex
    // Gaussian |z|^2 is exponential: E|z|^4 = 2 (E|z|^2)^2 and P(|z|^2 > 4 E|z|^2) = e^-4 = 0.0183 (derivable).
    Scenario sc;
    sc.full_scale_dbm = -20;
    sc.noise_floor_dbm_per_hz = -140;  // -140 + 20 + 10 dB gain = -110 dBFS/Hz
    Synth s(sc, 21);
    s.tune(tuned(433e6, 2e6, 10));
    const auto x = run(s, 256);  // 1 M samples
    double m2 = 0, m4 = 0, above = 0;
    std::complex<double> mean = 0;
    for (auto z : x) mean += std::complex<double>(z);
    const double expect = std::pow(10.0, -110.0 / 10) * 2e6;
    for (auto z : x) {
        const double p = std::norm(std::complex<double>(z));
        m2 += p;
        m4 += p * p;
        above += p > 4 * expect;
    }
    const double n = double(x.size());
    EXPECT_NEAR(m2 / n / expect, 1.0, 0.01);  // 1 M exponential samples: 0.1 % standard error
    EXPECT_NEAR((m4 / n) / ((m2 / n) * (m2 / n)), 2.0, 0.03);
    EXPECT_NEAR(above / n, std::exp(-4.0), 0.0015);
    EXPECT_LT(std::abs(mean / n), 0.005 * std::sqrt(expect));
}

TEST(Synth, NoiseBandHasItsDensityInsideAndNothingOutside) {
    // Averaged periodogram with a Hann window (ENBW 1.5 bins, reference-values W2):
    // density = |X_k|^2 / (fs * sum w^2).
    Scenario sc = quiet(0);
    sc.noise_floor_dbm_per_hz = -180;
    SignalSpec nb;
    nb.type = SignalType::noise;
    nb.low_hz = 100e6;
    nb.high_hz = 100e6 + 256e3;
    nb.density_dbm_per_hz = -100;
    sc.signals.push_back(nb);
    Synth s(sc, 2);
    s.tune(tuned(100e6, 1.024e6));
    EXPECT_GT(s.contents().noise_bins, 0);
    const std::size_t n = 1024, frames = 1024;
    const auto x = run(s, n * frames / kSynthBlock);
    std::vector<double> psd(n, 0.0), w(n);
    double sw2 = 0;
    for (std::size_t i = 0; i < n; ++i) {
        w[i] = 0.5 - 0.5 * std::cos(2 * M_PI * double(i) / double(n));
        sw2 += w[i] * w[i];
    }
    std::vector<cf32> frame(n);
    for (std::size_t f = 0; f < frames; ++f) {
        for (std::size_t i = 0; i < n; ++i) frame[i] = x[f * n + i] * static_cast<float>(w[i]);
        const auto sp = test::tone_spectrum(frame, 1.024e6, ToneWindow::rectangular);  // |X|/N
        for (std::size_t k = 0; k < n; ++k) psd[k] += std::pow(sp.amplitude[k] * double(n), 2) / (1.024e6 * sw2);
    }
    double in = 0, out = 0;
    int nin = 0, nout = 0;
    for (std::size_t k = 0; k < n; ++k) {
        const double f = (k < n / 2 ? double(k) : double(k) - double(n)) * 1e3;
        if (f > 10e3 && f < 246e3) in += psd[k] / frames, ++nin;
        if (f < -10e3 || f > 266e3) out += psd[k] / frames, ++nout;
    }
    EXPECT_NEAR(10 * std::log10(in / nin), -100.0, 0.1);
    EXPECT_LT(10 * std::log10(out / nout), -150.0);  // only leakage of the frame windows and the -180 floor
}

TEST(Synth, TerminatedInputShowsOnlyTheFloor) {
    Scenario sc = quiet(0);
    sc.signals.push_back(cw(1e6, -10));
    Synth s(sc, 1);
    Tuning t = tuned(1e6 + 1e3, 1e5);
    t.terminated = true;
    s.tune(t);
    EXPECT_EQ(s.contents().tones, 0);
}

// ---- stations and determinism ----------------------------------------------------------------------

TEST(Synth, StationBandIsDeterministicAndOnItsRaster) {
    SignalSpec band;
    band.type = SignalType::stations;
    band.first_hz = 1e6;
    band.spacing_hz = 10e3;
    band.count = 50;
    band.level_dbm = -40;
    band.level_spread_db = 10;
    band.occupancy = 0.5;
    band.station_modulation = ModKind::am;
    band.depth = 0.3;
    const auto a = stations_of(band, 0, 1), b = stations_of(band, 0, 1), c = stations_of(band, 0, 2);
    ASSERT_EQ(a.size(), b.size());
    for (std::size_t i = 0; i < a.size(); ++i) {
        EXPECT_EQ(a[i].frequency_hz, b[i].frequency_hz);
        EXPECT_EQ(a[i].tone_hz, b[i].tone_hz);
        EXPECT_NEAR(std::fmod(a[i].frequency_hz - 1e6, 10e3), 0.0, 1e-6);
        EXPECT_GE(a[i].level_dbm, -45.0);
        EXPECT_LE(a[i].level_dbm, -35.0);
        EXPECT_GE(a[i].tone_hz, 300.0);
        EXPECT_LE(a[i].tone_hz, 3000.0);
    }
    EXPECT_GT(a.size(), 10u);  // occupancy 0.5 of 50
    EXPECT_LT(a.size(), 40u);
    bool differs = a.size() != c.size();
    for (std::size_t i = 0; !differs && i < a.size(); ++i) differs = a[i].frequency_hz != c[i].frequency_hz;
    EXPECT_TRUE(differs);

    // Each AM station carrier appears at its raster frequency with its level.
    Scenario sc = quiet(0);
    sc.signals.push_back(band);
    Synth s(sc, 1);
    s.tune(tuned(1.256e6, 1.024e6));
    EXPECT_EQ(s.contents().tones, 3 * static_cast<int>(a.size()));
    // Flat-top: the sidebands (off the bin grid) leak nothing measurable into the carriers' bins.
    const auto sp = test::tone_spectrum(run(s, 16), 1.024e6, ToneWindow::flat_top);
    for (const Station& st : a)
        EXPECT_NEAR(sp.level_db_near(st.frequency_hz - 1.256e6, 0), st.level_dbm, 0.01) << st.frequency_hz;
}

TEST(Synth, SameSeedSameSamplesOtherSeedOthers) {
    Scenario sc;
    sc.noise_floor_dbm_per_hz = -100;
    SignalSpec fm;
    fm.type = SignalType::fm;
    fm.frequency_hz = 100e6;
    fm.level_dbm = -20;
    fm.modulation = ModSource::noise;
    sc.signals.push_back(fm);
    sc.signals.push_back(cw(100.2e6, -30));
    Synth a(sc, 5), b(sc, 5), c(sc, 6);
    for (Synth* s : {&a, &b, &c}) s->tune(tuned(100e6, 1e6));
    const auto xa = run(a, 4), xb = run(b, 4), xc = run(c, 4);
    EXPECT_EQ(xa, xb);
    EXPECT_NE(xa, xc);
    a.reset();
    EXPECT_EQ(run(a, 4), xa);  // reset starts the same stream again
}

TEST(Synth, RejectsInvalidScenario) {
    Scenario sc;
    SignalSpec tt;
    tt.type = SignalType::two_tone;
    tt.frequency_hz = 1e6;
    tt.spacing_hz = -5;
    sc.signals.push_back(tt);
    try {
        Synth s(sc, 1);
        FAIL() << "accepted a negative spacing";
    } catch (const InputError& e) {
        EXPECT_NE(std::string(e.what()).find("signal[0].spacing_hz"), std::string::npos) << e.what();
    }
}

}  // namespace
}  // namespace hb
