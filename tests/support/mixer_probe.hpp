// Helpers for the LO and mixer tests: test signals made of complex tones, running the emulator block by block,
// a plain FFT whose bins are read directly, and a Welch density.
// Tone levels: every test puts its tones exactly on bins (an integer number of cycles in the record), so the
// rectangular window has no leakage and a bin reads the tone's complex amplitude exactly (rectangular window:
// coherent gain 1, Harris 1978, Proc. IEEE 66(1), Table 1).
#pragma once

#include <fftw3.h>

#include <algorithm>
#include <cmath>
#include <complex>
#include <cstddef>
#include <cstdint>
#include <span>
#include <vector>

#include "dsp/mixer_emulator.hpp"

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

inline EmulatorConfig emulator_config(double rf_center, double fs, double out_center, double occupied,
                                      std::uint64_t seed = 1) {
    EmulatorConfig c;
    c.rf_center_hz = rf_center;
    c.sample_rate_hz = fs;
    c.output_center_hz = out_center;
    c.rf_occupied_hz = occupied;
    c.seed = seed;
    return c;
}

// Runs x through the emulator in blocks of `block` samples.
inline std::vector<cf32> emulate(MixerEmulator& em, const std::vector<cf32>& x, std::size_t block = 4096) {
    std::vector<cf32> y(x.size());
    for (std::size_t pos = 0; pos < x.size(); pos += block) {
        const std::size_t n = std::min(block, x.size() - pos);
        em.process(std::span<const cf32>(x.data() + pos, n), std::span<cf32>(y.data() + pos, n));
    }
    return y;
}
inline std::vector<cf32> emulate(const MixerParams& p, const EmulatorConfig& cfg, const std::vector<cf32>& x,
                                 std::size_t block = 4096) {
    MixerEmulator em = MixerEmulator::make(p, cfg);
    return emulate(em, x, block);
}

// For periodic records (every tone on an exact bin of the record): runs the record through twice and returns the
// second pass, so the emulator's own transient (the positive-frequency FIR of a real IF window that holds 0 Hz)
// has settled and the DFT of the result shows the steady state.
inline std::vector<cf32> emulate_settled(MixerEmulator& em, const std::vector<cf32>& x, std::size_t block = 4096) {
    (void)emulate(em, x, block);
    return emulate(em, x, block);
}
inline std::vector<cf32> emulate_settled(const MixerParams& p, const EmulatorConfig& cfg, const std::vector<cf32>& x,
                                         std::size_t block = 4096) {
    MixerEmulator em = MixerEmulator::make(p, cfg);
    return emulate_settled(em, x, block);
}

// Welch estimate of the two-sided power density (per Hz) of a complex record: periodic Hann frames of nfft
// with 50 % overlap, density scaling |X|²/(fs·Σw²) (Harris 1978; reference-values W11). Bin k is k·fs/nfft.
inline std::vector<double> welch_density(const std::vector<cf32>& z, double fs, int nfft) {
    const auto len = static_cast<std::size_t>(nfft);
    std::vector<cf32> buf(len);
    fftwf_plan p = fftwf_plan_dft_1d(nfft, reinterpret_cast<fftwf_complex*>(buf.data()),
                                     reinterpret_cast<fftwf_complex*>(buf.data()), FFTW_FORWARD, FFTW_ESTIMATE);
    std::vector<double> w(len), psd(len, 0.0);
    double s2 = 0;
    for (std::size_t i = 0; i < len; ++i) {
        w[i] = 0.5 - 0.5 * std::cos(2.0 * 3.14159265358979323846 * static_cast<double>(i) / nfft);
        s2 += w[i] * w[i];
    }
    int frames = 0;
    for (std::size_t start = 0; start + len <= z.size(); start += len / 2) {
        for (std::size_t i = 0; i < len; ++i) buf[i] = z[start + i] * static_cast<float>(w[i]);
        fftwf_execute(p);
        for (std::size_t k = 0; k < len; ++k) psd[k] += std::norm(std::complex<double>(buf[k]));
        ++frames;
    }
    fftwf_destroy_plan(p);
    for (auto& v : psd) v /= frames * fs * s2;
    return psd;
}

// Mean of the density over the bins within ±half_bins of offset_hz.
inline double density_near(const std::vector<double>& psd, double fs, double offset_hz, int half_bins) {
    const auto n = static_cast<long long>(psd.size());
    const long long k0 = std::llround(offset_hz * static_cast<double>(n) / fs);
    double acc = 0;
    for (long long d = -half_bins; d <= half_bins; ++d) acc += psd[static_cast<std::size_t>(((k0 + d) % n + n) % n)];
    return acc / (2 * half_bins + 1);
}

}  // namespace hb::test
