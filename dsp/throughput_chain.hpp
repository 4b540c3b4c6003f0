// The default chain of `hetbench bench`: the per-sample work of a receiver bench in its plainest form, so that its
// throughput can be compared with the same chain written in numpy/scipy (tests/bench/chain_numpy.py) and built
// from liquid-dsp primitives (LiquidChain below):
//
//   x ─► LO with K = 8 harmonics, 3rd-order nonlinearity, IQ imbalance, DC (LoMixKernel)
//     ─► 128-tap low-pass FIR decimating by 8 (FirKernel, real taps)
//     ─► Welch, 4096 points, Blackman-Harris, 50 % overlap (Welch)
//
// Blocked: every block of 2048 input samples goes through all three stages while it is in L1/L2; the input is read
// once from memory. make allocates; process never does.
#pragma once

#include <complex>
#include <cstddef>
#include <memory>
#include <span>
#include <vector>

#include "dsp/filter_kernels.hpp"
#include "dsp/lo_mix_kernel.hpp"
#include "dsp/spectrum.hpp"

namespace hb {

struct ThroughputChainSpec {
    int harmonics = 8;          // K
    double lo_cycles = 0.0371;  // f_LO / fs
    double a3 = -0.02;          // u = x·(1 + a3·|x|²)
    double iq_gain_db = 0.3;    // IQ gain imbalance
    double iq_phase_deg = 1.5;  // IQ phase error
    std::complex<double> dc{1e-3, -5e-4};
    int fir_taps = 128;
    int decimation = 8;
    AnalyzerSpec analyzer{};  // 4096 points, Blackman-Harris, 50 % overlap (the defaults)
};

// The harmonic amplitudes of the default LO: a ±1 switch with a 0.505 duty cycle (odd harmonics 4/(πk), small
// even ones), each with a phase of 0.1·k rad (a finite edge time), as one list g_1..g_K.
std::vector<std::complex<double>> default_lo_harmonics(int k);
// The chain's decimation filter: Kaiser (80 dB) windowed sinc of the given length, cutoff at the output Nyquist.
std::vector<double> throughput_fir_taps(int taps, int decimation);

class ThroughputChain {
  public:
    static constexpr std::size_t kBlock = 2048;

    // Throws InputError for a spec the kernels cannot run (K < 1, taps < 1, decimation < 1, bad analyzer).
    static ThroughputChain make(const ThroughputChainSpec& spec);

    void process(std::span<const std::complex<float>> in);
    void reset();
    // The decimated output of the last block (valid until the next process call) and the spectrum.
    std::span<const std::complex<float>> last_output() const { return {dec_.data(), dec_count_}; }
    const Welch& welch() const { return *welch_; }
    const ThroughputChainSpec& spec() const { return spec_; }

    // The stages, for per-stage benchmarks.
    LoMixKernel& lo_mix() { return lo_; }
    FirKernel& fir() { return fir_; }

  private:
    ThroughputChainSpec spec_;
    LoMixKernel lo_;
    FirKernel fir_;
    int phase_ = 0;
    std::unique_ptr<Welch> welch_;
    std::vector<std::complex<float>> dec_;
    std::size_t dec_count_ = 0;
};

// The same chain from liquid-dsp 1.5 primitives, as a careful user of the library would build it: one nco_crcf per
// harmonic mixing whole blocks up (nco_crcf_mix_block_up), the nonlinearity and the IQ imbalance as plain loops
// (liquid has no block for them), firdecim_crcf_execute_block and spgramcf_write. Output equal to ThroughputChain's
// within float rounding and liquid's NCO table (tests/kernels_test.cpp).
class LiquidChain {
  public:
    static LiquidChain make(const ThroughputChainSpec& spec);
    LiquidChain();
    ~LiquidChain();
    LiquidChain(LiquidChain&&) noexcept;
    LiquidChain& operator=(LiquidChain&&) noexcept;

    void process(std::span<const std::complex<float>> in);
    std::span<const std::complex<float>> last_output() const;

  private:
    struct Impl;
    std::unique_ptr<Impl> impl_;
};

}  // namespace hb
