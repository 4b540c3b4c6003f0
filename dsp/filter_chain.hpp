// The runtime filter chain: filters in series on one envelope window, then integer decimation, with a gain.
// Built once (designs and realisations happen in make_filter_chain); process() runs blocks with no allocation and
// carries state across calls; reset() returns to the initial state. The RF filter runs through the same code on
// the RF window (one filter, decimation 1).
//
// Decimation: only the kept outputs of the last stage are computed (with an FIR last stage that is the polyphase
// saving). The last stage decimates when it is an FIR-type filter (the user's own decimation filter). Otherwise
// (an IIR-type or measured last filter, or no filter) an anti-alias FIR is appended automatically: Kaiser, pass-band
// +-0.4 of the output rate, stop-band from +-0.6 of the output rate, 100 dB, so anything that aliases onto the inner
// +-0.4 of the output band is at least 100 dB down. The output keeps input samples 0, D, 2D, ... counted from reset().
#pragma once

#include <complex>
#include <string>
#include <vector>

#include "dsp/filter_kernels.hpp"
#include "dsp/filter_model.hpp"
#include "dsp/filter_realise.hpp"

namespace hb {

struct ChainOptions {
    EnvelopeWindow window;  // the input stream
    int decimation = 1;
    double gain_db = 0.0;          // applied once, at the input
    std::size_t max_block = 4096;  // internal block size; any n can be passed to process()
};

// One stage as run: a filter section (a filter with sections = 2 gives two stages) or the anti-alias FIR.
struct ChainStage {
    std::string label;  // e.g. "if_filter[0]", "if_filter[0] section 2", "anti-alias"
    Realisation realisation;
    bool decimates = false;
    // kernels
    PoleCascadeKernel main, mirror;
    FirKernel fir;
};

struct FilterChain {
    EnvelopeWindow input;
    EnvelopeWindow output;  // same centre, rate / decimation
    int decimation = 1;
    float gain = 1.0f;
    std::vector<ChainStage> stages;

    // Filters n input samples into out, which needs room for max_output(n) samples; returns the number written.
    // in and out may be the same buffer.
    std::size_t process(const cf32* in, std::size_t n, cf32* out);
    std::size_t max_output(std::size_t n) const { return n / static_cast<std::size_t>(decimation) + 1; }
    void reset();

    // The realised response at an absolute frequency of the input window, gain and every stage included, bulk
    // delays included (see delay_samples()).
    std::complex<double> response(double f_hz) const;
    // The bulk delay (input samples) the realisations add on top of the own responses' group delay.
    int delay_samples() const;

    // internal
    std::vector<cf32> buf_, tmp_;
    std::size_t block_ = 0;
    int phase_ = 0;
};

// Designs, realises and builds the chain. FIR-type models are redesigned at the window rate. Throws InputError
// (naming the filter) when a filter cannot run on the window.
FilterChain make_filter_chain(const std::vector<FilterModel>& filters, const ChainOptions& opt);

// The automatic anti-alias filter's design for a decimation (exposed for reports and tests), at the input rate.
FirLowpass anti_alias_design(int decimation);

}  // namespace hb
