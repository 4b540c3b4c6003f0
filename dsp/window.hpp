// DFT windows for spectrum analysis: the coefficients, their figures of merit (Harris 1978) and the shape of
// their response, which the tone measurement and the peak search read.
//
// Windows are periodic ("DFT-even", Harris 1978): w[n] for n = 0..N−1 is the N+1-point symmetric window
// without its last sample, so its DFT has exact nulls on the bin grid. Coefficients (pinned here, and in the
// tests):
//   Hann              a = 0.5, 0.5                                  Harris 1978, Proc. IEEE 66(1):51–83
//   Blackman-Harris   a = 0.35875, 0.48829, 0.14128, 0.01168        Harris 1978, the 4-term −92 dB window
//   flat-top          a = 0.21557895, 0.41663158, 0.277263158, 0.083578947, 0.006947368
//                                                                   D'Antona & Ferrero, DSP for Measurement
//                                                                   Systems, 2006, p. 70
//   Kaiser(β)         I0(β·sqrt(1 − (2n/N − 1)²)) / I0(β)           the Kaiser window; Harris's "Kaiser-Bessel α" is
//   β/π rectangular       1
// A cosine-sum window is w[n] = Σ_k (−1)^k a_k cos(2πkn/N).
#pragma once

#include <cstddef>
#include <span>
#include <vector>

#include "dsp/setup.hpp"

namespace hb {

// The window's N samples (periodic form). kaiser_beta is used by WindowType::kaiser only.
std::vector<double> make_window(WindowType type, std::size_t n, double kaiser_beta = 9.0);

// Figures of merit of a window, defined as in Harris 1978 (Table 1):
struct WindowFigures {
    double coherent_gain = 0.0;        // Σw / N (linear; a bin-centred tone reads this amplitude)
    double enbw_bins = 0.0;            // equivalent noise bandwidth N·Σw² / (Σw)², in bins
    double scalloping_loss_db = 0.0;   // −20·log10 |W(½ bin) / W(0)|: loss for a tone half-way between bins
    double highest_sidelobe_db = 0.0;  // highest side lobe relative to the main-lobe peak (negative dB)
    double bandwidth_3db_bins = 0.0;   // full width where the response is 3.01 dB (power half) down
    double bandwidth_6db_bins = 0.0;   // full width where it is 6.02 dB (amplitude half) down
};

// Computes every figure from the samples. The highest side lobe comes from a zero-padded DFT
// (`oversample` points per bin) searched beyond the first null; this allocates and is meant for
// reports and tests, not for the per-block path.
WindowFigures window_figures(std::span<const double> w, int oversample = 64);

// Overlap correlation c(r) = Σ w[n]·w[n+s] / Σ w², s = round(r·N), the sum over the overlapping samples
// (Harris 1978, Table 1: Hann 16.7 % at 50 %).
// For white Gaussian noise the correlation between the power of one bin in two frames s samples apart is c²
// (Welch 1967), which sets how much an overlapped average reduces the variance.
double overlap_correlation(std::span<const double> w, double overlap);
// The same for a frame shift of `shift` samples.
double overlap_correlation_at(std::span<const double> w, std::size_t shift);

// Half-width of the main lobe, centre to first null, in bins: rectangular 1, Hann 2, Blackman-Harris 4,
// flat-top 5 (a K-term cosine sum is K Dirichlet kernels one bin apart: its first null is at K bins for these
// coefficient sets), Kaiser sqrt(1 + (β/π)²) (the first zero of the continuous Kaiser transform).
double mainlobe_halfwidth_bins(WindowType type, double kaiser_beta = 9.0);

// The power response of a window against frequency offset in bins, |W(ν)|² / |W(0)|², tabulated once
// (zero-padded DFT of the window) so tone fits and leakage masks need no transform per call.
// Built for a given FFT size: the shape in bins depends on N only through O(1/N²) terms, so sizes above
// 8192 share the 8192-point shape.
struct WindowResponse {
    WindowType type = WindowType::rectangular;
    double kaiser_beta = 0.0;
    double enbw_bins = 1.0;
    double mainlobe_halfwidth_bins = 1.0;
    int oversample = 32;           // table points per bin
    std::vector<double> fine;      // |W(i/oversample)|²/|W(0)|², i = 0..fine.size()−1 (|ν| up to fine_bins)
    std::vector<double> envelope;  // max of |W(ν)|²/|W(0)|² over |ν| in [d − ½, d + ½], d = 0..envelope.size()−1

    // Power response at an offset of nu bins (symmetric). Linear interpolation in the fine table; beyond it the
    // envelope (an upper bound).
    double power_at(double nu) const;
    // Upper bound of the response at |ν| ≥ d − ½ bins; beyond the table it decays as 1/d², the slowest
    // decay of these windows (rectangular), so it stays an upper bound.
    double leakage_bound(double d_bins) const;
};

WindowResponse make_window_response(WindowType type, double kaiser_beta, std::size_t fft_size);

}  // namespace hb
