#include "dsp/bin_stats.hpp"

#include <algorithm>
#include <cmath>
#include <vector>

#include "dsp/spectrum.hpp"
#include "dsp/window.hpp"

namespace hb {
namespace {

double gamma_series(double a, double x) {  // P(a, x) for x < a + 1
    double term = 1.0 / a, sum = term;
    for (int n = 1; n < 100000; ++n) {
        term *= x / (a + n);
        sum += term;
        if (term < sum * 1e-16) break;
    }
    return sum * std::exp(-x + a * std::log(x) - std::lgamma(a));
}

double gamma_q_fraction(double a, double x) {  // Q(a, x) = 1 − P(a, x) for x ≥ a + 1, modified Lentz
    constexpr double tiny = 1e-300;
    double f = x + 1.0 - a;
    if (std::abs(f) < tiny) f = tiny;
    double c = f, d = 0.0;
    for (int i = 1; i < 100000; ++i) {
        const double an = -i * (i - a), bn = x + 2.0 * i + 1.0 - a;
        d = bn + an * d;
        if (std::abs(d) < tiny) d = tiny;
        c = bn + an / c;
        if (std::abs(c) < tiny) c = tiny;
        d = 1.0 / d;
        const double delta = c * d;
        f *= delta;
        if (std::abs(delta - 1.0) < 1e-16) break;
    }
    return std::exp(-x + a * std::log(x) - std::lgamma(a)) / f;
}

// Harmonic number H(K) = ψ(K + 1) + γ for real K ≥ 0 (the mean of the largest of K unit exponentials).
double harmonic(double k) {
    double shift = 0.0;
    while (k < 8.0) {  // H(K) = H(K + 1) − 1/(K + 1)
        shift -= 1.0 / (k + 1.0);
        k += 1.0;
    }
    constexpr double euler_gamma = 0.57721566490153286;
    return shift + std::log(k) + euler_gamma + 1.0 / (2 * k) - 1.0 / (12 * k * k) + 1.0 / (120 * k * k * k * k);
}

// K_eff = 1 / Σ_i Σ_j w_i w_j ρ_|i−j| with ρ_0 = 1 and ρ_l = c_l² (weights summing to 1).
double equivalent_averages(std::span<const double> w, std::span<const double> overlap_corr) {
    double s = 0.0;
    for (std::size_t i = 0; i < w.size(); ++i) {
        s += w[i] * w[i];
        for (std::size_t l = 1; l <= overlap_corr.size() && i + l < w.size(); ++l)
            s += 2.0 * w[i] * w[i + l] * overlap_corr[l - 1] * overlap_corr[l - 1];
    }
    return 1.0 / s;
}

}  // namespace

double regularized_gamma_p(double a, double x) {
    if (!(x > 0.0)) return 0.0;
    if (a > 2e4) {
        // 2x ~ χ²(2a); (χ²/ν)^{1/3} is nearly normal with mean 1 − 2/(9ν) and variance 2/(9ν).
        const double v = 1.0 / (9.0 * a);
        const double z = (std::cbrt(x / a) - (1.0 - v)) / std::sqrt(v);
        return 0.5 * std::erfc(-z / std::sqrt(2.0));
    }
    return x < a + 1.0 ? gamma_series(a, x) : 1.0 - gamma_q_fraction(a, x);
}

double BinStatistics::cdf(double x) const {
    if (!(x > 0.0)) return 0.0;
    switch (mode) {
        case Averaging::rms:
        case Averaging::exponential:
            return regularized_gamma_p(k, k * x);
        case Averaging::max_hold:
            return std::pow(-std::expm1(-x), k);
        case Averaging::min_hold:
            return -std::expm1(-k * x);
    }
    return 0.0;
}

double BinStatistics::quantile(double p) const {
    p = std::clamp(p, 1e-300, 1.0 - 1e-16);
    switch (mode) {
        case Averaging::max_hold:
            return -std::log(-std::expm1(std::log(p) / k));
        case Averaging::min_hold:
            return -std::log1p(-p) / k;
        case Averaging::rms:
        case Averaging::exponential:
            break;
    }
    double lo = 0.0, hi = 1.0;
    while (cdf(hi) < p && hi < 1e6) {
        lo = hi;
        hi *= 2.0;
    }
    for (int i = 0; i < 200 && hi - lo > 1e-13 * hi; ++i) {
        const double mid = 0.5 * (lo + hi);
        (cdf(mid) < p ? lo : hi) = mid;
    }
    return 0.5 * (lo + hi);
}

double BinStatistics::mean() const {
    switch (mode) {
        case Averaging::max_hold:
            return harmonic(k);
        case Averaging::min_hold:
            return 1.0 / k;
        case Averaging::rms:
        case Averaging::exponential:
            return 1.0;
    }
    return 1.0;
}

BinStatistics bin_statistics(Averaging mode, std::int64_t frames, int averages, std::span<const double> corr) {
    BinStatistics st;
    st.mode = mode;
    const auto m = static_cast<std::size_t>(std::max<std::int64_t>(frames, 1));
    std::vector<double> w;
    if (mode == Averaging::exponential && m > 1) {
        // p ← p + α(x − p), started from the first frame: weights (1−α)^{m−1}, then α(1−α)^{m−1−i}.
        // Frames older than 60/α carry weights below e^{−60}: leave them out.
        const double alpha = 1.0 / std::max(averages, 1);
        const std::size_t keep = std::min<std::size_t>(m, static_cast<std::size_t>(60.0 / alpha) + 1);
        w.resize(keep);
        for (std::size_t i = 0; i < keep; ++i) {
            const double age = static_cast<double>(keep - 1 - i);
            w[i] = (i == 0 && keep == m ? 1.0 : alpha) * std::pow(1.0 - alpha, age);
        }
    } else {
        w.assign(m, 1.0 / static_cast<double>(m));
    }
    st.k = equivalent_averages(w, corr);
    return st;
}

BinStatistics bin_statistics(const Spectrum& s) {
    const auto n = static_cast<std::size_t>(s.size());
    std::vector<double> corr;
    if (n > 0 && s.hop > 0) {
        const std::vector<double> win = make_window(s.spec.window, n, s.spec.kaiser_beta);
        for (std::size_t shift = static_cast<std::size_t>(s.hop); shift < n; shift += static_cast<std::size_t>(s.hop))
            corr.push_back(overlap_correlation_at(win, shift));
    }
    return bin_statistics(s.spec.averaging, s.frames, s.spec.averages, corr);
}

}  // namespace hb
