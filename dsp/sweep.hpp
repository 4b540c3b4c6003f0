// The spurious-response sweep (hetbench sweep): the receiver test a lab runs with a signal generator, done in
// emulation through the session's own chain.
//
// The wanted CW signal at sweep.reference_dbfs sets the reference output. Then a CW test tone goes in at every
// predicted spurious response (dsp/products spurious_responses: image, half-IF, IF, every (m, n) up to the plan's
// max order, each at the centre of its band) and at every point of a grid across an RF range, one tone at a time,
// and the tone's output inside the IF passband is measured. The spurious-response rejection of a tone is the
// wanted's conversion gain over the tone's:
//     rejection_db = (wanted_IF − wanted_RF) − (tone_IF − tone_RF)        (dBFS at both ports)
// The wanted and the tone run one at a time (the figure is a ratio of conversion gains, as the equal-output
// method defines it), so products of the wanted with the tone (blocking, reciprocal mixing) are not part of it.
// Two methods (sweep.method):
//   fixed-level   the tone at sweep.tone_dbfs (default the reference): one run per tone.
//   equal-output  the tone is raised (or lowered) until its IF output equals the wanted's; the rejection is then
//                 tone_RF − wanted_RF. For a response of RF order n (output growing n dB per dB) the two differ:
//                 equal-output = fixed-level(at the reference) / n, because the fixed-level figure falls n − 1 dB
//                 per dB of tone level. A linear mixer gives the same figure both ways.
//
// Every run goes through a SignalChain made from the session (RF filter realised on the tone's own RF window,
// the mixer emulator with its LO harmonics and nonlinearity, the IF filters and decimation). The RF axis is cut
// into tiles (0.8 of the window rate wide for a linear mixer, less with IIP2/IIP3 set: dsp/sweep.cpp); one chain
// per tile is made and reused (reset between runs), so designs and the IF chain are built once per tile. A run is the
// settling time of the chain's filters plus one short FFT (the analyzer's window, sized so the IF passband spans about
// 16 bins); the tone is the strongest local peak inside the IF passband (measure_tone). Below the detection threshold
// (the emulated noise, the leakage of strong lines outside the passband through the window's side lobes, the float32
// rounding floor) the rejection is a lower bound.
//
// Judged: every response against plan.limits.spur_rejection_db, the image against image_rejection_db; a lower
// bound passes when it meets the limit, else it is below-floor. Grid points are drawn, and a grid point that
// responds below the spur limit without lying in a listed response band (nor in the wanted channel) is reported
// as unlisted and fails: it is a spurious response of the receiver the plan's max order does not name.
// No I/O here.
#pragma once

#include <cstdint>
#include <functional>
#include <string>
#include <vector>

#include "dsp/measure.hpp"
#include "dsp/products.hpp"
#include "dsp/setup.hpp"
#include "dsp/signal_chain.hpp"

namespace hb {

// The RF grid: low_hz + k·step_hz, k = 0..points − 1.
struct SweepGrid {
    double low_hz = 0.0;
    double high_hz = 0.0;
    double step_hz = 0.0;
    std::size_t points = 0;
};

inline constexpr std::size_t kSweepDefaultPoints = 1000;
inline constexpr std::size_t kSweepMaxPoints = 1000000;
// Equal-output: how far above the reference the tone may be raised (dB).
inline constexpr double kSweepMaxRaiseDb = 120.0;

// The grid the session asks for. Defaults: the plan's RF band joined with every response band (so the image and
// the highest-order responses are inside), widened by 2 % of the span on each side and kept above 0 Hz; the step
// gives kSweepDefaultPoints points. Throws InputError naming sweep.step_hz when the step gives more than
// kSweepMaxPoints points.
SweepGrid sweep_grid(const SweepSpec& w, const PlanSpec& plan, const std::vector<Response>& responses);

// One tone measured (the last level tried, for equal-output).
struct ToneMeasurement {
    double rf_hz = kNaN;
    double tone_dbfs = kNaN;       // at the RF port
    double if_dbfs = kNaN;         // its output in the IF passband (NaN: below the threshold)
    double if_hz = kNaN;           // where that output was found
    double threshold_dbfs = kNaN;  // detection threshold in the passband for this run
    double rejection_db = kNaN;    // see the header; a lower bound when lower_bound
    bool lower_bound = false;
    int runs = 0;  // chain runs this tone took
};

struct SweepResponse {
    Response response;                     // where it is and what it is (dsp/products)
    ToneMeasurement measured;              // the tone at response.rf_hz
    double predicted_rejection_db = kNaN;  // the plan engine's figure for a tone as strong as the wanted
    double limit_db = kNaN;
    double margin_db = kNaN;  // rejection − limit (a lower bound when the rejection is)
    LineStatus status = LineStatus::not_observable;
};

// Neighbouring grid points that responded below the spur limit outside every listed band.
struct SweepUnlisted {
    double rf_hz = kNaN;  // the worst of them
    double rf_low_hz = kNaN;
    double rf_high_hz = kNaN;
    double rejection_db = kNaN;
    double limit_db = kNaN;
};

struct SweepResult {
    SweepMethod method = SweepMethod::fixed_level;
    double reference_dbfs = kNaN;
    double tone_dbfs = kNaN;      // fixed-level: the test tone's level
    double max_tone_dbfs = kNaN;  // equal-output: the highest level tried
    SweepGrid grid;
    double wanted_rf_hz = kNaN;
    double lo_hz = kNaN;           // as emulated (offset_ppm applied)
    Band passband;                 // the IF passband in the IF output frame (signed centre for a quadrature IF)
    double sample_rate_hz = kNaN;  // RF window rate of every tile
    double if_rate_hz = kNaN;      // after the IF chain's decimation
    double tile_hz = kNaN;         // width of the RF tiles
    int tiles = 0;                 // chains made
    int fft_size = 0;
    double rbw_hz = kNaN;
    std::size_t settle_samples = 0;        // RF-rate samples discarded before the FFT
    std::size_t run_samples = 0;           // RF-rate samples per run
    ToneMeasurement wanted;                // the wanted at the reference level (rejection 0 by definition)
    double wanted_gain_db = kNaN;          // its conversion gain, IF − RF
    std::vector<SweepResponse> responses;  // every response but the wanted itself, worst margin first
    std::vector<ToneMeasurement> points;   // the grid, in frequency order
    std::vector<SweepUnlisted> unlisted;
    std::vector<std::string> notes;
    std::size_t runs = 0;
    std::uint64_t samples = 0;  // RF-rate samples through the chains

    // Indices into responses (−1: none).
    int image = -1, half_if = -1, if_feedthrough = -1;
    // pass: every response and the image pass and nothing unlisted; fail: something failed; incomplete: nothing
    // failed but some response could not be shown to meet its limit (below-floor).
    std::string_view verdict() const;
};

struct SweepOptions {
    // Called now and then with the tones done and the total (for a progress line). May be empty.
    std::function<void(std::size_t done, std::size_t total)> progress;
};

// Runs the sweep of Setup `s` (its [sweep] and [plan] sections); `loader` builds the filter models (devices/'s
// filter_loader reads Touchstone files). The RF window rate is the first source's sample_rate_hz, else
// if_chain.sample_rate_hz, else one chosen to hold the IF passband and the IF filters. Throws InputError naming
// the key that makes the sweep impossible (mixer.model bypass, a grid too fine, a chain that cannot be built) or
// saying why the wanted gives no output.
SweepResult run_sweep(const Setup& s, const FilterModelLoader& loader = {}, const SweepOptions& opt = {});

}  // namespace hb
