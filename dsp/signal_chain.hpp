// The signal chain of the bench, built from one Setup:
//
//   source(s) ─► RF window(s) ─► RF filter ─► mixer (+LO) ─┬─► IF chain ─► analyzer ─► plan check
//                                                          (zones summed)
//
// Sources. Every source arrives with its own centre, rate and calibration (RfInput). The first source's window
// (its centre and rate) is zone 0. A source whose band fits inside an existing zone's window is shifted (and
// resampled when its rate differs) onto it; one that does not fit (a test tone at a far image, say) gets a zone
// of its own centred on it at the same rate. Each zone runs its own realisation of the RF filter and its own
// mixer emulator into the one IF window; the zone outputs are summed. Only zone 0's emulator adds the mixer's
// own noise, LO leakage and DC offset, so they are counted once; the LO phase noise is the same realisation in
// every zone (same seed), as it is one LO. What a zone split leaves out: nonlinear products between sources in
// different zones (they are far apart by construction, and their cross products rarely reach the IF window).
// All RF windows share the first source's scale: a source with another level_offset_db is scaled so equal dBm
// read equal dBFS everywhere.
//
// Probes (the GUI's probe point): the RF input of zone 0, after its RF filter, the mixer output (all zones
// summed, at the RF rate) and the IF output (after the IF chain and its decimation).
//
// Life cycle: make (allocates everything) → process (no allocation) → analyze (reads the spectra and runs the
// plan check; allocates its result) → update (rebuilds only what changed) → reset.
#pragma once

#include <cstdint>
#include <functional>
#include <memory>
#include <optional>
#include <span>
#include <string>
#include <string_view>
#include <vector>

#include "dsp/bench_model.hpp"
#include "dsp/filter_chain.hpp"
#include "dsp/filter_model.hpp"
#include "dsp/measure.hpp"
#include "dsp/mixer.hpp"
#include "dsp/products.hpp"
#include "dsp/setup.hpp"
#include "dsp/spectrum.hpp"

namespace hb {

using cf32 = std::complex<float>;

enum class Probe { rf_input, rf_filtered, mixer_output, if_output };
std::string_view to_string(Probe p);  // rf-input, rf-filtered, mixer-output, if-output

// The plan check's kind of line for a product of the plan engine.
LineKind line_kind(ProductKind k);
bool parse(std::string_view text, Probe& out);

// One source as it arrives at the RF port.
struct RfInput {
    double center_hz = 0.0;
    double sample_rate_hz = 0.0;
    double level_offset_db = 0.0;  // dBm at the RF port = dBFS + level_offset_db
};

// Builds one filter's model, designed for a window when it is an FIR; devices/ supplies one that reads
// Touchstone files (devices/filter_setup.hpp). The default builds analog and FIR types only.
using FilterModelLoader = std::function<FilterModel(const FilterSpec& spec, const std::string& key,
                                                    const std::optional<EnvelopeWindow>& window)>;

inline constexpr std::size_t kMaxSources = 16;

struct SignalChainOptions {
    std::size_t max_block = 16384;  // samples per internal block; process() takes any count
    Probe probe = Probe::if_output;
    bool rf_spectra = true;  // keep a spectrum of every RF window (needed for the image measurement)
    // FFT planning of the analyzers (Welch::make): estimate keeps reports bit-identical run to run (verify, sweep);
    // the live window takes measure for speed.
    Fft::Effort fft_effort = Fft::Effort::estimate;
};

// Counters of the chain itself (sources keep their own).
struct SignalChainCounters {
    std::uint64_t samples = 0;     // primary-source samples through the chain
    std::uint64_t if_samples = 0;  // IF output samples
    std::uint64_t non_finite = 0;  // NaN/Inf input samples replaced by 0
};

// Where everything sits.
struct ChainLayout {
    std::vector<EnvelopeWindow> zones;  // RF windows; zones[0] is the first source's
    std::vector<int> zone_of_source;
    EnvelopeWindow mixer_output;  // IF window at the RF rate
    EnvelopeWindow if_output;     // after decimation
    double lo_hz = 0.0;           // the LO the emulator runs at (offset_ppm applied)
    double lo_nominal_hz = 0.0;
    Injection injection = Injection::high;  // effective side (from the LO when it is fixed)
    double dbm_at_0dbfs = 0.0;              // RF port calibration (first source)
};

// A two-tone intermodulation test (plan.two_tone_spacing_hz > 0): two equal tones f1 < f2 at the RF port, their
// conversions, the third-order products 2f1−f2 and 2f2−f1 and the second-order sum f1+f2 through the LO's
// fundamental (the same conversion coefficient as the tones, so the ratios give the RF port's intercepts), and
//     IIP3 = P_in + (P_fund − P_IM3)/2,   IIP2 = P_in + (P_fund − P_IM2)
// with P_in the level of one tone at the RF port and P_fund, P_IM at the IF output (Razavi, RF Microelectronics,
// 2012, §2.2; reference-values I4). A product under the floor gives a lower bound on the intercept.
struct TwoToneResult {
    bool active = false;
    double f1_hz = kNaN, f2_hz = kNaN;
    double tone_rf_dbfs = kNaN;         // mean of the two tones at the RF port
    double gain_db = kNaN;              // IF fundamental over RF tone (conversion gain, filters included)
    double fundamental_if_dbfs = kNaN;  // mean of the two converted tones
    double im3_low_dbfs = kNaN, im3_high_dbfs = kNaN;  // 2f1−f2 and 2f2−f1 at the IF (or their upper bounds)
    bool im3_bound = false;                            // an IM3 product was below the floor: IIP3 is a lower bound
    double im2_dbfs = kNaN;  // the f1+f2 product through the LO fundamental (or its upper bound)
    bool im2_bound = false;
    bool im2_observable = false;               // the product lands inside the analysed span
    double iip3_dbfs = kNaN, iip3_dbm = kNaN;  // the worse of the two IM3 sides
    double iip2_dbfs = kNaN, iip2_dbm = kNaN;
    double iip3_limit_dbm = kNaN, iip2_limit_dbm = kNaN;
    LineStatus iip3_status = LineStatus::not_observable, iip2_status = LineStatus::not_observable;
    std::string note;
};

// The result of one look at the spectra.
struct ChainAnalysis {
    Spectrum rf;                      // zone 0's RF input
    Spectrum if_out;                  // IF output
    double wanted_rf_dbfs = kNaN;     // wanted at the RF port (NaN: not in any RF window)
    double drive_dbfs = kNaN;         // the drive the predictions used (wanted − RF filter attenuation)
    std::vector<ExpectedLine> lines;  // every expected line in the IF output (wanted first)
    PlanCheck check;
    ImageRejection image;            // not-observable when no signal sits in the image band
    TwoToneResult two_tone;          // active in a two-tone test (then lines hold its products)
    std::vector<std::string> notes;  // why something could not be measured
};

class SignalChain {
  public:
    // Throws InputError naming the key (or the source) that makes the chain impossible.
    static SignalChain make(const Setup& s, std::span<const RfInput> inputs, const SignalChainOptions& opt = {},
                            const FilterModelLoader& loader = {});
    SignalChain();
    ~SignalChain();
    SignalChain(SignalChain&&) noexcept;
    SignalChain& operator=(SignalChain&&) noexcept;

    // Feeds samples of every source (inputs[k] for source k, any counts; a source at another rate than the first
    // is resampled, so counts need only be roughly proportional to the rates). Runs the chain on every primary-
    // rate sample that all sources have delivered. No allocation.
    void process(std::span<const std::span<const cf32>> inputs);
    // The one-source case.
    void process(std::span<const cf32> input);
    // Samples of source k that match n samples of the first source.
    std::size_t samples_for(std::size_t source, std::size_t n_primary) const;

    ChainAnalysis analyze() const;

    // Applies a new Setup between blocks, rebuilding only the blocks whose settings changed (RF filter, mixer,
    // IF chain, analyzer, plan). The sources must be the same (a different [[source]] list needs a new chain):
    // throws InputError otherwise.
    void update(const Setup& s);
    void set_probe(Probe p);
    void reset();

    const Setup& setup() const;
    const ChainLayout& layout() const;
    const BenchModel& model() const;
    const SignalChainCounters& counters() const;
    Probe probe() const;
    EnvelopeWindow probe_window(Probe p) const;
    // The spectrum at the current probe point, and the samples of the last internal block there (valid until the
    // next process call).
    Spectrum probe_spectrum() const;
    std::span<const cf32> probe_samples() const;
    const FilterChain* rf_filter() const;  // zone 0's, or nullptr
    const FilterChain& if_chain() const;

    struct Impl;

  private:
    std::unique_ptr<Impl> impl_;
};

// Expected lines of the wanted signal in a frame (used by the chain; exposed for the GUI markers and tests):
// every product of the plan's wanted RF with the LO (those outside `window` too: they read not observable), at its
// frequency in the
// mixer's output frame (real models |m·f_LO + n·f_RF|, quadrature the side the model puts it on), predicted
// from the model at `drive_dbfs`, with the limit its kind gets. The wanted comes first.
// `if_response` (may be empty) weighs each line by the IF chain's response relative to the wanted's.
std::vector<ExpectedLine> expected_lines(const Setup& s, const BenchModel& model, double lo_hz, double drive_dbfs,
                                         const Band& window,
                                         const std::function<std::complex<double>(double)>& if_response = {});

}  // namespace hb
