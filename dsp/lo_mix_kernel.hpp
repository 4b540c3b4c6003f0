// LO synthesis, mixing and receiver impairments in one pass over complex-float samples (the per-sample kernel of
// the throughput chain, dsp/throughput_chain.hpp):
//
//   L(t) = Σ_{k=1..K} g_k·p^k,  p = e^{j2π·ν·t}             an LO with K harmonics (ν = f_LO / fs, cycles/sample)
//   u    = x·(1 + a3·|x|²)                                  a 3rd-order nonlinearity (the x³ term's in-band part)
//   z    = u·L
//   y    = μ·z + η·z* + dc                                   IQ imbalance (gain g, phase φ) and a DC offset:
//          μ = (1 + g·e^{−jφ})/2, η = (1 − g·e^{jφ})/2, i.e. I' = I, Q' = g·(Q·cos φ − I·sin φ)
//
// The harmonic sum is evaluated by Clenshaw's recurrence in p for K <= 12 on targets with fused multiply-add (one
// real-by-complex multiply-add per harmonic, lo_mix_kernel.cpp) and by Horner's rule otherwise (one complex
// multiply-add per harmonic). p comes from
// a double-precision phase accumulator re-seeded every block of 2048 samples into time lanes (4 vectors: lane l
// serves every (4W)-th sample) that step with a float phasor: a float recurrence alone drifts (platform notes);
// over 2048 samples the lanes take 32–128 steps, below −100 dBc of error (tests/kernels_test.cpp).
// init allocates; process never does.
#pragma once

#include <complex>
#include <cstddef>
#include <cstdint>
#include <vector>

namespace hb {

struct LoMixSpec {
    double lo_cycles = 0.0;                      // ν = f_LO / fs
    std::vector<std::complex<double>> harmonic;  // g_1 .. g_K (index k − 1); K ≥ 1
    double a3 = 0.0;                             // u = x·(1 + a3·|x|²)
    double iq_gain_db = 0.0;                     // g = 10^(dB/20)
    double iq_phase_deg = 0.0;                   // φ
    std::complex<double> dc{0.0, 0.0};
};

// μ and η of the IQ-imbalance model above.
void iq_imbalance_coefficients(double gain_db, double phase_deg, std::complex<double>& mu, std::complex<double>& eta);

struct LoMixKernel {
    static constexpr std::size_t kBlock = 2048;  // samples per re-seed

    // Throws hb::InputError for an empty harmonic list or non-finite numbers.
    void init(const LoMixSpec& spec);
    // y for n input samples (any n), planar out. `next`, when given, is the input the caller will pass next (at
    // least n samples of it): the kernel prefetches it as it goes.
    void process(const std::complex<float>* in, std::size_t n, float* out_re, float* out_im,
                 const std::complex<float>* next = nullptr);
    void reset();

    // The LO phase ν·t (cycles, [0, 1)) of the next input sample, from the double accumulator.
    double phase() const { return phase_; }

    // internal
    LoMixSpec spec_;
    std::vector<float> g_;       // harmonic coefficients g_K .. g_1 as re, im pairs
    float m_[4] = {1, 0, 0, 1};  // y = [m0 m1; m2 m3]·(zr, zi) + dc
    float dc_[2] = {0, 0};
    float a3_ = 0.0f;
    double phase_ = 0.0;
    std::vector<double> lane_re_, lane_im_;           // e^{j2πν·l}, l < lanes
    float step_re_ = 1.0f, step_im_ = 0.0f;           // e^{j2πν·lanes}
    std::vector<float> tail_in_, tail_re_, tail_im_;  // a partial last lane group goes through these
};

}  // namespace hb
