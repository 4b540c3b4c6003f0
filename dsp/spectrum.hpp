// The calibrated spectrum: a Welch estimate (windowed, overlapped, averaged periodograms; Welch 1967) of a
// stream of complex samples fed in blocks of any size.
//
// Scaling (design.md §4): power[k] is the power of bin k normalised for the window's coherent gain,
//   power[k] = |Σ_n w[n]·x[n]·e^{−j2πkn/N}|² / (Σ_n w[n])²,
// so a tone A·e^{j2πft} centred on a bin reads A² (0 dBFS for |z| = 1 full scale), and white noise of
// variance σ² = E|z|² reads σ²·ENBW/N per bin on average: its density is power / RBW = σ²/fs per Hz with
// RBW = ENBW·fs/N. Bins are centred (fftshift): bin k is at centre_hz + (k − N/2)·fs/N, k = 0..N−1.
// dBm = dBFS + calibration_db (when the unit is dBm).
#pragma once

#include <complex>
#include <cstdint>
#include <span>
#include <vector>

#include "dsp/fft.hpp"
#include "dsp/setup.hpp"

namespace hb {

struct Spectrum {
    AnalyzerSpec spec;            // window, size, overlap, averaging, unit and calibration that made it
    double center_hz = 0.0;       // absolute frequency of the stream's 0 Hz
    double sample_rate_hz = 0.0;  // = span
    int hop = 0;                  // frame advance in samples (N·(1 − overlap), rounded)
    double enbw_bins = 1.0;       // window ENBW in bins
    double coherent_gain = 1.0;   // window Σw/N
    double rbw_hz = 0.0;          // ENBW·fs/N
    std::int64_t frames = 0;    // periodograms in this estimate (rms: ≤ averages; holds and exponential: since reset)
    std::vector<double> power;  // per bin, linear, tone-calibrated (see above), fftshifted

    int size() const { return static_cast<int>(power.size()); }
    double bin_hz() const { return sample_rate_hz / static_cast<double>(power.size()); }
    double freq_of_bin(double k) const { return center_hz + (k - static_cast<double>(power.size() / 2)) * bin_hz(); }
    double bin_of_freq(double hz) const { return (hz - center_hz) / bin_hz() + static_cast<double>(power.size() / 2); }
    double low_hz() const { return freq_of_bin(0.0); }
    double high_hz() const { return freq_of_bin(static_cast<double>(power.size())); }  // exclusive
    // Offset added to dBFS for the spectrum's unit: calibration_db when dBm, else 0.
    double unit_offset_db() const { return spec.unit == LevelUnit::dbm ? spec.calibration_db : 0.0; }
    // dB in the spectrum's unit (dBFS or dBm) of a linear, tone-calibrated power.
    double level_db(double p) const;
    // Density in dBFS/Hz (or dBm/Hz) of a mean noise power per bin.
    double density_db_per_hz(double power_per_bin) const;
};

// Welch estimator. Life cycle: make → push (any block sizes) → read → reset.
//   rms          linear average of `averages` periodograms; when a set is complete it is published and the next
//                set starts (read returns the last complete set, or the partial one before the first completes)
//   exponential  p ← p + (x − p)/averages per frame (the first frame initialises), continuing
//   max-hold / min-hold  bin-wise maximum / minimum over every frame since reset
// push() does not allocate: the FFT plan, the window and every buffer are made by make().
class Welch {
  public:
    // Throws InputError naming the analyzer key for a size that is not a power of two in
    // kMinFftSize..kMaxFftSize, an overlap outside [0, 0.95], averages < 1, or a rate that is not positive.
    // `effort` plans the FFT. estimate (the default) gives the same plan in every process, so the same input gives
    // bit-identical spectra run to run; measure lets FFTW time candidate algorithms (faster, but the choice, and
    // with it the last bits of every bin, can change from one process to the next). Sizes above 65536 always
    // estimate: measuring them costs seconds.
    static Welch make(const AnalyzerSpec& spec, double center_hz, double sample_rate_hz,
                      Fft::Effort effort = Fft::Effort::estimate);

    void push(std::span<const std::complex<float>> block);
    void reset();

    // The current estimate (see the averaging modes above). `out` is resized on first use only.
    void read(Spectrum& out) const;
    Spectrum read() const;

    // Frames in the current estimate, and complete rms sets published since reset.
    std::int64_t frames() const;
    std::int64_t completed_sets() const { return sets_; }
    // True once the estimate holds `averages` frames (any mode).
    bool ready() const;
    const AnalyzerSpec& spec() const { return spec_; }
    int hop() const { return hop_; }

  private:
    Welch() = default;
    void frame();

    AnalyzerSpec spec_;
    double center_hz_ = 0.0, rate_hz_ = 0.0;
    int n_ = 0, hop_ = 0;
    double enbw_bins_ = 1.0, coherent_gain_ = 1.0, scale_ = 1.0;
    std::vector<float> window_;
    std::vector<std::complex<float>> ring_;  // the last n_ samples; ring_[pos_] is the oldest once full
    std::size_t pos_ = 0;
    std::size_t need_ = 0;           // samples still needed before the next frame
    std::vector<double> acc_;        // running estimate (fftshifted)
    std::vector<double> published_;  // rms: the last complete set
    std::int64_t acc_frames_ = 0, sets_ = 0;
    Fft fft_;
};

// Converts a spectrum to dB in its unit, bin by bin (for plots). `out` must have spectrum.size() entries.
void spectrum_to_db(const Spectrum& s, std::span<float> out);

}  // namespace hb
