// Per-sample filter kernels on complex-float blocks, written here rather than taken from liquid-dsp because Debian's
// liquid build is scalar and slow (../shared/platform-notes.md, "DSP throughput"). Buffers are sized once by
// init(); process() never allocates; state carries across calls until reset().
#pragma once

#include <complex>
#include <cstddef>
#include <vector>

#include "dsp/filter_realise.hpp"

namespace hb {

using cf32 = std::complex<float>;

// Complex one-pole sections in cascade, in place: for each section y[n] = b0 x[n] + b1 x[n-1] + a1 y[n-1].
// All sections advance once per sample, so successive sections' recurrences overlap in the CPU pipeline.
struct PoleCascadeKernel {
    std::vector<float> coef;   // per section: b0 re/im, b1 re/im, a1 re/im
    std::vector<float> state;  // re/im of: the last input, then each section's last output
    std::size_t sections = 0;

    void init(const std::vector<PoleSection>& secs);
    void process(cf32* io, std::size_t n);
    void reset();
};

// FIR with complex taps on planar (separate re/im) history, computing only the outputs it is asked for: every
// output with decimation 1, or one in `decimation` (the polyphase saving: no discarded output is computed).
struct FirKernel {
    std::size_t taps = 0;       // real length
    std::size_t padded = 0;     // length rounded up to the vector width; the extra taps are zero
    std::vector<float> hr, hi;  // taps reversed: hr[j] = Re h[padded - 1 - j]
    std::vector<float> xr, xi;  // padded - 1 samples of history, then the current block
    std::size_t block = 0;

    void init(const std::vector<std::complex<double>>& h, std::size_t max_block);
    // Filters n <= max_block inputs. Input index t (counted from reset) is kept when `phase` is 0, and phase
    // advances modulo `decimation` with every input. Returns the number of outputs written. `in` and `out` may
    // be the same buffer.
    std::size_t process(const cf32* in, std::size_t n, cf32* out, int decimation, int& phase);
    void reset();
};

}  // namespace hb
