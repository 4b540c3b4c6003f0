#include "report/plot.hpp"

#include <algorithm>
#include <cmath>
#include <cstdio>

#include "dsp/units.hpp"

namespace hb::plot {

std::string fixed(double v, int decimals) {
    if (!std::isfinite(v)) return "—";
    char buf[64];
    std::snprintf(buf, sizeof buf, "%.*f", decimals, v);
    std::string t = buf;
    if (t[0] == '-' && t.find_first_not_of("-0.") == std::string::npos) t.erase(0, 1);  // no "-0.0"
    return t;
}

Rgb status_colour(const Marker& m) {
    if (m.unexplained) return kUnexplained;
    if (m.wanted) return m.status == LineStatus::pass ? kWanted : kBelow;
    switch (m.status) {
        case LineStatus::pass:
            return kPass;
        case LineStatus::fail:
            return kFail;
        case LineStatus::below_floor:
        case LineStatus::not_observable:
            return kBelow;
    }
    return kInk;
}

std::string css(Rgb c) {
    char buf[16];
    std::snprintf(buf, sizeof buf, "#%02x%02x%02x", c.r, c.g, c.b);
    return buf;
}

Plot make_plot(const PlanReport& r, int columns) {
    const Spectrum& s = r.spectrum;
    const PlanCheck& c = r.check;
    Plot p;
    columns = std::max(columns, 16);
    p.f_lo = s.low_hz();
    p.f_hi = s.high_hz();
    const double offset = s.unit_offset_db();
    const std::string unit(to_string(s.spec.unit));
    p.y_label = unit + " in " + format_frequency(s.rbw_hz, 4) + " RBW";

    // Trace: the highest bin of each column keeps narrow lines visible at any zoom.
    const std::size_t n = s.power.size();
    p.trace.assign(static_cast<std::size_t>(columns), -400.0f);
    p.floor.assign(static_cast<std::size_t>(columns), std::nanf(""));
    const std::vector<double> profile = n ? noise_floor_profile(s) : std::vector<double>{};
    for (std::size_t k = 0; k < n; ++k) {
        const auto col =
            std::min<std::size_t>(static_cast<std::size_t>(columns) - 1, k * static_cast<std::size_t>(columns) / n);
        if (!std::isfinite(s.power[k])) continue;  // a broken bin is not drawn
        const float db = static_cast<float>(db_from_power(std::max(s.power[k], 1e-40)) + offset);
        p.trace[col] = std::max(p.trace[col], db);
    }
    for (int col = 0; col < columns && n; ++col) {
        const std::size_t k = (static_cast<std::size_t>(col) * n + n / 2) / static_cast<std::size_t>(columns);
        const double mu = profile[std::min(k, n - 1)];
        if (std::isfinite(mu))
            p.floor[static_cast<std::size_t>(col)] = static_cast<float>(db_from_power(std::max(mu, 1e-40)) + offset);
    }

    // Markers: the wanted, every expected line inside the span, every unexplained peak.
    const double wanted_db = c.wanted.level_dbfs + offset;
    auto add_line = [&](const LineResult& l, bool wanted) {
        if (!std::isfinite(l.line.freq_hz) || l.line.freq_hz < p.f_lo || l.line.freq_hz >= p.f_hi) return;
        Marker m;
        m.freq_hz = std::isfinite(l.freq_hz) ? l.freq_hz : l.line.freq_hz;
        m.label = l.line.label;
        m.status = l.status;
        m.wanted = wanted;
        m.upper_bound = l.status == LineStatus::below_floor;
        m.level_db = (m.upper_bound ? l.upper_bound_dbfs : l.level_dbfs) + offset;
        m.limit_db = wanted_db + l.line.limit_dbc;
        m.search_low_hz = l.search_low_hz;
        m.search_high_hz = l.search_high_hz;
        p.markers.push_back(m);
    };
    add_line(c.wanted, true);
    for (const LineResult& l : c.lines) add_line(l, false);
    for (const UnexplainedPeak& u : c.unexplained) {
        Marker m;
        m.freq_hz = u.freq_hz;
        m.label = "?";
        m.unexplained = true;
        m.level_db = u.level_dbfs + offset;
        p.markers.push_back(m);
    }

    // Y range: from 10 dB under the lowest floor to 10 dB over the highest of trace, markers and limits,
    // on 10 dB steps.
    float lo = 1e9f, hi = -1e9f;
    for (float v : p.trace)
        if (v > -399.0f) hi = std::max(hi, v);
    for (float v : p.floor)
        if (std::isfinite(v)) lo = std::min(lo, v);
    for (const Marker& m : p.markers) {
        if (std::isfinite(m.level_db)) hi = std::max(hi, static_cast<float>(m.level_db));
        if (std::isfinite(m.limit_db)) {
            hi = std::max(hi, static_cast<float>(m.limit_db));
            lo = std::min(lo, static_cast<float>(m.limit_db));
        }
    }
    if (!(hi > -1e9f)) hi = 0.0f;
    if (!(lo < 1e9f)) lo = hi - 100.0f;
    p.db_hi = 10.0 * std::ceil((hi + 10.0) / 10.0);
    p.db_lo = 10.0 * std::floor((lo - 10.0) / 10.0);
    if (p.db_hi - p.db_lo < 40) p.db_lo = p.db_hi - 40;

    const double ystep = nice_step(p.db_hi - p.db_lo, 8);
    for (double v = std::ceil(p.db_lo / ystep) * ystep; v <= p.db_hi + 1e-9; v += ystep)
        p.y_ticks.push_back({v, fixed(v, 0)});

    p.x_ticks = frequency_ticks(p.f_lo, p.f_hi, false, p.x_label);
    return p;
}

double nice_step(double range, int target) {
    const double raw = range / target;
    const double p = std::pow(10.0, std::floor(std::log10(raw)));
    for (double m : {1.0, 2.0, 5.0, 10.0})
        if (m * p >= raw) return m * p;
    return 10.0 * p;
}

std::vector<Tick> frequency_ticks(double f_lo, double f_hi, bool include_end, std::string& unit) {
    const double fmax = std::max(std::abs(f_lo), std::abs(f_hi));
    double scale = 1.0;
    unit = "Hz";
    if (fmax >= 1e9) {
        scale = 1e9;
        unit = "GHz";
    } else if (fmax >= 1e6) {
        scale = 1e6;
        unit = "MHz";
    } else if (fmax >= 1e3) {
        scale = 1e3;
        unit = "kHz";
    }
    const double xstep = nice_step(f_hi - f_lo, 8);
    const int decimals = std::max(0, static_cast<int>(-std::floor(std::log10(xstep / scale) + 1e-9)));
    const double end = include_end ? f_hi + 1e-9 * xstep : f_hi;
    std::vector<Tick> ticks;
    for (double f = std::ceil(f_lo / xstep) * xstep; include_end ? f <= end : f < end; f += xstep)
        ticks.push_back({f, fixed(f / scale, decimals)});
    return ticks;
}

const char* const kReportStyle = R"(
body { font: 14px/1.45 system-ui, sans-serif; color: #222831; background: #fbfaf6; margin: 24px auto; max-width: 1060px; padding: 0 16px; }
h1 { font-size: 22px; margin: 0 0 4px; } h2 { font-size: 16px; margin: 28px 0 8px; border-bottom: 1px solid #e2ded4; }
.sub { color: #5a6270; margin: 0 0 12px; } .desc { white-space: pre-wrap; }
.verdict { display: inline-block; padding: 2px 10px; border-radius: 3px; color: #fff; font-weight: 600; letter-spacing: .04em; }
.verdict.pass { background: #2a7f62; } .verdict.fail { background: #c0392b; } .verdict.incomplete { background: #7a869a; }
table { border-collapse: collapse; width: 100%; font-variant-numeric: tabular-nums; }
th, td { text-align: left; padding: 3px 8px; border-bottom: 1px solid #ece8df; vertical-align: top; }
th { font-weight: 600; background: #f1eee6; } td.num { text-align: right; white-space: nowrap; }
td.st { font-weight: 600; } td.pass { color: #2a7f62; } td.fail { color: #c0392b; }
td.below-floor, td.not-observable { color: #7a869a; }
svg { width: 100%; height: auto; background: #fbfaf6; } svg text { font-size: 11px; fill: #222831; }
dl.kv { display: grid; grid-template-columns: max-content 1fr; gap: 2px 16px; } dl.kv dt { color: #5a6270; }
pre { background: #f1eee6; padding: 8px; overflow: auto; font-size: 12px; }
.legend span { margin-right: 14px; } .sw { display: inline-block; width: 10px; height: 10px; margin-right: 4px; vertical-align: middle; }
)";

}  // namespace hb::plot
