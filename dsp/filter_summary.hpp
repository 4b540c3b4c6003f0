// Responses on a frequency grid (magnitude, phase, group delay) and the summary figures of a filter or a cascade:
// insertion loss, -3 dB and -60 dB bandwidths, shape factor, pass-band ripple, stop-band rejection.
//
// Definitions (levels relative to the response's peak):
//   insertion loss       loss at the peak of the pass-band (the minimum loss)
//   -3 dB edges          the first frequencies, walking out from the peak on each side, where the response is
//                        3.000 dB below the peak (not the half-power 3.010 dB: a Butterworth's -3 dB width is a
//                        little under its nominal half-power width)
//   -60 dB edges         the outermost frequencies (within 1000 nominal widths, or the data) where the response is
//                        still within 60 dB of the peak: beyond them it stays at least 60 dB down, so a stop-band
//                        whose nulls dip past -60 dB between higher lobes does not count
//   bandwidths           upper - lower edge; a low-pass reports 0 Hz as its lower edge and its upper edge as the
//                        bandwidth. NaN: not reached (a 50 dB stop-band floor never reaches -60 dB; data end first)
//   shape factor         -60 dB bandwidth / -3 dB bandwidth
//   pass-band ripple     the peak minus the lowest point between the outermost local maxima inside the -3 dB band
//                        (0 for a response that falls monotonically from a single peak)
//   stop-band rejection  the least attenuation over the stop-band, i.e. beyond +-stop_offset from the centre: the
//                        design's own stop-band edge from its nominal centre where it has one (Chebyshev II,
//                        elliptic, FIR), else twice the -3 dB bandwidth from the centre of the -3 dB band (our
//                        convention). Searched out to 50 -3 dB bandwidths or the end of the data.
#pragma once

#include <complex>
#include <functional>
#include <optional>
#include <vector>

#include "dsp/filter_model.hpp"

namespace hb {

struct ResponsePoint {
    double f_hz = 0.0;
    double mag_db = 0.0;
    double phase_deg = 0.0;  // wrapped to (-180, 180]
    double group_delay_s = 0.0;
};

using ResponseFn = std::function<std::complex<double>(double)>;
using DelayFn = std::function<double(double)>;

std::vector<ResponsePoint> response_curve(const ResponseFn& h, const DelayFn& gd, const std::vector<double>& grid_hz);

struct FilterSummary {
    bool lowpass = false;
    double peak_hz = 0.0;
    double insertion_loss_db = 0.0;
    double lo3_hz = 0.0, hi3_hz = 0.0, bw3_hz = 0.0;
    double lo60_hz = 0.0, hi60_hz = 0.0, bw60_hz = 0.0;
    double shape_factor = 0.0;
    double ripple_db = 0.0;
    double stop_offset_hz = 0.0;  // the stop-band starts this far from the -3 dB centre
    double stop_rejection_db = 0.0;
    double stop_worst_hz = 0.0;  // where the least rejection is
};

// What the search needs to know about a response.
struct SummaryHints {
    bool lowpass = false;
    double center_hz = 0.0;  // nominal centre (0 for a low-pass)
    double width_hz = 0.0;   // nominal pass-band width (low-pass: its edge)
    double valid_lo_hz = -std::numeric_limits<double>::infinity();
    double valid_hi_hz = std::numeric_limits<double>::infinity();
    std::optional<double> stop_offset_hz;
};

FilterSummary summarise_response(const ResponseFn& h, const SummaryHints& hints);
FilterSummary summarise(const FilterModel& m);
// Filters in series (typically the IF filters); the narrowest nominal pass-band guides the search.
FilterSummary summarise(const std::vector<FilterModel>& cascade);

}  // namespace hb
