#include "dsp/window.hpp"

#include <algorithm>
#include <array>
#include <cmath>
#include <complex>

#include "dsp/fft.hpp"
#include "dsp/units.hpp"

namespace hb {
namespace {

// Cosine-sum coefficients a_k (see window.hpp for their sources).
constexpr std::array<double, 2> kHann{0.5, 0.5};
constexpr std::array<double, 4> kBlackmanHarris{0.35875, 0.48829, 0.14128, 0.01168};
constexpr std::array<double, 5> kFlatTop{0.21557895, 0.41663158, 0.277263158, 0.083578947, 0.006947368};

template <std::size_t K>
void cosine_sum(const std::array<double, K>& a, std::vector<double>& w) {
    const double n_total = static_cast<double>(w.size());
    for (std::size_t n = 0; n < w.size(); ++n) {
        double v = 0.0, sign = 1.0;
        for (std::size_t k = 0; k < K; ++k, sign = -sign)
            v += sign * a[k] * std::cos(kTwoPi * static_cast<double>(k) * static_cast<double>(n) / n_total);
        w[n] = v;
    }
}

// DTFT of the window at an offset of nu bins, |W(ν)|.
double dtft_magnitude(std::span<const double> w, double nu) {
    const double step = -kTwoPi * nu / static_cast<double>(w.size());
    std::complex<double> acc = 0.0;
    for (std::size_t n = 0; n < w.size(); ++n) acc += w[n] * std::polar(1.0, step * static_cast<double>(n));
    return std::abs(acc);
}

// Full width (bins) where |W(ν)|/|W(0)| first falls to `ratio`: a coarse scan, then bisection.
double width_at(std::span<const double> w, double ratio) {
    const double peak = dtft_magnitude(w, 0.0);
    const double step = 1.0 / 64.0;
    double lo = 0.0, hi = step;
    while (dtft_magnitude(w, hi) / peak > ratio && hi < static_cast<double>(w.size()) / 2) {
        lo = hi;
        hi += step;
    }
    for (int i = 0; i < 50; ++i) {
        const double mid = 0.5 * (lo + hi);
        (dtft_magnitude(w, mid) / peak > ratio ? lo : hi) = mid;
    }
    return lo + hi;  // 2 × the half-width
}

// |W(i/os)|² / |W(0)|² for i = 0..n·os/2 from a zero-padded transform of n·os points.
std::vector<double> padded_power_response(std::span<const double> w, std::size_t os) {
    const std::size_t m = w.size() * os;
    Fft fft(m, Fft::Effort::estimate);
    for (std::size_t i = 0; i < w.size(); ++i) fft.in()[i] = static_cast<float>(w[i]);
    fft.execute();
    std::vector<double> r(m / 2 + 1);
    const double p0 = std::norm(std::complex<double>(fft.out()[0]));
    for (std::size_t i = 0; i < r.size(); ++i) r[i] = std::norm(std::complex<double>(fft.out()[i])) / p0;
    return r;
}

}  // namespace

std::vector<double> make_window(WindowType type, std::size_t n, double kaiser_beta) {
    std::vector<double> w(n, 1.0);
    switch (type) {
        case WindowType::rectangular:
            break;
        case WindowType::hann:
            cosine_sum(kHann, w);
            break;
        case WindowType::blackman_harris:
            cosine_sum(kBlackmanHarris, w);
            break;
        case WindowType::flat_top:
            cosine_sum(kFlatTop, w);
            break;
        case WindowType::kaiser: {
            const double denom = std::cyl_bessel_i(0.0, kaiser_beta);
            for (std::size_t i = 0; i < n; ++i) {
                const double x = 2.0 * static_cast<double>(i) / static_cast<double>(n) - 1.0;
                w[i] = std::cyl_bessel_i(0.0, kaiser_beta * std::sqrt(std::max(0.0, 1.0 - x * x))) / denom;
            }
            break;
        }
    }
    return w;
}

WindowFigures window_figures(std::span<const double> w, int oversample) {
    WindowFigures f;
    double s1 = 0.0, s2 = 0.0;
    for (double v : w) {
        s1 += v;
        s2 += v * v;
    }
    const double n = static_cast<double>(w.size());
    f.coherent_gain = s1 / n;
    f.enbw_bins = n * s2 / (s1 * s1);
    f.scalloping_loss_db = -db_from_amplitude(dtft_magnitude(w, 0.5) / std::abs(s1));
    f.bandwidth_3db_bins = width_at(w, std::sqrt(0.5));
    f.bandwidth_6db_bins = width_at(w, 0.5);

    // Highest side lobe: past the first null, i.e. the first local minimum after the response has fallen
    // to −6 dB (a flat-top's main lobe ripples near its top).
    const auto os = static_cast<std::size_t>(std::max(oversample, 4));
    const std::vector<double> r = padded_power_response(w, os);
    std::size_t i = 1;
    while (i + 1 < r.size() && r[i] > 0.25) ++i;
    while (i + 1 < r.size() && r[i + 1] < r[i]) ++i;
    double hsl = 0.0;
    for (std::size_t k = i; k < r.size(); ++k) hsl = std::max(hsl, r[k]);
    f.highest_sidelobe_db = db_from_power(hsl);
    return f;
}

double overlap_correlation_at(std::span<const double> w, std::size_t shift) {
    double num = 0.0, den = 0.0;
    for (double v : w) den += v * v;
    for (std::size_t n = 0; n + shift < w.size(); ++n) num += w[n] * w[n + shift];
    return num / den;
}

double overlap_correlation(std::span<const double> w, double overlap) {
    const auto shift = static_cast<std::size_t>(std::lround((1.0 - overlap) * static_cast<double>(w.size())));
    return overlap_correlation_at(w, shift);
}

double mainlobe_halfwidth_bins(WindowType type, double kaiser_beta) {
    switch (type) {
        case WindowType::rectangular:
            return 1.0;
        case WindowType::hann:
            return 2.0;
        case WindowType::blackman_harris:
            return 4.0;
        case WindowType::flat_top:
            return 5.0;
        case WindowType::kaiser:
            return std::sqrt(1.0 + (kaiser_beta / kPi) * (kaiser_beta / kPi));
    }
    return 1.0;
}

double WindowResponse::power_at(double nu) const {
    const double x = std::abs(nu) * oversample;
    const auto i = static_cast<std::size_t>(x);
    if (i + 1 >= fine.size()) return leakage_bound(std::abs(nu));
    const double t = x - static_cast<double>(i);
    return fine[i] + t * (fine[i + 1] - fine[i]);
}

double WindowResponse::leakage_bound(double d_bins) const {
    const double d = std::abs(d_bins);
    const auto i = static_cast<std::size_t>(std::floor(d + 0.5));
    if (i < envelope.size()) return envelope[i];
    const double last = static_cast<double>(envelope.size() - 1);
    return envelope.back() * (last / d) * (last / d);
}

WindowResponse make_window_response(WindowType type, double kaiser_beta, std::size_t fft_size) {
    // The shape in bins converges with N; 4096 points keep the Dirichlet kernel within 3 % of its limit out
    // to 512 bins, and above that it only overestimates (sin x ≤ x), so the envelope stays an upper bound.
    constexpr std::size_t kRefMax = 4096, kPadded = 1 << 18;
    const std::size_t nref = std::clamp<std::size_t>(fft_size, 16, kRefMax);
    const std::size_t os = kPadded / nref;
    const std::vector<double> w = make_window(type, nref, kaiser_beta);
    const std::vector<double> r = padded_power_response(w, os);

    WindowResponse resp;
    resp.type = type;
    resp.kaiser_beta = kaiser_beta;
    double s1 = 0.0, s2 = 0.0;
    for (double v : w) {
        s1 += v;
        s2 += v * v;
    }
    resp.enbw_bins = static_cast<double>(nref) * s2 / (s1 * s1);
    resp.mainlobe_halfwidth_bins = mainlobe_halfwidth_bins(type, kaiser_beta);
    resp.oversample = static_cast<int>(os);

    const std::size_t fine_bins = std::min<std::size_t>(24, nref / 2);
    resp.fine.assign(r.begin(), r.begin() + static_cast<std::ptrdiff_t>(fine_bins * os + 1));
    const std::size_t env_bins = std::min<std::size_t>(512, nref / 2);
    resp.envelope.resize(env_bins);
    for (std::size_t d = 0; d < env_bins; ++d) {
        const std::size_t lo = d == 0 ? 0 : d * os - os / 2, hi = std::min(r.size() - 1, d * os + os / 2);
        resp.envelope[d] = *std::max_element(r.begin() + static_cast<std::ptrdiff_t>(lo),
                                             r.begin() + static_cast<std::ptrdiff_t>(hi) + 1);
    }
    return resp;
}

}  // namespace hb
