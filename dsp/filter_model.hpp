// A filter's own response: what the part does at ANY absolute frequency, independent of any IQ stream. The plan
// engine and the spurious-response sweep use this view for image rejection far outside every capture; the
// streaming realisation (dsp/filter_realise) is built from it and checked against it.
//
//   analog types (butterworth, chebyshev1, chebyshev2, elliptic, bessel): the analog prototype through the
//     standard low-pass -> band-pass (or low-pass) transformation, evaluated exactly at s = j 2 pi f. A real analog
//     band-pass also passes -center_hz, which matters for envelope windows that straddle 0 Hz.
//   fir: a digital filter exists only at a sample rate, on a window. It is designed for the window it runs on
//     (ModelOptions::fir_window); without one, for a window centred on the filter at 4x its stop-band edge offset.
//     The response is the design's (periodic) DTFT across that window; outside it (where the stream holds nothing
//     and a digital filter has no meaning) the model reports the requested stop-band attenuation, the level the
//     design guarantees.
//   touchstone: measured S21, interpolated (see S21Table), held at the end values outside the measured range.
// Insertion loss and `sections` (identical filters in series) are part of the response; the loss is per section.
#pragma once

#include <complex>
#include <optional>
#include <string>
#include <vector>

#include "dsp/filter_fir.hpp"
#include "dsp/filter_prototype.hpp"
#include "dsp/setup.hpp"
#include "dsp/touchstone.hpp"

namespace hb {

// An IQ stream whose 0 Hz sits at absolute frequency center_hz, sampled at sample_rate_hz: it holds the
// absolute band center_hz +- sample_rate_hz / 2.
struct EnvelopeWindow {
    double center_hz = 0.0;
    double sample_rate_hz = 0.0;
};

enum class ModelKind { none, analog, fir, measured };

struct FilterModel {
    FilterSpec spec;
    std::string name;  // where it came from, e.g. "if_filter[0]"; used in messages and reports
    ModelKind kind = ModelKind::none;
    double loss = 1.0;  // amplitude factor of one section's insertion loss

    // analog
    AnalogPrototype proto;
    FrequencyMap map;
    // fir: real low-pass taps at the window rate, moved to fir_shift_hz (centre of a band-pass, 0 for a low-pass)
    FirLowpass fir;
    EnvelopeWindow fir_window;  // the window it is designed for
    double fir_shift_hz = 0.0;
    // touchstone
    S21Table measured;

    // One section, with its insertion loss.
    std::complex<double> section_response(double f_hz) const;
    double section_group_delay(double f_hz) const;  // seconds
    // All sections in series.
    std::complex<double> response(double f_hz) const;
    double group_delay(double f_hz) const;
    // Largest |section_response| anywhere (the pass-band peak), for relative levels.
    double section_peak() const;

    // Where the design or data defines the response (the whole axis for analog types).
    double valid_lo_hz() const;
    double valid_hi_hz() const;
    // Nominal pass-band: its centre and its edges (band-pass: center +- bandwidth/2; low-pass: 0 .. bandwidth).
    double nominal_center_hz() const;
    double nominal_lo_hz() const;
    double nominal_hi_hz() const;
    // Distance from the nominal centre where the designed stop-band begins (Chebyshev II, elliptic, FIR), if any.
    std::optional<double> stop_edge_offset_hz() const;
};

struct ModelOptions {
    std::optional<EnvelopeWindow> fir_window;    // FIR: the window it runs on; none: the default (see above)
    const TouchstoneData* touchstone = nullptr;  // the data of a touchstone filter (read in devices/)
};

// Builds the model of one filter. `name` (a key path such as "rf_filter") prefixes every error. Throws InputError
// for a spec that cannot be designed (the FIR needs too many taps, a touchstone filter without data...).
FilterModel make_filter_model(const FilterSpec& spec, const std::string& name, const ModelOptions& opt = {});

// The own response of a filter at an absolute frequency (all sections, insertion loss included).
std::complex<double> filter_response(const FilterModel& m, double f_hz);
// Convenience for the analog and FIR types (a touchstone spec needs its data: use a model).
std::complex<double> filter_response(const FilterSpec& spec, double f_hz);

// Several filters in series (the IF chain, or RF filter then IF filters for the plan).
std::complex<double> cascade_response(const std::vector<FilterModel>& ms, double f_hz);
double cascade_group_delay(const std::vector<FilterModel>& ms, double f_hz);

// The FIR transition width a spec implies: transition_hz, or a quarter of the bandwidth when that is 0.
double fir_transition_hz(const FilterSpec& spec);

}  // namespace hb
