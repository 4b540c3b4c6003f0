#include "dsp/mixer.hpp"

#include <algorithm>
#include <cmath>
#include <limits>

#include "dsp/errors.hpp"
#include "dsp/units.hpp"

namespace hb {
namespace {

// Typical values per topology: common practice (typical of the class of part, from memory; no one part's data).
// - A single diode conducts on part of the LO cycle: a 0/1 switch, strong LO and RF feedthrough (no balance),
//   about 6–8 dB conversion loss, 0 to +7 dBm LO drive, low intercepts.
// - A single transistor switched by the LO conducts for less than half a period (d ≈ 0.4), gives some
//   conversion gain, little isolation.
// - A passive diode ring (double-balanced): ±1 switch, 5–7 dB conversion loss, +4 to +10 dBm LO drive,
//   30–40 dB port isolation, IIP3 about LO drive + 8 dB; its LO balance (≈ 40 dB second-harmonic
//   suppression) is modelled as a small duty error (20·log10(π·0.003) = −40.5 dB).
// - An active double-balanced cell: conversion gain about +10 dB, much lower LO drive (−10 to 0 dBm), soft
//   switching (long edges), IIP3 near 0 dBm.
// - An image-reject (quadrature) pair of balanced switches: 25–35 dB image rejection without trimming
//   (0.3 dB / 2° gives 32 dB), loss and drive like a passive ring.
std::vector<MixerPreset> make_presets() {
    std::vector<MixerPreset> v;
    auto add = [&](std::string_view name, std::string_view summary, MixerModel model, double gain_db,
                   double lo_iso, double rf_iso, double iip2, double iip3, double duty, double edge, double nf,
                   double drive_lo, double drive_hi) -> MixerSpec& {
        MixerPreset p;
        p.name = name;
        p.summary = summary;
        p.values.model = model;
        p.values.preset = std::string(name);
        p.values.conversion_gain_db = gain_db;
        p.values.lo_if_isolation_db = lo_iso;
        p.values.rf_if_isolation_db = rf_iso;
        p.values.iip2_dbm = iip2;
        p.values.iip3_dbm = iip3;
        p.values.duty_cycle = duty;
        p.values.edge_time = edge;
        p.values.harmonics = kDefaultLoHarmonics;
        p.values.noise_figure_db = nf;
        p.lo_drive_min_dbm = drive_lo;
        p.lo_drive_max_dbm = drive_hi;
        v.push_back(std::move(p));
        return v.back().values;
    };
    add("single-diode", "one diode switched by the LO: 0/1 switch, strong LO and RF feedthrough", MixerModel::unipolar,
        -7.0, 12.0, 6.0, 20.0, 3.0, 0.5, 0.05, 7.5, 0.0, 7.0);
    add("single-transistor", "one transistor switched by the LO: 0/1 switch conducting 40 % of the period, gain",
        MixerModel::unipolar, 8.0, 15.0, 12.0, 25.0, 0.0, 0.4, 0.1, 8.0, -3.0, 5.0);
    add("diode-ring", "passive double-balanced diode ring: ±1 switch, 6 dB loss, +7 dBm class LO drive",
        MixerModel::bipolar, -6.0, 35.0, 30.0, 55.0, 15.0, 0.503, 0.02, 6.5, 4.0, 10.0);
    add("gilbert-cell", "active double-balanced cell: ±1 soft switch, conversion gain, low LO drive",
        MixerModel::bipolar, 10.0, 30.0, 25.0, 45.0, 2.0, 0.502, 0.15, 10.0, -10.0, 0.0);
    MixerSpec& ir = add("image-reject", "quadrature pair of balanced switches giving a complex IF, 32 dB image rejection",
                        MixerModel::quadrature, -7.0, 35.0, 30.0, 50.0, 12.0, 0.5, 0.05, 7.5, 4.0, 10.0);
    ir.iq_gain_error_db = 0.3;
    ir.iq_phase_error_deg = 2.0;
    return v;
}

const std::vector<MixerPreset>& presets() {
    static const std::vector<MixerPreset> p = make_presets();
    return p;
}

template <class T>
std::optional<T> pick(const std::optional<T>& mine, const MixerPreset* pre, std::optional<T> MixerSpec::*field) {
    if (mine) return mine;
    if (pre) return pre->values.*field;
    return std::nullopt;
}

void need(const std::string& key, double v, double lo, double hi, std::string_view unit) {
    if (!std::isfinite(v) || v < lo || v > hi)
        throw InputError(key + ": got " + format_number(v) + ", expected a finite number from " + format_number(lo) +
                         " to " + format_number(hi) + (unit.empty() ? "" : " " + std::string(unit)));
}
void need(const std::string& key, const std::optional<double>& v, double lo, double hi, std::string_view unit) {
    if (v) need(key, *v, lo, hi, unit);
}

LoShape shape_of(MixerModel m) {
    switch (m) {
        case MixerModel::unipolar:
            return LoShape::unipolar;
        case MixerModel::bipolar:
        case MixerModel::quadrature:
            return LoShape::bipolar;
        default:
            return LoShape::sine;
    }
}

constexpr double kNone = std::numeric_limits<double>::quiet_NaN();
constexpr double kMinusInf = -std::numeric_limits<double>::infinity();

double db20(double a) { return a > 0 ? 20.0 * std::log10(a) : kMinusInf; }

}  // namespace

std::span<const MixerPreset> mixer_presets() { return presets(); }

const MixerPreset* find_mixer_preset(std::string_view name) {
    for (const auto& p : presets())
        if (p.name == name) return &p;
    return nullptr;
}

std::string mixer_preset_names() {
    std::string s;
    for (const auto& p : presets()) {
        if (!s.empty()) s += '|';
        s += p.name;
    }
    return s;
}

MixerModel output_model(const MixerSpec& spec) {
    const MixerPreset* pre = spec.preset.empty() ? nullptr : find_mixer_preset(spec.preset);
    if (spec.model == MixerModel::ideal || spec.model == MixerModel::bypass)
        return pre ? pre->values.model : MixerModel::ideal;
    return spec.model;
}

MixerParams resolve_mixer(const MixerSpec& spec, double lo_hz, double cal) {
    MixerParams p;
    const MixerPreset* pre = nullptr;
    if (!spec.preset.empty()) {
        pre = find_mixer_preset(spec.preset);
        if (!pre) throw InputError("mixer.preset: got \"" + spec.preset + "\", expected one of " + mixer_preset_names());
        p.preset = spec.preset;
    }
    if (!std::isfinite(lo_hz) || !(lo_hz > 0))
        throw InputError("mixer.lo.frequency_hz: the LO would be at " + format_number(lo_hz) +
                         " Hz, expected a positive frequency");
    need("source[0].level_offset_db", cal, -300, 300, "dB");

    p.model = (pre && spec.model == MixerModel::ideal) ? pre->values.model : spec.model;
    p.predict_model = p.model;
    if (p.model == MixerModel::bypass) {
        p.predicts = pre != nullptr;
        p.predict_model = pre ? pre->values.model : MixerModel::ideal;
        p.warnings.push_back(pre ? "mixer.model = bypass: the input passes untouched; predictions use the " +
                                       spec.preset + " preset"
                                 : "mixer.model = bypass: the input passes untouched and nothing is predicted "
                                   "(set a preset to predict product levels)");
    }

    // The LO waveform.
    p.lo.shape = shape_of(p.predict_model);
    const auto duty = pick(spec.duty_cycle, pre, &MixerSpec::duty_cycle);
    const auto edge = pick(spec.edge_time, pre, &MixerSpec::edge_time);
    const auto harm = pick(spec.harmonics, pre, &MixerSpec::harmonics);
    p.lo.duty = duty.value_or(0.5);
    p.lo.edge = edge.value_or(0.0);
    p.lo.harmonics = harm.value_or(kDefaultLoHarmonics);
    if (p.lo.shape == LoShape::sine) {
        for (auto [set, key] : {std::pair{spec.duty_cycle.has_value(), "duty_cycle"},
                                {spec.edge_time.has_value(), "edge_time"},
                                {spec.harmonics.has_value(), "harmonics"}})
            if (set)
                p.warnings.push_back(std::string("mixer.") + key +
                                     " has no effect on the ideal model (a sine LO: one harmonic)");
        p.lo.harmonics = 1;
    }
    check_lo_waveform(p.lo, "mixer");
    const double c1 = std::abs(lo_cosine_coefficient(p.lo, 1));
    p.natural_gain_db = db20(c1 / 2.0);

    // Levels.
    p.conversion_gain_db = pick(spec.conversion_gain_db, pre, &MixerSpec::conversion_gain_db).value_or(p.natural_gain_db);
    need("mixer.conversion_gain_db", p.conversion_gain_db, -60, 60, "dB");
    p.lo_if_isolation_db = pick(spec.lo_if_isolation_db, pre, &MixerSpec::lo_if_isolation_db);
    need("mixer.lo_if_isolation_db", p.lo_if_isolation_db, 0, 200, "dB");
    p.rf_if_isolation_db = pick(spec.rf_if_isolation_db, pre, &MixerSpec::rf_if_isolation_db);
    need("mixer.rf_if_isolation_db", p.rf_if_isolation_db, 0, 200, "dB");
    p.iip2_dbm = pick(spec.iip2_dbm, pre, &MixerSpec::iip2_dbm);
    need("mixer.iip2_dbm", p.iip2_dbm, -100, 150, "dBm");
    p.iip3_dbm = pick(spec.iip3_dbm, pre, &MixerSpec::iip3_dbm);
    need("mixer.iip3_dbm", p.iip3_dbm, -100, 100, "dBm");
    // Two-tone intercepts in full-scale amplitude: A_IIP2 = |a1/a2|, A_IIP3 = sqrt(4/3·|a1/a3|) with a1 = 1
    // (Razavi, RF Microelectronics, 2nd ed. 2012, §2.2). a3 < 0: compressive.
    if (p.iip2_dbm) p.a2 = 1.0 / amplitude_from_db(*p.iip2_dbm - cal);
    if (p.iip3_dbm) {
        const double a_ip3 = amplitude_from_db(*p.iip3_dbm - cal);
        p.a3 = -4.0 / (3.0 * a_ip3 * a_ip3);
    }

    const auto gerr = pick(spec.iq_gain_error_db, pre, &MixerSpec::iq_gain_error_db);
    const auto perr = pick(spec.iq_phase_error_deg, pre, &MixerSpec::iq_phase_error_deg);
    need("mixer.iq_gain_error_db", gerr, -20, 20, "dB");
    need("mixer.iq_phase_error_deg", perr, -89, 89, "degrees");
    p.iq_gain_error_db = gerr.value_or(0.0);
    p.iq_phase_error_deg = perr.value_or(0.0);
    if (p.predict_model != MixerModel::quadrature && (spec.iq_gain_error_db || spec.iq_phase_error_deg))
        p.warnings.push_back("mixer.iq_gain_error_db / iq_phase_error_deg have no effect on the " +
                             std::string(to_string(p.predict_model)) + " model (quadrature only)");

    p.dc_offset_dbfs = pick(spec.dc_offset_dbfs, pre, &MixerSpec::dc_offset_dbfs);
    need("mixer.dc_offset_dbfs", p.dc_offset_dbfs, -300, 0, "dBFS");
    p.noise_figure_db = pick(spec.noise_figure_db, pre, &MixerSpec::noise_figure_db);
    need("mixer.noise_figure_db", p.noise_figure_db, 0, 60, "dB");
    need("mixer.noise_dbfs_per_hz", spec.noise_dbfs_per_hz, -300, 0, "dBFS/Hz");
    if (spec.noise_dbfs_per_hz) {
        p.noise_dbfs_per_hz = spec.noise_dbfs_per_hz;
    } else if (p.noise_figure_db && *p.noise_figure_db > 0.0) {
        // Added noise (F − 1)·kT0 (Friis, "Noise figures of radio receivers", Proc. IRE 32, 1944).
        const double f = power_from_db(*p.noise_figure_db);
        p.noise_dbfs_per_hz = thermal_noise_dbm_per_hz(kT0) + db_from_power(f - 1.0) - cal;
    }

    // The LO.
    need("mixer.lo.level_dbm", spec.lo.level_dbm, -60, 40, "dBm");
    need("mixer.lo.offset_ppm", spec.lo.offset_ppm, -10000, 10000, "ppm");
    p.lo_nominal_hz = lo_hz;
    p.lo_hz = lo_hz * (1.0 + spec.lo.offset_ppm * 1e-6);
    p.lo_level_dbm = spec.lo.level_dbm;
    p.phase_noise = spec.lo.phase_noise;
    for (std::size_t i = 0; i < p.phase_noise.size(); ++i) {
        const auto& q = p.phase_noise[i];
        const std::string at = "mixer.lo.phase_noise[" + std::to_string(i) + "]";
        need(at + ".offset_hz", q.offset_hz, 1e-9, kMaxFrequencyHz, "Hz");
        need(at + ".dbc_per_hz", q.dbc_per_hz, -250, 0, "dBc/Hz");
        if (i > 0 && !(q.offset_hz > p.phase_noise[i - 1].offset_hz))
            throw InputError(at + ".offset_hz: got " + format_number(q.offset_hz) +
                             " Hz, expected offsets in increasing order");
    }
    p.dbm_at_0dbfs = cal;
    if (pre && (p.lo_level_dbm < pre->lo_drive_min_dbm || p.lo_level_dbm > pre->lo_drive_max_dbm))
        p.warnings.push_back("mixer.lo.level_dbm = " + format_number(p.lo_level_dbm) + " dBm is outside the " +
                             spec.preset + " drive range " + format_number(pre->lo_drive_min_dbm) + " to " +
                             format_number(pre->lo_drive_max_dbm) +
                             " dBm; the emulation does not model over- or under-drive");
    return p;
}

MixerParams resolve_mixer(const Setup& s) {
    const double cal = s.sources.empty() ? 0.0 : s.sources.front().level_offset_db;
    return resolve_mixer(s.mixer, lo_frequency_hz(s), cal);
}

MixerCoeffs mixer_coeffs(const MixerParams& p) {
    MixerCoeffs c;
    const bool quad = p.predict_model == MixerModel::quadrature;
    c.complex_if = quad;
    const LoSeries s = quad ? lo_series_quadrature(p.lo) : lo_series(p.lo);
    const int k = s.harmonics;
    c.harmonics = k;
    const double c1 = std::abs(lo_cosine_coefficient(p.lo, 1));
    // g makes the wanted small-signal output |x|·G: the natural wanted amplitude is c_1/2 per unit input.
    c.gain = amplitude_from_db(p.conversion_gain_db) / (c1 / 2.0);
    c.a2 = p.a2;
    c.a3 = p.a3;

    // The switching function's mean value passes RF straight to the IF: set it from the RF→IF isolation
    // (per arm for the quadrature pair): g·|S_0| = 10^(−iso/20).
    LoWaveform w = p.lo;
    double s0 = lo_cosine_coefficient(w, 0);
    if (p.rf_if_isolation_db) s0 = (s0 < 0 ? -1.0 : 1.0) * amplitude_from_db(-*p.rf_if_isolation_db) / c.gain;

    const double analytic = quad ? 1.0 : 2.0;
    c.lo.assign(static_cast<std::size_t>(2 * k + 1), {});
    for (int m = -k; m <= k; ++m) {
        std::complex<double> v = s.at(m);
        if (m == 0) v = quad ? s0 * std::complex<double>(1.0, 1.0) : std::complex<double>(s0, 0.0);
        c.lo[static_cast<std::size_t>(m + k)] = analytic * c.gain * v;
    }

    // LO→IF leakage: the LO waveform itself (no DC), its fundamental at lo_level − isolation.
    c.leak.assign(static_cast<std::size_t>(2 * k + 1), {});
    if (p.lo_if_isolation_db) {
        const double a_leak = amplitude_from_db(p.lo_level_dbm - *p.lo_if_isolation_db - p.dbm_at_0dbfs);
        const double scale = a_leak / c1;
        for (int m = -k; m <= k; ++m)
            if (m != 0) c.leak[static_cast<std::size_t>(m + k)] = analytic * scale * s.at(m);
    }

    if (quad) {
        // I arm cos θ, Q arm −g·sin(θ + φ): I + jQ = μ·e^{−jθ} + ν·e^{jθ} with μ = (1 + g·e^{−jφ})/2,
        // ν = (1 − g·e^{jφ})/2; applied to the ideal complex IF z as y = μz + νz*. Normalised to |μ| = 1.
        const double g = amplitude_from_db(p.iq_gain_error_db);
        const double phi = p.iq_phase_error_deg * kPi / 180.0;
        std::complex<double> mu = (1.0 + g * std::polar(1.0, -phi)) / 2.0;
        std::complex<double> nu = (1.0 - g * std::polar(1.0, phi)) / 2.0;
        const double norm = std::abs(mu);
        c.mu = mu / norm;
        c.nu = nu / norm;
    }
    if (p.dc_offset_dbfs) c.dc = amplitude_from_db(*p.dc_offset_dbfs);
    if (p.noise_dbfs_per_hz) c.noise_out_dbfs_per_hz = *p.noise_dbfs_per_hz + p.conversion_gain_db;
    return c;
}

double rf_zone_amplitude(double a2, double a3, int q, double a) {
    switch (q < 0 ? -q : q) {
        case 0:
            return a2 * a * a / 2.0;
        case 1:
            return a / 2.0 + 3.0 * a3 * a * a * a / 8.0;
        case 2:
            return a2 * a * a / 4.0;
        case 3:
            return a3 * a * a * a / 8.0;
        default:
            return 0.0;
    }
}

double image_rejection_db(const MixerParams& p) {
    if (p.predict_model != MixerModel::quadrature) return 0.0;
    const MixerCoeffs c = mixer_coeffs(p);
    if (std::abs(c.nu) == 0.0) return std::numeric_limits<double>::infinity();
    return db20(std::abs(c.mu) / std::abs(c.nu));
}

double if_window_center_hz(const MixerParams& p, double if_hz, Injection injection) {
    if (p.model != MixerModel::quadrature) return if_hz;
    return injection == Injection::low ? if_hz : -if_hz;
}

namespace {
// Complex amplitudes of product (m, n) at +F and −F, F = m·f_LO + n·f_RF, for one tone of amplitude a at phase 0.
struct Placement {
    std::complex<double> plus, minus;
};
Placement product_amplitudes(const MixerCoeffs& c, int m, int n, double a) {
    const double u = rf_zone_amplitude(c.a2, c.a3, n, a);  // U_n = U_{−n} for a real tone at phase 0
    Placement r;
    if (!c.complex_if) {
        // A real product: the terms (n, m) and (−n, −m) are conjugates; the analytic output keeps one, at |F|.
        r.plus = c.lo_at(m) * u;
        if (n == 0) r.plus += c.leak_at(m);
        r.minus = {};
        return r;
    }
    const std::complex<double> zp = c.lo_at(m) * u, zm = c.lo_at(-m) * u;
    r.plus = c.mu * zp + c.nu * std::conj(zm);
    r.minus = c.mu * zm + c.nu * std::conj(zp);
    if (n == 0) {
        r.plus += c.leak_at(m);
        r.minus += c.leak_at(-m);
    }
    return r;
}
}  // namespace

double predict_wanted_dbfs(const MixerParams& p, double rf_level_dbfs) {
    if (!p.predicts) return kNone;
    const MixerCoeffs c = mixer_coeffs(p);
    const Placement w = product_amplitudes(c, 1, -1, amplitude_from_db(rf_level_dbfs));
    return db20(std::max(std::abs(w.plus), std::abs(w.minus)));
}

ProductLevel predict_product(const MixerParams& p, int m, int n, double rf_level_dbfs) {
    if (!p.predicts) return {};
    return predict_product(p, mixer_coeffs(p), m, n, rf_level_dbfs);
}

ProductLevel predict_product(const MixerParams& p, const MixerCoeffs& c, int m, int n, double rf_level_dbfs) {
    ProductLevel r;
    if (!p.predicts || m < 0 || (m == 0 && n == 0)) return r;
    const double a = amplitude_from_db(rf_level_dbfs);
    const Placement w = product_amplitudes(c, 1, -1, a);
    const double wanted = std::max(std::abs(w.plus), std::abs(w.minus));
    const Placement x = product_amplitudes(c, m, n, a);
    const double ap = std::abs(x.plus), am = std::abs(x.minus);
    // Below 1e-15 of the wanted is rounding of an exact zero (an even harmonic of a balanced switch).
    auto level = [&](double v) { return v <= 1e-15 * wanted ? kMinusInf : db20(v); };
    if (!c.complex_if) {
        r.dbfs = level(ap);
    } else {
        r.sign = am > ap ? -1 : 1;
        r.dbfs = level(std::max(ap, am));
        r.mirror_dbfs = level(std::min(ap, am));
    }
    r.dbc = r.dbfs - db20(wanted);
    return r;
}

SpurTable predict_spur_table(const MixerParams& p, double ref_level_dbfs, int max_m, int max_n) {
    SpurTable t = SpurTable::make(max_m, max_n, ref_level_dbfs);
    if (!p.predicts) return t;
    const MixerCoeffs c = mixer_coeffs(p);
    for (int m = 0; m <= max_m; ++m)
        for (int n = 0; n <= max_n; ++n) {
            const ProductLevel l = predict_product(p, c, m, n, ref_level_dbfs);
            t.entry(m, n) = std::isfinite(l.dbc) ? l.dbc : SpurTable::kNone;
        }
    return t;
}

}  // namespace hb
