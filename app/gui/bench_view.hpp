// What the bench window shows, computed from the Setup and the latest Frame with no GL or ImGui: the markers of
// every predicted line at the probe point (with the worked-out numbers of its tooltip) and the plan views (the
// plan, the level model, the filter responses, the LO waveform and its harmonics, the tuning range). The panels
// only draw these; tests can check them without a display.
#pragma once

#include <string>
#include <utility>
#include <vector>

#include "dsp/bench_model.hpp"
#include "dsp/filter_summary.hpp"
#include "dsp/lo.hpp"
#include "dsp/measure.hpp"
#include "dsp/plan.hpp"
#include "dsp/setup.hpp"
#include "dsp/signal_chain.hpp"
#include "pipeline/pipeline.hpp"

namespace hb::gui {

// analyze_plan's result type (named here once, whatever the plan module calls it).
using PlanResult = decltype(analyze_plan(std::declval<const FrequencyPlan&>(), std::declval<const PlanModel&>()));

// A filter response sampled for a plot.
struct ResponseCurve {
    bool valid = false;
    std::string title;  // "RF filter: elliptic band-pass", "IF chain: 2 filters"
    std::string error;  // why there is no curve (a missing Touchstone file, ...)
    std::vector<double> f_hz;
    std::vector<float> mag_db;   // relative to nothing: the response as is (insertion loss included)
    std::vector<float> delay_s;  // group delay
    FilterSummary summary;
};

// Everything of the plan that does not depend on a measurement. Rebuilt when the Setup changes.
struct PlanViews {
    bool ok = false;
    std::string error;  // the plan cannot be resolved: the key and the problem
    Setup setup;        // what these views were made from
    double drive_dbfs = -10.0;
    FrequencyPlan plan;
    BenchModel model;
    PlanResult report;
    ResponseCurve rf_filter, if_chain;
    // The LO as the mixer sees it: two periods of the switching function and |c_m| of its harmonics.
    LoWaveform lo;
    bool lo_quadrature = false;
    std::vector<float> lo_wave;     // 2 periods, lo_wave.size() points
    std::vector<float> lo_harm_db;  // index m = 0..K: 20·log10(|c_m| / |c_1|), −inf for a zero coefficient
};

// Never throws: a bad plan gives ok = false and the error.
PlanViews build_plan_views(const Setup& s, double drive_dbfs);

// One marker on the spectrum.
struct Marker {
    std::string label;
    int m = 0, n = 0, order = 0;
    LineKind kind = LineKind::spur;
    bool response = false;  // RF probes: an RF band that reaches the IF (else a line at the probe)
    double freq_hz = kNaN;  // where it sits on the probe's frequency axis (absolute)
    double band_low_hz = kNaN, band_high_hz = kNaN;  // responses: the RF band
    double predicted_dbc = kNaN;
    double limit_dbc = kNaN;
    bool measured = false;  // a plan-check result at this probe (else the status comes from the prediction)
    LineStatus status = LineStatus::not_observable;
    double level_db = kNaN;         // measured level in the spectrum's unit (observed lines; responses: band peak)
    double level_dbc = kNaN;        // measured, relative to the wanted output
    double upper_bound_dbc = kNaN;  // below the floor: at most this
    double margin_db = kNaN;
    std::string explanation;  // the tooltip: the arithmetic, the levels, the limit and the verdict
};

struct MarkerSet {
    std::vector<Marker> markers;    // the wanted first when there is one
    double wanted_level_db = kNaN;  // measured wanted in the spectrum's unit (where dBc lines are drawn from)
    std::string unit = "dBFS";
    std::string note;  // what the markers are ("plan check at the IF output, 0.3 s ago", ...)
};

// The trade name of a kind for the window: "wanted", "image", "½IF", "IF feedthrough", ...
const char* kind_name(LineKind k);
const char* status_name(LineStatus s);  // "pass", "FAIL", "below floor", "not observable"

// Markers from a plan check (the IF output's own, or one made at the mixer output): every line with its
// measurement. lo_hz and wanted_rf_hz (image_rf_hz for the image line) put the numbers into the tooltips;
// complex_if keeps signed sums.
MarkerSet markers_from_check(const PlanCheck& check, double lo_hz, double wanted_rf_hz, double image_rf_hz,
                             bool complex_if, const PlanLimits& limits);

// Markers at an RF probe: the spurious responses whose RF band overlaps [low_hz, high_hz] (the wanted, the
// image, ½IF, IF feedthrough and every (m, n) of the plan's order), judged by their predicted level against
// the spur-rejection (image: image-rejection) limit; `spectrum` (may be empty) gives the peak in each band.
MarkerSet markers_for_rf(const PlanViews& v, double lo_hz, double low_hz, double high_hz, const Spectrum* spectrum);

// Markers of the plan alone (no measurement yet, or no source): every product of the wanted inside
// [low_hz, high_hz] with its predicted level.
MarkerSet markers_predicted(const PlanViews& v, double low_hz, double high_hz);

// The lines expected at the mixer output (the IF window at the RF rate) and their plan check on a spectrum
// taken there. Throws InputError when the chain's model cannot make them.
PlanCheck check_mixer_output(const PlanViews& v, const ChainLayout& layout, double drive_dbfs, const Spectrum& s);

// The frequency band a probe shows (absolute), from the chain layout.
std::pair<double, double> probe_band(const ChainLayout& layout, Probe p);

}  // namespace hb::gui
