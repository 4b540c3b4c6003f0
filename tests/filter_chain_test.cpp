// The streaming kernels and the chain: kernels against liquid-dsp and a double-precision reference, decimation
// against filter-then-discard, state across calls, reset, gain, in-place use.
#include <gtest/gtest.h>

#include <cmath>
#include <random>

// clang-format off
#include <complex>  // before liquid.h, so that liquid_float_complex is std::complex<float>
#include <liquid/liquid.h>
// clang-format on

#include "dsp/filter_chain.hpp"
#include "dsp/filter_kernels.hpp"
#include "dsp/units.hpp"

namespace hb {
namespace {

using cd = std::complex<double>;

std::vector<cf32> noise(std::size_t n, unsigned seed) {
    std::mt19937 rng(seed);
    std::normal_distribution<float> g(0.0f, 0.5f);
    std::vector<cf32> x(n);
    for (auto& v : x) v = {g(rng), g(rng)};
    return x;
}

// Runs the chain over x in blocks of irregular size (state must carry across calls).
std::vector<cf32> run(FilterChain& c, const std::vector<cf32>& x) {
    std::vector<cf32> out(c.max_output(x.size()) + 16);
    std::size_t done = 0, got = 0, step = 1;
    while (done < x.size()) {
        const std::size_t k = std::min(x.size() - done, step);
        got += c.process(x.data() + done, k, out.data() + got);
        done += k;
        step = (step * 7 + 3) % 5003 + 1;
    }
    out.resize(got);
    return out;
}

FilterSpec bp(FilterType t, double center, double bw, int order) {
    FilterSpec s;
    s.type = t;
    s.center_hz = center;
    s.bandwidth_hz = bw;
    s.order = order;
    s.stop_atten_db = 70;
    return s;
}

TEST(FilterKernels, FirMatchesLiquidFirfilt) {
    // liquid-dsp's firfilt_cccf (complex taps, complex samples) as the reference; float on both sides: 1e-5 of
    // the output's peak.
    std::mt19937 rng(3);
    std::normal_distribution<double> g(0.0, 0.1);
    for (std::size_t L : {1u, 5u, 16u, 17u, 128u, 301u}) {
        std::vector<cd> taps(L);
        for (auto& t : taps) t = {g(rng), g(rng)};
        std::vector<liquid_float_complex> lt(L);
        for (std::size_t i = 0; i < L; ++i) lt[i] = {float(taps[i].real()), float(taps[i].imag())};
        firfilt_cccf q = firfilt_cccf_create(lt.data(), static_cast<unsigned>(L));
        const auto x = noise(20000, 11);
        FirKernel k;
        k.init(taps, 4096);
        std::vector<cf32> y(x.size());
        int phase = 0;
        std::size_t done = 0, got = 0;
        for (std::size_t step = 1; done < x.size(); step = step * 5 % 4093 + 1) {
            const std::size_t n = std::min(x.size() - done, step);
            got += k.process(x.data() + done, n, y.data() + got, 1, phase);
            done += n;
        }
        ASSERT_EQ(got, x.size());
        double worst = 0, peak = 0;
        for (std::size_t i = 0; i < x.size(); ++i) {
            liquid_float_complex r;
            firfilt_cccf_push(q, {x[i].real(), x[i].imag()});
            firfilt_cccf_execute(q, &r);
            worst = std::max(worst, double(std::abs(y[i] - cf32(r.real(), r.imag()))));
            peak = std::max(peak, double(std::abs(y[i])));
        }
        firfilt_cccf_destroy(q);
        EXPECT_LE(worst, 1e-5 * peak) << L << " taps";
    }
}

TEST(FilterKernels, PoleCascadeMatchesDoubleReference) {
    // The float cascade against the same recursion in double. Narrow filters amplify float round-off by their
    // noise gain; for this 8-section, 2 % fractional-bandwidth case 1e-5 of the output's peak holds.
    FilterSpec s = bp(FilterType::chebyshev1, 455e3, 10e3, 8);
    const auto m = make_filter_model(s, "k");
    const Realisation r = realise_pole_sections(m, {455e3, 500e3});
    ASSERT_EQ(r.sections.size(), 8u);
    PoleCascadeKernel k;
    k.init(r.sections);
    const auto x = noise(30000, 5);
    std::vector<cf32> y = x;
    for (std::size_t done = 0, step = 1; done < y.size(); step = step * 3 % 997 + 1) {
        const std::size_t n = std::min(y.size() - done, step);
        k.process(y.data() + done, n);
        done += n;
    }
    std::vector<cd> prev_in(r.sections.size(), 0.0), prev_out(r.sections.size(), 0.0);
    double worst = 0, peak = 0;
    for (std::size_t i = 0; i < x.size(); ++i) {
        cd v(x[i].real(), x[i].imag());
        for (std::size_t j = 0; j < r.sections.size(); ++j) {
            const auto& c = r.sections[j];
            const cd out = c.b0 * v + c.b1 * prev_in[j] + c.a1 * prev_out[j];
            prev_in[j] = v;
            prev_out[j] = out;
            v = out;
        }
        worst = std::max(worst, std::abs(cd(y[i].real(), y[i].imag()) - v));
        peak = std::max(peak, std::abs(v));
    }
    EXPECT_LE(worst, 1e-5 * peak);
}

// The decimating chain against the same chain run at full rate with every D-th output kept (input sample 0 is
// kept first). "Full rate" is the same stages with decimation switched off, so it is filter-then-discard exactly.
void expect_decimation_is_discard(std::vector<FilterModel> models, EnvelopeWindow w, int d, const char* what) {
    ChainOptions o;
    o.window = w;
    o.decimation = d;
    o.gain_db = 6.0;
    FilterChain dec = make_filter_chain(models, o);
    FilterChain full = dec;
    full.decimation = 1;
    full.stages.back().decimates = false;
    full.reset();
    const auto x = noise(50001, 9);
    const auto yd = run(dec, x);
    const auto yf = run(full, x);
    ASSERT_EQ(yf.size(), x.size());
    ASSERT_EQ(yd.size(), (x.size() + d - 1) / d) << what;
    double worst = 0;
    for (std::size_t i = 0; i < yd.size(); ++i) worst = std::max(worst, double(std::abs(yd[i] - yf[i * d])));
    EXPECT_LE(worst, 1e-5) << what;
    EXPECT_EQ(dec.output.sample_rate_hz, w.sample_rate_hz / d);
}

TEST(FilterChain, DecimationEqualsFilterThenDiscard) {
    const EnvelopeWindow w{455e3, 1.2e6};
    // An FIR-type last filter decimates itself (polyphase: only kept outputs computed).
    FilterSpec fir = bp(FilterType::fir, 455e3, 40e3, 0);
    ModelOptions mo;
    mo.fir_window = w;
    expect_decimation_is_discard({make_filter_model(fir, "fir", mo)}, w, 8, "FIR last");
    expect_decimation_is_discard(
        {make_filter_model(bp(FilterType::elliptic, 455e3, 10e3, 5), "iir"), make_filter_model(fir, "fir", mo)}, w, 5,
        "IIR then FIR");
    // An IIR last filter gets the automatic anti-alias FIR, which decimates.
    FilterChain c = make_filter_chain({make_filter_model(bp(FilterType::butterworth, 455e3, 10e3, 4), "iir")},
                                      ChainOptions{w, 8, 0.0, 4096});
    ASSERT_EQ(c.stages.back().label, "anti-alias");
    expect_decimation_is_discard({make_filter_model(bp(FilterType::butterworth, 455e3, 10e3, 4), "iir")}, w, 8,
                                 "IIR last");
    expect_decimation_is_discard({}, w, 3, "no filter");
}

TEST(FilterChain, AntiAliasFilterProtectsTheOutputBand) {
    // Kaiser design: pass-band +-0.4 of the output rate flat within 0.001 dB, and 100 dB from 0.6 of the output
    // rate on (what folds onto the inner +-0.4 after decimation).
    for (int d : {2, 8, 25}) {
        const FirLowpass aa = anti_alias_design(d);
        EXPECT_GE(-fir_peak_db(aa.taps, 0.6 / d, 0.5), 100.0) << d;
        EXPECT_LE(fir_passband_deviation_db(aa.taps, 0.4 / d), 0.001) << d;
    }
}

TEST(FilterChain, StateResetGainAndInPlace) {
    const EnvelopeWindow w{10.7e6, 2.4e6};
    FilterSpec s = bp(FilterType::chebyshev2, 10.7e6, 200e3, 4);
    s.sections = 2;
    const auto m = make_filter_model(s, "c");
    FilterChain a = make_filter_chain({m}, ChainOptions{w, 1, 20.0, 1024});
    const auto x = noise(10000, 21);
    // One call against many irregular calls: the same samples.
    std::vector<cf32> one(x.size());
    ASSERT_EQ(a.process(x.data(), x.size(), one.data()), x.size());
    a.reset();
    const auto many = run(a, x);
    ASSERT_EQ(many.size(), x.size());
    for (std::size_t i = 0; i < x.size(); ++i) ASSERT_EQ(one[i], many[i]) << i;
    // In place.
    a.reset();
    std::vector<cf32> io = x;
    a.process(io.data(), io.size(), io.data());
    for (std::size_t i = 0; i < x.size(); ++i) ASSERT_EQ(io[i], one[i]) << i;
    // Gain: 20 dB = x10 in amplitude against the same chain at 0 dB.
    FilterChain b = make_filter_chain({m}, ChainOptions{w, 1, 0.0, 1024});
    std::vector<cf32> g(x.size());
    b.process(x.data(), x.size(), g.data());
    for (std::size_t i = 0; i < x.size(); ++i)
        ASSERT_NEAR(std::abs(one[i] - 10.0f * g[i]), 0.0, 1e-4 * (1 + std::abs(one[i])));
    // The designed chain response includes the gain.
    EXPECT_NEAR(std::abs(a.response(10.7e6)) / std::abs(b.response(10.7e6)), 10.0, 1e-5);
}

TEST(FilterChain, ToneThroughTheChainHasTheOwnResponseLevel) {
    // A steady tone at a few frequencies of the window: the output amplitude equals |own response| within the
    // realisation tolerance (0.05 dB in the pass-band, re -80 dB floor outside).
    const EnvelopeWindow w{455e3, 240e3};
    FilterSpec s = bp(FilterType::chebyshev1, 455e3, 12e3, 5);
    s.insertion_loss_db = 2.0;
    const auto m = make_filter_model(s, "tone");
    FilterChain c = make_filter_chain({m}, ChainOptions{w, 1, 0.0, 4096});
    for (double f : {449e3, 455e3, 460.5e3, 470e3}) {
        const std::size_t n = 1 << 16;
        std::vector<cf32> x(n);
        for (std::size_t i = 0; i < n; ++i) {
            const double ph = kTwoPi * (f - w.center_hz) / w.sample_rate_hz * double(i);
            x[i] = {float(std::cos(ph)), float(std::sin(ph))};
        }
        c.reset();
        const auto y = run(c, x);
        double acc = 0;  // rms over the second half (settled)
        for (std::size_t i = n / 2; i < n; ++i) acc += std::norm(y[i]);
        const double got = std::sqrt(acc / double(n / 2)), own = std::abs(m.response(f));
        EXPECT_LE(std::abs(got - own), (amplitude_from_db(0.05) - 1) * own + 1e-4 * m.section_peak()) << f;
    }
}

}  // namespace
}  // namespace hb
