// The spectrum plot of a plan report, laid out once and drawn twice (SVG in the HTML page, pixels in the PNG):
// axis ranges and ticks, the trace reduced to one peak value per column, the floor, markers and limit marks.
#pragma once

#include <string>
#include <vector>

#include "report/plan_report.hpp"

namespace hb::plot {

struct Marker {
    double freq_hz = 0.0;
    std::string label;
    LineStatus status = LineStatus::pass;
    bool wanted = false;
    bool unexplained = false;
    double level_db = kNaN;  // measured level, or the upper bound for below-floor lines (plot unit)
    bool upper_bound = false;
    double limit_db = kNaN;  // the line's limit as an absolute level (wanted + limit_dbc), plot unit
    double search_low_hz = kNaN, search_high_hz = kNaN;
};

struct Tick {
    double value;
    std::string text;
};

struct Plot {
    double f_lo = 0.0, f_hi = 1.0;   // x range, Hz
    double db_lo = -120, db_hi = 0;  // y range, plot unit
    std::string y_label;             // "dBFS in 244.7 Hz RBW"
    std::string x_label;             // "MHz"
    std::vector<float> trace;        // per column: the highest bin in it, plot unit
    std::vector<float> floor;        // per column: the local noise per RBW, plot unit
    std::vector<Tick> x_ticks, y_ticks;
    std::vector<Marker> markers;

    double x_of(double hz, double width) const { return (hz - f_lo) / (f_hi - f_lo) * width; }
    double y_of(double db, double height) const { return (db_hi - db) / (db_hi - db_lo) * height; }
};

// `columns`: horizontal resolution of the trace (pixels of the plot area).
Plot make_plot(const PlanReport& r, int columns);

// Colours of our own (RGB): by line status, and for the parts of the plot.
struct Rgb {
    unsigned char r, g, b;
};
Rgb status_colour(const Marker& m);
std::string css(Rgb c);
inline constexpr Rgb kPaper{251, 250, 246}, kInk{34, 40, 49}, kGrid{226, 222, 212}, kTrace{29, 78, 137},
    kFloor{150, 150, 150}, kLimit{217, 142, 4}, kPass{42, 127, 98}, kFail{192, 57, 43}, kBelow{122, 134, 154},
    kUnexplained{142, 68, 173}, kWanted{20, 20, 20};

// Level formatting shared by the writers: fixed decimals, "—" for non-finite.
std::string fixed(double v, int decimals);

// A step of 1, 2 or 5 × 10^k giving about `target` intervals over `range`.
double nice_step(double range, int target);
// Ticks of a frequency axis over f_lo..f_hi (Hz), labelled in the unit that suits the largest frequency shown
// (Hz, kHz, MHz, GHz; its name goes to `unit`). `include_end`: a tick may sit on f_hi itself.
std::vector<Tick> frequency_ticks(double f_lo, double f_hi, bool include_end, std::string& unit);

// The stylesheet of the HTML reports (plan check and sweep).
extern const char* const kReportStyle;

}  // namespace hb::plot
