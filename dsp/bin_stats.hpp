// The distribution of one bin of a Welch spectrum when the input is Gaussian noise: what the noise-floor
// estimate corrects its median by, and where detection thresholds go.
//
// One periodogram bin of complex Gaussian noise is exponential (χ² with 2 degrees of freedom) with mean μ,
// the true noise power per bin. The estimate combines frames:
//   rms, exponential  a weighted mean Σ w_i·P_i. Overlapped frames are correlated: bins of frames s samples
//                     apart have correlation c(s)², c the window's overlap correlation (P. D. Welch, IEEE
//                     Trans. Audio Electroacoust. AU-15(2):70–73, 1967; from memory, and derivable). The
//                     estimate is taken as μ·χ²_ν/ν with ν = 2·K_eff degrees of freedom, matched to its mean
//                     and variance, K_eff = 1 / Σ_i Σ_j w_i·w_j·c(|i − j|·hop)² (Welch 1967's equivalent
//                     degrees of freedom). For an average of K frames without overlap K_eff = K exactly.
//   max-hold          the largest of K frames: P(X ≤ x·μ) = (1 − e^{−x})^K
//   min-hold          the smallest: P(X ≤ x·μ) = 1 − e^{−K·x}
//                     (order statistics of independent exponentials, derivable; with overlap, K is replaced by
//                     the rms K_eff of the same frames, an approximation).
#pragma once

#include <cstdint>
#include <span>

#include "dsp/setup.hpp"

namespace hb {

struct Spectrum;

struct BinStatistics {
    Averaging mode = Averaging::rms;
    double k = 1.0;  // rms / exponential: K_eff (ν = 2·K_eff); holds: the (effective) number of frames

    // Probability that a noise-only bin reads at most x·μ.
    double cdf(double x) const;
    // The x with cdf(x) = p, 0 < p < 1.
    double quantile(double p) const;
    double median() const { return quantile(0.5); }
    // Mean of the estimate in units of μ: 1 for rms and exponential, H_K = Σ 1/i for max-hold, 1/K for min-hold.
    double mean() const;
};

// The statistics of a bin of `s` (its averaging mode, frame count, hop and window).
BinStatistics bin_statistics(const Spectrum& s);

// The same from the parts: the window's overlap correlations c(l·hop) for l = 1, 2, ... (while l·hop < N)
// and the frame count and averaging of the estimate.
BinStatistics bin_statistics(Averaging mode, std::int64_t frames, int averages, std::span<const double> overlap_corr);

// Regularised lower incomplete gamma function P(a, x) = γ(a, x)/Γ(a): series below x = a + 1, Legendre's
// continued fraction above (Abramowitz & Stegun, Handbook of Mathematical Functions, 1964, 6.5.29 and 6.5.31;
// equation numbers from memory); Wilson & Hilferty's cube-root normal form (1931) for a > 2·10⁴, where the two
// lose precision. Checked against scipy.special.gammainc in tests/measure_test.cpp.
double regularized_gamma_p(double a, double x);

}  // namespace hb
