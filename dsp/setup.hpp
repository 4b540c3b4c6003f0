// The Setup: one plain value describing the whole bench chain
//   Source(s) -> RF filter -> Mixer (+LO) -> IF chain -> Analyzer -> Plan check
// The GUI edits a Setup, the headless commands read one, a recording embeds one.
// No I/O here: the TOML session loader/saver lives in devices/session.*.
#pragma once

#include <cstdint>
#include <optional>
#include <string>
#include <string_view>
#include <vector>

namespace hb {

struct BenchInfo {
    std::string name = "bench";
    std::uint64_t seed = 1;  // every random process in the chain derives from this
    friend bool operator==(const BenchInfo&, const BenchInfo&) = default;
};

enum class SourceKind { recording, device, generator };

// One named gain element of a device (e.g. "LNA"), set after the overall gain.
struct NamedGain {
    std::string name;
    double db = 0.0;
    friend bool operator==(const NamedGain&, const NamedGain&) = default;
};

struct SourceSpec {
    SourceKind kind = SourceKind::generator;
    std::string path;      // recording: .sigmf-meta, .sigmf-data, .wav or raw file
    std::string args;      // device: SoapySDR argument string; generator: extra device args
    std::string scenario;  // generator: scenario TOML file
    std::string format;    // raw recordings: SigMF datatype, e.g. "cf32_le"
    std::optional<double> frequency_hz;    // centre (tuning) frequency; recordings carry their own
    std::optional<double> sample_rate_hz;  // recordings carry their own
    std::optional<double> gain_db;         // device gain (overall)
    std::optional<double> bandwidth_hz;    // device analog bandwidth
    std::string antenna;                   // device antenna
    std::vector<NamedGain> gains;          // device named gains, applied after gain_db (sorted by name)
    double level_offset_db = 0.0;  // dBm at the RF port = dBFS + level_offset_db
    bool swap_iq = false;          // WAV / raw: exchange I and Q
    bool loop = false;             // recordings: loop playback
    friend bool operator==(const SourceSpec&, const SourceSpec&) = default;
};

enum class FilterType { none, butterworth, chebyshev1, chebyshev2, elliptic, bessel, fir, touchstone };
enum class FilterResponse { bandpass, lowpass };
enum class FirMethod { kaiser, parks_mcclellan };

struct FilterSpec {
    FilterType type = FilterType::none;
    std::string preset;  // a named common part (see dsp/filter); explicit keys override it
    FilterResponse response = FilterResponse::bandpass;
    double center_hz = 0.0;     // absolute frequency (RF for the RF filter, IF for IF filters)
    double bandwidth_hz = 0.0;  // pass-band width (IIR: edge of the ripple band / -3 dB for Butterworth)
    int order = 4;              // IIR order (of the low-pass prototype)
    double ripple_db = 0.5;     // Chebyshev I / elliptic pass-band ripple
    double stop_atten_db = 60.0;  // Chebyshev II / elliptic / FIR stop-band attenuation
    double transition_hz = 0.0;   // FIR transition width; 0 = a quarter of the bandwidth
    FirMethod fir_method = FirMethod::kaiser;
    int sections = 1;             // identical sections in series (common bench practice: 2)
    double insertion_loss_db = 0.0;
    std::string path;             // Touchstone .s2p file
    bool linear_phase = true;     // Touchstone: linear-phase fit (true) or as measured (false)
    friend bool operator==(const FilterSpec&, const FilterSpec&) = default;
};

enum class MixerModel { bypass, ideal, unipolar, bipolar, quadrature };

struct PhaseNoisePoint {
    double offset_hz = 0.0;
    double dbc_per_hz = 0.0;
    friend bool operator==(const PhaseNoisePoint&, const PhaseNoisePoint&) = default;
};

struct LoSpec {
    std::optional<double> frequency_hz;  // unset: derived from the plan's injection side
    double level_dbm = 7.0;
    double offset_ppm = 0.0;  // LO frequency error
    std::vector<PhaseNoisePoint> phase_noise;
    friend bool operator==(const LoSpec&, const LoSpec&) = default;
};

// Every impairment is optional: unset means "the preset's value" or, without preset, the ideal value.
struct MixerSpec {
    MixerModel model = MixerModel::ideal;
    std::string preset;  // single-diode, single-transistor, diode-ring, gilbert-cell, image-reject
    std::optional<double> conversion_gain_db;
    std::optional<double> lo_if_isolation_db;
    std::optional<double> rf_if_isolation_db;
    std::optional<double> iip2_dbm;
    std::optional<double> iip3_dbm;
    std::optional<double> duty_cycle;  // 0..1 of the LO period
    std::optional<double> edge_time;   // rise = fall time as a fraction of the LO period
    std::optional<int> harmonics;      // highest LO harmonic emulated
    std::optional<double> iq_gain_error_db;
    std::optional<double> iq_phase_error_deg;
    std::optional<double> dc_offset_dbfs;
    std::optional<double> noise_figure_db;
    std::optional<double> noise_dbfs_per_hz;  // noise level when no calibration is set (dBFS mode)
    LoSpec lo;
    friend bool operator==(const MixerSpec&, const MixerSpec&) = default;
};

struct IfChainSpec {
    std::optional<double> center_hz;       // default: plan.if_hz
    std::optional<double> sample_rate_hz;  // default: the RF window's rate
    int decimation = 1;
    double gain_db = 0.0;
    friend bool operator==(const IfChainSpec&, const IfChainSpec&) = default;
};

enum class WindowType { hann, blackman_harris, flat_top, kaiser, rectangular };
enum class Averaging { rms, exponential, max_hold, min_hold };
enum class LevelUnit { dbfs, dbm };

struct AnalyzerSpec {
    int fft_size = 4096;
    WindowType window = WindowType::blackman_harris;
    double kaiser_beta = 9.0;
    double overlap = 0.5;  // fraction of a frame, 0 <= overlap < 1
    int averages = 16;
    Averaging averaging = Averaging::rms;
    LevelUnit unit = LevelUnit::dbfs;
    double calibration_db = 0.0;  // dBm = dBFS + calibration_db
    friend bool operator==(const AnalyzerSpec&, const AnalyzerSpec&) = default;
};

enum class Injection { low, high };

struct PlanLimits {
    double image_rejection_db = 60.0;   // image response at least this far below the wanted
    double spur_dbc = -60.0;            // any predicted product at most this level
    double lo_feedthrough_dbc = -30.0;  // LO at the IF output at most this level
    double spur_rejection_db = 60.0;    // spurious-response rejection (sweep) at least this
    std::optional<double> iip3_min_dbm;  // two-tone test: input IP3 at least this (unset: not judged)
    std::optional<double> iip2_min_dbm;  // two-tone test: input IP2 at least this
    friend bool operator==(const PlanLimits&, const PlanLimits&) = default;
};

struct PlanSpec {
    double rf_low_hz = 0.0;
    double rf_high_hz = 0.0;
    double channel_spacing_hz = 0.0;  // 0: one channel, the wanted one
    double wanted_hz = 0.0;
    double if_hz = 0.0;
    double if_bandwidth_hz = 0.0;
    Injection injection = Injection::high;
    int max_order = 7;  // |m| + |n| <= max_order
    // Two-tone test: > 0 means the input holds two equal tones at wanted_hz ± spacing/2 (not one wanted), and
    // the check measures their intermodulation (IM3, IM2) and the intercepts.
    double two_tone_spacing_hz = 0.0;
    PlanLimits limits;
    friend bool operator==(const PlanSpec&, const PlanSpec&) = default;
};

enum class SweepMethod { fixed_level, equal_output };

// The spurious-response sweep (hetbench sweep): CW test tones across an RF range and at every predicted response.
struct SweepSpec {
    std::optional<double> rf_low_hz;   // default: the plan's RF band widened to take in its image
    std::optional<double> rf_high_hz;
    std::optional<double> step_hz;     // grid step; default: 1000 points over the range
    double reference_dbfs = -30.0;     // the wanted signal's level at the RF port
    std::optional<double> tone_dbfs;   // fixed-level method: the test tone's level (default: the reference)
    SweepMethod method = SweepMethod::fixed_level;
    friend bool operator==(const SweepSpec&, const SweepSpec&) = default;
};

struct Setup {
    BenchInfo bench;
    std::vector<SourceSpec> sources;
    FilterSpec rf_filter;
    MixerSpec mixer;
    std::vector<FilterSpec> if_filters;
    IfChainSpec if_chain;
    AnalyzerSpec analyzer;
    PlanSpec plan;
    SweepSpec sweep;
    // Directory that relative paths in this Setup are read against (the session file's folder).
    // Not part of the session text.
    std::string base_dir;
    friend bool operator==(const Setup&, const Setup&) = default;
};

// A path from the Setup made usable: relative paths are read against base_dir.
std::string resolve_path(const Setup& s, const std::string& path);

// The LO frequency the plan implies: the mixer's explicit LO, else wanted ± IF by injection side.
double lo_frequency_hz(const Setup& s);

// One problem found in a Setup: the key path (e.g. "mixer.lo.level_dbm") and what is wrong.
struct SetupProblem {
    std::string key;
    std::string message;
};

// Checks values and their consistency (ranges, plan geometry). Empty when the Setup is usable.
std::vector<SetupProblem> validate(const Setup& s);

// Limits shared by the loader, the validator and the GUI.
inline constexpr int kMaxOrderLimit = 31;
inline constexpr int kMinFftSize = 256;
inline constexpr int kMaxFftSize = 1 << 20;
inline constexpr int kMaxFilterOrder = 20;
inline constexpr double kMaxFrequencyHz = 1e12;  // SigMF's own bound on sample rates, used for all

// Names used in session files and reports.
std::string_view to_string(SourceKind);
std::string_view to_string(FilterType);
std::string_view to_string(FilterResponse);
std::string_view to_string(FirMethod);
std::string_view to_string(MixerModel);
std::string_view to_string(WindowType);
std::string_view to_string(Averaging);
std::string_view to_string(LevelUnit);
std::string_view to_string(Injection);
std::string_view to_string(SweepMethod);

// Parsers return false on an unknown name.
bool parse(std::string_view text, SourceKind& out);
bool parse(std::string_view text, FilterType& out);
bool parse(std::string_view text, FilterResponse& out);
bool parse(std::string_view text, FirMethod& out);
bool parse(std::string_view text, MixerModel& out);
bool parse(std::string_view text, WindowType& out);
bool parse(std::string_view text, Averaging& out);
bool parse(std::string_view text, LevelUnit& out);
bool parse(std::string_view text, Injection& out);
bool parse(std::string_view text, SweepMethod& out);

// The allowed names, "a|b|c", for error messages.
template <class E> std::string allowed_names();

}  // namespace hb
