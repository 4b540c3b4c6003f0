// Reports of a spurious-response sweep (dsp/sweep.hpp): one JSON document (schema "hetbench.sweep/1"), a CSV
// table, a self-contained HTML page (summary, inline-SVG plot of rejection against RF frequency with the limit
// lines and the response markers, the tables) and a PNG of the same plot.
//
// Levels carry their unit in their key; non-finite numbers are JSON null and empty CSV cells; text from inputs
// is escaped in HTML and quoted in CSV (the plan report's helpers).
#pragma once

#include <cstdint>
#include <filesystem>
#include <nlohmann/json.hpp>
#include <string>
#include <string_view>
#include <vector>

#include "dsp/setup.hpp"
#include "dsp/sweep.hpp"
#include "report/plan_report.hpp"
#include "report/plot.hpp"

namespace hb {

inline constexpr std::string_view kSweepSchema = "hetbench.sweep/1";

struct SweepReport {
    const Setup& setup;
    const SweepResult& result;
    std::string title;    // e.g. the bench name
    std::string session;  // the session file
};

nlohmann::json sweep_report_json(const SweepReport& r);
std::string sweep_report_csv(const SweepReport& r);
std::string sweep_report_html(const SweepReport& r);
std::vector<std::uint8_t> sweep_report_png(const SweepReport& r, int width = 1200, int height = 640);

// Writes <dir>/<stem>.json, .csv, .html and .png (creating dir). Throws InputError naming the path that could
// not be written.
ReportPaths write_sweep_reports(const SweepReport& r, const std::filesystem::path& dir, const std::string& stem);

namespace sweep_plot {

// The plot, laid out once for the SVG and the PNG: x is RF frequency, y is rejection in dB (up = more).
struct Point {
    double f_hz, db;
    bool bound;  // a lower bound (drawn at its value, or clipped to the top)
};
struct Marker {
    double f_hz = 0.0, db = 0.0;
    std::string label;
    LineStatus status = LineStatus::pass;
    bool bound = false;
    bool wanted = false;
    bool labelled = false;  // the worst few, the image, the half-IF and the IF carry their label
    double limit_db = kNaN;
};
using Tick = plot::Tick;
struct Layout {
    double f_lo = 0.0, f_hi = 1.0, db_lo = 0.0, db_hi = 100.0;
    std::string x_label;  // "MHz"
    std::vector<Tick> x_ticks, y_ticks;
    std::vector<Point> trace;
    std::vector<Marker> markers;
    double spur_limit_db = kNaN, image_limit_db = kNaN;
    double x_of(double hz, double w) const { return (hz - f_lo) / (f_hi - f_lo) * w; }
    double y_of(double db, double h) const { return (db_hi - db) / (db_hi - db_lo) * h; }
};
Layout make_layout(const SweepReport& r);

}  // namespace sweep_plot

}  // namespace hb
