#include "dsp/lo_mix_kernel.hpp"

#include <algorithm>
#include <array>
#include <cmath>
#include <utility>

#include "dsp/errors.hpp"
#include "dsp/simd.hpp"
#include "dsp/units.hpp"

namespace hb {
namespace {

using simd::vf;
constexpr std::size_t W = static_cast<std::size_t>(simd::kWidth);
constexpr std::size_t kRows = 4;
constexpr std::size_t kLanes = kRows * W;
constexpr double kTau = 6.283185307179586476925;

}  // namespace

void iq_imbalance_coefficients(double gain_db, double phase_deg, std::complex<double>& mu, std::complex<double>& eta) {
    const double g = std::pow(10.0, gain_db / 20.0), ph = phase_deg * kTau / 360.0;
    mu = (1.0 + g * std::polar(1.0, -ph)) / 2.0;
    eta = (1.0 - g * std::polar(1.0, ph)) / 2.0;
}

void LoMixKernel::init(const LoMixSpec& spec) {
    if (spec.harmonic.empty()) throw InputError("LO mix: at least one LO harmonic is needed");
    auto finite = [](std::complex<double> c) { return std::isfinite(c.real()) && std::isfinite(c.imag()); };
    if (!std::isfinite(spec.lo_cycles) || !std::isfinite(spec.a3) || !std::isfinite(spec.iq_gain_db) ||
        !std::isfinite(spec.iq_phase_deg) || !finite(spec.dc) ||
        !std::all_of(spec.harmonic.begin(), spec.harmonic.end(), finite))
        throw InputError("LO mix: every coefficient must be a finite number (LO " + format_number(spec.lo_cycles) +
                         " cycles/sample)");
    spec_ = spec;
    spec_.lo_cycles -= std::floor(spec_.lo_cycles);
    const std::size_t K = spec.harmonic.size();
    g_.resize(2 * K);
    for (std::size_t k = 0; k < K; ++k) {
        const std::complex<double> c = spec.harmonic[K - 1 - k];
        g_[2 * k] = static_cast<float>(c.real());
        g_[2 * k + 1] = static_cast<float>(c.imag());
    }
    std::complex<double> mu, eta;
    iq_imbalance_coefficients(spec.iq_gain_db, spec.iq_phase_deg, mu, eta);
    // μz + ηz* as a real 2×2 matrix on (zr, zi).
    m_[0] = static_cast<float>(mu.real() + eta.real());
    m_[1] = static_cast<float>(eta.imag() - mu.imag());
    m_[2] = static_cast<float>(mu.imag() + eta.imag());
    m_[3] = static_cast<float>(mu.real() - eta.real());
    dc_[0] = static_cast<float>(spec.dc.real());
    dc_[1] = static_cast<float>(spec.dc.imag());
    a3_ = static_cast<float>(spec.a3);
    lane_re_.resize(kLanes);
    lane_im_.resize(kLanes);
    for (std::size_t l = 0; l < kLanes; ++l) {
        const double a = kTau * std::fmod(spec_.lo_cycles * static_cast<double>(l), 1.0);
        lane_re_[l] = std::cos(a);
        lane_im_[l] = std::sin(a);
    }
    const double st = kTau * std::fmod(spec_.lo_cycles * static_cast<double>(kLanes), 1.0);
    step_re_ = static_cast<float>(std::cos(st));
    step_im_ = static_cast<float>(std::sin(st));
    tail_in_.assign(2 * kLanes, 0.0f);
    tail_re_.assign(kLanes, 0.0f);
    tail_im_.assign(kLanes, 0.0f);
    reset();
}

void LoMixKernel::reset() {
    phase_ = 0.0;
}

namespace {

// The per-call constants of the kernel, splatted once.
struct LoConsts {
    vf m0, m1, m2, m3, dr, di, a3, one, sr, si;
};

// One group of kLanes samples (kRows vectors of W time lanes): the LO, nonlinearity, mix, IQ imbalance, then the
// lane phasors step on by kLanes samples. KT > 0 is the harmonic count at compile time: on a target with fused
// multiply-add the harmonic sum is then evaluated by Clenshaw's recurrence (below), unrolled and interleaved
// across the rows so that their dependency chains overlap. KT == 0 (the count K at run time), and every count on
// a target without fused multiply-add (the portable build, where Clenshaw's doubled roundings cost up to 2.5e-4
// of the peak for random coefficients, measured), take Horner's rule.
//
// Clenshaw (Clenshaw 1955; e.g. Press et al., Numerical Recipes, 3rd ed. 2007, §5.4.2) for Σ_{k=1..K} g_k·p^k with
// p = e^{jθ}: the powers obey p^{k+1} = α·p^k − p^{k−1} with α = 2 cos θ real, so
//   b_{K+1} = b_{K+2} = 0,  b_k = g_k + α·b_{k+1} − b_{k+2},  L = p·b_1 − b_2.
// Each step is one real-by-complex multiply-add (two fused multiply-adds and two adds) where Horner's complex
// multiply-add takes four fused multiply-adds; adds run on their own pipes beside the multipliers. Rounding: an
// error made at step k reaches L multiplied by sin(kθ)/sin θ, at most k in size. For a switching LO's harmonics
// (falling as 1/k) that is as accurate as Horner's rule (about 2e-6 of the peak); for equal-size random
// coefficients up to 3e-5 at K = 12 (tests/kernels_test.cpp, LoHarmonicSumAtAnyFrequency).
template <std::size_t KT>
inline void lo_group(const float* __restrict g, std::size_t K, const float* s, float* __restrict yr_out,
                     float* __restrict yi_out, vf* __restrict pr, vf* __restrict pi, const LoConsts& c) {
    vf lr[kRows], li[kRows];
    if constexpr (KT > 0 && simd::kFusedMultiplyAdd) {
        // g holds g_K .. g_1: g_k at index K − k.
        vf b1r[kRows], b1i[kRows], b2r[kRows], b2i[kRows], al[kRows];
        for (std::size_t r = 0; r < kRows; ++r) {
            al[r] = pr[r] + pr[r];
            b1r[r] = simd::splat(g[0]);
            b1i[r] = simd::splat(g[1]);
            b2r[r] = vf{};
            b2i[r] = vf{};
        }
#pragma GCC unroll 16
        for (std::size_t i = 1; i < KT; ++i) {
            const float gr = g[2 * i], gi = g[2 * i + 1];
            for (std::size_t r = 0; r < kRows; ++r) {
                const vf nr = al[r] * b1r[r] + (gr - b2r[r]);
                const vf ni = al[r] * b1i[r] + (gi - b2i[r]);
                b2r[r] = b1r[r], b2i[r] = b1i[r];
                b1r[r] = nr, b1i[r] = ni;
            }
        }
        for (std::size_t r = 0; r < kRows; ++r) {
            lr[r] = pr[r] * b1r[r] - (pi[r] * b1i[r] + b2r[r]);
            li[r] = pr[r] * b1i[r] + (pi[r] * b1r[r] - b2i[r]);
        }
    } else {
        // Horner: acc = g_K; acc = acc·p + g_k (k = K−1 .. 1); L = acc·p. Each step is two fused multiply-adds
        // per part, acc·p + g written as ar·pr + (gr − ai·pi), so that the compiler contracts it without
        // reassociating.
        vf ar[kRows], ai[kRows];
        for (std::size_t r = 0; r < kRows; ++r) {
            ar[r] = simd::splat(g[0]);
            ai[r] = simd::splat(g[1]);
        }
        for (std::size_t k = 1; k < K; ++k) {
            const float gr = g[2 * k], gi = g[2 * k + 1];
            for (std::size_t r = 0; r < kRows; ++r) {
                const vf t = ar[r] * pr[r] + (gr - ai[r] * pi[r]);
                ai[r] = ar[r] * pi[r] + (gi + ai[r] * pr[r]);
                ar[r] = t;
            }
        }
        for (std::size_t r = 0; r < kRows; ++r) {
            lr[r] = ar[r] * pr[r] - ai[r] * pi[r];
            li[r] = ar[r] * pi[r] + ai[r] * pr[r];
        }
    }
    for (std::size_t r = 0; r < kRows; ++r) {
        vf xr, xi;
        simd::load_deinterleaved(s + 2 * r * W, xr, xi);
        const vf k3 = c.one + c.a3 * (xr * xr + xi * xi);
        const vf ur = xr * k3, ui = xi * k3;
        const vf zr = ur * lr[r] - ui * li[r], zi = ur * li[r] + ui * lr[r];
        simd::store(yr_out + r * W, c.m0 * zr + (c.m1 * zi + c.dr));
        simd::store(yi_out + r * W, c.m2 * zr + (c.m3 * zi + c.di));
        const vf t = pr[r] * c.sr - pi[r] * c.si;
        pi[r] = pr[r] * c.si + pi[r] * c.sr;
        pr[r] = t;
    }
}

// The whole groups of one block (`groups` of them) for a compile-time harmonic count. With `ahead` (the input
// that follows, at least as long), each group also asks for the matching cache lines of it, so that the next
// block arrives from memory while this one computes (the hardware prefetcher alone left the kernel waiting on
// memory a third of the time: 900 against 1400 MS/s from cache, measured here).
template <std::size_t KT>
void lo_groups(const float* g, std::size_t K, const float* src, const float* ahead, std::size_t groups, float* o_r,
               float* o_i, vf* pr, vf* pi, const LoConsts& c) {
    constexpr std::size_t kLine = 64 / sizeof(float);
    vf lpr[kRows], lpi[kRows];  // in registers for the loop
    for (std::size_t r = 0; r < kRows; ++r) lpr[r] = pr[r], lpi[r] = pi[r];
    for (std::size_t b = 0; b < groups; ++b) {
        if (ahead)
            for (std::size_t l = 0; l < 2 * kLanes; l += kLine) __builtin_prefetch(ahead + 2 * b * kLanes + l, 0, 2);
        lo_group<KT>(g, K, src + 2 * b * kLanes, o_r + b * kLanes, o_i + b * kLanes, lpr, lpi, c);
    }
    for (std::size_t r = 0; r < kRows; ++r) pr[r] = lpr[r], pi[r] = lpi[r];
}

using GroupsFn = void (*)(const float*, std::size_t, const float*, const float*, std::size_t, float*, float*, vf*, vf*,
                          const LoConsts&);
constexpr std::size_t kMaxStaticK = 12;  // harmonic counts up to this unroll; more take the run-time loop

template <std::size_t... I>
constexpr std::array<GroupsFn, sizeof...(I)> groups_table(std::index_sequence<I...>) {
    return {&lo_groups<I>...};  // index 0: the run-time count
}
constexpr auto kGroupsFns = groups_table(std::make_index_sequence<kMaxStaticK + 1>{});

}  // namespace

void LoMixKernel::process(const std::complex<float>* in, std::size_t n, float* out_re, float* out_im,
                          const std::complex<float>* next) {
    const std::size_t K = spec_.harmonic.size();
    const float* g = g_.data();
    LoConsts c;
    c.m0 = simd::splat(m_[0]), c.m1 = simd::splat(m_[1]), c.m2 = simd::splat(m_[2]), c.m3 = simd::splat(m_[3]);
    c.dr = simd::splat(dc_[0]), c.di = simd::splat(dc_[1]);
    c.a3 = simd::splat(a3_), c.one = simd::splat(1.0f);
    c.sr = simd::splat(step_re_), c.si = simd::splat(step_im_);
    const GroupsFn groups = kGroupsFns[K <= kMaxStaticK ? K : 0];

    for (std::size_t pos = 0; pos < n; pos += kBlock) {
        const std::size_t cnt = std::min(kBlock, n - pos);
        // Seeds p = e^{j2π(phase + ν·l)} from the double accumulator.
        alignas(64) float seed_re[kLanes], seed_im[kLanes];
        const double c0 = std::cos(kTau * phase_), s0 = std::sin(kTau * phase_);
        for (std::size_t l = 0; l < kLanes; ++l) {
            seed_re[l] = static_cast<float>(c0 * lane_re_[l] - s0 * lane_im_[l]);
            seed_im[l] = static_cast<float>(c0 * lane_im_[l] + s0 * lane_re_[l]);
        }
        vf pr[kRows], pi[kRows];
        for (std::size_t r = 0; r < kRows; ++r) {
            pr[r] = simd::load(seed_re + r * W);
            pi[r] = simd::load(seed_im + r * W);
        }
        const float* src = reinterpret_cast<const float*>(in + pos);
        float* o_r = out_re + pos;
        float* o_i = out_im + pos;
        const std::size_t whole = cnt / kLanes, b = whole * kLanes;
        const float* ahead = next ? reinterpret_cast<const float*>(next + pos) : nullptr;
        groups(g, K, src, ahead, whole, o_r, o_i, pr, pi, c);
        if (b < cnt) {
            const std::size_t rest = cnt - b;
            std::fill(tail_in_.begin(), tail_in_.end(), 0.0f);
            std::copy(src + 2 * b, src + 2 * cnt, tail_in_.begin());
            lo_group<0>(g, K, tail_in_.data(), tail_re_.data(), tail_im_.data(), pr, pi, c);
            std::copy(tail_re_.begin(), tail_re_.begin() + static_cast<std::ptrdiff_t>(rest), o_r + b);
            std::copy(tail_im_.begin(), tail_im_.begin() + static_cast<std::ptrdiff_t>(rest), o_i + b);
        }
        phase_ += spec_.lo_cycles * static_cast<double>(cnt);
        phase_ -= std::floor(phase_);
    }
}

}  // namespace hb
