// The mixer model: topology presets, the resolved parameters of one [mixer] section, the model's complex
// coefficients (shared by the zone emulator in dsp/mixer_emulator and by the level predictions), and the
// predicted output level of every m×n product for the plan engine.
//
// The model (design notes §3). The RF port sees r(t) = Re{x(t)·e^{j2π f_c t}}, with x the RF stream in
// full-scale units (a real tone of amplitude A is |x| = A, 20·log10 A dBFS). A memoryless polynomial
//     u = r + a2·r² + a3·r³
// (a2, a3 from IIP2/IIP3) is multiplied by the LO switching function s(θ) = Σ S_m e^{jmθ} (dsp/lo), and
// the whole is scaled by g so the wanted small-signal conversion gain is the set conversion gain:
//     v(t) = g·u(t)·s(2π f_LO t)        (quadrature: s → I + jQ, then y = μ·v + ν·v*)
// u has zones at q·f_c, q = −3..3, with envelopes U_q (U_{−q} = U_q*):
//     U_0 = a2/2·|x|²,  U_1 = x/2 + 3a3/8·|x|²x,  U_2 = a2/4·x²,  U_3 = a3/8·x³
// so every output term (q, m) sits at q·f_c + m·f_LO with envelope g·S_m·U_q. Port leakage adds the LO
// waveform itself (LO→IF isolation); the RF→IF isolation sets the switching function's mean value S_0,
// which is what passes RF straight through (a single-ended switch has S_0 = d; a balanced one S_0 = 0 and
// its finite isolation is its imbalance).
//
// Output representation. Real models (ideal, unipolar, bipolar) give a real IF signal; the output stream is
// its analytic representation y = Re{z·e^{j2π f_IF t}}: a real product of amplitude A at f > 0 reads |z| = A,
// the same dBFS scale as the RF input, so dBc and dB of gain read directly. The quadrature model gives the
// complex IF I + jQ itself. Its sign convention: the LO fundamental is e^{−j2π f_LO t}, so the wanted lands
// at f_RF − f_LO: at +f_IF for low-side injection and at −f_IF for high-side; the image lands on the other
// side, attenuated by the image rejection |μ/ν|².
//
// Levels: the RF port calibration dbm_at_0dbfs (dBm = dBFS + dbm_at_0dbfs) converts the IIP2/IIP3, the LO
// level and the noise figure; the IF output uses the same scale (an IF tone at X dBFS is X + dbm_at_0dbfs dBm).
#pragma once

#include <complex>
#include <limits>
#include <optional>
#include <span>
#include <string>
#include <string_view>
#include <vector>

#include "dsp/lo.hpp"
#include "dsp/setup.hpp"
#include "dsp/spur_table.hpp"

namespace hb {

// Highest RF order the polynomial produces (a2, a3): products with |n| > 3 are not in the model.
inline constexpr int kMixerMaxRfOrder = 3;
// LO harmonics emulated when neither the session nor the preset says (common practice for spur charts:
// orders up to about 15).
inline constexpr int kDefaultLoHarmonics = 15;

// A topology with typical values. Every figure is common practice (typical of the part class, from memory),
// not the data of any one part.
struct MixerPreset {
    std::string_view name;
    std::string_view summary;
    MixerSpec values;  // the model and every impairment the preset sets; lo is not used
    double lo_drive_min_dbm = 0.0;  // the LO drive range the topology is specified for
    double lo_drive_max_dbm = 0.0;
};

std::span<const MixerPreset> mixer_presets();
const MixerPreset* find_mixer_preset(std::string_view name);  // nullptr when unknown
std::string mixer_preset_names();                               // "single-diode|single-transistor|..."

// One [mixer] section with the preset applied and every value resolved to numbers.
struct MixerParams {
    MixerModel model = MixerModel::ideal;          // what the emulator does (bypass: pass the input through)
    MixerModel predict_model = MixerModel::ideal;  // what the predictions use: model, or for bypass the preset's
    bool predicts = true;  // false for bypass without a preset: there is no model to predict from
    std::string preset;

    LoWaveform lo;               // the switching function (ideal: sine; quadrature: a bipolar pair)
    double lo_nominal_hz = 0.0;  // from the session or the plan
    double lo_hz = 0.0;          // with the offset_ppm error applied: what the emulator runs at
    double lo_level_dbm = 7.0;
    std::vector<PhaseNoisePoint> phase_noise;
    double dbm_at_0dbfs = 0.0;  // RF port calibration

    double natural_gain_db = 0.0;     // the LO waveform's own gain c_1/2 (sine −6.02, ±1 switch −3.92, 0/1 −9.94 dB)
    double conversion_gain_db = 0.0;  // the wanted small-signal gain (natural_gain_db when unset)
    std::optional<double> lo_if_isolation_db;  // unset: no LO leakage
    std::optional<double> rf_if_isolation_db;  // unset: the switching function's own mean value
    std::optional<double> iip2_dbm;
    std::optional<double> iip3_dbm;
    double a2 = 0.0;  // u = r + a2·r² + a3·r³ with r in full-scale units
    double a3 = 0.0;
    double iq_gain_error_db = 0.0;  // quadrature: Q arm amplitude over I arm
    double iq_phase_error_deg = 0.0;
    std::optional<double> dc_offset_dbfs;
    std::optional<double> noise_figure_db;
    std::optional<double> noise_dbfs_per_hz;  // the noise the mixer adds, referred to the RF input (resolved)

    std::vector<std::string> warnings;  // settings that have no effect or are outside the preset's range
};

// Applies the preset, then the explicit keys. lo_hz: the nominal LO (hb::lo_frequency_hz); dbm_at_0dbfs: the RF
// port calibration (the first source's level_offset_db). Throws hb::InputError naming the key ("mixer.preset",
// "mixer.duty_cycle", ...) on an unknown preset or a value out of range.
// With a preset, model = ideal (the default) means "the preset's own model"; any other model overrides it.
// Noise: noise_dbfs_per_hz when set, else the noise figure: (F − 1)·kT0 referred to the input (so an input
// that already holds kT0 of noise leaves at F·kT0), kT0 = −173.975 dBm/Hz at 290 K.
MixerParams resolve_mixer(const MixerSpec& spec, double lo_hz, double dbm_at_0dbfs = 0.0);
// The model whose output the IF carries (MixerParams::predict_model) without resolving anything else: the
// preset's model when model is ideal (or bypass) and a preset is named. Unknown presets count as no preset.
MixerModel output_model(const MixerSpec& spec);
// Same, with the LO from the plan and the calibration of the first source.
MixerParams resolve_mixer(const Setup& setup);

// The model as complex numbers: what the emulator synthesises and the predictions evaluate.
struct MixerCoeffs {
    bool complex_if = false;  // quadrature: the output is I + jQ; else the analytic IF of a real signal
    int harmonics = 1;        // K
    double gain = 1.0;        // g
    // Per LO harmonic m = −K..K (index m + K): the factor of the RF zone envelopes, g·2·S_m for real models
    // (the 2 of the analytic representation; only terms at positive frequencies are kept) and g·L_m for the
    // quadrature pair (before μ, ν).
    std::vector<std::complex<double>> lo;
    // LO→IF leakage at m·f_LO (index m + K, zero at m = 0), in the same representation. Not subject to μ, ν.
    std::vector<std::complex<double>> leak;
    double a2 = 0.0, a3 = 0.0;
    std::complex<double> mu{1.0, 0.0}, nu{0.0, 0.0};  // quadrature imbalance, |μ| = 1 (gain stays the set gain)
    std::complex<double> dc{0.0, 0.0};                // DC at the output (0 Hz)
    double noise_out_dbfs_per_hz = -std::numeric_limits<double>::infinity();  // at the output

    std::complex<double> lo_at(int m) const {
        return (m < -harmonics || m > harmonics) ? std::complex<double>{} : lo[static_cast<std::size_t>(m + harmonics)];
    }
    std::complex<double> leak_at(int m) const {
        return (m < -harmonics || m > harmonics) ? std::complex<double>{} : leak[static_cast<std::size_t>(m + harmonics)];
    }
};

// Uses predict_model (so a bypass with a preset gives the preset's coefficients).
MixerCoeffs mixer_coeffs(const MixerParams& p);

// Envelope of RF zone q (−3..3) for one RF tone of amplitude a (full-scale units) at phase 0: U_q above.
double rf_zone_amplitude(double a2, double a3, int q, double a);

// Quadrature image rejection |μ|²/|ν|² in dB (IRR = (1 + 2g·cosθ + g²)/(1 − 2g·cosθ + g²), g the Q/I amplitude
// ratio, θ the phase error). Real models: 0 dB (the mixer itself does not tell the image from the wanted).
double image_rejection_db(const MixerParams& p);

// Where the output window is centred for an IF of if_hz: the IF for real models, ±IF for quadrature per the
// sign convention above (low-side +IF, high-side −IF).
double if_window_center_hz(const MixerParams& p, double if_hz, Injection injection);

// The predicted output of product m·f_LO + n·f_RF (m ≥ 0, n signed) for one RF tone at rf_level_dbfs.
struct ProductLevel {
    double dbfs = std::numeric_limits<double>::quiet_NaN();  // output level (−inf: the model produces none)
    double dbc = std::numeric_limits<double>::quiet_NaN();   // relative to the wanted at the same drive
    // Quadrature only: the product appears at sign·(m·f_LO + n·f_RF) on the complex IF axis (the stronger of
    // the two placements) and mirror_dbfs at the other; real models: sign = +1, mirror NaN (a real product
    // has one level, at |m·f_LO + n·f_RF|).
    int sign = 1;
    double mirror_dbfs = std::numeric_limits<double>::quiet_NaN();
};

// Exact for the model at any drive (compression included): the emulator produces these levels.
ProductLevel predict_product(const MixerParams& p, int m, int n, double rf_level_dbfs);
ProductLevel predict_product(const MixerParams& p, const MixerCoeffs& c, int m, int n, double rf_level_dbfs);
// The wanted (1, −1) output level in dBFS.
double predict_wanted_dbfs(const MixerParams& p, double rf_level_dbfs);

// The m×n table for the plan engine (dsp/spur_table.hpp): entry (m, |n|) = predict_product(m, n).dbc at
// ref_level_dbfs (quadrature: the stronger placement). NaN where the model produces nothing (an even
// harmonic of a balanced switch at exactly 50 % duty, RF orders above 3, (0, 0)) and everywhere for a
// bypass without a preset. The (|n| − 1) dB/dB scaling of SpurTable::at is exact at low drive.
SpurTable predict_spur_table(const MixerParams& p, double ref_level_dbfs, int max_m, int max_n);

}  // namespace hb
