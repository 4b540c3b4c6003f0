// Fixed-width float vectors for the hot kernels (GCC vector extensions), one register wide on the build target:
// 16 floats with AVX-512, 8 with AVX, 4 on the x86-64-v2 baseline (SSE4.2). Kernels written on these vectorise
// the same under every cost model and never spill a too-wide vector on a narrower target (platform notes,
// "Fixed wide-vector code spills on narrower targets"). Unaligned loads and stores go through memcpy, which GCC
// turns into one vector move.
#pragma once

#include <cstddef>
#include <cstring>
#include <new>
#include <utility>
#include <vector>

namespace hb::simd {

// A vector's storage on 64-byte (cache-line) boundaries: a full-width load at a multiple of 16 floats from the
// start then never straddles two lines, which costs a second load slot on the targets measured here.
template <class T>
struct LineAllocator {
    using value_type = T;
    static constexpr std::align_val_t kAlign{64};
    LineAllocator() = default;
    template <class U>
    LineAllocator(const LineAllocator<U>&) noexcept {}
    T* allocate(std::size_t n) { return static_cast<T*>(::operator new(n * sizeof(T), kAlign)); }
    void deallocate(T* p, std::size_t n) noexcept { ::operator delete(p, n * sizeof(T), kAlign); }
    template <class U>
    bool operator==(const LineAllocator<U>&) const noexcept {
        return true;
    }
};
template <class T>
using line_vector = std::vector<T, LineAllocator<T>>;

#if defined(__AVX512F__)
inline constexpr int kWidth = 16;
#elif defined(__AVX__)
inline constexpr int kWidth = 8;
#else
inline constexpr int kWidth = 4;
#endif

// What the build targets, from the compiler's own macros (-march=native here has AVX-512; the portable x86-64-v2
// build has SSE4.2 and no AVX): a name for people and a tag for file names.
struct Target {
    const char* name;
    const char* tag;
};
#if defined(__AVX512F__)
inline constexpr Target kTarget{"AVX-512", "avx512"};
#elif defined(__AVX2__)
inline constexpr Target kTarget{"AVX2", "avx2"};
#elif defined(__AVX__)
inline constexpr Target kTarget{"AVX", "avx"};
#elif defined(__SSE4_2__)
inline constexpr Target kTarget{"SSE4.2 (x86-64-v2)", "x86-64-v2"};
#else
inline constexpr Target kTarget{"baseline", "baseline"};
#endif

// Whether a·b + c rounds once (FMA3: AVX2-class targets and up; the x86-64-v2 baseline rounds twice).
#if defined(__FMA__)
inline constexpr bool kFusedMultiplyAdd = true;
#else
inline constexpr bool kFusedMultiplyAdd = false;
#endif

typedef float vf __attribute__((vector_size(kWidth * sizeof(float))));
typedef int vi __attribute__((vector_size(kWidth * sizeof(int))));

inline vf load(const float* p) {
    vf v;
    std::memcpy(&v, p, sizeof v);
    return v;
}
inline void store(float* p, vf v) {
    std::memcpy(p, &v, sizeof v);
}
inline vf splat(float x) {
    return vf{} + x;
}

namespace detail {
// Lane masks for __builtin_shuffle(a, b, mask): indices 0..W-1 pick from a, W..2W-1 from b.
template <std::size_t... I>
constexpr vi interleave_lo(std::index_sequence<I...>) {
    return vi{static_cast<int>((I % 2 == 0) ? I / 2 : kWidth + I / 2)...};
}
template <std::size_t... I>
constexpr vi interleave_hi(std::index_sequence<I...>) {
    return vi{static_cast<int>((I % 2 == 0) ? kWidth / 2 + I / 2 : kWidth + kWidth / 2 + I / 2)...};
}
// Lanes k and W/2 + k side by side: the two halves of one vector interleaved.
template <std::size_t... I>
constexpr vi interleave_half(std::index_sequence<I...>) {
    return vi{static_cast<int>((I % 2 == 0) ? I / 2 : kWidth / 2 + I / 2)...};
}
template <std::size_t... I>
constexpr vi reversed_lanes(std::index_sequence<I...>) {
    return vi{static_cast<int>(kWidth - 1 - I)...};
}
template <std::size_t... I>
constexpr vi even_lanes(std::index_sequence<I...>) {
    return vi{static_cast<int>(2 * I)...};
}
template <std::size_t... I>
constexpr vi odd_lanes(std::index_sequence<I...>) {
    return vi{static_cast<int>(2 * I + 1)...};
}
// fold at group size S: each group of S lanes of a (then of b) becomes S/2 lanes: its low half (lo) or high half (hi).
template <int S, std::size_t... I>
constexpr vi fold_lo(std::index_sequence<I...>) {
    return vi{static_cast<int>((I < kWidth / 2 ? 0 : kWidth) + ((I % (kWidth / 2)) / (S / 2)) * S +
                               (I % (kWidth / 2)) % (S / 2))...};
}
template <int S, std::size_t... I>
constexpr vi fold_hi(std::index_sequence<I...>) {
    return vi{static_cast<int>((I < kWidth / 2 ? 0 : kWidth) + ((I % (kWidth / 2)) / (S / 2)) * S +
                               (I % (kWidth / 2)) % (S / 2) + S / 2)...};
}
using Lanes = std::make_index_sequence<kWidth>;
}  // namespace detail

// The lanes in reverse order.
inline vf reverse(vf v) {
    constexpr vi r = detail::reversed_lanes(detail::Lanes{});
    return __builtin_shuffle(v, r);
}

// Interleaves planar re/im (W each) into 2W floats of complex samples at p.
inline void store_interleaved(float* p, vf re, vf im) {
    constexpr vi lo = detail::interleave_lo(detail::Lanes{});
    constexpr vi hi = detail::interleave_hi(detail::Lanes{});
    store(p, __builtin_shuffle(re, im, lo));
    store(p + kWidth, __builtin_shuffle(re, im, hi));
}
// Adds planar re/im (W each) to 2W floats of complex samples at p.
inline void add_interleaved(float* p, vf re, vf im) {
    constexpr vi lo = detail::interleave_lo(detail::Lanes{});
    constexpr vi hi = detail::interleave_hi(detail::Lanes{});
    store(p, load(p) + __builtin_shuffle(re, im, lo));
    store(p + kWidth, load(p + kWidth) + __builtin_shuffle(re, im, hi));
}
// Splits 2W floats of complex samples at p into planar re/im.
inline void load_deinterleaved(const float* p, vf& re, vf& im) {
    constexpr vi ev = detail::even_lanes(detail::Lanes{});
    constexpr vi od = detail::odd_lanes(detail::Lanes{});
    const vf a = load(p), b = load(p + kWidth);
    re = __builtin_shuffle(a, b, ev);
    im = __builtin_shuffle(a, b, od);
}

// One level of a pairwise tree reduction: a and b hold groups of S lanes (S = W at the first level); the result
// holds a's groups then b's, each summed down to S/2 lanes. After log2(W) levels over 2^k vectors the sums sit
// in order in the lanes.
template <int S>
inline vf fold(vf a, vf b) {
    constexpr vi lo = detail::fold_lo<S>(detail::Lanes{});
    constexpr vi hi = detail::fold_hi<S>(detail::Lanes{});
    return __builtin_shuffle(a, b, lo) + __builtin_shuffle(a, b, hi);
}

namespace detail {
template <int S, int N>
inline void fold_tree(vf* v) {
    if constexpr (S > 1 && N > 1) {
        for (int i = 0; i < N / 2; ++i) v[i] = fold<S>(v[2 * i], v[2 * i + 1]);
        fold_tree<S / 2, N / 2>(v);
    }
}
}  // namespace detail

// The sixteen horizontal sums of sixteen vectors, in order (out[k] = Σ lanes of v[k]); v is overwritten.
inline void reduce16(vf v[16], float out[16]) {
    detail::fold_tree<kWidth, 16>(v);
    // Now 16 sums in 16/W... vectors when W ≥ 16 has folded to one vector; else 16/W vectors of single lanes.
    constexpr int vecs = kWidth >= 16 ? 1 : 16 / kWidth;
    constexpr int per = kWidth >= 16 ? kWidth / 16 : 1;  // lanes per sum left (W > 16 only)
    for (int q = 0; q < vecs; ++q) {
        if constexpr (per == 1) {
            store(out + q * kWidth, v[q]);
        } else {
            for (int k = 0; k < kWidth / per; ++k) {
                float t = 0.0f;
                for (int l = 0; l < per; ++l) t += v[q][k * per + l];
                out[q * (kWidth / per) + k] = t;
            }
        }
    }
}

// reduce16 in two steps, so that a kernel can fold one half of its sixteen sums before it computes the other
// (and free their registers): fold_level1 folds eight vectors into four (the first level of the tree); then
// reduce16_folded_interleaved takes the eight folded vectors (both halves, in order) to the sixteen sums, written
// as eight complex values: out[2k] = sum k, out[2k + 1] = sum 8 + k (the real parts of eight outputs, then their
// imaginary parts).
inline void fold_level1(const vf v[8], vf out[4]) {
    for (int i = 0; i < 4; ++i) out[i] = fold<kWidth>(v[2 * i], v[2 * i + 1]);
}
inline void reduce16_folded_interleaved(vf v[8], float out[16]) {
    detail::fold_tree<kWidth / 2, 8>(v);
    if constexpr (kWidth >= 16) {
        store(out, __builtin_shuffle(v[0], v[0], detail::interleave_half(detail::Lanes{})));
    } else if constexpr (kWidth == 8) {
        store_interleaved(out, v[0], v[1]);
    } else {
        store_interleaved(out, v[0], v[2]);
        store_interleaved(out + 2 * kWidth, v[1], v[3]);
    }
}

// The eight horizontal sums of eight vectors, in order (out[k] = Σ lanes of v[k]).
inline void reduce8(const vf v[8], float out[8]) {
    if constexpr (kWidth == 4) {
        const vf a = fold<4>(v[0], v[1]), b = fold<4>(v[2], v[3]), c = fold<4>(v[4], v[5]), d = fold<4>(v[6], v[7]);
        const vf e = fold<2>(a, b), f = fold<2>(c, d);  // groups of 1: the sums
        for (int k = 0; k < 4; ++k) out[k] = e[k], out[4 + k] = f[k];
    } else {
        const vf a = fold<kWidth>(v[0], v[1]), b = fold<kWidth>(v[2], v[3]);
        const vf c = fold<kWidth>(v[4], v[5]), d = fold<kWidth>(v[6], v[7]);
        const vf e = fold<kWidth / 2>(a, b), f = fold<kWidth / 2>(c, d);
        const vf g = fold<kWidth / 4>(e, f);  // eight groups of W/8 lanes
        constexpr int s = kWidth / 8;
        for (int k = 0; k < 8; ++k) {
            float t = 0.0f;
            for (int l = 0; l < s; ++l) t += g[k * s + l];
            out[k] = t;
        }
    }
}

}  // namespace hb::simd
