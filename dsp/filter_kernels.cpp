#include "dsp/filter_kernels.hpp"

#include <algorithm>
#include <cmath>
#include <cstring>

namespace hb {
namespace {

constexpr std::size_t kLanes = 16;  // one AVX-512 register of floats, two AVX2 ones

}  // namespace

void PoleCascadeKernel::init(const std::vector<PoleSection>& secs) {
    sections = secs.size();
    coef.clear();
    for (const auto& s : secs)
        for (const auto& c : {s.b0, s.b1, s.a1}) {
            coef.push_back(static_cast<float>(c.real()));
            coef.push_back(static_cast<float>(c.imag()));
        }
    state.assign(2 * (sections + 1), 0.0f);
}

void PoleCascadeKernel::reset() {
    std::fill(state.begin(), state.end(), 0.0f);
}

void PoleCascadeKernel::process(cf32* io, std::size_t n) {
    if (sections == 0) return;
    float* st = state.data();
    const float* c = coef.data();
    float* d = reinterpret_cast<float*>(io);
    for (std::size_t i = 0; i < n; ++i) {
        float xr = d[2 * i], xi = d[2 * i + 1];
        float pr = st[0], pi = st[1];  // this section's previous input
        st[0] = xr;
        st[1] = xi;
        for (std::size_t s = 0; s < sections; ++s) {
            const float* k = c + 6 * s;
            float* y = st + 2 * (s + 1);
            // Written out by hand: std::complex multiplication would add NaN/infinity checks to every product.
            const float yr = k[0] * xr - k[1] * xi + k[2] * pr - k[3] * pi + k[4] * y[0] - k[5] * y[1];
            const float yi = k[0] * xi + k[1] * xr + k[2] * pi + k[3] * pr + k[4] * y[1] + k[5] * y[0];
            pr = y[0];
            pi = y[1];
            y[0] = yr;
            y[1] = yi;
            xr = yr;
            xi = yi;
        }
        d[2 * i] = xr;
        d[2 * i + 1] = xi;
    }
    // States that have decayed below -600 dBFS are zeroed, so silence never leaves the recursion in subnormal
    // numbers (which cost about a hundred times a normal operation).
    for (float& v : state)
        if (std::abs(v) < 1e-30f) v = 0.0f;
}

void FirKernel::init(const std::vector<std::complex<double>>& h, std::size_t max_block) {
    taps = h.size();
    padded = (taps + kLanes - 1) / kLanes * kLanes;
    hr.assign(padded, 0.0f);
    hi.assign(padded, 0.0f);
    for (std::size_t k = 0; k < taps; ++k) {
        hr[padded - 1 - k] = static_cast<float>(h[k].real());
        hi[padded - 1 - k] = static_cast<float>(h[k].imag());
    }
    block = max_block;
    xr.assign(padded - 1 + max_block, 0.0f);
    xi.assign(padded - 1 + max_block, 0.0f);
}

void FirKernel::reset() {
    std::fill(xr.begin(), xr.end(), 0.0f);
    std::fill(xi.begin(), xi.end(), 0.0f);
}

std::size_t FirKernel::process(const cf32* in, std::size_t n, cf32* out, int decimation, int& phase) {
    const std::size_t hist = padded - 1;
    const float* src = reinterpret_cast<const float*>(in);
    for (std::size_t i = 0; i < n; ++i) {
        xr[hist + i] = src[2 * i];
        xi[hist + i] = src[2 * i + 1];
    }
    const float* __restrict hR = hr.data();
    const float* __restrict hI = hi.data();
    float* o = reinterpret_cast<float*>(out);
    std::size_t produced = 0;
    for (std::size_t i = 0; i < n; ++i) {
        const bool keep = (phase == 0);
        phase = (phase + 1 == decimation) ? 0 : phase + 1;
        if (!keep) continue;
        const float* __restrict a = xr.data() + i;
        const float* __restrict b = xi.data() + i;
        // Sixteen independent partial sums, reduced at the end: vectorises without reassociating the compiler's way.
        float sr[kLanes] = {}, si[kLanes] = {};
        for (std::size_t j = 0; j < padded; j += kLanes)
            for (std::size_t l = 0; l < kLanes; ++l) {
                sr[l] += hR[j + l] * a[j + l] - hI[j + l] * b[j + l];
                si[l] += hR[j + l] * b[j + l] + hI[j + l] * a[j + l];
            }
        float yr = 0.0f, yi = 0.0f;
        for (std::size_t l = 0; l < kLanes; ++l) yr += sr[l], yi += si[l];
        o[2 * produced] = yr;
        o[2 * produced + 1] = yi;
        ++produced;
    }
    std::memmove(xr.data(), xr.data() + n, hist * sizeof(float));
    std::memmove(xi.data(), xi.data() + n, hist * sizeof(float));
    return produced;
}

}  // namespace hb
