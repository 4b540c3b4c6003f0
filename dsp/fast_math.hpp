// Small per-sample kernels written so that GCC vectorises loops over them (no calls into libm, no
// branches): a counter-based random number generator, sin/cos of a phase in cycles, and a logarithm.
// Used by the bench generator's synthesiser, where libm calls per sample would cost most of the time.
#pragma once

#include <bit>
#include <cmath>
#include <cstdint>

namespace hb::fastmath {

// The SplitMix64 output function: a bijective 64-bit mix. Hashing key + i * golden gamma gives the i-th
// output of a SplitMix64 stream seeded with `key` (Steele, Lea & Flood, "Fast splittable pseudorandom number
// generators", OOPSLA 2014). Being counter-based, sample i's random numbers do not depend on how the stream
// is cut into blocks, and loops over i vectorise.
inline constexpr std::uint64_t kGoldenGamma = 0x9e3779b97f4a7c15ULL;

inline constexpr std::uint64_t mix64(std::uint64_t z) {
    z = (z ^ (z >> 30)) * 0xbf58476d1ce4e5b9ULL;
    z = (z ^ (z >> 27)) * 0x94d049bb133111ebULL;
    return z ^ (z >> 31);
}

// The i-th 64-bit random word of the stream named `key`.
inline constexpr std::uint64_t random_word(std::uint64_t key, std::uint64_t i) {
    return mix64(key + (i + 1) * kGoldenGamma);
}

// Uniform in [0, 1) with 24 bits (the float mantissa), from the low bits of a word.
inline float uniform_low24(std::uint64_t w) { return static_cast<float>(w & 0xffffffu) * 0x1p-24f; }

// Uniform in (0, 1] from the high 32 bits of a word: never 0, so its logarithm is finite.
inline float uniform_open0(std::uint64_t w) { return static_cast<float>((w >> 32) + 1u) * 0x1p-32f; }

// Natural logarithm of a positive, normal float; absolute error below 2e-7 over (0, 1].
// x = m * 2^e with m in [sqrt(1/2), sqrt(2)); ln m = 2 atanh(t), t = (m-1)/(m+1), |t| <= 0.1716, by its series
// to t^9 (truncation below 3e-10).
inline float log(float x) {
    std::uint32_t bits = std::bit_cast<std::uint32_t>(x);
    int e = static_cast<int>((bits >> 23) & 0xffu) - 127;
    bits = (bits & 0x007fffffu) | 0x3f800000u;  // mantissa as a float in [1, 2)
    float m = std::bit_cast<float>(bits);
    const bool big = m > 1.41421356f;
    m = big ? 0.5f * m : m;
    e = big ? e + 1 : e;
    const float t = (m - 1.0f) / (m + 1.0f);
    const float t2 = t * t;
    const float series = t * (2.0f + t2 * (2.0f / 3.0f + t2 * (2.0f / 5.0f + t2 * (2.0f / 7.0f + t2 * (2.0f / 9.0f)))));
    return series + static_cast<float>(e) * 0.69314718f;
}

// cos and sin of 2*pi*cycles for any float `cycles` (only its fractional part matters). The phase is reduced
// to an eighth of a turn and the Taylor series of sin (to x^9) and cos (to x^8) are used there: error below
// 3e-8 at pi/4 (the first omitted terms), then the quadrant is restored by swapping and negating.
inline void cos_sin_cycles(float cycles, float& c_out, float& s_out) {
    const float x = cycles - std::nearbyint(cycles);  // [-0.5, 0.5]
    const float q = std::nearbyint(4.0f * x);          // quadrant -2..2
    const float th = 6.28318531f * (x - 0.25f * q);    // [-pi/4, pi/4]
    const float t2 = th * th;
    const float s = th * (1.0f + t2 * (-1.0f / 6 + t2 * (1.0f / 120 + t2 * (-1.0f / 5040 + t2 * (1.0f / 362880)))));
    const float c = 1.0f + t2 * (-0.5f + t2 * (1.0f / 24 + t2 * (-1.0f / 720 + t2 * (1.0f / 40320))));
    const int qi = static_cast<int>(q) & 3;  // -1 -> 3, -2 -> 2
    const bool odd = (qi & 1) != 0;
    const float c1 = odd ? s : c;
    const float s1 = odd ? c : s;
    c_out = (qi == 1 || qi == 2) ? -c1 : c1;
    s_out = (qi >= 2) ? -s1 : s1;
}

}  // namespace hb::fastmath
