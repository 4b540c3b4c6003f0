// Float log and sin/cos written so the compiler vectorises loops over them (libm calls do not vectorise
// without -ffast-math). Used by the per-sample noise and phase-noise paths of the mixer.
// Accuracy (checked in tests/lo_test.cpp against std::log / std::sin / std::cos in double): log within two
// float ulps of the result, sin/cos within 2e-6 absolute for |t| ≤ 4 turns: float rounding, not the series.
#pragma once

#include <bit>
#include <cmath>
#include <cstdint>

namespace hb::vmath {

// Natural log of x > 0 (normal floats). x = 2^e·m with m in [√½, √2): ln x = e·ln2 + 2·atanh(s),
// s = (m − 1)/(m + 1), |s| ≤ 0.172; the atanh series to s^11 is exact to float.
inline float log_pos(float x) {
    std::uint32_t b = std::bit_cast<std::uint32_t>(x);
    // Bias the mantissa into [√½, √2): add the bits of (1 − √½) before splitting off the exponent.
    b += 0x3f800000u - 0x3f3504f3u;
    const int e = static_cast<int>(b >> 23) - 127;
    const float m = std::bit_cast<float>((b & 0x007fffffu) + 0x3f3504f3u);
    const float s = (m - 1.0f) / (m + 1.0f);
    const float s2 = s * s;
    const float p = 1.0f + s2 * (1.0f / 3 + s2 * (1.0f / 5 + s2 * (1.0f / 7 + s2 * (1.0f / 9 + s2 * (1.0f / 11)))));
    return static_cast<float>(e) * 0.693147180559945309f + 2.0f * s * p;
}

// Square root of x ≥ 0 (std::sqrt keeps a branch for errno on negative input, which stops vectorisation).
inline float sqrt_nonneg(float x) { return __builtin_sqrtf(std::fabs(x)); }

// sin and cos of 2π·t for any t (|t| < 2^22). Quadrant from round(4t), then Taylor series on ±π/4.
inline void sincos_turns(float t, float& s, float& c) {
    // Round to nearest by the 1.5·2^23 trick: exact for |4t| < 2^22, no libm call, so it vectorises.
    const float q = (4.0f * t + 12582912.0f) - 12582912.0f;
    const float r = (t - 0.25f * q) * 6.28318530717958648f;  // [−π/4, π/4]
    const float r2 = r * r;
    const float sr = r * (1.0f + r2 * (-1.0f / 6 + r2 * (1.0f / 120 + r2 * (-1.0f / 5040 + r2 * (1.0f / 362880)))));
    const float cr = 1.0f + r2 * (-0.5f + r2 * (1.0f / 24 + r2 * (-1.0f / 720 + r2 * (1.0f / 40320))));
    const int k = static_cast<int>(q) & 3;
    // Rotate by k quarter turns: (s, c) → k=1: (c, −s), k=2: (−s, −c), k=3: (−c, s).
    const bool swap = (k & 1) != 0;
    const float ss = swap ? cr : sr;
    const float cc = swap ? sr : cr;
    s = (k == 2 || k == 3) ? -ss : ss;
    c = (k == 1 || k == 2) ? -cc : cc;
}

}  // namespace hb::vmath
