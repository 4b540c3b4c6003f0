// Force-included (-include) by the clang fuzz build only: GCC's __builtin_shuffle, which dsp/simd.hpp uses, written
// out lane by lane for clang (which has only __builtin_shufflevector with constant indices). The masks are
// compile-time constants, so clang's optimiser turns the loop back into a shuffle. Remove this once dsp/simd.hpp
// has a clang path of its own; it only defines the name when nothing else does.
#pragma once
#if defined(__clang__) && defined(__cplusplus)
template <class V, class M>
inline V __builtin_shuffle(V a, V b, M mask) {
    constexpr int n = static_cast<int>(sizeof(V) / sizeof(a[0]));
    V r{};
    for (int i = 0; i < n; ++i) {
        const int k = static_cast<int>(mask[i]) & (2 * n - 1);
        r[i] = k < n ? a[k] : b[k - n];
    }
    return r;
}
template <class V, class M>
inline V __builtin_shuffle(V a, M mask) {
    constexpr int n = static_cast<int>(sizeof(V) / sizeof(a[0]));
    V r{};
    for (int i = 0; i < n; ++i) r[i] = a[static_cast<int>(mask[i]) & (n - 1)];
    return r;
}
#endif
