// LO waveforms, their Fourier series, the seeded Gaussian source and LO phase noise.
// Check values: ../shared/reference-values.md §2 (F1–F5), each with its source named beside the check.
#include <gtest/gtest.h>

#include <cmath>
#include <complex>
#include <numeric>
#include <vector>

#include "dsp/errors.hpp"
#include "dsp/lo.hpp"
#include "dsp/units.hpp"
#include "dsp/vector_math.hpp"
#include "support/mixer_probe.hpp"

namespace hb {
namespace {

double db20(double a) { return 20.0 * std::log10(a); }

LoWaveform wave(LoShape shape, double duty, double edge = 0.0, int harmonics = 15) {
    LoWaveform w;
    w.shape = shape;
    w.duty = duty;
    w.edge = edge;
    w.harmonics = harmonics;
    return w;
}

// F1: bipolar ±1 square wave, 50 % duty: a_n = 4/(πn) for odd n, 0 for even n; 3rd −9.542 dB, 5th −13.979 dB,
// 7th −16.902 dB re the fundamental (reference-values F1; derivable, the classic square-wave series).
TEST(LoSeries, BipolarSquareWaveOddHarmonics) {
    const LoSeries s = lo_series(wave(LoShape::bipolar, 0.5));
    EXPECT_NEAR(s.amplitude(1), 1.27324, 1e-5);
    EXPECT_NEAR(s.amplitude(3), 0.42441, 1e-5);
    EXPECT_NEAR(s.amplitude(5), 0.25465, 1e-5);
    EXPECT_NEAR(s.amplitude(7), 0.18189, 1e-5);
    EXPECT_NEAR(db20(s.amplitude(3) / s.amplitude(1)), -9.542, 0.001);
    EXPECT_NEAR(db20(s.amplitude(5) / s.amplitude(1)), -13.979, 0.001);
    EXPECT_NEAR(db20(s.amplitude(7) / s.amplitude(1)), -16.902, 0.001);
    for (int m = 2; m <= 14; m += 2) EXPECT_LT(s.amplitude(m), 1e-9) << "even harmonic " << m;
    EXPECT_NEAR(s.dc(), 0.0, 1e-12);
    // Alternate odd harmonics change sign (cos θ − cos 3θ/3 + cos 5θ/5 ...): phase 0 or π.
    EXPECT_NEAR(std::abs(s.phase_rad(1)), 0.0, 1e-12);
    EXPECT_NEAR(std::abs(s.phase_rad(3)), kPi, 1e-12);
}

// F2/F3: unipolar 0/1 switch: DC = d, a_n = 2|sin(πnd)|/(πn) (reference-values F2, F3; derivable).
TEST(LoSeries, UnipolarDutyCycle) {
    const LoSeries h = lo_series(wave(LoShape::unipolar, 0.5));
    EXPECT_NEAR(h.dc(), 0.5, 1e-12);
    EXPECT_NEAR(h.amplitude(1), 0.63662, 1e-5);
    EXPECT_NEAR(h.amplitude(2), 0.0, 1e-12);
    EXPECT_NEAR(h.amplitude(3), 0.21221, 1e-5);

    const LoSeries q = lo_series(wave(LoShape::unipolar, 0.25));
    EXPECT_NEAR(q.dc(), 0.25, 1e-12);
    EXPECT_NEAR(q.amplitude(1), 0.45016, 1e-5);
    EXPECT_NEAR(q.amplitude(2), 0.31831, 1e-5);
    EXPECT_NEAR(q.amplitude(3), 0.15005, 1e-5);
    EXPECT_NEAR(q.amplitude(4), 0.0, 1e-12);
    EXPECT_NEAR(db20(q.amplitude(2) / q.amplitude(1)), -3.01, 0.005);
}

// F4: duty error d = 0.5 + δ brings a 2nd harmonic, H2/H1 ≈ 20·log10(πδ): −50.06, −36.08, −30.06, −24.04,
// −16.11 dB at δ = 0.1, 0.5, 1, 2, 5 % (reference-values F4, ±0.02 dB; derivable: H2/H1 = |cos(πd)|).
TEST(LoSeries, DutyErrorSecondHarmonic) {
    const double delta[] = {0.001, 0.005, 0.01, 0.02, 0.05};
    const double expect[] = {-50.06, -36.08, -30.06, -24.04, -16.11};
    for (int i = 0; i < 5; ++i) {
        for (LoShape shape : {LoShape::bipolar, LoShape::unipolar}) {
            const LoSeries s = lo_series(wave(shape, 0.5 + delta[i]));
            EXPECT_NEAR(db20(s.amplitude(2) / s.amplitude(1)), expect[i], 0.02) << "delta " << delta[i];
        }
    }
}

// F5: trapezoid, d = 0.5, t_r/T = 0.01: c_n = 2A(τ/T)|sinc(nτ/T)||sinc(n·t_r/T)|: n = 1 0.636515, n = 11
// 0.056729 (−0.17 dB vs the square wave), n = 31 0.017440 (−1.42 dB), n = 51 0.007787 (−4.10 dB).
// (C. R. Paul, Introduction to Electromagnetic Compatibility, 2nd ed. 2006, ch. 3; reference-values F5.)
TEST(LoSeries, TrapezoidEdgesRollOff) {
    const LoWaveform trap = wave(LoShape::unipolar, 0.5, 0.01, 63);
    const LoWaveform square = wave(LoShape::unipolar, 0.5, 0.0, 63);
    const LoSeries t = lo_series(trap), s = lo_series(square);
    EXPECT_NEAR(t.amplitude(1), 0.636515, 1e-6);
    EXPECT_NEAR(t.amplitude(11), 0.056729, 1e-6);
    EXPECT_NEAR(t.amplitude(31), 0.017440, 1e-6);
    EXPECT_NEAR(t.amplitude(51), 0.007787, 1e-6);
    EXPECT_NEAR(db20(t.amplitude(11) / s.amplitude(11)), -0.17, 0.005);
    EXPECT_NEAR(db20(t.amplitude(31) / s.amplitude(31)), -1.42, 0.005);
    EXPECT_NEAR(db20(t.amplitude(51) / s.amplitude(51)), -4.10, 0.005);
    // The harmonic count limit truncates the series.
    const LoSeries few = lo_series(wave(LoShape::bipolar, 0.5, 0.0, 5));
    EXPECT_EQ(few.harmonics, 5);
    EXPECT_EQ(few.coeff.size(), 11u);
    EXPECT_EQ(few.amplitude(7), 0.0);
}

// The closed forms against a direct numerical Fourier integral of the time waveform (midpoint rule on 2^18
// points per period): two independent routes to the same coefficients.
TEST(LoSeries, SeriesMatchesNumericalIntegralOfWaveform) {
    const int n = 1 << 18;
    for (const LoWaveform& w : {wave(LoShape::unipolar, 0.37, 0.04), wave(LoShape::bipolar, 0.52, 0.1),
                                wave(LoShape::bipolar, 0.5, 0.0), wave(LoShape::sine, 0.5)}) {
        const LoSeries s = lo_series(w);
        for (int m = 0; m <= std::min(9, s.harmonics); ++m) {
            std::complex<double> acc = 0;
            for (int i = 0; i < n; ++i) {
                const double t = (i + 0.5) / n;
                acc += lo_waveform_value(w, t) * std::polar(1.0, -kTwoPi * m * t);
            }
            acc /= n;
            EXPECT_NEAR(std::abs(acc - s.at(m)), 0.0, 2e-5) << "shape " << static_cast<int>(w.shape) << " m " << m;
        }
    }
}

// The quadrature pair I = s(θ), Q = s(θ + π/2): a sine LO gives I + jQ = cos θ − j·sin θ = e^{−jθ} (derivable),
// so the fundamental sits at −1 only; a square wave's 3rd harmonic sits at +3 (cos 3θ + j·cos(3θ + 3π/2) =
// e^{j3θ}), the 5th at −5. Checked against the numerical integral of the two arms.
TEST(LoSeries, QuadraturePairSidebands) {
    const LoSeries sine = lo_series_quadrature(wave(LoShape::sine, 0.5));
    EXPECT_NEAR(std::abs(sine.at(-1) - 1.0), 0.0, 1e-12);
    EXPECT_NEAR(std::abs(sine.at(1)), 0.0, 1e-12);

    const LoWaveform w = wave(LoShape::bipolar, 0.53, 0.02);
    const LoSeries s = lo_series_quadrature(w);
    const int n = 1 << 16;
    for (int m = -7; m <= 7; ++m) {
        std::complex<double> acc = 0;
        for (int i = 0; i < n; ++i) {
            const double t = (i + 0.5) / n;
            const std::complex<double> iq(lo_waveform_value(w, t), lo_waveform_value(w, t + 0.25));
            acc += iq * std::polar(1.0, -kTwoPi * m * t);
        }
        acc /= n;
        EXPECT_NEAR(std::abs(acc - s.at(m)), 0.0, 1e-4) << "m " << m;
    }
    EXPECT_LT(std::abs(s.at(1)), 1e-12);
    EXPECT_LT(std::abs(s.at(-3)), 1e-12);
    EXPECT_GT(std::abs(s.at(3)), 0.1);
    EXPECT_NEAR(std::abs(s.at(2)), std::abs(s.at(-2)), 1e-12);  // even harmonics: both sides
}

TEST(LoSeries, BadWaveformsAreInputErrors) {
    auto expect_error = [](const LoWaveform& w, const std::string& key) {
        try {
            check_lo_waveform(w, "mixer");
            ADD_FAILURE() << "no error for " << key;
        } catch (const InputError& e) {
            EXPECT_NE(std::string(e.what()).find(key), std::string::npos) << e.what();
        }
    };
    expect_error(wave(LoShape::unipolar, 0.0), "mixer.duty_cycle");
    expect_error(wave(LoShape::bipolar, 1.0), "mixer.duty_cycle");
    expect_error(wave(LoShape::bipolar, std::nan("")), "mixer.duty_cycle");
    expect_error(wave(LoShape::unipolar, 0.2, 0.3), "mixer.edge_time");
    expect_error(wave(LoShape::unipolar, 0.5, -0.1), "mixer.edge_time");
    expect_error(wave(LoShape::bipolar, 0.5, 0.0, 0), "mixer.harmonics");
    expect_error(wave(LoShape::bipolar, 0.5, 0.0, 64), "mixer.harmonics");
    EXPECT_NO_THROW(check_lo_waveform(wave(LoShape::sine, 0.0, 5.0, 0), "mixer"));  // sine ignores them
}

// The vectorisable float log and sincos against libm in double: float rounding only.
TEST(VectorMath, LogAndSincosAccuracy) {
    double worst_log = 0, worst_trig = 0;
    for (int i = 1; i <= 200000; ++i) {
        const float u = static_cast<float>(i) / 200000.0f * 0.999f + 1e-7f * static_cast<float>(i % 7);
        const double ln = std::log(static_cast<double>(u));
        worst_log = std::max(worst_log, std::abs(vmath::log_pos(u) - ln) / std::max(1.0, std::abs(ln)));
        const float t = static_cast<float>(i - 100000) * 3.7e-5f;  // about ±3.7 turns
        float s, c;
        vmath::sincos_turns(t, s, c);
        worst_trig = std::max(worst_trig, std::abs(s - std::sin(kTwoPi * static_cast<double>(t))));
        worst_trig = std::max(worst_trig, std::abs(c - std::cos(kTwoPi * static_cast<double>(t))));
    }
    EXPECT_LT(worst_log, 2.4e-7);  // two float ulps of the result
    EXPECT_LT(worst_trig, 2e-6);  // the argument 2π·t itself rounds in float
    EXPECT_NEAR(vmath::log_pos(0x1.0p-24f), -24 * std::log(2.0), 2e-6);
    EXPECT_FLOAT_EQ(vmath::sqrt_nonneg(2.25f), 1.5f);
}

// The block Gaussian generator: moments of N(0, 1), independent pairs, and the same sequence however the
// requests are cut.
TEST(GaussRng, BlockFillMomentsAndCutting) {
    GaussRng r = GaussRng::make(5);
    const std::size_t n = 1 << 20;
    std::vector<float> a(n), b(n);
    r.fill_pairs(a.data(), b.data(), n);
    double s1 = 0, s2 = 0, s4 = 0, ab = 0;
    for (std::size_t i = 0; i < n; ++i) {
        s1 += a[i] + b[i];
        s2 += double(a[i]) * a[i] + double(b[i]) * b[i];
        s4 += std::pow(double(a[i]), 4) + std::pow(double(b[i]), 4);
        ab += double(a[i]) * b[i];
    }
    EXPECT_NEAR(s1 / (2 * n), 0.0, 0.003);
    EXPECT_NEAR(s2 / (2 * n), 1.0, 0.003);
    EXPECT_NEAR(s4 / (2 * n), 3.0, 0.03);
    EXPECT_NEAR(ab / n, 0.0, 0.003);
    GaussRng r2 = GaussRng::make(5);
    std::vector<float> c(n), d(n);
    for (std::size_t pos = 0, k = 1; pos < n; pos += k, k = k * 3 % 1000 + 1) {
        const std::size_t m = std::min(k, n - pos);
        r2.fill_pairs(c.data() + pos, d.data() + pos, m);
    }
    EXPECT_EQ(a, c);
    EXPECT_EQ(b, d);
}

// xoshiro256** + Box–Muller: mean 0, variance 1, fourth moment 3 (Gaussian), reproducible by seed.
TEST(GaussRng, MomentsAndSeeding) {
    GaussRng r = GaussRng::make(7);
    const int n = 1 << 20;
    double s1 = 0, s2 = 0, s4 = 0;
    for (int i = 0; i < n / 2; ++i) {
        double a, b;
        r.gauss_pair(a, b);
        for (double v : {a, b}) {
            s1 += v;
            s2 += v * v;
            s4 += v * v * v * v;
        }
    }
    EXPECT_NEAR(s1 / n, 0.0, 0.005);
    EXPECT_NEAR(s2 / n, 1.0, 0.005);
    EXPECT_NEAR(s4 / n, 3.0, 0.05);
    GaussRng a = GaussRng::make(42), b = GaussRng::make(42), c = GaussRng::make(43);
    EXPECT_EQ(a.next(), b.next());
    EXPECT_NE(a.next(), c.next());
    EXPECT_NE(derive_seed(1, 1), derive_seed(1, 2));
}

// Straight lines on a log-frequency axis between profile points, held outside (common practice for
// phase-noise plots); e.g. −80 at 1 kHz and −100 at 100 kHz give −90 dBc/Hz at 10 kHz.
TEST(PhaseNoise, ProfileInterpolation) {
    const std::vector<PhaseNoisePoint> p{{1e3, -80}, {1e5, -100}, {1e6, -140}};
    EXPECT_DOUBLE_EQ(phase_noise_dbc_per_hz(p, 10.0), -80);
    EXPECT_NEAR(phase_noise_dbc_per_hz(p, 1e4), -90, 1e-12);
    EXPECT_NEAR(phase_noise_dbc_per_hz(p, std::sqrt(1e5 * 1e6)), -120, 1e-12);
    EXPECT_DOUBLE_EQ(phase_noise_dbc_per_hz(p, 5e6), -140);
}

// Integrated phase noise sqrt(2∫L(f)df): a flat −100 dBc/Hz from 1 kHz to 1 MHz gives sqrt(2e-10·999e3) =
// 14.135 mrad; a −20 dB/decade line −80 → −100 dBc/Hz over 1–10 kHz integrates to 1e-8·1e3·(1 − 0.1) = 9e-6
// (∫ f^−2, derivable).
TEST(PhaseNoise, IntegratedPhaseNoise) {
    const std::vector<PhaseNoisePoint> flat{{1e3, -100}, {1e6, -100}};
    EXPECT_NEAR(integrated_phase_noise_rad(flat, 1e3, 1e6), std::sqrt(2e-10 * 999e3), 1e-9);
    const std::vector<PhaseNoisePoint> slope{{1e3, -80}, {1e4, -100}};
    EXPECT_NEAR(integrated_phase_noise_rad(slope, 1e3, 1e4), std::sqrt(2 * 9e-6), 1e-9);
    // Held flat below the first point: 500 Hz at −80 dBc/Hz adds 2·1e-8·500.
    EXPECT_NEAR(integrated_phase_noise_rad(slope, 500, 1e4), std::sqrt(2 * (9e-6 + 5e-6)), 1e-9);
}

// The generated phase has S_φ(f) = 2·L(f) (small-angle definition of L(f); IEEE Std 1139 form, from memory):
// Welch-measured (tests/support/mixer_probe.hpp) within 0.5 dB of the profile at offsets across it.
TEST(PhaseNoise, GeneratedSpectrumFollowsProfile) {
    const double fs = 1.0e6;
    const std::vector<PhaseNoisePoint> prof{{1e3, -80}, {1e4, -100}, {1e5, -110}, {3e5, -125}};
    PhaseNoiseSource src = PhaseNoiseSource::make(prof, fs, 11);
    ASSERT_TRUE(src.enabled());
    EXPECT_GE(static_cast<double>(src.filter_length()), 8 * fs / 1e3);
    std::vector<float> phi(1 << 21);
    // Generate in uneven pieces: the blocks join seamlessly.
    for (std::size_t pos = 0; pos < phi.size();) {
        const std::size_t n = std::min<std::size_t>(phi.size() - pos, 777 + pos % 5000);
        src.generate(phi.data() + pos, n);
        pos += n;
    }
    // A real record's two-sided density is S_φ/2 = L(f) on each side.
    const std::vector<test::cf32> z(phi.begin(), phi.end());
    const auto psd = test::welch_density(z, fs, 16384);
    for (double f : {3e3, 1e4, 3e4, 1e5, 2e5, 4e5}) {
        const double l_meas = 10 * std::log10(test::density_near(psd, fs, f, 4));
        EXPECT_NEAR(l_meas, phase_noise_dbc_per_hz(prof, f), 0.5) << "offset " << f << " Hz";
    }
    // Same seed, same sequence after reset.
    std::vector<float> a(5000), b(5000);
    src.reset();
    src.generate(a.data(), a.size());
    src.reset();
    src.generate(b.data(), b.size());
    EXPECT_EQ(a, b);
    EXPECT_FALSE(PhaseNoiseSource::make({}, fs, 1).enabled());
    EXPECT_THROW(PhaseNoiseSource::make(std::vector<PhaseNoisePoint>{{1e4, -90}, {1e3, -80}}, fs, 1), InputError);
}

}  // namespace
}  // namespace hb
