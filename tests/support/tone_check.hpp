// A plain FFT tone measurement for tests, independent of the project's analyzer: one frame, a stated window,
// the peak bin's amplitude corrected by the window's coherent gain.
//
// Windows (periodic, DFT-even), figures from ../shared/reference-values.md §1:
//   rectangular: CG 1, exact for a tone on a bin centre.
//   flat-top, coefficients 0.21557895, 0.41663158, 0.277263158, 0.083578947, 0.006947368 (D'Antona & Ferrero,
//   "Digital Signal Processing for Measurement Systems", 2006, p. 70): CG 0.2156, scalloping loss 0.0098 dB,
//   so the peak bin reads a tone anywhere between bins to within 0.01 dB.
#pragma once

#include <fftw3.h>

#include <cmath>
#include <complex>
#include <algorithm>
#include <cstddef>
#include <span>
#include <vector>

namespace hb::test {

enum class ToneWindow { rectangular, flat_top };

struct Spectrum {
    std::vector<double> amplitude;  // per bin, FFT order (bin k: k * fs / N, upper half negative), CG-corrected
    double bin_hz = 0.0;
    double frequency(std::size_t k) const {
        const auto n = amplitude.size();
        return (k < n / 2 ? double(k) : double(k) - double(n)) * bin_hz;
    }
    std::size_t bin_of(double offset_hz) const {
        const auto n = static_cast<long long>(amplitude.size());
        long long k = std::llround(offset_hz / bin_hz);
        return static_cast<std::size_t>(((k % n) + n) % n);
    }
    std::size_t peak() const {
        std::size_t best = 0;
        for (std::size_t k = 1; k < amplitude.size(); ++k)
            if (amplitude[k] > amplitude[best]) best = k;
        return best;
    }
    // Level in dB re full scale of the strongest bin within +-span bins of the given offset.
    double level_db_near(double offset_hz, int span = 2) const {
        const auto n = static_cast<long long>(amplitude.size());
        const long long c = static_cast<long long>(bin_of(offset_hz));
        double best = 0;
        for (long long d = -span; d <= span; ++d) best = std::max(best, amplitude[static_cast<std::size_t>(((c + d) % n + n) % n)]);
        return 20.0 * std::log10(best);
    }
};

inline Spectrum tone_spectrum(std::span<const std::complex<float>> x, double fs, ToneWindow win) {
    const std::size_t n = x.size();
    std::vector<std::complex<float>> in(n), out(n);  // single precision: FFTW's float library is linked
    double sum_w = 0;
    const double a[5] = {0.21557895, 0.41663158, 0.277263158, 0.083578947, 0.006947368};
    for (std::size_t i = 0; i < n; ++i) {
        double w = 1.0;
        if (win == ToneWindow::flat_top) {
            const double p = 2.0 * M_PI * double(i) / double(n);
            w = a[0] - a[1] * std::cos(p) + a[2] * std::cos(2 * p) - a[3] * std::cos(3 * p) + a[4] * std::cos(4 * p);
        }
        sum_w += w;
        in[i] = x[i] * static_cast<float>(w);
    }
    fftwf_plan plan = fftwf_plan_dft_1d(static_cast<int>(n), reinterpret_cast<fftwf_complex*>(in.data()),
                                        reinterpret_cast<fftwf_complex*>(out.data()), FFTW_FORWARD, FFTW_ESTIMATE);
    fftwf_execute(plan);
    fftwf_destroy_plan(plan);
    Spectrum s;
    s.bin_hz = fs / double(n);
    s.amplitude.resize(n);
    for (std::size_t k = 0; k < n; ++k) s.amplitude[k] = std::abs(std::complex<double>(out[k])) / sum_w;
    return s;
}

}  // namespace hb::test
