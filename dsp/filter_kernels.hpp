// Per-sample filter kernels on complex-float blocks, written here rather than taken from liquid-dsp because Debian's
// liquid build is scalar and slow (../shared/platform-notes.md, "DSP throughput"). Buffers are sized once by
// init(); process() never allocates; state carries across calls until reset().
//
// The vector code is written on dsp/simd.hpp (one register wide on the build target). Every kernel is checked
// against a plain reference (or liquid-dsp) in tests/kernels_test.cpp and tests/filter_chain_test.cpp.
#pragma once

#include <complex>
#include <cstddef>
#include <vector>

#include "dsp/filter_realise.hpp"
#include "dsp/simd.hpp"

namespace hb {

using cf32 = std::complex<float>;

// Complex one-pole sections in cascade, in place: for each section y[n] = b0 x[n] + b1 x[n-1] + a1 y[n-1].
// Sections run as a wavefront: section s works on sample t − s while section s + 1 works on t − s − 1, so the
// recursions of all sections overlap (every step is one vector operation over the sections) instead of each
// sample waiting for the whole cascade.
struct PoleCascadeKernel {
    std::vector<float> coef;   // per section: b0 re/im, b1 re/im, a1 re/im
    std::vector<float> state;  // re/im of: the last input, then each section's last output
    std::size_t sections = 0;

    void init(const std::vector<PoleSection>& secs);
    void process(cf32* io, std::size_t n);
    void reset();

    // internal: the wavefront (section-major lanes), see filter_kernels.cpp
    std::vector<float> wave_;
    std::size_t groups_ = 0;
};

// Real-coefficient biquads (second-order sections) in cascade on complex samples, in place. Section k:
//   y[n] = b0 x[n] + b1 x[n-1] + b2 x[n-2] − a1 y[n-1] − a2 y[n-2]   (a0 = 1, transposed direct form II),
// the form of scipy.signal.sosfilt and liquid-dsp's iirfilt (its second-order-section form). The real and the
// imaginary parts are two independent real filters; they run as two lanes of one recursion.
struct BiquadCascadeKernel {
    struct Section {
        double b0 = 1, b1 = 0, b2 = 0, a1 = 0, a2 = 0;
    };
    std::vector<float> coef;   // per section b0 b1 b2 a1 a2
    std::vector<float> state;  // per section: w1 re/im, w2 re/im
    std::size_t sections = 0;

    void init(const std::vector<Section>& secs);
    void process(cf32* io, std::size_t n);
    void reset();
};

// FIR on planar (separate re/im) history, computing only the outputs it is asked for: every output with decimation
// 1, or one in `decimation` (the polyphase saving: no discarded output is computed). Real taps (every imaginary
// part exactly 0, as for a filter centred on its window) take a path with half the arithmetic.
//   decimation 1: outputs in vector lanes (each tap is one broadcast and one multiply-add per lane group: the
//                 loads of the input are shared by all taps' products in registers)
//   decimation > 1: taps in vector lanes, eight kept outputs at a time sharing the tap loads, tree reduction;
//                   when the decimation divides the vector width the eight also share their input loads, and
//                   symmetric taps are folded (one multiply-add per pair of taps)
struct FirKernel {
    std::size_t taps = 0;             // real length
    std::size_t padded = 0;           // length rounded up to the vector width; the extra taps are zero
    bool real_taps = false;           // every Im h == 0
    bool symmetric = false;           // real, h[k] == h[L − 1 − k] in float, L a multiple of 2W: folded decimator
    std::vector<float> hr, hi;        // taps reversed: hr[j] = Re h[padded - 1 - j]
    simd::line_vector<float> xr, xi;  // padded - 1 samples of history, then the current block (then slack)
    std::vector<float> yr, yi;        // planar outputs of one call
    std::size_t block = 0;

    void init(const std::vector<std::complex<double>>& h, std::size_t max_block);
    // Filters n <= max_block inputs. Input index t (counted from reset) is kept when `phase` is 0, and phase
    // advances modulo `decimation` with every input. Returns the number of outputs written. `in` and `out` may
    // be the same buffer.
    std::size_t process(const cf32* in, std::size_t n, cf32* out, int decimation, int& phase);
    // The same from planar input (re, im), e.g. straight from a kernel that writes planar samples.
    std::size_t process_planar(const float* re, const float* im, std::size_t n, cf32* out, int decimation, int& phase);
    void reset();

    // For a kernel that writes planar samples itself: the slots of the next n <= max_block inputs (valid until
    // the next call), then run(n, ...) filters them without a copy.
    float* input_re() { return xr.data() + padded - 1; }
    float* input_im() { return xi.data() + padded - 1; }
    // Filters the n samples already in (xr, xi) after the history (the input slots above).
    std::size_t run(std::size_t n, cf32* out, int decimation, int& phase);
};

// One phase of a two-phase (×2 or ÷2) polyphase FIR with real taps: either a single tap (a delay and a gain: the
// centre phase of a half-band filter) or a dense FIR. Works on planar streams whose current block starts at
// index `hist` of its buffers (the phase reads the hist samples before).
struct PolyphaseBranch {
    bool single = false;
    float gain = 0.0f;  // single: y[i] = gain·x[i − delay]
    std::size_t delay = 0;
    std::vector<float> g;  // dense: reversed taps, y[i] = Σ_j g[j]·x[i − (L−1) + j]
    std::size_t length() const { return single ? delay + 1 : g.size(); }
    void init(const std::vector<double>& taps);  // y[i] = Σ_j taps[j]·x[i − j]; zero taps below 1e-12 of the peak
    // y (planar, n) = or += the branch applied to the stream whose block starts at x (history before it).
    void run(const float* xr, const float* xi, std::size_t n, float* yr, float* yi, bool add) const;
};

// ×2 interpolator with real taps h at the doubled rate (gain included: an interpolator's taps sum to 2):
// out[2i + p] = Σ_j h[2j + p]·in[i − j]. The even-time and the odd-time outputs come out as separate planar
// streams (even: er/ei, odd: or_/oi, n each), the layout the mixer emulator synthesises in. A half-band design
// makes one phase a single tap: that phase is a copy.
struct Interp2Kernel {
    PolyphaseBranch even, odd;
    std::size_t hist = 0;
    std::vector<float> xr, xi;  // hist samples of history, then the block
    std::size_t block = 0;

    void init(const std::vector<double>& h, std::size_t max_block);
    void process(const cf32* in, std::size_t n, float* er, float* ei, float* or_, float* oi);
    void reset();
};

// ÷2 decimator with real taps h: y[i] = Σ_k h[k]·x[2i − k] (input sample 0 kept first), the input given as its
// even-time (x[2i]) and odd-time (x[2i + 1]) planar streams, n of each; writes n outputs. Half-band: one
// phase is a single tap.
struct Decim2Kernel {
    PolyphaseBranch even, odd;  // odd holds h[2j + 1] at delay j + 1
    std::size_t hist = 0;
    std::vector<float> er, ei, or_, oi;  // each: hist of history, then the block
    std::vector<float> yr, yi;
    std::size_t block = 0;

    void init(const std::vector<double>& h, std::size_t max_block);
    void process(const float* xer, const float* xei, const float* xor_, const float* xoi, std::size_t n, cf32* out);
    void reset();
};

// FIR whose taps are a real low-pass moved in frequency, h[i] = lp[i]·e^{j2π·shift·(i − mid)} (a band-pass or a
// one-sided filter), run as: mix down by the shift, the real low-pass, mix back up. Half the arithmetic of the
// complex-tap FIR, the same result within float rounding. The mixing phasors come from a double-precision phase
// per call (32 time lanes stepped in float within the call, at most 4096 samples: below −100 dB of error).
struct ShiftedFirKernel {
    FirKernel lowpass;
    double shift = 0.0;  // cycles per sample
    double mid = 0.0;
    double phase = 0.0;  // frac(shift·t) at the next input
    std::vector<float> ur, ui;
    std::size_t block = 0;

    void init(const std::vector<double>& lp, double shift_cycles, double mid_samples, std::size_t max_block);
    // n <= max_block (at most 4096 per call is accurate: larger blocks are split). in and out may be the same.
    void process(const cf32* in, std::size_t n, cf32* out);
    void reset();
};

// Planar/interleaved conversions (vectorised; any n).
void deinterleave(const cf32* in, std::size_t n, float* re, float* im);
void interleave(const float* re, const float* im, std::size_t n, cf32* out);

}  // namespace hb
