#include "dsp/filter_model.hpp"

#include <cmath>
#include <limits>

#include "dsp/errors.hpp"
#include "dsp/units.hpp"

namespace hb {
namespace {

constexpr double kInf = std::numeric_limits<double>::infinity();

std::complex<double> dtft(const std::vector<double>& h, double f) {
    std::complex<double> s = 0.0, ph = 1.0;
    const std::complex<double> step = std::polar(1.0, -kTwoPi * f);
    for (std::size_t n = 0; n < h.size(); ++n) {
        s += h[n] * ph;
        // Re-anchor the phasor now and then so rounding does not accumulate over long filters.
        ph = (n % 256 == 255) ? std::polar(1.0, -kTwoPi * f * double(n + 1)) : ph * step;
    }
    return s;
}

double fir_group_delay_samples(const std::vector<double>& h, double f) {
    std::complex<double> s = 0.0, sn = 0.0;
    for (std::size_t n = 0; n < h.size(); ++n) {
        const std::complex<double> e = std::polar(1.0, -kTwoPi * f * double(n));
        s += h[n] * e;
        sn += double(n) * h[n] * e;
    }
    if (std::abs(s) < 1e-300) return 0.5 * double(h.size() - 1);
    return (sn / s).real();
}

PrototypeKind prototype_kind(FilterType t) {
    switch (t) {
        case FilterType::chebyshev1:
            return PrototypeKind::chebyshev1;
        case FilterType::chebyshev2:
            return PrototypeKind::chebyshev2;
        case FilterType::elliptic:
            return PrototypeKind::elliptic;
        case FilterType::bessel:
            return PrototypeKind::bessel;
        default:
            return PrototypeKind::butterworth;
    }
}

bool bandpass(const FilterSpec& s) {
    return s.response == FilterResponse::bandpass;
}

// Offset of the FIR pass-band edge from its centre (band-pass: half the width; low-pass: the width).
double fir_pass_offset(const FilterSpec& s) {
    return bandpass(s) ? 0.5 * s.bandwidth_hz : s.bandwidth_hz;
}

}  // namespace

double fir_transition_hz(const FilterSpec& s) {
    return s.transition_hz > 0 ? s.transition_hz : 0.25 * s.bandwidth_hz;
}

FilterModel make_filter_model(const FilterSpec& spec, const std::string& name, const ModelOptions& opt) {
    FilterModel m;
    m.spec = spec;
    m.name = name;
    if (spec.type == FilterType::none) return m;
    if (!(spec.sections >= 1 && spec.sections <= 64))
        throw InputError(name + ".sections: got " + std::to_string(spec.sections) + ", expected 1 to 64");
    if (!std::isfinite(spec.insertion_loss_db) || spec.insertion_loss_db < 0 || spec.insertion_loss_db > 300)
        throw InputError(name + ".insertion_loss_db: got " + format_number(spec.insertion_loss_db) +
                         ", expected 0 to 300 dB");
    m.loss = amplitude_from_db(-spec.insertion_loss_db);
    if (spec.type == FilterType::touchstone) {
        if (!opt.touchstone) throw InputError(name + ": the touchstone data (" + spec.path + ") was not loaded");
        m.kind = ModelKind::measured;
        m.measured = s21_table(*opt.touchstone);
        return m;
    }
    const bool bp = bandpass(spec);
    if (!(std::isfinite(spec.bandwidth_hz) && spec.bandwidth_hz > 0))
        throw InputError(name + ".bandwidth_hz: got " + format_number(spec.bandwidth_hz) + ", expected above 0 Hz");
    if (bp && !(std::isfinite(spec.center_hz) && spec.center_hz > 0.5 * spec.bandwidth_hz))
        throw InputError(name + ".center_hz: got " + format_number(spec.center_hz) +
                         " Hz, a band-pass needs center_hz above bandwidth_hz/2 (" +
                         format_number(0.5 * spec.bandwidth_hz) + " Hz)");
    if (spec.type == FilterType::fir) {
        m.kind = ModelKind::fir;
        const double pass = fir_pass_offset(spec);
        const double stop = pass + fir_transition_hz(spec);
        m.fir_shift_hz = bp ? spec.center_hz : 0.0;
        m.fir_window = opt.fir_window ? *opt.fir_window : EnvelopeWindow{m.fir_shift_hz, 4.0 * stop};
        const double rate = m.fir_window.sample_rate_hz;
        if (!(std::isfinite(rate) && rate > 0))
            throw InputError(name + ": an FIR needs a window with a sample rate above 0 Hz");
        m.fir = design_fir_lowpass(
            spec.fir_method == FirMethod::kaiser ? FirDesignMethod::kaiser : FirDesignMethod::parks_mcclellan,
            pass / rate, stop / rate, spec.stop_atten_db, spec.ripple_db,
            name + " (FIR at " + format_frequency(rate) + " sample rate)");
        return m;
    }
    m.kind = ModelKind::analog;
    m.map = bp ? bandpass_map(spec.center_hz, spec.bandwidth_hz) : lowpass_map(spec.bandwidth_hz);
    try {
        m.proto = design_prototype(prototype_kind(spec.type), spec.order, spec.ripple_db, spec.stop_atten_db);
    } catch (const InputError& e) {
        throw InputError(name + ": " + e.what());
    }
    return m;
}

std::complex<double> FilterModel::section_response(double f) const {
    switch (kind) {
        case ModelKind::none:
            return 1.0;
        case ModelKind::analog:
            return loss * prototype_response(proto, map.omega(f));
        case ModelKind::measured:
            return loss * measured.at(f);
        case ModelKind::fir: {
            if (std::abs(f - fir_window.center_hz) > 0.5 * fir_window.sample_rate_hz)
                return loss * amplitude_from_db(-spec.stop_atten_db);
            return loss * dtft(fir.taps, (f - fir_shift_hz) / fir_window.sample_rate_hz);
        }
    }
    return 1.0;
}

double FilterModel::section_group_delay(double f) const {
    switch (kind) {
        case ModelKind::none:
            return 0.0;
        case ModelKind::analog: {
            const double om = map.omega(f);
            if (std::isinf(om)) return 0.0;
            return prototype_group_delay(proto, om) * map.domega_df(f) / kTwoPi;
        }
        case ModelKind::measured:
            return measured.group_delay_s(f);
        case ModelKind::fir: {
            const double fs = fir_window.sample_rate_hz;
            if (std::abs(f - fir_window.center_hz) > 0.5 * fs) return 0.5 * double(fir.taps.size() - 1) / fs;
            return fir_group_delay_samples(fir.taps, (f - fir_shift_hz) / fs) / fs;
        }
    }
    return 0.0;
}

std::complex<double> FilterModel::response(double f) const {
    const std::complex<double> h = section_response(f);
    return kind == ModelKind::none ? h : std::pow(h, spec.sections);
}

double FilterModel::group_delay(double f) const {
    return kind == ModelKind::none ? 0.0 : spec.sections * section_group_delay(f);
}

double FilterModel::section_peak() const {
    switch (kind) {
        case ModelKind::none:
            return 1.0;
        case ModelKind::analog:
            return loss;  // prototypes peak at exactly 1
        case ModelKind::measured:
            return loss * measured.peak_gain();
        case ModelKind::fir: {
            // Equiripple designs overshoot 1 by the pass-band ripple; scan the pass-band.
            double best = 0.0;
            const double pass = fir_pass_offset(spec);
            for (int i = 0; i <= 256; ++i)
                best = std::max(best,
                                std::abs(dtft(fir.taps, (-pass + 2.0 * pass * i / 256.0) / fir_window.sample_rate_hz)));
            return loss * best;
        }
    }
    return 1.0;
}

double FilterModel::valid_lo_hz() const {
    if (kind == ModelKind::fir) return fir_window.center_hz - 0.5 * fir_window.sample_rate_hz;
    if (kind == ModelKind::measured && !measured.freq_hz.empty()) return measured.freq_hz.front();
    return -kInf;
}

double FilterModel::valid_hi_hz() const {
    if (kind == ModelKind::fir) return fir_window.center_hz + 0.5 * fir_window.sample_rate_hz;
    if (kind == ModelKind::measured && !measured.freq_hz.empty()) return measured.freq_hz.back();
    return kInf;
}

double FilterModel::nominal_center_hz() const {
    if (kind == ModelKind::measured) {
        // The strongest measured point stands for the centre.
        std::size_t best = 0;
        for (std::size_t i = 0; i < measured.mag_db.size(); ++i)
            if (measured.mag_db[i] > measured.mag_db[best]) best = i;
        return measured.freq_hz.empty() ? 0.0 : measured.freq_hz[best];
    }
    return bandpass(spec) ? spec.center_hz : 0.0;
}

double FilterModel::nominal_lo_hz() const {
    if (kind == ModelKind::measured) return nominal_center_hz();
    return bandpass(spec) ? spec.center_hz - 0.5 * spec.bandwidth_hz : -spec.bandwidth_hz;
}

double FilterModel::nominal_hi_hz() const {
    if (kind == ModelKind::measured) return nominal_center_hz();
    return bandpass(spec) ? spec.center_hz + 0.5 * spec.bandwidth_hz : spec.bandwidth_hz;
}

std::optional<double> FilterModel::stop_edge_offset_hz() const {
    if (kind == ModelKind::fir) return fir_pass_offset(spec) + fir_transition_hz(spec);
    if (kind == ModelKind::analog && std::isfinite(proto.stop_edge)) {
        double lo = 0, hi = 0;
        map.edges(proto.stop_edge, lo, hi);
        // Band-pass edges sit geometrically about the centre: take the farther one so the whole stop-band counts.
        return std::max(hi - nominal_center_hz(), nominal_center_hz() - lo);
    }
    return std::nullopt;
}

std::complex<double> filter_response(const FilterModel& m, double f) {
    return m.response(f);
}

std::complex<double> filter_response(const FilterSpec& spec, double f) {
    return make_filter_model(spec, spec.preset.empty() ? "filter" : spec.preset).response(f);
}

std::complex<double> cascade_response(const std::vector<FilterModel>& ms, double f) {
    std::complex<double> h = 1.0;
    for (const auto& m : ms) h *= m.response(f);
    return h;
}

double cascade_group_delay(const std::vector<FilterModel>& ms, double f) {
    double t = 0.0;
    for (const auto& m : ms) t += m.group_delay(f);
    return t;
}

}  // namespace hb
