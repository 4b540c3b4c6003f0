#include "dsp/filter_kernels.hpp"

#include <algorithm>
#include <array>
#include <cmath>
#include <cstring>
#include <utility>

#include "dsp/simd.hpp"

namespace hb {
namespace {

using simd::kWidth;
using simd::vf;
using simd::vi;
constexpr std::size_t W = static_cast<std::size_t>(kWidth);
constexpr std::size_t kRows = 4;           // output vectors per pass of the lanes-over-outputs FIR
constexpr std::size_t kGroup = kRows * W;  // outputs per pass; buffers keep this much slack past the block

std::size_t round_up(std::size_t n, std::size_t m) {
    return (n + m - 1) / m * m;
}

// y[i] (+)= Σ_{j<nt} g[j]·x[i + j] for i < n, outputs in lanes: four vectors of consecutive outputs share each
// broadcast tap. Reads x up to index round_up(n, kGroup) + nt − 2; writes y[0, n) only (a partial last group goes
// through a local buffer).
template <bool Add>
void fir_lanes_real(const float* __restrict g, std::size_t nt, const float* xr, const float* xi, std::size_t n,
                    float* __restrict yr, float* __restrict yi) {
    auto group = [&](std::size_t i0, float* __restrict o_r, float* __restrict o_i) {
        vf ar[kRows], ai[kRows];
        for (std::size_t r = 0; r < kRows; ++r) {
            ar[r] = Add ? simd::load(o_r + r * W) : vf{};
            ai[r] = Add ? simd::load(o_i + r * W) : vf{};
        }
        const float* pr = xr + i0;
        const float* pi = xi + i0;
        for (std::size_t j = 0; j < nt; ++j) {
            const vf h = simd::splat(g[j]);
            for (std::size_t r = 0; r < kRows; ++r) {
                ar[r] += h * simd::load(pr + j + r * W);
                ai[r] += h * simd::load(pi + j + r * W);
            }
        }
        for (std::size_t r = 0; r < kRows; ++r) {
            simd::store(o_r + r * W, ar[r]);
            simd::store(o_i + r * W, ai[r]);
        }
    };
    std::size_t i0 = 0;
    for (; i0 + kGroup <= n; i0 += kGroup) group(i0, yr + i0, yi + i0);
    if (i0 < n) {
        alignas(64) float tr[kGroup] = {}, ti[kGroup] = {};
        if (Add) std::copy(yr + i0, yr + n, tr), std::copy(yi + i0, yi + n, ti);
        group(i0, tr, ti);
        std::copy(tr, tr + (n - i0), yr + i0);
        std::copy(ti, ti + (n - i0), yi + i0);
    }
}

// The same with complex taps (gr + j·gi).
void fir_lanes_complex(const float* __restrict gr, const float* __restrict gi, std::size_t nt, const float* xr,
                       const float* xi, std::size_t n, float* __restrict yr, float* __restrict yi) {
    auto group = [&](std::size_t i0, float* __restrict o_r, float* __restrict o_i) {
        vf ar[kRows] = {}, ai[kRows] = {}, br[kRows] = {}, bi[kRows] = {};  // two sums each: shorter chains
        const float* pr = xr + i0;
        const float* pi = xi + i0;
        for (std::size_t j = 0; j < nt; ++j) {
            const vf hr = simd::splat(gr[j]), hi = simd::splat(gi[j]);
            for (std::size_t r = 0; r < kRows; ++r) {
                const vf a = simd::load(pr + j + r * W), b = simd::load(pi + j + r * W);
                ar[r] += hr * a;
                br[r] -= hi * b;
                ai[r] += hr * b;
                bi[r] += hi * a;
            }
        }
        for (std::size_t r = 0; r < kRows; ++r) {
            simd::store(o_r + r * W, ar[r] + br[r]);
            simd::store(o_i + r * W, ai[r] + bi[r]);
        }
    };
    std::size_t i0 = 0;
    for (; i0 + kGroup <= n; i0 += kGroup) group(i0, yr + i0, yi + i0);
    if (i0 < n) {
        alignas(64) float tr[kGroup], ti[kGroup];
        group(i0, tr, ti);
        std::copy(tr, tr + (n - i0), yr + i0);
        std::copy(ti, ti + (n - i0), yi + i0);
    }
}

// Eight outputs y[p_k] = Σ_{j<padded} g[j]·x[p_k + j], taps in lanes (padded a multiple of W): each tap vector
// is loaded once for the eight, and the sixteen sums are reduced together by a tree of lane shuffles.
template <bool Real>
void fir_dot8(const float* __restrict gr, const float* __restrict gi, std::size_t padded, const float* xr,
              const float* xi, const std::size_t p[8], float out[16]) {
    vf acc[16] = {};  // re of the eight outputs, then im
    for (std::size_t j = 0; j < padded; j += W) {
        const vf hr = simd::load(gr + j);
        if constexpr (Real) {
            for (int k = 0; k < 8; ++k) {
                acc[k] += hr * simd::load(xr + p[k] + j);
                acc[8 + k] += hr * simd::load(xi + p[k] + j);
            }
        } else {
            const vf hi = simd::load(gi + j);
            for (int k = 0; k < 8; ++k) {
                const vf a = simd::load(xr + p[k] + j), b = simd::load(xi + p[k] + j);
                acc[k] += hr * a - hi * b;
                acc[8 + k] += hr * b + hi * a;
            }
        }
    }
    simd::reduce16(acc, out);
}

// Eight outputs y_k = Σ_{j<padded} g[j]·x[p0 + D·k + j] (k < 8) of one real planar stream, real taps in lanes,
// when the decimation D divides the vector width W (R = W / D). Tap block b of output k reads the vector that
// starts at p0 + D·(k + R·b): the eight outputs share the loads, a window of eight vectors slides by R per tap
// block, and each block loads R new vectors instead of eight (for D = 8 on 16 lanes: 2 loads per 8 products
// instead of 9, which had kept the plain form waiting on the loads). The eight lane sums are left in acc[0..7].
template <std::size_t R, std::size_t NB>
inline void fir_dot8_shared(const float* __restrict g, std::size_t nb, const float* x, std::size_t D, vf* acc) {
    const std::size_t blocks = NB > 0 ? NB : nb;
    vf win[8];
    for (std::size_t k = 0; k < 8; ++k) {
        win[k] = simd::load(x + D * k);
        acc[k] = vf{};
    }
#pragma GCC unroll 16
    for (std::size_t b = 0; b < blocks; ++b) {
        const vf h = simd::load(g + b * W);
        for (std::size_t k = 0; k < 8; ++k) acc[k] += h * win[k];
        if (b + 1 == blocks) break;
        for (std::size_t k = 0; k + R < 8; ++k) win[k] = win[k + R];
        for (std::size_t k = R < 8 ? 8 - R : 0; k < 8; ++k) win[k] = simd::load(x + D * (k + R * (b + 1)));
    }
}

// The same for symmetric (linear-phase) taps, g[j] = g[padded − 1 − j] with padded = 2·H·W: the folded form
// y_k = Σ_{b<H} G_b·(X(D·k + W·b) + reversed X(padded − W + D·k − W·b)), X(a) the vector at x + a, one
// multiply-add and one add per pair of taps instead of two multiply-adds (the adds take their own pipes). The
// mirrored vectors slide the other way: a window of eight reversed vectors, R new ones per tap block.
template <std::size_t R, std::size_t NB>
inline void fir_dot8_folded(const float* __restrict g, std::size_t nb, std::size_t padded, const float* x,
                            std::size_t D, vf* acc) {
    const std::size_t half_blocks = NB > 0 ? NB : nb;
    vf win[8], mir[8];
    for (std::size_t k = 0; k < 8; ++k) {
        win[k] = simd::load(x + D * k);
        mir[k] = simd::reverse(simd::load(x + padded - W + D * k));
        acc[k] = vf{};
    }
#pragma GCC unroll 4
    for (std::size_t b = 0; b < half_blocks; ++b) {
        const vf h = simd::load(g + b * W);
        for (std::size_t k = 0; k < 8; ++k) acc[k] += h * (win[k] + mir[k]);
        if (b + 1 == half_blocks) break;
        for (std::size_t k = 0; k + R < 8; ++k) win[k] = win[k + R];
        for (std::size_t k = R < 8 ? 8 - R : 0; k < 8; ++k) win[k] = simd::load(x + D * (k + R * (b + 1)));
        for (std::size_t k = 7; k >= R && k < 8; --k) mir[k] = mir[k - R];
        for (std::size_t k = 0; k < std::min<std::size_t>(R, 8); ++k)
            mir[k] = simd::reverse(simd::load(x + padded - W + D * k - W * (b + 1)));
    }
}

// Both parts of eight outputs at p0, p0 + D, ... (D = W / R), as eight complex values at out. NB > 0 is the number of
// tap blocks (half of them when folded) at compile time, so that the windows slide by renaming registers.
template <std::size_t R, bool Folded, std::size_t NB>
void fir_decim_shared(const float* g, std::size_t padded, const float* xr, const float* xi, std::size_t p0,
                      float out[16]) {
    const std::size_t D = W / R;
    vf acc[8], folded[8];  // the real part's sums are folded once before the imaginary part's take the registers
    for (int part = 0; part < 2; ++part) {
        const float* x = (part == 0 ? xr : xi) + p0;
        if constexpr (Folded)
            fir_dot8_folded<R, NB>(g, padded / W / 2, padded, x, D, acc);
        else
            fir_dot8_shared<R, NB>(g, padded / W, x, D, acc);
        simd::fold_level1(acc, folded + 4 * part);
    }
    simd::reduce16_folded_interleaved(folded, out);
}

using DecimSharedFn = void (*)(const float*, std::size_t, const float*, const float*, std::size_t, float*);
constexpr std::size_t kMaxStaticBlocks = 8;

template <std::size_t R, bool Folded, std::size_t... I>
constexpr std::array<DecimSharedFn, sizeof...(I)> shared_table(std::index_sequence<I...>) {
    return {&fir_decim_shared<R, Folded, I>...};  // index 0: the count at run time
}
template <std::size_t R, bool Folded>
DecimSharedFn shared_for_blocks(std::size_t nb) {
    static constexpr auto table = shared_table<R, Folded>(std::make_index_sequence<kMaxStaticBlocks + 1>{});
    return table[nb <= kMaxStaticBlocks ? nb : 0];
}

// The shared-load form for decimation D (folded for symmetric taps) and `padded` taps, or null when D does not
// divide the vector width.
DecimSharedFn decim_shared_for(std::size_t D, bool folded, std::size_t padded) {
    if (D < 2 || W % D != 0) return nullptr;
    const std::size_t nb = folded ? padded / W / 2 : padded / W;
    switch (W / D) {
        case 1:
            return folded ? shared_for_blocks<1, true>(nb) : shared_for_blocks<1, false>(nb);
        case 2:
            return folded ? shared_for_blocks<2, true>(nb) : shared_for_blocks<2, false>(nb);
        case 4:
            return folded ? shared_for_blocks<4, true>(nb) : shared_for_blocks<4, false>(nb);
        case 8:
            return folded ? shared_for_blocks<8, true>(nb) : shared_for_blocks<8, false>(nb);
        default:
            return nullptr;
    }
}

}  // namespace

void deinterleave(const cf32* in, std::size_t n, float* re, float* im) {
    const float* s = reinterpret_cast<const float*>(in);
    std::size_t i = 0;
    for (; i + W <= n; i += W) {
        vf a, b;
        simd::load_deinterleaved(s + 2 * i, a, b);
        simd::store(re + i, a);
        simd::store(im + i, b);
    }
    for (; i < n; ++i) {
        re[i] = s[2 * i];
        im[i] = s[2 * i + 1];
    }
}

void interleave(const float* re, const float* im, std::size_t n, cf32* out) {
    float* d = reinterpret_cast<float*>(out);
    std::size_t i = 0;
    for (; i + W <= n; i += W) simd::store_interleaved(d + 2 * i, simd::load(re + i), simd::load(im + i));
    for (; i < n; ++i) {
        d[2 * i] = re[i];
        d[2 * i + 1] = im[i];
    }
}

// ---------------------------------------------------------------------------------------------------------------
// Complex one-pole cascade as a wavefront. Lane s of a vector holds section s (W sections per group; a longer
// cascade runs group after group over the block). At step t section s takes sample t − s: its input is what
// section s − 1 produced at the step before, so the input vector is the output vector moved up one lane with the
// new sample in lane 0. A call takes n + S − 1 steps; in the first and the last S − 1 steps the lanes with no
// sample of this call keep their state (a mask), so the state between calls is the plain per-section state.

void PoleCascadeKernel::init(const std::vector<PoleSection>& secs) {
    sections = secs.size();
    coef.clear();
    for (const auto& s : secs)
        for (const auto& c : {s.b0, s.b1, s.a1}) {
            coef.push_back(static_cast<float>(c.real()));
            coef.push_back(static_cast<float>(c.imag()));
        }
    state.assign(2 * (sections + 1), 0.0f);
    groups_ = (sections + W - 1) / W;
    // Per group: b0r b0i b1r b1i a1r a1i (W lanes each; unused lanes 0), then a snapshot of the state.
    wave_.assign(groups_ * 6 * W + state.size(), 0.0f);
    for (std::size_t s = 0; s < sections; ++s) {
        float* g = wave_.data() + (s / W) * 6 * W;
        for (std::size_t k = 0; k < 6; ++k) g[k * W + s % W] = coef[6 * s + k];
    }
}

void PoleCascadeKernel::reset() {
    std::fill(state.begin(), state.end(), 0.0f);
}

void PoleCascadeKernel::process(cf32* io, std::size_t n) {
    if (sections == 0 || n == 0) return;
    float* d = reinterpret_cast<float*>(io);
    float* snap = wave_.data() + groups_ * 6 * W;
    std::copy(state.begin(), state.end(), snap);  // each group starts from the state before the call
    vi lane_idx;
    for (std::size_t l = 0; l < W; ++l) lane_idx[l] = static_cast<int>(l);
    vi up;  // lane l ← lane l − 1, lane 0 ← the second operand's lane 0
    for (std::size_t l = 0; l < W; ++l) up[l] = l == 0 ? kWidth : static_cast<int>(l - 1);

    for (std::size_t grp = 0; grp < groups_; ++grp) {
        const std::size_t s0 = grp * W, cnt = std::min(W, sections - s0);
        const float* c = wave_.data() + grp * 6 * W;
        const vf b0r = simd::load(c), b0i = simd::load(c + W), b1r = simd::load(c + 2 * W), b1i = simd::load(c + 3 * W),
                 a1r = simd::load(c + 4 * W), a1i = simd::load(c + 5 * W);
        // Lane s: previous input (section s0 + s's) and previous output.
        alignas(64) float pr_f[W] = {}, pi_f[W] = {}, yr_f[W] = {}, yi_f[W] = {};
        for (std::size_t s = 0; s < cnt; ++s) {
            pr_f[s] = snap[2 * (s0 + s)];
            pi_f[s] = snap[2 * (s0 + s) + 1];
            yr_f[s] = snap[2 * (s0 + s + 1)];
            yi_f[s] = snap[2 * (s0 + s + 1) + 1];
        }
        vf pr = simd::load(pr_f), pi = simd::load(pi_f), yr = simd::load(yr_f), yi = simd::load(yi_f);
        const std::size_t last = cnt - 1;
        auto step = [&](std::size_t t, bool masked) {
            const float xr_t = t < n ? d[2 * t] : 0.0f, xi_t = t < n ? d[2 * t + 1] : 0.0f;
            const vf xr = __builtin_shuffle(yr, simd::splat(xr_t), up);
            const vf xi = __builtin_shuffle(yi, simd::splat(xi_t), up);
            // Two partial sums so that the recursion's own chain (a1·y) runs beside the new input's products.
            const vf ur = a1r * yr - a1i * yi + (b1r * pr - b1i * pi);
            const vf ui = a1r * yi + a1i * yr + (b1r * pi + b1i * pr);
            const vf nr = ur + (b0r * xr - b0i * xi);
            const vf ni = ui + (b0r * xi + b0i * xr);
            if (masked) {
                const vi tl = (vi{} + static_cast<int>(t)) - lane_idx;  // sample index this lane would take
                const vi on = (tl >= 0) & (tl < static_cast<int>(n));
                yr = on ? nr : yr;
                yi = on ? ni : yi;
                pr = on ? xr : pr;
                pi = on ? xi : pi;
            } else {
                yr = nr, yi = ni, pr = xr, pi = xi;
            }
            if (t >= last && t - last < n) {
                d[2 * (t - last)] = yr[last];
                d[2 * (t - last) + 1] = yi[last];
            }
        };
        const std::size_t steps = n + last;
        std::size_t t = 0;
        for (; t < std::min(last, steps); ++t) step(t, true);
        for (; t < n; ++t) step(t, false);
        for (; t < steps; ++t) step(t, true);
        // The group's new state: its first section's last input (the block's last input to it), every output.
        alignas(64) float o_r[W], o_i[W];
        simd::store(o_r, yr);
        simd::store(o_i, yi);
        simd::store(pr_f, pr);
        simd::store(pi_f, pi);
        state[2 * s0] = pr_f[0];
        state[2 * s0 + 1] = pi_f[0];
        for (std::size_t s = 0; s < cnt; ++s) {
            state[2 * (s0 + s + 1)] = o_r[s];
            state[2 * (s0 + s + 1) + 1] = o_i[s];
        }
    }
    // States that have decayed below -600 dBFS are zeroed, so silence never leaves the recursion in subnormal
    // numbers (which cost about a hundred times a normal operation).
    for (float& v : state)
        if (std::abs(v) < 1e-30f) v = 0.0f;
}

// ---------------------------------------------------------------------------------------------------------------
// Biquads. The re and im parts of one sample are two lanes; with up to W/2 sections the whole cascade is one
// wavefront (lanes 2s, 2s+1: section s), each step moving the outputs up two lanes.

void BiquadCascadeKernel::init(const std::vector<Section>& secs) {
    sections = secs.size();
    coef.clear();
    for (const Section& s : secs)
        for (double v : {s.b0, s.b1, s.b2, s.a1, s.a2}) coef.push_back(static_cast<float>(v));
    state.assign(4 * sections, 0.0f);
}

void BiquadCascadeKernel::reset() {
    std::fill(state.begin(), state.end(), 0.0f);
}

void BiquadCascadeKernel::process(cf32* io, std::size_t n) {
    if (sections == 0 || n == 0) return;
    float* d = reinterpret_cast<float*>(io);
    constexpr std::size_t per = W / 2;  // sections per group
    vi up2;
    for (std::size_t l = 0; l < W; ++l) up2[l] = l < 2 ? kWidth + static_cast<int>(l) : static_cast<int>(l - 2);
    vi lane_sec;
    for (std::size_t l = 0; l < W; ++l) lane_sec[l] = static_cast<int>(l / 2);
    for (std::size_t s0 = 0; s0 < sections; s0 += per) {
        const std::size_t cnt = std::min(per, sections - s0), last = cnt - 1;
        alignas(64) float cf[5][W] = {}, w1f[W] = {}, w2f[W] = {};
        for (std::size_t s = 0; s < cnt; ++s)
            for (std::size_t p = 0; p < 2; ++p) {
                for (std::size_t k = 0; k < 5; ++k) cf[k][2 * s + p] = coef[5 * (s0 + s) + k];
                w1f[2 * s + p] = state[4 * (s0 + s) + p];
                w2f[2 * s + p] = state[4 * (s0 + s) + 2 + p];
            }
        const vf b0 = simd::load(cf[0]), b1 = simd::load(cf[1]), b2 = simd::load(cf[2]);
        const vf na1 = -simd::load(cf[3]), na2 = -simd::load(cf[4]);
        vf w1 = simd::load(w1f), w2 = simd::load(w2f), y = vf{};
        auto step = [&](std::size_t t, bool masked) {
            vf in2{};
            if (t < n) in2[0] = d[2 * t], in2[1] = d[2 * t + 1];
            const vf x = __builtin_shuffle(y, in2, up2);
            const vf ny = b0 * x + w1;
            const vf nw1 = b1 * x + w2 + na1 * ny;
            const vf nw2 = b2 * x + na2 * ny;
            if (masked) {
                const vi tl = (vi{} + static_cast<int>(t)) - lane_sec;
                const vi on = (tl >= 0) & (tl < static_cast<int>(n));
                y = on ? ny : y;
                w1 = on ? nw1 : w1;
                w2 = on ? nw2 : w2;
            } else {
                y = ny, w1 = nw1, w2 = nw2;
            }
            if (t >= last && t - last < n) {
                d[2 * (t - last)] = y[2 * last];
                d[2 * (t - last) + 1] = y[2 * last + 1];
            }
        };
        const std::size_t steps = n + last;
        std::size_t t = 0;
        for (; t < std::min(last, steps); ++t) step(t, true);
        for (; t < n; ++t) step(t, false);
        for (; t < steps; ++t) step(t, true);
        simd::store(w1f, w1);
        simd::store(w2f, w2);
        for (std::size_t s = 0; s < cnt; ++s)
            for (std::size_t p = 0; p < 2; ++p) {
                state[4 * (s0 + s) + p] = w1f[2 * s + p];
                state[4 * (s0 + s) + 2 + p] = w2f[2 * s + p];
            }
    }
    for (float& v : state)
        if (std::abs(v) < 1e-30f) v = 0.0f;
}

// ---------------------------------------------------------------------------------------------------------------

void FirKernel::init(const std::vector<std::complex<double>>& h_in, std::size_t max_block) {
    const std::vector<std::complex<double>> h = h_in.empty() ? std::vector<std::complex<double>>{0.0} : h_in;
    taps = h.size();
    padded = round_up(taps, W);
    real_taps = std::all_of(h.begin(), h.end(), [](const std::complex<double>& c) { return c.imag() == 0.0; });
    // Linear phase (h[k] = h[L−1−k]) over whole pairs of vector blocks, equal once rounded to float: a design's
    // own rounding may leave the two halves a few parts in 10^16 apart, below the taps' float precision.
    symmetric = real_taps && taps == padded && padded % (2 * W) == 0;
    for (std::size_t k = 0; symmetric && k < taps / 2; ++k)
        symmetric = static_cast<float>(h[k].real()) == static_cast<float>(h[taps - 1 - k].real());
    hr.assign(padded, 0.0f);
    hi.assign(padded, 0.0f);
    for (std::size_t k = 0; k < taps; ++k) {
        hr[padded - 1 - k] = static_cast<float>(h[k].real());
        hi[padded - 1 - k] = static_cast<float>(h[k].imag());
    }
    block = std::max<std::size_t>(max_block, 1);
    // slack: whole lane groups past the block, and the eight outputs of the shared-load decimator (7·D < 8·W)
    const std::size_t len = padded - 1 + round_up(block, 64) + padded + 8 * W;
    xr.assign(len, 0.0f);
    xi.assign(len, 0.0f);
    yr.assign(round_up(block, kGroup), 0.0f);
    yi.assign(round_up(block, kGroup), 0.0f);
}

void FirKernel::reset() {
    std::fill(xr.begin(), xr.end(), 0.0f);
    std::fill(xi.begin(), xi.end(), 0.0f);
}

std::size_t FirKernel::process(const cf32* in, std::size_t n, cf32* out, int decimation, int& phase) {
    deinterleave(in, n, xr.data() + padded - 1, xi.data() + padded - 1);
    return run(n, out, decimation, phase);
}

std::size_t FirKernel::process_planar(const float* re, const float* im, std::size_t n, cf32* out, int decimation,
                                      int& phase) {
    std::memcpy(xr.data() + padded - 1, re, n * sizeof(float));
    std::memcpy(xi.data() + padded - 1, im, n * sizeof(float));
    return run(n, out, decimation, phase);
}

std::size_t FirKernel::run(std::size_t n, cf32* out, int decimation, int& phase) {
    const std::size_t hist = padded - 1;
    std::size_t produced = 0;
    if (decimation <= 1) {
        // Skip the leading zero taps of the padding: y[i] = Σ_{j ≥ padded − taps} g[j]·x[i + j].
        const std::size_t j0 = padded - taps;
        if (real_taps)
            fir_lanes_real<false>(hr.data() + j0, taps, xr.data() + j0, xi.data() + j0, n, yr.data(), yi.data());
        else
            fir_lanes_complex(hr.data() + j0, hi.data() + j0, taps, xr.data() + j0, xi.data() + j0, n, yr.data(),
                              yi.data());
        interleave(yr.data(), yi.data(), n, out);
        produced = n;
        phase = 0;
    } else {
        const auto D = static_cast<std::size_t>(decimation);
        std::size_t first = phase == 0 ? 0 : D - static_cast<std::size_t>(phase);
        float* o = reinterpret_cast<float*>(out);
        const DecimSharedFn shared = real_taps ? decim_shared_for(D, symmetric, padded) : nullptr;
        for (std::size_t i = first; shared && i < n; i += 8 * D) {
            // Reads up to x[i + 7·D + padded − 1]: within the slack past the block (init).
            if (i + 7 * D < n) {  // eight whole outputs: straight to out
                shared(hr.data(), padded, xr.data(), xi.data(), i, o + 2 * produced);
                produced += 8;
                continue;
            }
            alignas(64) float r[16];
            shared(hr.data(), padded, xr.data(), xi.data(), i, r);
            const std::size_t k_valid = (n - i + D - 1) / D;
            std::copy(r, r + 2 * k_valid, o + 2 * produced);
            produced += k_valid;
        }
        for (std::size_t i = first; !shared && i < n; i += 8 * D) {
            std::size_t p[8];
            std::size_t k_valid = 0;
            for (std::size_t k = 0; k < 8; ++k) {
                const std::size_t pos = i + k * D;
                p[k] = pos < n ? pos : i;  // past the block: recompute the first one, not stored
                k_valid += pos < n;
            }
            alignas(64) float r[16];
            if (real_taps)
                fir_dot8<true>(hr.data(), hi.data(), padded, xr.data(), xi.data(), p, r);
            else
                fir_dot8<false>(hr.data(), hi.data(), padded, xr.data(), xi.data(), p, r);
            for (std::size_t k = 0; k < k_valid; ++k) {
                o[2 * (produced + k)] = r[k];
                o[2 * (produced + k) + 1] = r[8 + k];
            }
            produced += k_valid;
        }
        phase = static_cast<int>((static_cast<std::size_t>(phase) + n) % D);
    }
    std::memmove(xr.data(), xr.data() + n, hist * sizeof(float));
    std::memmove(xi.data(), xi.data() + n, hist * sizeof(float));
    return produced;
}

// ---------------------------------------------------------------------------------------------------------------

namespace {
constexpr double kTau = 6.283185307179586476925;
constexpr std::size_t kMixLanes = 32;
constexpr std::size_t kMixMax = 4096;  // samples per phasor seed: 128 float steps per lane

// (re, im)[t] ·= e^{j2π(ph + s·t)} for t < round_up(n, kMixLanes); phasors seeded in double, stepped in float.
void mix_planar(float* __restrict re, float* __restrict im, std::size_t n, double ph, double s) {
    alignas(64) float pr[kMixLanes], pi[kMixLanes];
    for (std::size_t l = 0; l < kMixLanes; ++l) {
        const double a = kTau * std::fmod(ph + s * static_cast<double>(l), 1.0);
        pr[l] = static_cast<float>(std::cos(a));
        pi[l] = static_cast<float>(std::sin(a));
    }
    const double st = kTau * std::fmod(s * static_cast<double>(kMixLanes), 1.0);
    const float sr = static_cast<float>(std::cos(st)), si = static_cast<float>(std::sin(st));
    for (std::size_t b = 0; b < n; b += kMixLanes)
        for (std::size_t l = 0; l < kMixLanes; ++l) {
            const float a = re[b + l], c = im[b + l];
            re[b + l] = a * pr[l] - c * pi[l];
            im[b + l] = a * pi[l] + c * pr[l];
            const float t = pr[l] * sr - pi[l] * si;
            pi[l] = pr[l] * si + pi[l] * sr;
            pr[l] = t;
        }
}
}  // namespace

void ShiftedFirKernel::init(const std::vector<double>& lp, double shift_cycles, double mid_samples,
                            std::size_t max_block) {
    block = std::max<std::size_t>(max_block, 1);
    std::vector<std::complex<double>> h(lp.begin(), lp.end());
    lowpass.init(h, block);
    shift = shift_cycles - std::floor(shift_cycles);
    mid = mid_samples;
    ur.assign(round_up(block, 64), 0.0f);
    ui.assign(round_up(block, 64), 0.0f);
    reset();
}

void ShiftedFirKernel::reset() {
    lowpass.reset();
    phase = 0.0;
}

void ShiftedFirKernel::process(const cf32* in, std::size_t n, cf32* out) {
    for (std::size_t pos = 0; pos < n; pos += kMixMax) {
        const std::size_t m = std::min(kMixMax, n - pos);
        const std::size_t hist = lowpass.padded - 1;
        float* xr = lowpass.xr.data() + hist;
        float* xi = lowpass.xi.data() + hist;
        deinterleave(in + pos, m, xr, xi);
        mix_planar(xr, xi, m, -phase, -shift);  // down: e^{−j2π·s·t}
        const std::size_t j0 = lowpass.padded - lowpass.taps;
        fir_lanes_real<false>(lowpass.hr.data() + j0, lowpass.taps, lowpass.xr.data() + j0, lowpass.xi.data() + j0, m,
                              ur.data(), ui.data());
        const double up = phase - shift * mid;
        mix_planar(ur.data(), ui.data(), m, up - std::floor(up), shift);  // up: e^{j2π·s·(t − mid)}
        interleave(ur.data(), ui.data(), m, out + pos);
        std::memmove(lowpass.xr.data(), lowpass.xr.data() + m, hist * sizeof(float));
        std::memmove(lowpass.xi.data(), lowpass.xi.data() + m, hist * sizeof(float));
        phase += shift * static_cast<double>(m);
        phase -= std::floor(phase);
    }
}

// ---------------------------------------------------------------------------------------------------------------

void PolyphaseBranch::init(const std::vector<double>& taps) {
    double peak = 0.0;
    for (double v : taps) peak = std::max(peak, std::abs(v));
    std::size_t nz = 0, at = 0;
    for (std::size_t j = 0; j < taps.size(); ++j)
        if (std::abs(taps[j]) > 1e-12 * peak) ++nz, at = j;
    single = nz <= 1;
    g.clear();
    if (single) {
        gain = nz == 1 ? static_cast<float>(taps[at]) : 0.0f;
        delay = nz == 1 ? at : 0;
        return;
    }
    std::size_t len = taps.size();
    while (len > 1 && std::abs(taps[len - 1]) <= 1e-12 * peak) --len;  // trailing zeros cost taps, not delay
    g.resize(len);
    for (std::size_t j = 0; j < len; ++j) g[j] = static_cast<float>(taps[len - 1 - j]);
}

void PolyphaseBranch::run(const float* xr, const float* xi, std::size_t n, float* yr, float* yi, bool add) const {
    if (single) {
        const float* a = xr - delay;
        const float* b = xi - delay;
        const float k = gain;
        const vf kv = simd::splat(k);
        std::size_t i = 0;
        if (add) {
            for (; i + W <= n; i += W) {
                simd::store(yr + i, simd::load(yr + i) + kv * simd::load(a + i));
                simd::store(yi + i, simd::load(yi + i) + kv * simd::load(b + i));
            }
            for (; i < n; ++i) yr[i] += k * a[i], yi[i] += k * b[i];
        } else {
            for (; i + W <= n; i += W) {
                simd::store(yr + i, kv * simd::load(a + i));
                simd::store(yi + i, kv * simd::load(b + i));
            }
            for (; i < n; ++i) yr[i] = k * a[i], yi[i] = k * b[i];
        }
        return;
    }
    const std::size_t back = g.size() - 1;
    if (add)
        fir_lanes_real<true>(g.data(), g.size(), xr - back, xi - back, n, yr, yi);
    else
        fir_lanes_real<false>(g.data(), g.size(), xr - back, xi - back, n, yr, yi);
}

void Interp2Kernel::init(const std::vector<double>& h, std::size_t max_block) {
    std::vector<double> he, ho;
    for (std::size_t i = 0; i < h.size(); ++i) (i % 2 == 0 ? he : ho).push_back(h[i]);
    if (ho.empty()) ho.push_back(0.0);
    even.init(he);
    odd.init(ho);
    hist = std::max(even.length(), odd.length());
    block = std::max<std::size_t>(max_block, 1);
    xr.assign(hist + round_up(block, kGroup) + hist + kGroup, 0.0f);
    xi.assign(xr.size(), 0.0f);
}

void Interp2Kernel::reset() {
    std::fill(xr.begin(), xr.end(), 0.0f);
    std::fill(xi.begin(), xi.end(), 0.0f);
}

void Interp2Kernel::process(const cf32* in, std::size_t n, float* er, float* ei, float* or_, float* oi) {
    deinterleave(in, n, xr.data() + hist, xi.data() + hist);
    even.run(xr.data() + hist, xi.data() + hist, n, er, ei, false);
    odd.run(xr.data() + hist, xi.data() + hist, n, or_, oi, false);
    std::memmove(xr.data(), xr.data() + n, hist * sizeof(float));
    std::memmove(xi.data(), xi.data() + n, hist * sizeof(float));
}

void Decim2Kernel::init(const std::vector<double>& h, std::size_t max_block) {
    std::vector<double> he, ho{0.0};  // the odd stream's sample i is x[2i + 1]: h[2j + 1] meets it at delay j + 1
    for (std::size_t i = 0; i < h.size(); ++i) (i % 2 == 0 ? he : ho).push_back(h[i]);
    even.init(he);
    odd.init(ho);
    hist = std::max(even.length(), odd.length());
    block = std::max<std::size_t>(max_block, 1);
    const std::size_t len = hist + round_up(block, kGroup) + hist + kGroup;
    for (auto* v : {&er, &ei, &or_, &oi}) v->assign(len, 0.0f);
    yr.assign(round_up(block, kGroup), 0.0f);
    yi.assign(round_up(block, kGroup), 0.0f);
}

void Decim2Kernel::reset() {
    for (auto* v : {&er, &ei, &or_, &oi}) std::fill(v->begin(), v->end(), 0.0f);
}

void Decim2Kernel::process(const float* xer, const float* xei, const float* xor_, const float* xoi, std::size_t n,
                           cf32* out) {
    std::copy(xer, xer + n, er.data() + hist);
    std::copy(xei, xei + n, ei.data() + hist);
    std::copy(xor_, xor_ + n, or_.data() + hist);
    std::copy(xoi, xoi + n, oi.data() + hist);
    // The dense branch first (it overwrites its whole lane groups), then the single tap adds.
    const bool even_first = !even.single;
    const PolyphaseBranch& a = even_first ? even : odd;
    const PolyphaseBranch& b = even_first ? odd : even;
    const float* ar = (even_first ? er : or_).data() + hist;
    const float* ai = (even_first ? ei : oi).data() + hist;
    const float* br = (even_first ? or_ : er).data() + hist;
    const float* bi = (even_first ? oi : ei).data() + hist;
    a.run(ar, ai, n, yr.data(), yi.data(), false);
    b.run(br, bi, n, yr.data(), yi.data(), true);
    interleave(yr.data(), yi.data(), n, out);
    for (auto* v : {&er, &ei, &or_, &oi}) std::memmove(v->data(), v->data() + n, hist * sizeof(float));
}

}  // namespace hb
