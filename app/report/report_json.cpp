// The plan-check report as one JSON document (schema hetbench.plan-check/1).
#include <cmath>

#include "devices/setup_json.hpp"
#include "dsp/units.hpp"
#include "report/plan_report.hpp"

namespace hb {
namespace {

// Non-finite numbers become null: JSON has no NaN, and a reader must see "no value", not a number.
nlohmann::json num(double v) {
    return std::isfinite(v) ? nlohmann::json(v) : nlohmann::json(nullptr);
}

nlohmann::json line_json(const LineResult& l) {
    return {
        {"label", l.line.label},
        {"kind", to_string(l.line.kind)},
        {"m", l.line.m},
        {"n", l.line.n},
        {"freq_hz", num(l.line.freq_hz)},
        {"measured_freq_hz", num(l.freq_hz)},
        {"freq_error_hz", num(l.freq_error_hz)},
        {"level_dbfs", num(l.level_dbfs)},
        {"level_dbm", num(l.level_dbm)},
        {"level_dbc", num(l.level_dbc)},
        {"upper_bound_dbfs", num(l.upper_bound_dbfs)},
        {"upper_bound_dbc", num(l.upper_bound_dbc)},
        {"predicted_dbc", num(l.line.predicted_dbc)},
        {"limit_dbc", num(l.line.limit_dbc)},
        {"margin_db", num(l.margin_db)},
        {"floor_dbfs_per_hz", num(l.floor_dbfs_per_hz)},
        {"search_low_hz", num(l.search_low_hz)},
        {"search_high_hz", num(l.search_high_hz)},
        {"status", to_string(l.status)},
        {"note", l.note},
    };
}

}  // namespace

std::string_view verdict(const PlanReport& r) {
    const bool image_failed = r.image && r.image->status == LineStatus::fail;
    for (const LineResult& l : r.check.lines)
        if (l.status == LineStatus::fail) return "fail";
    if (image_failed) return "fail";
    for (const UnexplainedPeak& u : r.check.unexplained)
        if (u.status == LineStatus::fail) return "fail";  // a measured spurious response below its rejection limit
    if (r.two_tone && (r.two_tone->iip3_status == LineStatus::fail || r.two_tone->iip2_status == LineStatus::fail))
        return "fail";
    return r.check.wanted_observed() ? "pass" : "incomplete";
}

nlohmann::json plan_report_json(const PlanReport& r) {
    const Spectrum& s = r.spectrum;
    const PlanCheck& c = r.check;
    nlohmann::json j;
    j["schema"] = kPlanCheckSchema;
    j["generator"] = "hetbench " HETBENCH_VERSION;
    j["title"] = r.title;
    j["description"] = r.description;
    j["source"] = r.source;
    j["verdict"] = verdict(r);
    j["unit"] = to_string(s.spec.unit);
    j["calibration_db"] = num(s.spec.unit == LevelUnit::dbm ? s.spec.calibration_db : 0.0);
    j["rbw_hz"] = num(s.rbw_hz);
    j["analyzer"] = {
        {"window", to_string(s.spec.window)},
        {"kaiser_beta", num(s.spec.window == WindowType::kaiser ? s.spec.kaiser_beta : std::nan(""))},
        {"fft_size", s.size()},
        {"enbw_bins", num(s.enbw_bins)},
        {"coherent_gain_db", num(db_from_amplitude(s.coherent_gain))},
        {"overlap", num(s.spec.overlap)},
        {"hop", s.hop},
        {"averaging", to_string(s.spec.averaging)},
        {"averages", s.spec.averages},
        {"frames", s.frames},
        {"center_hz", num(s.center_hz)},
        {"sample_rate_hz", num(s.sample_rate_hz)},
        {"span_low_hz", num(s.low_hz())},
        {"span_high_hz", num(s.high_hz())},
    };

    nlohmann::json w = line_json(c.wanted);
    w.erase("level_dbc");
    w.erase("upper_bound_dbc");
    w.erase("predicted_dbc");
    w.erase("limit_dbc");
    w.erase("margin_db");
    j["wanted"] = w;

    nlohmann::json products = nlohmann::json::array();
    for (const LineResult& l : c.lines) products.push_back(line_json(l));
    j["products"] = products;

    nlohmann::json unexplained = nlohmann::json::array();
    for (const UnexplainedPeak& u : c.unexplained)
        unexplained.push_back(
            {{"freq_hz", num(u.freq_hz)},
             {"level_dbfs", num(u.level_dbfs)},
             {"level_dbm", num(u.level_dbm)},
             {"level_dbc", num(u.level_dbc)},
             {"above_floor_db", num(u.above_floor_db)},
             {"response", u.response.empty() ? nlohmann::json()
                                             : nlohmann::json{{"label", u.response},
                                                              {"m", u.m},
                                                              {"n", u.n},
                                                              {"rf_hz", num(u.source_rf_hz)},
                                                              {"rf_level_dbfs", num(u.source_rf_dbfs)},
                                                              {"rejection_db", num(u.rejection_db)},
                                                              {"in_if_band", u.in_if_band},
                                                              {"limit_db", num(u.limit_db)},
                                                              {"status", to_string(u.status)}}}});
    j["unexplained"] = unexplained;
    j["unexplained_truncated"] = c.unexplained_truncated;
    j["unexplained_threshold_db"] = num(c.unexplained_threshold_db);

    if (r.image) {
        const ImageRejection& im = *r.image;
        j["image"] = {{"rf_hz", num(im.rf_hz)},         {"rejection_db", num(im.rejection_db)},
                      {"lower_bound", im.lower_bound},  {"limit_db", num(im.limit_db)},
                      {"status", to_string(im.status)}, {"note", im.note}};
    } else {
        j["image"] = {{"rf_hz", nullptr},
                      {"rejection_db", nullptr},
                      {"lower_bound", false},
                      {"limit_db", num(r.setup.plan.limits.image_rejection_db)},
                      {"status", to_string(LineStatus::not_observable)},
                      {"note", "no image-band measurement in this run"}};
    }

    const NoiseFloor& f = c.floor;
    j["noise_floor"] = {
        {"dbfs_per_hz", num(f.dbfs_per_hz)},
        {"dbm_per_hz", num(s.spec.unit == LevelUnit::dbm ? f.db_per_hz : std::nan(""))},
        {"dbfs_per_rbw", num(f.dbfs_per_rbw)},
        {"low_hz", num(f.low_hz)},
        {"high_hz", num(f.high_hz)},
        {"bins", f.bins},
        {"median_bias_db", num(f.median_bias_db)},
        {"effective_averages", num(f.effective_averages)},
        {"method",
         "median of the bins, divided by the median of a noise bin's distribution for this averaging "
         "(chi-square with Welch's equivalent degrees of freedom, or the order statistics for holds), "
         "second pass without bins above the 99.9 % noise quantile"},
    };
    if (r.two_tone) {
        const TwoToneResult& t = *r.two_tone;
        j["two_tone"] = {{"f1_hz", num(t.f1_hz)},
                         {"f2_hz", num(t.f2_hz)},
                         {"tone_rf_dbfs", num(t.tone_rf_dbfs)},
                         {"gain_db", num(t.gain_db)},
                         {"fundamental_if_dbfs", num(t.fundamental_if_dbfs)},
                         {"im3_low_dbfs", num(t.im3_low_dbfs)},
                         {"im3_high_dbfs", num(t.im3_high_dbfs)},
                         {"im3_upper_bound", t.im3_bound},
                         {"im2_dbfs", num(t.im2_dbfs)},
                         {"im2_upper_bound", t.im2_bound},
                         {"iip3_dbfs", num(t.iip3_dbfs)},
                         {"iip3_dbm", num(t.iip3_dbm)},
                         {"iip3_limit_dbm", num(t.iip3_limit_dbm)},
                         {"iip3_status", to_string(t.iip3_status)},
                         {"iip2_dbfs", num(t.iip2_dbfs)},
                         {"iip2_dbm", num(t.iip2_dbm)},
                         {"iip2_limit_dbm", num(t.iip2_limit_dbm)},
                         {"iip2_status", to_string(t.iip2_status)},
                         {"note", t.note}};
    }
    if (r.run) j["run"] = *r.run;
    j["setup"] = setup_to_json(r.setup);
    return j;
}

}  // namespace hb
