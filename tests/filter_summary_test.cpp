// Summary figures against closed forms: -3/-60 dB bandwidths, shape factor, ripple, stop-band rejection, loss.
#include "dsp/filter_summary.hpp"

#include <gtest/gtest.h>

#include <cmath>

#include "dsp/filter_presets.hpp"
#include "dsp/touchstone.hpp"
#include "dsp/units.hpp"

namespace hb {
namespace {

FilterSpec spec(FilterType t, FilterResponse r, double c, double bw, int n) {
    FilterSpec s;
    s.type = t;
    s.response = r;
    s.center_hz = c;
    s.bandwidth_hz = bw;
    s.order = n;
    s.ripple_db = 0.5;
    s.stop_atten_db = 50;
    return s;
}

TEST(FilterSummary, ButterworthBandpassBandwidthsFromClosedForm) {
    // Butterworth 10 log10(1 + W^2n) (RV B1) reaches A dB at W_A = (10^(A/10) - 1)^(1/2n); the low-pass -> band-pass
    // transform puts the two frequencies of +-W exactly W*B apart (arithmetic width; derivable from
    // f^2 - W B f - f0^2 = 0). So BW(-3) = W_3 B, BW(-60) = W_60 B, shape factor W_60 / W_3.
    for (int n : {2, 4, 7}) {
        FilterSpec s = spec(FilterType::butterworth, FilterResponse::bandpass, 455e3, 10e3, n);
        s.insertion_loss_db = 2.5;
        const FilterSummary m = summarise(make_filter_model(s, "b"));
        const double w3 = std::pow(std::pow(10.0, 0.3) - 1, 0.5 / n), w60 = std::pow(1e6 - 1, 0.5 / n);
        EXPECT_NEAR(m.bw3_hz, w3 * 10e3, 1e-6 * 10e3) << n;
        EXPECT_NEAR(m.bw60_hz, w60 * 10e3, 1e-6 * 10e3 * w60) << n;
        EXPECT_NEAR(m.shape_factor, w60 / w3, 1e-6 * w60 / w3) << n;
        EXPECT_NEAR(m.insertion_loss_db, 2.5, 1e-9) << n;
        EXPECT_NEAR(m.ripple_db, 0.0, 1e-9) << n;
        // The top peaks at the geometric centre (so flat for n > 2 that its position is below double resolution).
        if (n == 2) {
            EXPECT_NEAR(m.peak_hz, std::sqrt(450e3 * 460e3), 50.0);
        }
        // No design stop edge: the stop-band starts 2 BW(-3) from the -3 dB centre, and the least attenuation there
        // is the closed form at whichever of the two starting points is lower.
        const double f_lo = 0.5 * (m.lo3_hz + m.hi3_hz) - 2 * m.bw3_hz,
                     f_hi = 0.5 * (m.lo3_hz + m.hi3_hz) + 2 * m.bw3_hz;
        auto att = [&](double f) {
            const double f0sq = 450e3 * 460e3, w = (f * f - f0sq) / (f * 10e3);
            return 10 * std::log10(1 + std::pow(w * w, n));
        };
        EXPECT_NEAR(m.stop_rejection_db, std::min(att(f_lo), att(f_hi)), 1e-3) << n;
    }
}

TEST(FilterSummary, ChebyshevRippleAndHalfPowerEdges) {
    // Chebyshev I low-pass, 0.5 dB: ripple 0.5 dB; the 3.000 dB edge from 10 log10(1 + eps^2 Tn(W)^2) = 3:
    // W = cosh(acosh(sqrt(10^0.3 - 1)/eps)/n) (RV C2 form).
    for (int n : {3, 4, 5, 8}) {
        const FilterSummary m =
            summarise(make_filter_model(spec(FilterType::chebyshev1, FilterResponse::lowpass, 0, 1e3, n), "c"));
        const double eps = std::sqrt(std::pow(10.0, 0.05) - 1);
        const double w3 = std::cosh(std::acosh(std::sqrt(std::pow(10.0, 0.3) - 1) / eps) / n);
        EXPECT_TRUE(m.lowpass);
        EXPECT_EQ(m.lo3_hz, 0.0);
        EXPECT_NEAR(m.bw3_hz, w3 * 1e3, 1e-6 * 1e3) << n;
        EXPECT_NEAR(m.ripple_db, 0.5, 1e-3) << n;
        EXPECT_NEAR(m.insertion_loss_db, 0.0, 1e-6) << n;
    }
}

TEST(FilterSummary, StopBandFloorsAndCascades) {
    // Equiripple stop-bands: the least rejection beyond the design's stop edge is the requested attenuation; a
    // 50 dB floor never reaches -60 dB (not reached); two in series double the rejection, loss and ripple.
    for (FilterType t : {FilterType::chebyshev2, FilterType::elliptic}) {
        FilterSpec s = spec(t, FilterResponse::bandpass, 10.7e6, 200e3, 4);
        s.insertion_loss_db = 4;
        const auto one = make_filter_model(s, "one");
        const FilterSummary a = summarise(one);
        EXPECT_NEAR(a.stop_rejection_db, 50.0, 0.01) << to_string(t);
        EXPECT_TRUE(std::isnan(a.bw60_hz)) << to_string(t);
        EXPECT_NEAR(a.insertion_loss_db, 4.0, 1e-6);
        const FilterSummary b = summarise(std::vector<FilterModel>{one, one});
        EXPECT_NEAR(b.stop_rejection_db, 100.0, 0.02) << to_string(t);
        EXPECT_NEAR(b.insertion_loss_db, 8.0, 1e-6);
        EXPECT_TRUE(std::isfinite(b.bw60_hz));
        if (t == FilterType::elliptic) {
            EXPECT_NEAR(a.ripple_db, 0.5, 1e-3);
            EXPECT_NEAR(b.ripple_db, 1.0, 2e-3);
        }
    }
    // Presets: the figures their comments promise.
    const FilterSummary c = summarise(make_filter_model(*filter_preset("ceramic-10m7"), "p"));
    EXPECT_NEAR(c.bw3_hz, 200e3, 1e3);
    EXPECT_NEAR(c.insertion_loss_db, 4.0, 1e-6);
    EXPECT_NEAR(c.stop_rejection_db, 50.0, 0.01);
}

TEST(FilterSummary, MeasuredResonatorBandwidth) {
    // A series resonator's |S21| is down 3.000 dB from its peak where |X| = a (2 Z0 + R), a = sqrt(10^0.3 - 1):
    // width a f0 / Q_loaded (derivable; Q_loaded = w0 L / (2 Z0 + R)). Data every 2 kHz, linear in dB between.
    const double f0 = 10.7e6, q = 40, d = 105, l = q * d / (kTwoPi * f0), c = 1 / (std::pow(kTwoPi * f0, 2) * l);
    TouchstoneData t;
    for (int i = 0; i <= 1000; ++i) {
        const double f = 9.7e6 + 2e3 * i, w = kTwoPi * f;
        const std::complex<double> z(5, w * l - 1 / (w * c));
        t.freq_hz.push_back(f);
        t.s.push_back({0.0, 100.0 / (100.0 + z), 100.0 / (100.0 + z), 0.0});
        t.line.push_back(i + 1);
    }
    FilterSpec s;
    s.type = FilterType::touchstone;
    ModelOptions o;
    o.touchstone = &t;
    const FilterSummary m = summarise(make_filter_model(s, "m", o));
    EXPECT_NEAR(m.bw3_hz, std::sqrt(std::pow(10.0, 0.3) - 1) * f0 / q, 0.002 * f0 / q);
    EXPECT_NEAR(m.insertion_loss_db, -20 * std::log10(100.0 / 105.0), 1e-3);
    EXPECT_TRUE(std::isnan(m.bw60_hz));  // the data end long before -60 dB
}

}  // namespace
}  // namespace hb
