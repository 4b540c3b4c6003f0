// Every hot kernel against its plain reference: the same arithmetic written directly in double precision (or
// liquid-dsp), fed in blocks of awkward sizes so that state carries across calls. Tolerances are stated at each
// check and come from float rounding (about 6e-8 relative per operation, growing with the number of operations
// summed); they are relative to the output's peak.
#include <gtest/gtest.h>

#include <cmath>
#include <complex>
#include <cstdio>
#include <cstdlib>
#include <filesystem>
#include <fstream>
#include <random>
#include <string>
#include <vector>

#include "dsp/filter_kernels.hpp"
#include "dsp/lo_mix_kernel.hpp"
#include "dsp/simd.hpp"
#include "dsp/throughput_chain.hpp"

namespace hb {
namespace {

using cd = std::complex<double>;
using cvec = std::vector<cf32>;
constexpr double kTau = 6.283185307179586476925;

cvec noise(std::size_t n, unsigned seed) {
    std::mt19937 rng(seed);
    std::normal_distribution<float> g(0.0f, 0.3f);
    cvec x(n);
    for (auto& v : x) v = {g(rng), g(rng)};
    return x;
}

// Feeds x through f(in, n, out) in blocks of changing size (1, 6, 31, ... up to max), returning all outputs.
template <class F>
std::size_t in_blocks(const cvec& x, std::size_t max, F f) {
    std::size_t done = 0, got = 0;
    for (std::size_t step = 1; done < x.size(); step = step * 5 % max + 1) {
        const std::size_t n = std::min(x.size() - done, step);
        got += f(done, n, got);
        done += n;
    }
    return got;
}

double worst_rel(const cvec& y, const std::vector<cd>& ref) {
    double worst = 0, peak = 0;
    for (std::size_t i = 0; i < ref.size(); ++i) {
        worst = std::max(worst, std::abs(cd(y[i].real(), y[i].imag()) - ref[i]));
        peak = std::max(peak, std::abs(ref[i]));
    }
    return worst / peak;
}

std::vector<cd> fir_ref(const cvec& x, const std::vector<cd>& h, int d) {
    std::vector<cd> y;
    for (std::size_t i = 0; i < x.size(); i += static_cast<std::size_t>(d)) {
        cd s = 0;
        for (std::size_t k = 0; k < h.size() && k <= i; ++k) s += h[k] * cd(x[i - k].real(), x[i - k].imag());
        y.push_back(s);
    }
    return y;
}

// x through a FirKernel with taps h (blocks of changing size, at most max; decimation d) against the direct form
// in double: the same number of outputs, and 2e-6 of the peak (128-tap float sums). Returns the kernel.
FirKernel expect_fir_matches(const std::vector<cd>& h, const cvec& x, std::size_t max, int d, const std::string& what) {
    FirKernel k;
    k.init(h, max);
    cvec y(x.size());
    int phase = 0;
    const std::size_t got = in_blocks(x, max, [&](std::size_t at, std::size_t n, std::size_t out) {
        return k.process(x.data() + at, n, y.data() + out, d, phase);
    });
    const auto ref = fir_ref(x, h, d);
    EXPECT_EQ(got, ref.size()) << what;
    if (got == ref.size()) {
        EXPECT_LE(worst_rel(y, ref), 2e-6) << what;
    }
    return k;
}

TEST(Kernels, FirRealAndComplexTapsAnyDecimation) {
    // Direct-form convolution in double keeping inputs 0, D, 2D, ...; 128-tap float sums: 2e-6 of the peak.
    std::mt19937 rng(4);
    std::normal_distribution<double> g(0.0, 0.1);
    const cvec x = noise(6000, 2);
    for (bool complex_taps : {false, true})
        for (std::size_t L : {1u, 7u, 16u, 33u, 128u, 200u})
            for (int d : {1, 2, 3, 4, 8, 13, 16}) {  // 2, 4, 8, 16 divide the vector width: shared loads
                std::vector<cd> h(L);
                for (auto& t : h) t = complex_taps ? cd(g(rng), g(rng)) : cd(g(rng), 0.0);
                const std::string what =
                    std::to_string(L) + " taps, decimation " + std::to_string(d) + (complex_taps ? " complex" : "");
                EXPECT_EQ(expect_fir_matches(h, x, 1000, d, what).real_taps, !complex_taps) << what;
            }
}

TEST(Kernels, FirSymmetricTapsFoldedDecimator) {
    // Linear-phase taps (h[k] = h[L−1−k]) take the folded decimator when L is a multiple of two vector widths;
    // the same direct-form reference in double and the same 2e-6 of the peak as for any taps. A filter one tap
    // away from symmetry must not take it, and must still be right.
    std::mt19937 rng(9);
    std::normal_distribution<double> g(0.0, 0.1);
    const cvec x = noise(7000, 5);
    const std::size_t W2 = 2 * static_cast<std::size_t>(simd::kWidth);
    for (std::size_t L : {W2, 2 * W2, std::size_t{128}, std::size_t{256}})
        for (int d : {2, 3, 4, 8, 16})
            for (bool broken : {false, true}) {
                std::vector<cd> h(L);
                for (std::size_t k = 0; k < L / 2; ++k) h[k] = h[L - 1 - k] = g(rng);
                if (broken) h[3] += 1e-3;
                const std::string what =
                    std::to_string(L) + " taps, decimation " + std::to_string(d) + (broken ? " (not symmetric)" : "");
                EXPECT_EQ(expect_fir_matches(h, x, 2048, d, what).symmetric, !broken && L % W2 == 0) << what;
            }
}

TEST(Kernels, FirPlanarInputEqualsInterleaved) {
    std::vector<cd> h(50);
    for (std::size_t i = 0; i < h.size(); ++i) h[i] = std::cos(0.1 * static_cast<double>(i));
    const cvec x = noise(4096, 3);
    std::vector<float> re(x.size()), im(x.size());
    deinterleave(x.data(), x.size(), re.data(), im.data());
    FirKernel a, b;
    a.init(h, 4096);
    b.init(h, 4096);
    cvec ya(600), yb(600);
    int pa = 0, pb = 0;
    const std::size_t na = a.process(x.data(), x.size(), ya.data(), 7, pa);
    const std::size_t nb = b.process_planar(re.data(), im.data(), x.size(), yb.data(), 7, pb);
    ASSERT_EQ(na, nb);
    for (std::size_t i = 0; i < na; ++i) EXPECT_EQ(ya[i], yb[i]);
}

// A cascade of complex one-pole sections in double (the recursion the kernel implements).
std::vector<cd> pole_ref(const cvec& x, const std::vector<PoleSection>& secs) {
    std::vector<cd> pin(secs.size(), 0.0), pout(secs.size(), 0.0), y;
    for (const cf32& s : x) {
        cd v(s.real(), s.imag());
        for (std::size_t j = 0; j < secs.size(); ++j) {
            const cd o = secs[j].b0 * v + secs[j].b1 * pin[j] + secs[j].a1 * pout[j];
            pin[j] = v;
            pout[j] = o;
            v = o;
        }
        y.push_back(v);
    }
    return y;
}

TEST(Kernels, PoleCascadeWavefrontAnyLength) {
    // 1 to 37 sections: one wavefront group and several (more sections than vector lanes). All-pass sections
    // (b0 = −a1*, b1 = 1: |H| = 1 at every frequency) keep the cascade's level, so float round-off grows only with
    // the number of sections: 2e-6 per section of the peak.
    for (std::size_t S : {1u, 3u, 8u, 16u, 17u, 37u}) {
        std::vector<PoleSection> secs(S);
        for (std::size_t s = 0; s < S; ++s) {
            secs[s].a1 = std::polar(0.5 + 0.01 * static_cast<double>(s), 0.3 + 0.05 * static_cast<double>(s));
            secs[s].b0 = -std::conj(secs[s].a1);
            secs[s].b1 = 1.0;
        }
        PoleCascadeKernel k;
        k.init(secs);
        const cvec x = noise(5000, 9);
        cvec y = x;
        in_blocks(y, 700, [&](std::size_t at, std::size_t n, std::size_t) {
            k.process(y.data() + at, n);
            return n;
        });
        EXPECT_LE(worst_rel(y, pole_ref(x, secs)), 2e-6 * static_cast<double>(S)) << S << " sections";
    }
}

TEST(Kernels, BiquadsMatchTransposedDirectFormII) {
    // The sosfilt recursion (scipy.signal.sosfilt documents this form) in double, re and im separately.
    // Sections: the four of an 8th-order low-pass (poles at radius 0.8..0.95), plus a ninth to span two groups.
    std::vector<BiquadCascadeKernel::Section> secs;
    for (int s = 0; s < 9; ++s) {
        const double r = 0.8 + 0.02 * s, th = 0.2 + 0.05 * s;
        secs.push_back({0.05, 0.1, 0.05, -2 * r * std::cos(th), r * r});
    }
    for (std::size_t S : {1u, 4u, 8u, 9u}) {
        const std::vector<BiquadCascadeKernel::Section> use(secs.begin(), secs.begin() + static_cast<long>(S));
        BiquadCascadeKernel k;
        k.init(use);
        const cvec x = noise(4000, 5);
        cvec y = x;
        in_blocks(y, 513, [&](std::size_t at, std::size_t n, std::size_t) {
            k.process(y.data() + at, n);
            return n;
        });
        std::vector<cd> ref;
        std::vector<double> w1(2 * S, 0.0), w2(2 * S, 0.0);
        for (const cf32& v : x) {
            double p[2] = {v.real(), v.imag()};
            for (std::size_t s = 0; s < S; ++s)
                for (int c = 0; c < 2; ++c) {
                    const auto& q = use[s];
                    const double o = q.b0 * p[c] + w1[2 * s + c];
                    w1[2 * s + c] = q.b1 * p[c] - q.a1 * o + w2[2 * s + c];
                    w2[2 * s + c] = q.b2 * p[c] - q.a2 * o;
                    p[c] = o;
                }
            ref.emplace_back(p[0], p[1]);
        }
        EXPECT_LE(worst_rel(y, ref), 5e-5) << S << " sections";
    }
}

std::vector<double> halfband(std::size_t n) {
    // A windowed sinc of cutoff 1/4 (every other tap zero), Hann window: any real taps do for the check.
    std::vector<double> h(n);
    const double c = (static_cast<double>(n) - 1) / 2;
    for (std::size_t i = 0; i < n; ++i) {
        const double t = static_cast<double>(i) - c;
        const double s = t == 0 ? 0.5 : std::sin(kTau * t / 4) / (kTau / 2 * t);
        h[i] = s * (0.5 - 0.5 * std::cos(kTau * (static_cast<double>(i) + 0.5) / static_cast<double>(n)));
        if (t != 0 && std::fmod(std::abs(t), 2.0) == 0.0) h[i] = 0.0;
    }
    return h;
}

TEST(Kernels, InterpolatorAndDecimatorByTwo) {
    // ×2: up[2i+p] = Σ_j h[2j+p]·x[i−j]; ÷2: y[i] = Σ_k h[k]·u[2i−k]. Half-band (one branch a single tap) and
    // dense (even length) taps. Float sums of ~70 terms: 2e-6 of the peak.
    for (std::size_t L : {31u, 67u, 131u, 64u}) {
        const std::vector<double> h = halfband(L);
        const cvec x = noise(3000, 7);
        Interp2Kernel ip;
        ip.init(h, 512);
        std::vector<float> er(512), ei(512), orr(512), oi(512);
        cvec up(2 * x.size());
        in_blocks(x, 512, [&](std::size_t at, std::size_t n, std::size_t) {
            ip.process(x.data() + at, n, er.data(), ei.data(), orr.data(), oi.data());
            for (std::size_t i = 0; i < n; ++i) {
                up[2 * (at + i)] = {er[i], ei[i]};
                up[2 * (at + i) + 1] = {orr[i], oi[i]};
            }
            return n;
        });
        std::vector<cd> ref(up.size());
        for (std::size_t t = 0; t < up.size(); ++t) {
            const std::size_t i = t / 2, p = t % 2;
            cd s = 0;
            for (std::size_t j = 0; 2 * j + p < L && j <= i; ++j)
                s += h[2 * j + p] * cd(x[i - j].real(), x[i - j].imag());
            ref[t] = s;
        }
        EXPECT_LE(worst_rel(up, ref), 2e-6) << L << " taps, x2";

        // ÷2 of the interpolated stream, fed as its even and odd samples.
        Decim2Kernel dk;
        dk.init(h, 512);
        cvec y(x.size());
        std::vector<float> a(512), b(512), c(512), d(512);
        in_blocks(x, 512, [&](std::size_t at, std::size_t n, std::size_t) {
            for (std::size_t i = 0; i < n; ++i) {
                a[i] = up[2 * (at + i)].real(), b[i] = up[2 * (at + i)].imag();
                c[i] = up[2 * (at + i) + 1].real(), d[i] = up[2 * (at + i) + 1].imag();
            }
            dk.process(a.data(), b.data(), c.data(), d.data(), n, y.data() + at);
            return n;
        });
        const auto ref2 = fir_ref(up, std::vector<cd>(h.begin(), h.end()), 2);
        EXPECT_LE(worst_rel(y, ref2), 2e-6) << L << " taps, /2";
    }
}

TEST(Kernels, ShiftedFirEqualsComplexTaps) {
    // h[i] = lp[i]·e^{j2π s (i − mid)} run as mix down, real FIR, mix up, against the complex-tap FIR in double.
    // The float phasors add about 1e-6 (128 steps per lane): 5e-6 of the peak.
    std::vector<double> lp(161);
    for (std::size_t i = 0; i < lp.size(); ++i)
        lp[i] = std::exp(-0.5 * std::pow((static_cast<double>(i) - 80) / 25.0, 2)) / 60;
    const double shift = 0.1873, mid = 80.0;
    std::vector<cd> h(lp.size());
    for (std::size_t i = 0; i < h.size(); ++i)
        h[i] = lp[i] * std::polar(1.0, kTau * shift * (static_cast<double>(i) - mid));
    ShiftedFirKernel k;
    k.init(lp, shift, mid, 8192);
    const cvec x = noise(30000, 8);
    cvec y(x.size());
    in_blocks(x, 8192, [&](std::size_t at, std::size_t n, std::size_t) {
        k.process(x.data() + at, n, y.data() + at);
        return n;
    });
    EXPECT_LE(worst_rel(y, fir_ref(x, h, 1)), 5e-6);
}

LoMixSpec lo_spec() {
    LoMixSpec s;
    s.lo_cycles = 0.0371;
    s.harmonic = default_lo_harmonics(8);
    s.a3 = -0.02;
    s.iq_gain_db = 0.3;
    s.iq_phase_deg = 1.5;
    s.dc = {1e-3, -5e-4};
    return s;
}

TEST(Kernels, LoMixMatchesTheFormula) {
    // y = μz + ηz* + dc, z = x(1 + a3|x|²)·Σ g_k e^{j2πkνt}, with the phase from exact integer arithmetic. Float
    // Clenshaw over 8 harmonics and 128 lane steps: 1e-5 of the peak (measured here: 2.5e-6).
    const LoMixSpec s = lo_spec();
    LoMixKernel k;
    k.init(s);
    const cvec x = noise(20000, 1);
    std::vector<float> re(x.size()), im(x.size());
    in_blocks(x, 5000, [&](std::size_t at, std::size_t n, std::size_t) {
        k.process(x.data() + at, n, re.data() + at, im.data() + at);
        return n;
    });
    cd mu, eta;
    iq_imbalance_coefficients(s.iq_gain_db, s.iq_phase_deg, mu, eta);
    // IQ imbalance as I' = I, Q' = g(Q cos φ − I sin φ) (the model the header states), checked on one value.
    {
        const cd z(0.3, -0.7), y = mu * z + eta * std::conj(z);
        const double g = std::pow(10.0, 0.3 / 20), ph = 1.5 * kTau / 360;
        EXPECT_NEAR(y.real(), 0.3, 1e-12);
        EXPECT_NEAR(y.imag(), g * (-0.7 * std::cos(ph) - 0.3 * std::sin(ph)), 1e-12);
    }
    cvec y(x.size());
    std::vector<cd> ref(x.size());
    for (std::size_t t = 0; t < x.size(); ++t) {
        y[t] = {re[t], im[t]};
        const cd xv(x[t].real(), x[t].imag());
        cd lo = 0;
        for (std::size_t m = 1; m <= s.harmonic.size(); ++m)
            lo += s.harmonic[m - 1] *
                  std::polar(1.0, kTau * std::fmod(static_cast<double>(m) * 0.0371 * static_cast<double>(t), 1.0));
        const cd z = xv * (1.0 + s.a3 * std::norm(xv)) * lo;
        ref[t] = mu * z + eta * std::conj(z) + s.dc;
    }
    EXPECT_LE(worst_rel(y, ref), 1e-5);
}

TEST(Kernels, LoHarmonicSumAtAnyFrequency) {
    // The harmonic sum alone (unit input, no impairments) for LO frequencies from near DC to near Nyquist and for
    // K = 8, 12 (Clenshaw's recurrence) and 13 (Horner's rule), against Σ g_k e^{j2πkνt} in double with the
    // phase reduced exactly (ν = p/q). Two kinds of coefficient list:
    //  - a switching LO's harmonics (default_lo_harmonics: magnitudes falling as 1/k): 5e-6 of the peak, what
    //    Horner's rule reaches too (measured here: 0.7e-6 to 2.3e-6 for both);
    //  - random coefficients of equal size, the hard case for Clenshaw: its rounding is carried by the b_k, which
    //    grow like sin(kθ)/sin θ ≤ k times the coefficients (Higham, Accuracy and Stability of Numerical
    //    Algorithms, 2nd ed. 2002, §3.7 on Clenshaw's recurrence, from memory), so about K²/2 roundings of
    //    Σ|g_k| against a peak near Σ|g_k|/2: 5e-5 of the peak for K = 12 (measured here: up to 3.0e-5; Horner's
    //    rule 4.8e-6).
    // The portable build (no fused multiply-add: two roundings per step, Horner's rule throughout, 16 time lanes
    // stepping 128 times a block) measured up to 1.3e-5 (switching) and 3.1e-5 (random): 2e-5 and 5e-5 there.
    const std::uint64_t q = 1000003;
    for (bool random : {false, true})
        for (std::uint64_t p : {431ull, 37101ull, 250001ull, 499000ull})
            for (int K : {8, 12, 13}) {
                LoMixSpec s;
                s.lo_cycles = static_cast<double>(p) / static_cast<double>(q);
                s.harmonic = default_lo_harmonics(K);
                if (random) {
                    std::mt19937 rng(static_cast<unsigned>(p) + static_cast<unsigned>(K));
                    std::normal_distribution<double> g(0.0, 0.3);
                    for (auto& c : s.harmonic) c = {g(rng), g(rng)};
                }
                LoMixKernel lo;
                lo.init(s);
                const std::size_t n = 5000;
                const cvec one(n, cf32(1.0f, 0.0f));
                std::vector<float> re(n), im(n);
                lo.process(one.data(), n, re.data(), im.data());
                cvec y(n);
                std::vector<cd> ref(n);
                for (std::size_t t = 0; t < n; ++t) {
                    y[t] = {re[t], im[t]};
                    for (int k = 1; k <= K; ++k) {
                        const std::uint64_t r = (static_cast<std::uint64_t>(k) * p % q) * t % q;
                        ref[t] += s.harmonic[static_cast<std::size_t>(k - 1)] *
                                  std::polar(1.0, kTau * static_cast<double>(r) / static_cast<double>(q));
                    }
                }
                const double tol = random ? 5e-5 : simd::kFusedMultiplyAdd ? 5e-6 : 2e-5;
                EXPECT_LE(worst_rel(y, ref), tol)
                    << "nu " << s.lo_cycles << ", K " << K << (random ? ", random coefficients" : "");
            }
}

TEST(Kernels, LoPhaseErrorAfterABillionSamples) {
    // The LO of the LO-mix kernel (one harmonic, unit input) run for 10^9 samples; the last block is compared with
    // the exact phase ν·t for ν = p/q (integer arithmetic: (p·t mod q)/q). Error power relative to the LO
    // (|y − e^{j2πνt}|², dBc) at most −100 dBc.
    const std::uint64_t p = 123457, q = 3333331;
    LoMixSpec s;
    s.lo_cycles = static_cast<double>(p) / static_cast<double>(q);
    s.harmonic = {1.0};
    LoMixKernel k;
    k.init(s);
    constexpr std::size_t B = 1 << 16;
    const cvec one(B, cf32(1.0f, 0.0f));
    std::vector<float> re(B), im(B);
    const std::uint64_t total = (1000000000ULL / B + 2) * B;
    for (std::uint64_t t = 0; t + B < total; t += B) k.process(one.data(), B, re.data(), im.data());
    const std::uint64_t t0 = total - B;  // > 10^9
    ASSERT_GE(t0, 1000000000ULL);
    k.process(one.data(), B, re.data(), im.data());
    double worst = 0, mean = 0;
    for (std::size_t i = 0; i < B; ++i) {
        const std::uint64_t r = (p * ((t0 + i) % q)) % q;
        const cd want = std::polar(1.0, kTau * static_cast<double>(r) / static_cast<double>(q));
        const double e = std::norm(cd(re[i], im[i]) - want);
        worst = std::max(worst, e);
        mean += e / B;
    }
    EXPECT_LE(10 * std::log10(worst), -100.0) << "mean " << 10 * std::log10(mean) << " dBc";
}

TEST(Kernels, ThroughputChainEqualsLiquidChain) {
    // The same chain from liquid-dsp primitives. Liquid's fast NCO (LIQUID_NCO) reads a sine table without
    // interpolation (about π/1024 ≈ 3e-3 of phase error, from memory; measured here 3e-3 of the peak), so the
    // bound is 8e-3 of the peak: a mistake in the harmonics, taps or decimation phase is of the order of the peak.
    const ThroughputChainSpec spec;
    ThroughputChain a = ThroughputChain::make(spec);
    LiquidChain b = LiquidChain::make(spec);
    const cvec x = noise(ThroughputChain::kBlock * 20, 6);
    double worst = 0, peak = 0;
    for (std::size_t pos = 0; pos < x.size(); pos += ThroughputChain::kBlock) {
        const std::span<const cf32> blk(x.data() + pos, ThroughputChain::kBlock);
        a.process(blk);
        b.process(blk);
        const auto ya = a.last_output(), yb = b.last_output();
        ASSERT_EQ(ya.size(), yb.size());
        for (std::size_t i = 0; i < ya.size(); ++i) {
            worst = std::max(worst, static_cast<double>(std::abs(ya[i] - yb[i])));
            peak = std::max(peak, static_cast<double>(std::abs(yb[i])));
        }
    }
    ASSERT_GT(peak, 0.01);
    EXPECT_LE(worst, 8e-3 * peak);
}

TEST(Kernels, ThroughputChainEqualsNumpyChain) {
    // tests/bench/chain_numpy.py --dump: the chain written independently in numpy/scipy (scipy.signal.firwin for
    // the taps, upfirdn for the decimation) on the same deterministic input. Float on both sides: 1e-4 of the peak.
    namespace fs = std::filesystem;
    const fs::path script = fs::path(HETBENCH_SOURCE_DIR) / "tests" / "bench" / "chain_numpy.py";
    if (std::system("/usr/bin/python3 -c 'import numpy, scipy.signal' >/dev/null 2>&1") != 0)
        GTEST_SKIP() << "Debian's python3-numpy / python3-scipy not installed";
    const fs::path out = fs::temp_directory_path() / ("hb_numpy_chain_" + std::to_string(::getpid()) + ".cf32");
    const std::size_t n = 1 << 17;
    const std::string cmd =
        "/usr/bin/python3 '" + script.string() + "' --samples " + std::to_string(n) + " --dump '" + out.string() + "'";
    ASSERT_EQ(std::system(cmd.c_str()), 0) << cmd;
    std::ifstream f(out, std::ios::binary);
    cvec want(n / 8);
    f.read(reinterpret_cast<char*>(want.data()), static_cast<std::streamsize>(want.size() * sizeof(cf32)));
    ASSERT_TRUE(f.good());
    fs::remove(out);
    cvec x(n);
    for (std::size_t t = 0; t < n; ++t) {
        const double td = static_cast<double>(t);
        const cd v = 0.4 * std::polar(1.0, kTau * 0.0123 * td) + 0.2 * std::polar(1.0, -kTau * 0.0871 * td + 0.3);
        x[t] = cf32(v);
    }
    ThroughputChain c = ThroughputChain::make({});
    double worst = 0, peak = 0;
    std::size_t at = 0;
    for (std::size_t pos = 0; pos < n; pos += ThroughputChain::kBlock) {
        c.process(std::span<const cf32>(x.data() + pos, ThroughputChain::kBlock));
        for (const cf32& v : c.last_output()) {
            worst = std::max(worst, static_cast<double>(std::abs(v - want[at])));
            peak = std::max(peak, static_cast<double>(std::abs(want[at])));
            ++at;
        }
    }
    ASSERT_EQ(at, want.size());
    ASSERT_GT(peak, 0.01);
    EXPECT_LE(worst, 1e-4 * peak);
}

}  // namespace
}  // namespace hb
