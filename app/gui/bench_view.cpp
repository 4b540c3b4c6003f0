#include "gui/bench_view.hpp"

#include <algorithm>
#include <cmath>
#include <optional>

#include "devices/filter_setup.hpp"
#include "dsp/errors.hpp"
#include "dsp/units.hpp"
#include "gui/gui_helpers.hpp"

namespace hb::gui {
namespace {

// A grid around a filter's pass-band and skirts: out to 1.5 of its −60 dB width or 4 of its −3 dB width
// each side, whichever is wider (the same idea as the filter command's CSV grid).
std::vector<double> response_grid(const FilterSummary& s, double nominal_width, double valid_lo, double valid_hi,
                                  int points) {
    const double c = s.lowpass ? 0.0 : 0.5 * (s.lo3_hz + s.hi3_hz);
    const double w3 = std::isfinite(s.bw3_hz) && s.bw3_hz > 0 ? s.bw3_hz : nominal_width;
    double half = 4.0 * w3;
    if (std::isfinite(s.bw60_hz)) half = std::max(half, 1.5 * (s.lowpass ? s.bw60_hz : 0.5 * s.bw60_hz) * 2.0);
    double a = s.lowpass ? 0.0 : c - half, b = c + half;
    a = std::max({a, valid_lo, s.lowpass ? 0.0 : 1e-3 * c});
    b = std::min(b, valid_hi);
    std::vector<double> g;
    if (!(b > a)) return g;
    for (int i = 0; i < points; ++i) g.push_back(a + (b - a) * i / (points - 1));
    return g;
}

template <class H, class D>
void sample_curve(ResponseCurve& c, const std::vector<double>& grid, H&& h, D&& gd) {
    c.f_hz = grid;
    c.mag_db.resize(grid.size());
    c.delay_s.resize(grid.size());
    for (std::size_t i = 0; i < grid.size(); ++i) {
        const double mag = std::abs(h(grid[i]));
        c.mag_db[i] = mag > 0 ? static_cast<float>(std::max(db_from_amplitude(mag), -300.0)) : -300.0f;
        c.delay_s[i] = static_cast<float>(gd(grid[i]));
    }
    c.valid = !grid.empty();
}

std::string filter_title(const FilterSpec& f) {
    std::string t(to_string(f.type));
    if (!f.preset.empty()) t += " (" + f.preset + ")";
    t += f.response == FilterResponse::bandpass ? " band-pass" : " low-pass";
    return t;
}

double response_limit_dbc(LineKind k, const PlanLimits& l) {
    switch (k) {
        case LineKind::wanted:
            return kNaN;
        case LineKind::image:
            return -l.image_rejection_db;
        default:
            return -l.spur_rejection_db;
    }
}

LineStatus judge_prediction(double predicted, double limit) {
    if (std::isnan(predicted)) return LineStatus::not_observable;
    if (std::isnan(limit)) return LineStatus::pass;
    return predicted > limit ? LineStatus::fail : LineStatus::pass;
}

std::string order_line(const Marker& k) {
    return std::string(kind_name(k.kind)) + ", order " + std::to_string(k.order) + " (m = " + std::to_string(k.m) +
           ", n = " + std::to_string(k.n) + ")";
}

std::string limit_line(double limit, LineStatus st, double margin) {
    if (std::isnan(limit)) return "no limit for this kind";
    std::string s = "limit " + db_text(limit, "dBc") + ": " + status_name(st);
    if (!std::isnan(margin)) s += " (margin " + db_text(margin, "dB") + ")";
    return s;
}

}  // namespace


const char* kind_name(LineKind k) {
    switch (k) {
        case LineKind::wanted:
            return "wanted";
        case LineKind::image:
            return "image";
        case LineKind::half_if:
            return "\u00bdIF";
        case LineKind::if_feedthrough:
            return "IF feedthrough";
        case LineKind::lo_feedthrough:
            return "LO feedthrough";
        case LineKind::rf_feedthrough:
            return "RF feedthrough";
        case LineKind::spur:
            return "spur";
    }
    return "?";
}

const char* status_name(LineStatus s) {
    switch (s) {
        case LineStatus::pass:
            return "pass";
        case LineStatus::fail:
            return "FAIL";
        case LineStatus::below_floor:
            return "below floor";
        case LineStatus::not_observable:
            return "not observable";
    }
    return "?";
}

PlanViews build_plan_views(const Setup& s, double drive_dbfs) {
    PlanViews v;
    v.setup = s;
    v.drive_dbfs = std::isfinite(drive_dbfs) ? drive_dbfs : -10.0;
    std::optional<FilterModel> rf;
    std::string rf_error;
    try {
        if (s.rf_filter.type != FilterType::none) rf = rf_filter_model(s);
    } catch (const std::exception& e) {
        rf_error = e.what();
    }
    try {
        v.plan = frequency_plan(s);
        v.model = make_bench_model(s, rf ? &*rf : nullptr, v.drive_dbfs);
        v.report = analyze_plan(v.plan, v.model.plan);
        v.ok = true;
    } catch (const std::exception& e) {
        v.error = e.what();
    }

    v.rf_filter.title = "RF filter: " + (s.rf_filter.type == FilterType::none ? std::string("none (a plain wire)")
                                                                              : filter_title(s.rf_filter));
    v.rf_filter.error = rf_error;
    if (rf) {
        try {
            v.rf_filter.summary = summarise(*rf);
            const auto g =
                response_grid(v.rf_filter.summary, rf->spec.bandwidth_hz, rf->valid_lo_hz(), rf->valid_hi_hz(), 600);
            sample_curve(
                v.rf_filter, g, [&](double f) { return rf->response(f); },
                [&](double f) { return rf->group_delay(f); });
        } catch (const std::exception& e) {
            v.rf_filter.error = e.what();
        }
    }

    try {
        std::vector<FilterModel> active;
        for (FilterModel& m : if_filter_models(s))
            if (m.kind != ModelKind::none) active.push_back(std::move(m));
        v.if_chain.title = "IF chain: " + std::to_string(active.size()) + (active.size() == 1 ? " filter" : " filters");
        if (active.size() == 1) v.if_chain.title += ", " + filter_title(active.front().spec);
        if (!active.empty()) {
            v.if_chain.summary = summarise(active);
            double lo = -1e300, hi = 1e300, w = 1e300;
            for (const FilterModel& m : active) {
                lo = std::max(lo, m.valid_lo_hz());
                hi = std::min(hi, m.valid_hi_hz());
                w = std::min(w, m.spec.bandwidth_hz);
            }
            const auto g = response_grid(v.if_chain.summary, w, lo, hi, 600);
            sample_curve(
                v.if_chain, g, [&](double f) { return cascade_response(active, f); },
                [&](double f) { return cascade_group_delay(active, f); });
        }
    } catch (const std::exception& e) {
        v.if_chain.error = e.what();
    }

    if (v.ok) {
        v.lo = v.model.mixer.lo;
        v.lo_quadrature = v.model.mixer.predict_model == MixerModel::quadrature;
        const int points = 512;
        v.lo_wave.resize(points);
        for (int i = 0; i < points; ++i)
            v.lo_wave[static_cast<std::size_t>(i)] =
                static_cast<float>(lo_waveform_value(v.lo, 2.0 * i / (points - 1) - 0.5));
        const int k = std::clamp(std::max(v.lo.harmonics, 9), 1, 31);
        const double c1 = std::abs(lo_cosine_coefficient(v.lo, 1));
        for (int m = 0; m <= k; ++m) {
            const double c = std::abs(lo_cosine_coefficient(v.lo, m));
            v.lo_harm_db.push_back(c > 1e-12 && c1 > 0 ? static_cast<float>(db_from_amplitude(c / c1))
                                                       : -std::numeric_limits<float>::infinity());
        }
    }
    return v;
}

MarkerSet markers_from_check(const PlanCheck& check, double lo_hz, double wanted_rf_hz, double image_rf_hz,
                             bool complex_if, const PlanLimits& limits) {
    MarkerSet set;
    set.unit = check.unit == LevelUnit::dbm ? "dBm" : "dBFS";
    auto level_of = [&](const LineResult& r) { return check.unit == LevelUnit::dbm ? r.level_dbm : r.level_dbfs; };
    if (check.wanted.status == LineStatus::pass) set.wanted_level_db = level_of(check.wanted);
    auto add = [&](const LineResult& r) {
        Marker k;
        k.label = r.line.label;
        k.m = r.line.m;
        k.n = r.line.n;
        k.order = std::abs(k.m) + std::abs(k.n);
        k.kind = r.line.kind;
        k.freq_hz = r.line.freq_hz;
        k.predicted_dbc = r.line.predicted_dbc;
        k.limit_dbc = r.line.limit_dbc;
        k.measured = true;
        k.status = r.status;
        k.level_db = level_of(r);
        k.level_dbc = r.level_dbc;
        k.upper_bound_dbc = r.upper_bound_dbc;
        k.margin_db = r.margin_db;
        const double rf = k.kind == LineKind::image && std::isfinite(image_rf_hz) ? image_rf_hz : wanted_rf_hz;
        std::string e = explain_product(k.m, k.n, lo_hz, rf, complex_if);
        if (k.kind == LineKind::image) e += "  (RF = the image-band signal)";
        e += "\n" + order_line(k);
        if (k.kind == LineKind::wanted) {
            e += "\nmeasured " + db_text(k.level_db, set.unit);
            if (r.status != LineStatus::pass) e += std::string(": ") + status_name(r.status);
        } else {
            e += "\npredicted " + db_text(k.predicted_dbc, "dBc") + "; ";
            switch (r.status) {
                case LineStatus::pass:
                case LineStatus::fail:
                    e += "measured " + db_text(k.level_dbc, "dBc") + " (" + db_text(k.level_db, set.unit) + ")";
                    break;
                case LineStatus::below_floor:
                    e += "measured: below the floor, at most " + db_text(k.upper_bound_dbc, "dBc");
                    break;
                case LineStatus::not_observable:
                    e += "measured: not observable";
                    break;
            }
            if (k.kind == LineKind::image && std::isnan(k.limit_dbc))
                e += "\njudged as image rejection (limit " + db_text(limits.image_rejection_db, "dB") + ")";
            else
                e += "\n" + limit_line(k.limit_dbc, r.status, k.margin_db);
        }
        if (!r.note.empty()) e += "\n" + r.note;
        k.explanation = std::move(e);
        set.markers.push_back(std::move(k));
    };
    add(check.wanted);
    for (const LineResult& r : check.lines) add(r);
    return set;
}

MarkerSet markers_for_rf(const PlanViews& v, double lo_hz, double low_hz, double high_hz, const Spectrum* spectrum) {
    MarkerSet set;
    if (!v.ok) return set;
    if (spectrum && !spectrum->power.empty()) set.unit = spectrum->spec.unit == LevelUnit::dbm ? "dBm" : "dBFS";
    const PlanLimits& lim = v.setup.plan.limits;
    for (const Response& r : v.report.responses) {
        if (r.rf_high_hz < low_hz || r.rf_low_hz > high_hz) continue;
        Marker k;
        k.response = true;
        k.label = r.label;
        k.m = r.m;
        k.n = r.n;
        k.order = r.order;
        k.kind = line_kind(r.kind);
        k.freq_hz = r.rf_hz;
        k.band_low_hz = r.rf_low_hz;
        k.band_high_hz = r.rf_high_hz;
        k.predicted_dbc = k.kind == LineKind::wanted ? 0.0 : r.predicted_dbc;
        k.limit_dbc = response_limit_dbc(k.kind, lim);
        k.status = k.kind == LineKind::wanted ? LineStatus::pass : judge_prediction(k.predicted_dbc, k.limit_dbc);
        if (spectrum && !spectrum->power.empty()) {
            const double pad = std::max(spectrum->rbw_hz, spectrum->bin_hz());
            const int b0 = std::max(0, static_cast<int>(std::floor(spectrum->bin_of_freq(r.rf_low_hz - pad))));
            const int b1 =
                std::min(spectrum->size() - 1, static_cast<int>(std::ceil(spectrum->bin_of_freq(r.rf_high_hz + pad))));
            double peak = -1;
            for (int b = b0; b <= b1; ++b) peak = std::max(peak, spectrum->power[static_cast<std::size_t>(b)]);
            if (peak > 0) k.level_db = spectrum->level_db(peak);
        }
        std::string e = explain_response(k.m, k.n, lo_hz, r.if_signed_hz);
        e += "\n" + order_line(k) + "; band " + freq_text(r.rf_low_hz) + " to " + freq_text(r.rf_high_hz);
        if (k.kind == LineKind::wanted) {
            e += "\nthe wanted channel";
        } else {
            e += "\npredicted at the IF: " + db_text(k.predicted_dbc, "dBc") + " for an input as strong as the wanted";
            e += "\n" + limit_line(k.limit_dbc, k.status, k.limit_dbc - k.predicted_dbc) + " (by prediction)";
        }
        if (!std::isnan(k.level_db)) e += "\nhere: peak " + db_text(k.level_db, set.unit) + " in the band";
        k.explanation = std::move(e);
        if (k.kind == LineKind::wanted)
            set.markers.insert(set.markers.begin(), std::move(k));
        else
            set.markers.push_back(std::move(k));
    }
    set.note = "spurious responses: RF bands that reach the IF passband";
    return set;
}

MarkerSet markers_predicted(const PlanViews& v, double low_hz, double high_hz) {
    MarkerSet set;
    if (!v.ok) return set;
    const bool complex_if = v.plan.complex_if;
    for (const Product& p : v.report.products) {
        // A complex IF keeps the sign; the IQ model's LO e^{−jωt} puts the wanted at RF − LO (dsp/mixer.hpp).
        const double f = complex_if ? -p.signed_hz : p.freq_hz;
        if (f < low_hz || f > high_hz) continue;
        Marker k;
        k.label = p.label;
        k.m = p.m;
        k.n = p.n;
        k.order = p.order;
        k.kind = line_kind(p.kind);
        k.freq_hz = f;
        k.predicted_dbc = k.kind == LineKind::wanted ? 0.0 : p.predicted_dbc;
        k.limit_dbc = limit_dbc_for(k.kind, v.setup.plan.limits);
        k.status = k.kind == LineKind::wanted ? LineStatus::pass : judge_prediction(k.predicted_dbc, k.limit_dbc);
        std::string e = explain_product(p.m, p.n, v.plan.lo_hz, v.plan.wanted_hz, complex_if);
        e += "\n" + order_line(k);
        if (k.kind != LineKind::wanted) {
            e += "\npredicted " + db_text(k.predicted_dbc, "dBc") + "; not measured";
            e += "\n" + limit_line(k.limit_dbc, k.status, k.limit_dbc - k.predicted_dbc) + " (by prediction)";
        }
        k.explanation = std::move(e);
        if (k.kind == LineKind::wanted)
            set.markers.insert(set.markers.begin(), std::move(k));
        else
            set.markers.push_back(std::move(k));
    }
    set.unit = "dBc";
    set.wanted_level_db = 0.0;
    set.note = "predicted by the plan (no measurement)";
    return set;
}

PlanCheck check_mixer_output(const PlanViews& v, const ChainLayout& layout, double drive_dbfs, const Spectrum& s) {
    if (!v.ok) throw InputError(v.error);
    const Band window{layout.mixer_output.center_hz, layout.mixer_output.sample_rate_hz};
    const std::vector<ExpectedLine> lines =
        expected_lines(v.setup, v.model, layout.lo_hz, std::isfinite(drive_dbfs) ? drive_dbfs : -10.0, window);
    PlanCheckOptions po;
    po.lo_uncertainty_hz = std::abs(layout.lo_hz - layout.lo_nominal_hz);
    // A real IF is carried as its analytic signal: nothing below 0 Hz is exact.
    if (!v.plan.complex_if) po.usable_low_hz = 0.0;
    return check_plan(s, lines, po);
}

std::pair<double, double> probe_band(const ChainLayout& layout, Probe p) {
    EnvelopeWindow w;
    switch (p) {
        case Probe::rf_input:
        case Probe::rf_filtered:
            if (!layout.zones.empty()) w = layout.zones.front();
            break;
        case Probe::mixer_output:
            w = layout.mixer_output;
            break;
        case Probe::if_output:
            w = layout.if_output;
            break;
    }
    return {w.center_hz - w.sample_rate_hz / 2, w.center_hz + w.sample_rate_hz / 2};
}

}  // namespace hb::gui
