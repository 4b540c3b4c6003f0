// Measurements on a Spectrum: tone level and frequency, the noise floor, SNR and SFDR, and the plan check
// (predicted lines against what the spectrum shows, with limits), plus image rejection from port levels.
//
// Levels are linear tone-calibrated powers (spectrum.hpp) until they are reported: dBFS, dBm (dBFS +
// calibration, when the analyzer's unit is dBm) and dBc (relative to the wanted output).
#pragma once

#include <cstdint>
#include <limits>
#include <span>
#include <string>
#include <string_view>
#include <vector>

#include "dsp/bin_stats.hpp"
#include "dsp/spectrum.hpp"
#include "dsp/window.hpp"

namespace hb {

inline constexpr double kNaN = std::numeric_limits<double>::quiet_NaN();

// ---- Noise floor -------------------------------------------------------------------------------------------

// Robust floor: the median of the bins in a range, divided by the median of the bin distribution in units of
// its mean (bin_stats.hpp), computed twice: the second pass leaves out bins above the first pass's 99.9 %
// noise quantile (tones and their skirts) and uses the matching quantile of the truncated distribution.
struct NoiseFloor {
    double power_per_bin = kNaN;       // μ: mean noise power of one bin of one frame (linear, tone-calibrated)
    double dbfs_per_hz = kNaN;         // μ / RBW in dBFS/Hz
    double db_per_hz = kNaN;           // in the spectrum's unit per Hz (dBm/Hz when calibrated)
    double dbfs_per_rbw = kNaN;        // μ in dBFS: the noise in one resolution bandwidth
    double median_bias_db = kNaN;      // mean/median correction applied (dB)
    double effective_averages = kNaN;  // K_eff of the distribution used
    int bins = 0;                      // bins the median was taken over
    double low_hz = kNaN, high_hz = kNaN;
};

// Over [low_hz, high_hz] (clipped to the span); NaN limits mean the whole span. Non-finite bins are left out.
NoiseFloor noise_floor(const Spectrum& s, double low_hz = kNaN, double high_hz = kNaN);
// The same with the bin statistics already at hand (bin_statistics(s) builds the window once more).
NoiseFloor noise_floor(const Spectrum& s, const BinStatistics& st, double low_hz, double high_hz);

// μ for every bin: the floor above taken in half-overlapping blocks of 16…256 bins (as few as the bins' scatter
// allows), interpolated in dB between block centres, so it follows IF-filter shapes and skirts. Size s.size().
std::vector<double> noise_floor_profile(const Spectrum& s);
std::vector<double> noise_floor_profile(const Spectrum& s, const BinStatistics& st);

// ---- Tones -------------------------------------------------------------------------------------------------

// A tone: the strongest local peak in a frequency range. The frequency comes from the ratio of the peak bin to
// its larger neighbour, inverted through the window's own response (exact for a clean tone: for the
// rectangular and Hann windows it reduces to the known two-bin formulas); the power is the sum of the bins
// over the main lobe (± ceil(half-width) + 1 bins, noise mean subtracted) divided by the window's response
// summed over the same bins at that offset, so it does not depend on where the tone falls between bins.
struct Tone {
    bool found = false;  // a bin in range that is a local maximum
    int peak_bin = -1;
    double freq_hz = kNaN;
    double power = kNaN;       // A² of A·e^{j2πft}: linear, noise-corrected (may be ≤ 0 when noise dominates)
    double peak_power = kNaN;  // the peak bin as read
    double level_dbfs = kNaN;  // 10·log10(power)
};

// `noise_per_bin` is the mean noise of the estimate per bin, subtracted before the fit (0: none).
Tone measure_tone(const Spectrum& s, const WindowResponse& r, double low_hz, double high_hz, double noise_per_bin = 0);
// The same, building the window response (a 256 k-point transform: build it once for repeated calls).
Tone measure_tone(const Spectrum& s, double low_hz, double high_hz, double noise_per_bin = 0);

// SNR of a tone against the noise in a bandwidth (the whole span when bandwidth_hz is NaN): P / (μ/RBW · B).
double snr_db(const Spectrum& s, const Tone& t, const NoiseFloor& f, double bandwidth_hz = kNaN);

// Spurious-free dynamic range: the carrier over the strongest other peak in the span that is not its own main
// lobe or window leakage (dBc, positive).
struct Sfdr {
    double sfdr_db = kNaN;
    double spur_freq_hz = kNaN;
    double spur_dbfs = kNaN;
    bool spur_above_floor = false;  // false: no spur crosses the detection threshold, SFDR is noise-limited
};
Sfdr sfdr(const Spectrum& s, const Tone& carrier, double false_alarm = 1e-3);

// ---- Plan check --------------------------------------------------------------------------------------------

enum class LineKind { wanted, image, half_if, if_feedthrough, lo_feedthrough, rf_feedthrough, spur };
enum class LineStatus { pass, fail, below_floor, not_observable };
std::string_view to_string(LineKind k);    // wanted, image, half-if, if-feedthrough, lo-feedthrough, ...
std::string_view to_string(LineStatus s);  // pass, fail, below-floor, not-observable

// A line the plan expects in this spectrum, built by the caller from the plan engine.
struct ExpectedLine {
    std::string label;  // trade notation: "2LO−RF", "LO", "image", "½IF", ...
    int m = 0, n = 0;   // f = |m·f_LO + n·f_RF| before mapping into the spectrum's frame
    LineKind kind = LineKind::spur;
    double freq_hz = kNaN;        // absolute, in the spectrum's frame
    double predicted_dbc = kNaN;  // from the mixer model (NaN: none)
    double limit_dbc = kNaN;      // at most this (NaN: no limit)
};

struct PlanCheckOptions {
    // Search window half-width: search_rbw × RBW + |m|·lo_uncertainty_hz + |n|·rf_uncertainty_hz.
    double search_rbw = 2.0;
    double lo_uncertainty_hz = 0.0;  // LO frequency error bound
    double rf_uncertainty_hz = 0.0;  // RF (source) frequency error bound
    // A line is observed when its peak bin crosses the noise threshold that noise alone crosses with this
    // probability in one search window, and at least min_detect_db above the local mean noise.
    double false_alarm = 1e-3;
    double min_detect_db = 3.0;
    // Unexplained peaks: at least this far above the local floor, and above the false-alarm threshold over the
    // whole span.
    double unexplained_db = 10.0;
    std::size_t max_unexplained = 50;
    // Centred fraction of the span treated as usable (anti-alias roll-off at the edges): lines outside are
    // not observable.
    double usable_fraction = 1.0;
    // Absolute band, intersected with the above, outside which nothing is judged (e.g. where an emulated IF is
    // exact: above 0 Hz for a real IF).
    double usable_low_hz = -std::numeric_limits<double>::infinity();
    double usable_high_hz = std::numeric_limits<double>::infinity();
};

struct LineResult {
    ExpectedLine line;
    LineStatus status = LineStatus::not_observable;
    double search_low_hz = kNaN, search_high_hz = kNaN;
    double freq_hz = kNaN;           // measured (observed lines)
    double freq_error_hz = kNaN;     // measured − expected
    double level_dbfs = kNaN;        // observed lines
    double level_dbm = kNaN;         // observed lines, when the analyzer's unit is dBm
    double level_dbc = kNaN;         // observed lines, when the wanted is observed
    double upper_bound_dbfs = kNaN;  // below-floor: the line is at most this (detection threshold, worst bin offset)
    double upper_bound_dbc = kNaN;
    double floor_dbfs_per_hz = kNaN;  // local noise floor at the line
    double margin_db = kNaN;          // limit − level (or − upper bound): positive is inside the limit
    std::string note;                 // why, when the status alone does not say
};

struct UnexplainedPeak {
    double freq_hz = kNaN;
    double level_dbfs = kNaN;
    double level_dbm = kNaN;
    double level_dbc = kNaN;
    double above_floor_db = kNaN;  // peak bin over the local mean noise per bin
    // Filled by the signal chain when a signal at the RF port explains the peak through one of the mixer's
    // spurious responses (check_plan leaves them empty): the response of that signal, its RF frequency and
    // level, and the measured spurious-response rejection (the wanted's conversion gain over this one's, dB).
    std::string response;  // e.g. "image", "half-IF", "IF", "2LO-3RF"
    int m = 0, n = 0;
    double source_rf_hz = kNaN;
    double source_rf_dbfs = kNaN;
    double rejection_db = kNaN;
    // A response that lands inside the IF passband is a spurious response of the receiver and is judged: against
    // image_rejection_db (the image) or spur_rejection_db (any other). One outside the passband is another
    // channel seen through the IF filter's skirt: reported, not judged (status not-observable).
    bool in_if_band = false;
    double limit_db = kNaN;
    LineStatus status = LineStatus::not_observable;
};

struct PlanCheck {
    LineResult wanted;
    std::vector<LineResult> lines;             // every other expected line, in input order
    std::vector<UnexplainedPeak> unexplained;  // strongest first
    bool unexplained_truncated = false;        // more than max_unexplained were found
    double unexplained_threshold_db = kNaN;    // used: above the local mean noise per bin
    NoiseFloor floor;                          // over the usable span
    double rbw_hz = kNaN;
    LevelUnit unit = LevelUnit::dbfs;
    double calibration_db = 0.0;

    bool wanted_observed() const { return wanted.status == LineStatus::pass; }
    // The wanted output is observed and no line failed its limit.
    bool passed() const;
};

// The limit the plan's [plan.limits] set for a kind of line, in dBc: lo-feedthrough → lo_feedthrough_dbc;
// image → −image_rejection_db (equal to the rejection only when the image-band signal is as strong at the RF
// port as the wanted; image_rejection() is the general form); wanted → none (NaN); every other kind → spur_dbc.
double limit_dbc_for(LineKind kind, const PlanLimits& limits);

// Throws InputError unless exactly one line has kind wanted.
PlanCheck check_plan(const Spectrum& s, std::span<const ExpectedLine> lines, const PlanCheckOptions& opt = {});

// ---- Image rejection ---------------------------------------------------------------------------------------

// rejection_db = (wanted_IF − wanted_RF) − (image_IF − image_RF): the conversion gain for the wanted over that
// for the image. Each port's two levels must share a unit (dBm or dBFS); the ports may differ. When the image's
// IF level is only an upper bound (below the floor) the rejection is a lower bound: it passes if that bound
// meets the limit, else it is below-floor. Without an image-band signal (image_rf_db NaN) it is not observable.
struct ImageRejection {
    double rf_hz = kNaN;
    double rejection_db = kNaN;
    bool lower_bound = false;
    double limit_db = kNaN;
    LineStatus status = LineStatus::not_observable;
    std::string note;
};
ImageRejection image_rejection(double image_rf_hz, double wanted_rf_db, double wanted_if_db, double image_rf_db,
                               double image_if_db, bool image_if_is_upper_bound, double limit_db);
// From the plan check's image line (its level, or its upper bound when below the floor).
ImageRejection image_rejection(double image_rf_hz, double wanted_rf_db, const LineResult& wanted_if, double image_rf_db,
                               const LineResult& image_if, double limit_db);

}  // namespace hb
