#include "dsp/lo_mix_kernel.hpp"

#include <algorithm>
#include <cmath>

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

void LoMixKernel::process(const std::complex<float>* in, std::size_t n, float* out_re, float* out_im) {
    const std::size_t K = spec_.harmonic.size();
    const float* g = g_.data();
    const vf m0 = simd::splat(m_[0]), m1 = simd::splat(m_[1]), m2 = simd::splat(m_[2]), m3 = simd::splat(m_[3]);
    const vf dr = simd::splat(dc_[0]), di = simd::splat(dc_[1]);
    const vf a3 = simd::splat(a3_), one = simd::splat(1.0f);
    const vf sr = simd::splat(step_re_), si = simd::splat(step_im_);
    const vf gkr = simd::splat(g[0]), gki = simd::splat(g[1]);

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
        auto group = [&](const float* s, float* yr_out, float* yi_out) {
            for (std::size_t r = 0; r < kRows; ++r) {
                // Horner: acc = g_K; acc = acc·p + g_k (k = K−1 .. 1); L = acc·p.
                vf ar = gkr, ai = gki;
                for (std::size_t k = 1; k < K; ++k) {
                    const vf t = ar * pr[r] - ai * pi[r] + g[2 * k];
                    ai = ar * pi[r] + ai * pr[r] + g[2 * k + 1];
                    ar = t;
                }
                const vf lr = ar * pr[r] - ai * pi[r], li = ar * pi[r] + ai * pr[r];
                vf xr, xi;
                simd::load_deinterleaved(s + 2 * r * W, xr, xi);
                const vf k3 = one + a3 * (xr * xr + xi * xi);
                const vf ur = xr * k3, ui = xi * k3;
                const vf zr = ur * lr - ui * li, zi = ur * li + ui * lr;
                simd::store(yr_out + r * W, m0 * zr + m1 * zi + dr);
                simd::store(yi_out + r * W, m2 * zr + m3 * zi + di);
                const vf t = pr[r] * sr - pi[r] * si;
                pi[r] = pr[r] * si + pi[r] * sr;
                pr[r] = t;
            }
        };
        std::size_t b = 0;
        for (; b + kLanes <= cnt; b += kLanes) group(src + 2 * b, o_r + b, o_i + b);
        if (b < cnt) {
            const std::size_t rest = cnt - b;
            std::fill(tail_in_.begin(), tail_in_.end(), 0.0f);
            std::copy(src + 2 * b, src + 2 * cnt, tail_in_.begin());
            group(tail_in_.data(), tail_re_.data(), tail_im_.data());
            std::copy(tail_re_.begin(), tail_re_.begin() + static_cast<std::ptrdiff_t>(rest), o_r + b);
            std::copy(tail_im_.begin(), tail_im_.begin() + static_cast<std::ptrdiff_t>(rest), o_i + b);
        }
        phase_ += spec_.lo_cycles * static_cast<double>(cnt);
        phase_ -= std::floor(phase_);
    }
}

}  // namespace hb
