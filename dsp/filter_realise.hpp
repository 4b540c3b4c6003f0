// The digital realisation of one filter section on an envelope window (centre f_c, rate fs): coefficients that the
// streaming kernels run, chosen so that the stream sees the filter's own response (dsp/filter_model) at every
// frequency of the window, within a stated tolerance.
//
// Two forms, tried in this order:
//  1. Complex one-pole sections (IIR, analog types only). The analog prototype is moved onto the window by a
//     bilinear (Moebius) map z -> s that sends three window frequencies exactly onto prototype frequencies -1, 0,
//     +1 (the band edges and the geometric centre of a band-pass; -edge, 0, +edge of a low-pass). That is the
//     "shifted low-pass prototype with pre-warping" in one step, and it realises only the band the window holds:
//     an order-n prototype becomes n complex poles (a real band-pass of order 2n needs 2n). On a complex envelope
//     the response has no conjugate symmetry, so each complex pole is its own section: the complex counterpart of
//     a real second-order section (which is a conjugate pole pair). Exact at the three frequencies; elsewhere the
//     map's frequency warping grows towards the window edges, so this form fits narrow filters on wide windows.
//     A real band-pass also passes -center_hz; when the window reaches that mirror band, a second cascade mapped
//     onto it runs in parallel, less a direct path for the stop-band floor both cascades carry (the two skirts
//     must otherwise be negligible where they overlap, which the check verifies).
//  2. Frequency-sampled FIR. The own response is sampled on a fine grid across the window and transformed to an
//     impulse response, truncated with a taper and a short pre-delay; the length doubles until the fit holds.
//     It fits any shape (wide fractional bandwidths, both band-pass images of a window that straddles 0 Hz,
//     measured data), at the cost of taps. Touchstone filters always use it, with linear or as-measured phase.
//  FIR-type filters are already digital: their taps (designed at the window rate) are used as they are.
//
// Tolerance (checked on an even grid over the window, plus a dense grid over the pass-band and skirts for the
// sections). A digital response is periodic, so at the +-fs/2 seam it must get from one edge's value to the
// other's: the outer 0.5 % of the window at each edge is left out of the check, and the outer 5 % when the own
// response has not fallen below the floor below at the window edges (a filter wider than its window; the
// frequency-sampled FIR blends across that seam so that it stays short):
//     | |H_real| - |H_own| |  <=  0.05 dB of |H_own|  +  1e-4 (-80 dB) of the section's peak
// i.e. 0.05 dB in the pass-band, 0.1 dB at -30 dB, 0.3 dB at -50 dB, 0.9 dB at -60 dB; where the own response is
// below about -80 dB the realisation only has to stay below about -74 dB. This is the "agree where (1) is above
// -80 dB" rule in a form that equiripple stop-band nulls (which any realisation fills or moves slightly) pass.
// Phase: the sections follow the analog phase; the frequency-sampled FIR adds a bulk delay of `delay_samples`
// (reported); the linear-phase touchstone fit replaces the measured phase by a pure delay.
#pragma once

#include <complex>
#include <string>
#include <vector>

#include "dsp/filter_model.hpp"

namespace hb {

// y[n] = b0 x[n] + b1 x[n-1] + a1 y[n-1]
struct PoleSection {
    std::complex<double> b0, b1, a1;
};

enum class RealisationForm { identity, pole_sections, fir };

struct Realisation {
    RealisationForm form = RealisationForm::identity;
    std::vector<PoleSection> sections;         // pole_sections: one filter section
    std::vector<PoleSection> mirror_sections;  // pole_sections: the -center_hz band, in parallel (may be empty)
    // With a mirror band: a direct path added to the two cascades. Each cascade tends to the prototype's
    // response at infinity (non-zero for even-order Chebyshev II / elliptic) away from its band, so the sum
    // counts that floor twice; the direct path takes one away.
    std::complex<double> direct = 0.0;
    std::vector<std::complex<double>> taps;  // fir: one filter section (complex taps on the envelope)
    int delay_samples = 0;                   // bulk delay the realisation adds to the own response's phase
    double fit_error_db = 0;     // largest |dB difference| to the own response where that is within 60 dB of its peak
    double tolerance_ratio = 0;  // largest error / allowed error over the window: <= 1 means within tolerance
    double edge_guard = 0;       // fraction of the rate left out of the check at each window edge
    bool within_tolerance() const { return tolerance_ratio <= 1.0; }
    std::string why;  // one line: the form chosen and why
    // Response of the realised section at offset nu_hz from the window centre, without the bulk delay.
    std::complex<double> response(double nu_hz, double fs) const;
};

inline constexpr double kRealiseRelativeDb = 0.05;     // pass-band part of the tolerance
inline constexpr double kRealiseFloorDb = -80.0;       // absolute part, relative to the section's peak
inline constexpr double kRealiseEdgeGuard = 0.005;     // fraction of fs left out of the check at each window edge
inline constexpr double kRealiseWideEdgeGuard = 0.05;  // the same when the response is above the floor there

// The edge guard for a filter on a window (kRealiseEdgeGuard or kRealiseWideEdgeGuard).
double realise_edge_guard(const FilterModel& m, const EnvelopeWindow& w);
inline constexpr int kMaxRealisedTaps = 1 << 14;

// Realises one section of `m` on `w`. FIR-type models must be designed for `w` (ModelOptions::fir_window; the
// chain sees to it). Throws InputError for an FIR model designed for another window.
Realisation realise_filter(const FilterModel& m, const EnvelopeWindow& w);

// Design helpers, exposed for tests.
// The pole-section candidate; empty `sections` when the three match frequencies are not inside the window.
Realisation realise_pole_sections(const FilterModel& m, const EnvelopeWindow& w);
// The frequency-sampled FIR candidate of `taps` taps (linear_phase: magnitude with a centred delay).
Realisation realise_sampled_fir(const FilterModel& m, const EnvelopeWindow& w, int taps, bool linear_phase);

}  // namespace hb
