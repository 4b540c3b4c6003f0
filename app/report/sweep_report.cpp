// The sweep report's data: JSON, CSV, the plot layout and the files.
#include "report/sweep_report.hpp"

#include <algorithm>
#include <cmath>
#include <fstream>
#include <sstream>

#include "devices/setup_json.hpp"
#include "dsp/errors.hpp"
#include "dsp/units.hpp"
#include "report/plot.hpp"

namespace hb {
namespace {

nlohmann::json num(double v) {
    return std::isfinite(v) ? nlohmann::json(v) : nlohmann::json();
}

nlohmann::json tone_json(const ToneMeasurement& m) {
    return {{"rf_hz", num(m.rf_hz)},
            {"tone_dbfs", num(m.tone_dbfs)},
            {"if_dbfs", num(m.if_dbfs)},
            {"if_hz", num(m.if_hz)},
            {"threshold_dbfs", num(m.threshold_dbfs)},
            {"rejection_db", num(m.rejection_db)},
            {"lower_bound", m.lower_bound},
            {"runs", m.runs}};
}

nlohmann::json response_json(const SweepResponse& r) {
    nlohmann::json j = {{"label", r.response.label},
                        {"expr", r.response.expr},
                        {"kind", std::string(to_string(r.response.kind))},
                        {"m", r.response.m},
                        {"n", r.response.n},
                        {"order", r.response.order},
                        {"rf_hz", num(r.response.rf_hz)},
                        {"rf_low_hz", num(r.response.rf_low_hz)},
                        {"rf_high_hz", num(r.response.rf_high_hz)},
                        {"in_rf_band", r.response.in_rf_band}};
    const nlohmann::json t = tone_json(r.measured);
    for (const auto& [k, v] : t.items())
        if (k != "rf_hz") j[k] = v;
    j["predicted_rejection_db"] = num(r.predicted_rejection_db);
    j["limit_db"] = num(r.limit_db);
    j["margin_db"] = num(r.margin_db);
    j["status"] = std::string(to_string(r.status));
    return j;
}

// The image, half-IF and IF entries: the response itself, or an empty one saying it was not there.
nlohmann::json named_json(const SweepResult& s, int index, double limit_db) {
    if (index >= 0) return response_json(s.responses[static_cast<std::size_t>(index)]);
    return {{"rf_hz", nullptr},          {"rejection_db", nullptr}, {"lower_bound", false},
            {"limit_db", num(limit_db)}, {"margin_db", nullptr},    {"status", "not-observable"}};
}

std::string cell(double v, int decimals = 6) {
    if (!std::isfinite(v)) return "";
    std::ostringstream o;
    o.precision(decimals);
    o << std::fixed << v;
    std::string t = o.str();
    if (t.find('.') != std::string::npos) {
        while (!t.empty() && t.back() == '0') t.pop_back();
        if (!t.empty() && t.back() == '.') t.pop_back();
    }
    return t == "-0" ? "0" : t;
}

void write_bytes(const std::filesystem::path& p, const void* data, std::size_t size) {
    std::ofstream out(p, std::ios::binary | std::ios::trunc);
    out.write(static_cast<const char*>(data), static_cast<std::streamsize>(size));
    out.close();
    if (!out) throw InputError(p.string() + ": cannot write the report file");
}

}  // namespace

nlohmann::json sweep_report_json(const SweepReport& r) {
    const SweepResult& s = r.result;
    const PlanLimits& lim = r.setup.plan.limits;
    nlohmann::json responses = nlohmann::json::array();
    for (const SweepResponse& x : s.responses) responses.push_back(response_json(x));
    nlohmann::json grid = nlohmann::json::array();
    for (const ToneMeasurement& p : s.points)
        grid.push_back(
            {{"rf_hz", num(p.rf_hz)}, {"rejection_db", num(p.rejection_db)}, {"lower_bound", p.lower_bound}});
    nlohmann::json unlisted = nlohmann::json::array();
    for (const SweepUnlisted& u : s.unlisted)
        unlisted.push_back({{"rf_hz", num(u.rf_hz)},
                            {"rf_low_hz", num(u.rf_low_hz)},
                            {"rf_high_hz", num(u.rf_high_hz)},
                            {"rejection_db", num(u.rejection_db)},
                            {"limit_db", num(u.limit_db)},
                            {"status", "fail"}});
    nlohmann::json notes = nlohmann::json::array();
    for (const std::string& n : s.notes) notes.push_back(n);
    return {{"schema", std::string(kSweepSchema)},
            {"title", r.title},
            {"session", r.session},
            {"verdict", std::string(s.verdict())},
            {"method", std::string(to_string(s.method))},
            {"reference_dbfs", num(s.reference_dbfs)},
            {"tone_dbfs", s.method == SweepMethod::fixed_level ? num(s.tone_dbfs) : nlohmann::json()},
            {"max_tone_dbfs", s.method == SweepMethod::equal_output ? num(s.max_tone_dbfs) : nlohmann::json()},
            {"limits",
             {{"spur_rejection_db", num(lim.spur_rejection_db)}, {"image_rejection_db", num(lim.image_rejection_db)}}},
            {"wanted",
             {{"rf_hz", num(s.wanted.rf_hz)},
              {"rf_dbfs", num(s.wanted.tone_dbfs)},
              {"if_hz", num(s.wanted.if_hz)},
              {"if_dbfs", num(s.wanted.if_dbfs)},
              {"conversion_gain_db", num(s.wanted_gain_db)}}},
            {"image", named_json(s, s.image, lim.image_rejection_db)},
            {"half_if", named_json(s, s.half_if, lim.spur_rejection_db)},
            {"if_feedthrough", named_json(s, s.if_feedthrough, lim.spur_rejection_db)},
            {"responses", responses},
            {"sweep", grid},
            {"unlisted", unlisted},
            {"measurement",
             {{"rf_low_hz", num(s.grid.low_hz)},
              {"rf_high_hz", num(s.grid.high_hz)},
              {"step_hz", num(s.grid.step_hz)},
              {"points", s.grid.points},
              {"lo_hz", num(s.lo_hz)},
              {"if_passband",
               {{"center_hz", num(s.passband.center_hz)},
                {"low_hz", num(s.passband.low_hz())},
                {"high_hz", num(s.passband.high_hz())}}},
              {"sample_rate_hz", num(s.sample_rate_hz)},
              {"if_rate_hz", num(s.if_rate_hz)},
              {"tile_hz", num(s.tile_hz)},
              {"tiles", s.tiles},
              {"fft_size", s.fft_size},
              {"window", std::string(to_string(r.setup.analyzer.window))},
              {"rbw_hz", num(s.rbw_hz)},
              {"settle_samples", s.settle_samples},
              {"run_samples", s.run_samples},
              {"runs", s.runs},
              {"samples", s.samples}}},
            {"notes", notes},
            {"setup", setup_to_json(r.setup)}};
}

std::string sweep_report_csv(const SweepReport& r) {
    std::ostringstream o;
    o << "type,label,m,n,rf_hz,tone_dbfs,if_dbfs,rejection_db,lower_bound,limit_db,margin_db,status\n";
    for (const SweepResponse& x : r.result.responses)
        o << "response," << csv_text(x.response.label) << "," << x.response.m << "," << x.response.n << ","
          << cell(x.response.rf_hz, 3) << "," << cell(x.measured.tone_dbfs, 3) << "," << cell(x.measured.if_dbfs, 3)
          << "," << cell(x.measured.rejection_db, 3) << "," << (x.measured.lower_bound ? "true" : "false") << ","
          << cell(x.limit_db, 3) << "," << cell(x.margin_db, 3) << "," << to_string(x.status) << "\n";
    for (const SweepUnlisted& u : r.result.unlisted)
        o << "unlisted,,,," << cell(u.rf_hz, 3) << ",,," << cell(u.rejection_db, 3) << ",false," << cell(u.limit_db, 3)
          << "," << cell(u.rejection_db - u.limit_db, 3) << ",fail\n";
    for (const ToneMeasurement& p : r.result.points)
        o << "grid,,,," << cell(p.rf_hz, 3) << "," << cell(p.tone_dbfs, 3) << "," << cell(p.if_dbfs, 3) << ","
          << cell(p.rejection_db, 3) << "," << (p.lower_bound ? "true" : "false") << ",,,\n";
    return o.str();
}

namespace sweep_plot {

Layout make_layout(const SweepReport& r) {
    const SweepResult& s = r.result;
    Layout p;
    p.f_lo = s.grid.low_hz;
    p.f_hi = s.grid.high_hz > s.grid.low_hz ? s.grid.high_hz : s.grid.low_hz + 1.0;
    p.spur_limit_db = r.setup.plan.limits.spur_rejection_db;
    p.image_limit_db = r.setup.plan.limits.image_rejection_db;
    for (const ToneMeasurement& t : s.points)
        if (std::isfinite(t.rejection_db)) p.trace.push_back({t.rf_hz, t.rejection_db, t.lower_bound});

    // Markers: every response inside the range; labels on the image, half-IF, IF and the five worst others.
    int labelled_others = 0;
    for (std::size_t i = 0; i < s.responses.size(); ++i) {
        const SweepResponse& x = s.responses[i];
        if (!(x.response.rf_hz >= p.f_lo && x.response.rf_hz <= p.f_hi) || !std::isfinite(x.measured.rejection_db))
            continue;
        Marker m;
        m.f_hz = x.response.rf_hz;
        m.db = x.measured.rejection_db;
        m.label = x.response.label;
        m.status = x.status;
        m.bound = x.measured.lower_bound;
        m.limit_db = x.limit_db;
        const bool named = static_cast<int>(i) == s.image || static_cast<int>(i) == s.half_if ||
                           static_cast<int>(i) == s.if_feedthrough;
        m.labelled = named || (!m.bound && labelled_others < 5);
        if (!named && m.labelled) ++labelled_others;
        p.markers.push_back(m);
    }
    if (s.wanted.rf_hz >= p.f_lo && s.wanted.rf_hz <= p.f_hi) {
        Marker m;
        m.f_hz = s.wanted.rf_hz;
        m.db = 0.0;
        m.label = "wanted";
        m.wanted = true;
        m.labelled = true;
        p.markers.push_back(m);
    }

    // Y: 0 dB (the wanted) up to 20 dB over the highest measured rejection and the limits; lower bounds above that
    // are drawn at the top.
    double hi = std::max(p.spur_limit_db, p.image_limit_db), lo = 0.0;
    for (const Point& t : p.trace) {
        if (!t.bound) hi = std::max(hi, t.db);
        lo = std::min(lo, t.db);
    }
    for (const Marker& m : p.markers) {
        if (!m.bound) hi = std::max(hi, m.db);
        lo = std::min(lo, m.db);
    }
    p.db_hi = std::min(300.0, 10.0 * std::ceil((hi + 20.0) / 10.0));
    p.db_lo = std::max(-100.0, 10.0 * std::floor((lo - 5.0) / 10.0));
    const double ystep = plot::nice_step(p.db_hi - p.db_lo, 8);
    for (double v = std::ceil(p.db_lo / ystep) * ystep; v <= p.db_hi + 1e-9; v += ystep)
        p.y_ticks.push_back({v, plot::fixed(v, 0)});

    p.x_ticks = plot::frequency_ticks(p.f_lo, p.f_hi, true, p.x_label);
    return p;
}

}  // namespace sweep_plot

ReportPaths write_sweep_reports(const SweepReport& r, const std::filesystem::path& dir, const std::string& stem) {
    std::error_code ec;
    std::filesystem::create_directories(dir, ec);
    if (ec) throw InputError(dir.string() + ": cannot create the report folder (" + ec.message() + ")");
    ReportPaths paths{dir / (stem + ".json"), dir / (stem + ".csv"), dir / (stem + ".html"), dir / (stem + ".png")};
    const std::string json = sweep_report_json(r).dump(2, ' ', false, nlohmann::json::error_handler_t::replace) + "\n";
    write_bytes(paths.json, json.data(), json.size());
    const std::string csv = sweep_report_csv(r);
    write_bytes(paths.csv, csv.data(), csv.size());
    const std::string html = sweep_report_html(r);
    write_bytes(paths.html, html.data(), html.size());
    const std::vector<std::uint8_t> png = sweep_report_png(r);
    if (png.empty()) throw InputError(paths.png.string() + ": the PNG encoder produced nothing");
    write_bytes(paths.png, png.data(), png.size());
    return paths;
}

}  // namespace hb
