// Tone levels for the mixer tests: test signals made of complex tones, and a plain FFT whose bins are read
// directly. Every test that uses it puts its tones exactly on bins (an integer number of cycles in the
// record), so the rectangular window has no leakage and a bin reads the tone's complex amplitude exactly
// (rectangular window: coherent gain 1, Harris 1978, Proc. IEEE 66(1), Table 1).
#pragma once

#include <fftw3.h>

#include <cmath>
#include <complex>
#include <cstddef>
#include <vector>

namespace hb::test {

using cf32 = std::complex<float>;

struct Tone {
    double offset_hz;  // from the stream's centre
    double amplitude;  // |x|: 20·log10(amplitude) dBFS
    double phase_rad = 0.0;
};

// n samples of Σ a·e^{j(2π f t + φ)} at rate fs, computed in double.
inline std::vector<cf32> make_tones(std::size_t n, double fs, const std::vector<Tone>& tones) {
    std::vector<cf32> x(n);
    for (std::size_t i = 0; i < n; ++i) {
        std::complex<double> acc = 0;
        for (const Tone& t : tones) {
            const double cycles = std::fmod(t.offset_hz * static_cast<double>(i) / fs, 1.0);
            acc += std::polar(t.amplitude, 2.0 * 3.14159265358979323846 * cycles + t.phase_rad);
        }
        x[i] = cf32(static_cast<float>(acc.real()), static_cast<float>(acc.imag()));
    }
    return x;
}

// The DFT of a complex record divided by its length: bin k holds the complex amplitude of a tone on bin k.
struct Spectrum {
    double fs = 0.0;
    std::vector<std::complex<double>> bins;

    static Spectrum of(const std::vector<cf32>& z, double fs) {
        Spectrum s;
        s.fs = fs;
        const int n = static_cast<int>(z.size());
        std::vector<cf32> in(z), out(z.size());
        fftwf_plan p = fftwf_plan_dft_1d(n, reinterpret_cast<fftwf_complex*>(in.data()),
                                         reinterpret_cast<fftwf_complex*>(out.data()), FFTW_FORWARD, FFTW_ESTIMATE);
        fftwf_execute(p);
        fftwf_destroy_plan(p);
        s.bins.resize(z.size());
        for (std::size_t k = 0; k < z.size(); ++k) s.bins[k] = std::complex<double>(out[k]) / static_cast<double>(n);
        return s;
    }
    std::size_t index(double offset_hz) const {
        const auto n = static_cast<long long>(bins.size());
        long long k = std::llround(offset_hz * static_cast<double>(n) / fs) % n;
        if (k < 0) k += n;
        return static_cast<std::size_t>(k);
    }
    // Complex amplitude of the tone at offset_hz from the record's centre.
    std::complex<double> at(double offset_hz) const { return bins[index(offset_hz)]; }
    double dbfs(double offset_hz) const { return 20.0 * std::log10(std::abs(at(offset_hz))); }
};

}  // namespace hb::test
