// The spectrum plot of a plan report as a PNG (RGB), drawn on the CPU: grid, trace, floor, limits, markers and
// labels. Text uses the segment font of stb_easy_font (quads, ASCII only); the PNG encoder is libstb's.
#include <algorithm>
#include <cmath>
#include <cstring>

#include "report/canvas.hpp"
#include "report/plan_report.hpp"
#include "report/plot.hpp"

namespace hb {
namespace {

using plot::Rgb;

using namespace canvas;

}  // namespace

std::vector<std::uint8_t> plan_report_png(const PlanReport& r, int width, int height) {
    width = std::clamp(width, 320, 8000);
    height = std::clamp(height, 240, 8000);
    const int scale = width >= 900 ? 2 : 1;  // text size
    const int left = 40 * scale + 24, right = 16, top = 26 * scale + 12, bottom = 20 * scale + 20;
    const int pw = width - left - right, ph = height - top - bottom;
    const plot::Plot p = plot::make_plot(r, pw);
    Canvas cv(width, height, plot::kPaper);
    // Coordinates stay on the canvas whatever the numbers (lround of NaN or of huge values is undefined).
    auto X = [&](double hz) {
        const double x = p.x_of(hz, pw);
        return left + (std::isfinite(x) ? static_cast<int>(std::lround(std::clamp(x, -8.0, pw + 8.0))) : 0);
    };
    auto Y = [&](double db) {
        return top + (std::isfinite(db) ? static_cast<int>(std::lround(p.y_of(std::clamp(db, p.db_lo, p.db_hi), ph)))
                                        : ph - 1);
    };

    cv.rect(left, top, left + pw - 1, top + ph - 1, {255, 255, 255});
    for (const auto& t : p.y_ticks) {
        cv.hline(left, left + pw - 1, Y(t.value), plot::kGrid);
        text(cv, left - 6 - text_width(t.text, scale), Y(t.value) - 3 * scale, t.text, plot::kInk, scale);
    }
    for (const auto& t : p.x_ticks) {
        cv.vline(X(t.value), top, top + ph - 1, plot::kGrid);
        const int tw = text_width(t.text, scale);
        if (X(t.value) + tw / 2 < left + pw && X(t.value) - tw / 2 > left - 20)  // labels that fit under the plot
            text(cv, X(t.value) - tw / 2, top + ph + 6, t.text, plot::kInk, scale);
    }
    text(cv, left + pw - text_width(p.x_label, scale), top + ph + 8 + 10 * scale, p.x_label, plot::kInk, scale);
    text(cv, left, top - 10 * scale - 4, p.y_label, plot::kInk, scale);
    const std::string v(verdict(r)), title = r.title.empty() ? std::string("plan check") : r.title;
    const Rgb vc = v == "pass" ? plot::kPass : v == "fail" ? plot::kFail : plot::kBelow;
    const int vx = left + pw - text_width(v, scale);
    text(cv, vx, top - 10 * scale - 4, v, vc, scale);
    text(cv, vx - 12 * scale - text_width(title, scale), top - 10 * scale - 4, title, plot::kInk, scale);

    // Floor (dashed) and trace (columns joined by vertical runs so the line is continuous).
    for (int i = 0; i < pw; ++i)
        if (std::isfinite(p.floor[static_cast<std::size_t>(i)]) && (i / 4) % 2 == 0)
            cv.set(left + i, Y(p.floor[static_cast<std::size_t>(i)]), plot::kFloor);
    int prev = -1;
    for (int i = 0; i < pw; ++i) {
        const int y = Y(p.trace[static_cast<std::size_t>(i)]);
        cv.vline(left + i, prev < 0 ? y : prev, y, plot::kTrace);
        prev = y;
    }

    // Limit bars, then markers with labels stacked upwards where they would overlap.
    for (const auto& m : p.markers) {
        if (!std::isfinite(m.limit_db)) continue;
        int x0 = std::isfinite(m.search_low_hz) ? X(m.search_low_hz) : X(m.freq_hz) - 4;
        int x1 = std::isfinite(m.search_high_hz) ? X(m.search_high_hz) : X(m.freq_hz) + 4;
        const int xc = (x0 + x1) / 2, half = std::max(5, (x1 - x0) / 2);
        x0 = xc - half;
        x1 = xc + half;
        cv.rect(x0, Y(m.limit_db) - 1, x1, Y(m.limit_db) + 1, plot::kLimit);
    }
    struct Box {
        int x0, y0, x1, y1;
    };
    std::vector<Box> used;
    std::vector<plot::Marker> markers = p.markers;
    std::sort(markers.begin(), markers.end(), [](const auto& a, const auto& b) { return a.freq_hz < b.freq_hz; });
    const int th = 8 * scale + 2;
    for (const auto& m : markers) {
        const Rgb c = plot::status_colour(m);
        const int x = X(m.freq_hz);
        const int y = std::isfinite(m.level_db) ? Y(m.level_db) : top + ph - 1;
        cv.vline(x, y, top + ph - 1, c, m.upper_bound ? 3 : 0);
        if (m.unexplained) {
            for (int k = 0; k < 6; ++k) cv.hline(x - 5 + k, x + 5 - k, y - 10 + k, c);
        } else if (m.upper_bound) {
            cv.rect(x - 3, y - 3, x + 3, y + 3, c);
            cv.rect(x - 2, y - 2, x + 2, y + 2, {255, 255, 255});
        } else {
            cv.rect(x - 3, y - 3, x + 3, y + 3, c);
        }
        const int tw = text_width(m.label, scale);
        Box b{x + 4, std::max(top + 2, y - th - 6), x + 4 + tw, std::max(top + 2, y - th - 6) + th};
        for (int tries = 0; tries < 8; ++tries) {
            const bool clash = std::any_of(used.begin(), used.end(), [&](const Box& u) {
                return b.x0 <= u.x1 && u.x0 <= b.x1 && b.y0 <= u.y1 && u.y0 <= b.y1;
            });
            if (!clash) break;
            b.y0 = std::max(top + 2, b.y0 - th - 2);
            b.y1 = b.y0 + th;
        }
        used.push_back(b);
        text(cv, b.x0, b.y0, m.label, c, scale);
    }
    cv.rect(left - 1, top - 1, left + pw, top - 1, plot::kInk);
    cv.rect(left - 1, top + ph, left + pw, top + ph, plot::kInk);
    cv.rect(left - 1, top - 1, left - 1, top + ph, plot::kInk);
    cv.rect(left + pw, top - 1, left + pw, top + ph, plot::kInk);

    return canvas::png(cv);
}

}  // namespace hb
