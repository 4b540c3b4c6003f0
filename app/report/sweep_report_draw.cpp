// The sweep report drawn: the HTML page (inline SVG, no scripts, no external files) and the PNG (drawn on the CPU
// with stb_easy_font's segment glyphs, encoded by libstb).

#include <algorithm>
#include <cmath>
#include <cstring>
#include <sstream>

#include "dsp/units.hpp"
#include "report/canvas.hpp"
#include "report/plot.hpp"
#include "report/sweep_report.hpp"

namespace hb {
namespace {

using plot::fixed;
using plot::Rgb;
using sweep_plot::Layout;

std::string freq(double hz) {
    return std::isfinite(hz) ? format_frequency(hz) : "—";
}

std::string db(double v) {
    return std::isfinite(v) ? fixed(v, 2) + " dB" : "—";
}

std::string rejection_text(const ToneMeasurement& m) {
    return std::isfinite(m.rejection_db) ? (m.lower_bound ? "≥ " : "") + db(m.rejection_db) : "—";
}

Rgb colour_of(const sweep_plot::Marker& m) {
    if (m.wanted) return plot::kWanted;
    switch (m.status) {
        case LineStatus::pass:
            return plot::kPass;
        case LineStatus::fail:
            return plot::kFail;
        default:
            return plot::kBelow;
    }
}

constexpr int kW = 1000, kH = 440;
constexpr int kLeft = 64, kRight = 16, kTop = 28, kBottom = 44;
constexpr int kPw = kW - kLeft - kRight, kPh = kH - kTop - kBottom;

std::string svg_plot(const Layout& p) {
    std::ostringstream o;
    auto X = [&](double hz) { return kLeft + p.x_of(hz, kPw); };
    auto Y = [&](double v) { return kTop + p.y_of(std::clamp(v, p.db_lo, p.db_hi), kPh); };
    o << "<svg xmlns=\"http://www.w3.org/2000/svg\" viewBox=\"0 0 " << kW << " " << kH << "\" role=\"img\">\n";
    o << "<rect x=\"" << kLeft << "\" y=\"" << kTop << "\" width=\"" << kPw << "\" height=\"" << kPh
      << "\" fill=\"#ffffff\" stroke=\"" << css(plot::kInk) << "\"/>\n";
    for (const auto& t : p.y_ticks) {
        o << "<line x1=\"" << kLeft << "\" x2=\"" << kLeft + kPw << "\" y1=\"" << fixed(Y(t.value), 1) << "\" y2=\""
          << fixed(Y(t.value), 1) << "\" stroke=\"" << css(plot::kGrid) << "\"/>";
        o << "<text x=\"" << kLeft - 6 << "\" y=\"" << fixed(Y(t.value) + 4, 1) << "\" text-anchor=\"end\">"
          << html_escape(t.text) << "</text>\n";
    }
    for (const auto& t : p.x_ticks) {
        o << "<line x1=\"" << fixed(X(t.value), 1) << "\" x2=\"" << fixed(X(t.value), 1) << "\" y1=\"" << kTop
          << "\" y2=\"" << kTop + kPh << "\" stroke=\"" << css(plot::kGrid) << "\"/>";
        if (X(t.value) < kLeft + kPw - 24)
            o << "<text x=\"" << fixed(X(t.value), 1) << "\" y=\"" << kTop + kPh + 16 << "\" text-anchor=\"middle\">"
              << html_escape(t.text) << "</text>\n";
    }
    o << "<text x=\"" << kLeft + kPw << "\" y=\"" << kTop + kPh + 16 << "\" text-anchor=\"end\">"
      << html_escape(p.x_label) << "</text>\n";
    o << "<text x=\"14\" y=\"" << kTop + kPh / 2 << "\" text-anchor=\"middle\" transform=\"rotate(-90 14 "
      << kTop + kPh / 2 << ")\">rejection (dB)</text>\n";

    // Limits: the spur-rejection limit across the plot, the image limit as a bar under the image marker.
    if (std::isfinite(p.spur_limit_db))
        o << "<line x1=\"" << kLeft << "\" x2=\"" << kLeft + kPw << "\" y1=\"" << fixed(Y(p.spur_limit_db), 1)
          << "\" y2=\"" << fixed(Y(p.spur_limit_db), 1) << "\" stroke=\"" << css(plot::kLimit)
          << "\" stroke-width=\"1.5\" stroke-dasharray=\"6 4\"><title>spur rejection limit "
          << fixed(p.spur_limit_db, 1) << " dB</title></line>\n";
    for (const auto& m : p.markers)
        if (m.label == "image" && std::isfinite(m.limit_db))
            o << "<line x1=\"" << fixed(X(m.f_hz) - 10, 1) << "\" x2=\"" << fixed(X(m.f_hz) + 10, 1) << "\" y1=\""
              << fixed(Y(m.limit_db), 1) << "\" y2=\"" << fixed(Y(m.limit_db), 1) << "\" stroke=\"" << css(plot::kLimit)
              << "\" stroke-width=\"3\"><title>image rejection limit " << fixed(m.limit_db, 1)
              << " dB</title></line>\n";

    // The grid, segment by segment: in the trace colour where either end was measured, grey between two lower
    // bounds (nothing seen in the passband at either point).
    for (const bool bounds : {true, false}) {
        o << "<path fill=\"none\" stroke=\"" << css(bounds ? plot::kFloor : plot::kTrace) << "\" stroke-width=\""
          << (bounds ? "1" : "1.2") << "\" d=\"";
        for (std::size_t i = 1; i < p.trace.size(); ++i) {
            const auto& a = p.trace[i - 1];
            const auto& b = p.trace[i];
            if ((a.bound && b.bound) != bounds) continue;
            o << "M" << fixed(X(a.f_hz), 1) << " " << fixed(Y(a.db), 1) << "L" << fixed(X(b.f_hz), 1) << " "
              << fixed(Y(b.db), 1);
        }
        o << "\"/>\n";
    }

    for (const auto& m : p.markers) {
        const std::string c = css(colour_of(m));
        const double x = X(m.f_hz), y = Y(m.db);
        o << "<g><title>" << html_escape(m.label) << " " << freq(m.f_hz) << (m.bound ? " ≥ " : " ") << fixed(m.db, 1)
          << " dB</title>";
        o << "<line x1=\"" << fixed(x, 1) << "\" x2=\"" << fixed(x, 1) << "\" y1=\"" << fixed(y, 1) << "\" y2=\""
          << kTop + kPh << "\" stroke=\"" << c << "\" stroke-width=\"1\" stroke-opacity=\"0.5\""
          << (m.bound ? " stroke-dasharray=\"2 3\"" : "") << "/>";
        if (m.bound)
            o << "<path d=\"M" << fixed(x, 1) << " " << fixed(y - 6, 1) << " l-4 7 h8 z\" fill=\"#ffffff\" stroke=\""
              << c << "\"/>";
        else
            o << "<circle cx=\"" << fixed(x, 1) << "\" cy=\"" << fixed(y, 1) << "\" r=\"3.5\" fill=\"" << c << "\"/>";
        if (m.labelled) {
            const bool right_edge = x > kLeft + kPw - 60;  // labels near the right edge go left of the marker
            o << "<text x=\"" << fixed(right_edge ? x - 5 : x + 5, 1) << "\" y=\""
              << fixed(std::max<double>(kTop + 10, y - 7), 1) << "\" fill=\"" << c << "\""
              << (right_edge ? " text-anchor=\"end\"" : "") << ">" << html_escape(m.label) << "</text>";
        }
        o << "</g>\n";
    }
    o << "</svg>\n";
    return o.str();
}

// ---- PNG ------------------------------------------------------------------------------------------------------

using namespace canvas;

}  // namespace

std::string sweep_report_html(const SweepReport& r) {
    const SweepResult& s = r.result;
    const std::string v(s.verdict());
    const std::string title = r.title.empty() ? "Spurious-response sweep" : r.title;
    std::ostringstream o;
    o << "<!DOCTYPE html>\n<html lang=\"en\"><head><meta charset=\"utf-8\">\n<title>" << html_escape(title)
      << " — hetbench sweep</title>\n<style>" << plot::kReportStyle << "</style></head><body>\n";
    o << "<h1>" << html_escape(title) << " <span class=\"verdict " << v << "\">" << v << "</span></h1>\n";
    o << "<p class=\"sub\">hetbench " << HETBENCH_VERSION << " spurious-response sweep · session "
      << html_escape(r.session) << "</p>\n";

    auto named = [&](int i) -> std::string {
        if (i < 0) return "not in the list";
        const SweepResponse& x = s.responses[static_cast<std::size_t>(i)];
        return freq(x.response.rf_hz) + ": " + rejection_text(x.measured) + " (limit " + db(x.limit_db) + ", " +
               std::string(to_string(x.status)) + ")";
    };
    o << "<dl class=\"kv\">";
    o << "<dt>Method</dt><dd>" << to_string(s.method) << ", wanted at " << fixed(s.reference_dbfs, 1) << " dBFS"
      << (s.method == SweepMethod::fixed_level ? ", test tone at " + fixed(s.tone_dbfs, 1) + " dBFS"
                                               : ", test tone raised up to " + fixed(s.max_tone_dbfs, 1) + " dBFS")
      << "</dd>";
    o << "<dt>Wanted</dt><dd>" << freq(s.wanted.rf_hz) << " → " << freq(s.wanted.if_hz) << " at "
      << fixed(s.wanted.if_dbfs, 2) << " dBFS (conversion gain " << db(s.wanted_gain_db) << "), LO " << freq(s.lo_hz)
      << "</dd>";
    o << "<dt>Image</dt><dd>" << html_escape(named(s.image)) << "</dd>";
    o << "<dt>Half-IF</dt><dd>" << html_escape(named(s.half_if)) << "</dd>";
    o << "<dt>IF feedthrough</dt><dd>" << html_escape(named(s.if_feedthrough)) << "</dd>";
    o << "<dt>Grid</dt><dd>" << s.grid.points << " points, " << freq(s.grid.low_hz) << " to " << freq(s.grid.high_hz)
      << " in " << freq(s.grid.step_hz) << " steps</dd>";
    o << "<dt>Measurement</dt><dd>IF passband " << freq(s.passband.low_hz()) << " to " << freq(s.passband.high_hz())
      << "; RF windows of " << freq(s.sample_rate_hz) << " (" << s.tiles << " chains); " << s.fft_size << "-point "
      << to_string(r.setup.analyzer.window) << " FFT, RBW " << freq(s.rbw_hz) << ", after " << s.settle_samples
      << " settling samples; " << s.runs << " runs</dd>";
    o << "</dl>\n";

    o << "<h2>Rejection against RF frequency</h2>\n" << svg_plot(sweep_plot::make_layout(r));
    o << "<p class=\"legend\">";
    struct Key {
        const char* name;
        Rgb colour;
    };
    for (const Key& k : {Key{"measured", plot::kTrace}, Key{"lower bound (nothing in the passband)", plot::kFloor},
                         Key{"pass", plot::kPass}, Key{"fail", plot::kFail}, Key{"below floor", plot::kBelow},
                         Key{"limit", plot::kLimit}})
        o << "<span><i class=\"sw\" style=\"background:" << css(k.colour) << "\"></i>" << k.name << "</span>";
    o << "</p>\n";

    o << "<h2>Spurious responses, worst first</h2>\n<table><tr><th>Response</th><th>m, n</th><th>RF</th>"
         "<th>Tone</th><th>IF out</th><th>Rejection</th><th>Predicted</th><th>Limit</th><th>Margin</th>"
         "<th>Status</th></tr>\n";
    for (const SweepResponse& x : s.responses) {
        const std::string st(to_string(x.status));
        o << "<tr><td>" << html_escape(x.response.label) << "</td><td>" << x.response.m << ", " << x.response.n
          << "</td><td class=\"num\">" << freq(x.response.rf_hz) << "</td><td class=\"num\">"
          << (std::isfinite(x.measured.tone_dbfs) ? fixed(x.measured.tone_dbfs, 2) + " dBFS" : "—")
          << "</td><td class=\"num\">"
          << (std::isfinite(x.measured.if_dbfs)          ? fixed(x.measured.if_dbfs, 2) + " dBFS"
              : std::isfinite(x.measured.threshold_dbfs) ? "< " + fixed(x.measured.threshold_dbfs, 1) + " dBFS"
                                                         : "—")
          << "</td><td class=\"num\">" << rejection_text(x.measured) << "</td><td class=\"num\">"
          << db(x.predicted_rejection_db) << "</td><td class=\"num\">" << db(x.limit_db) << "</td><td class=\"num\">"
          << (x.measured.lower_bound && std::isfinite(x.margin_db) ? "≥ " : "") << db(x.margin_db)
          << "</td><td class=\"st " << st << "\">" << st << "</td></tr>\n";
    }
    o << "</table>\n";

    o << "<h2>Responses outside the list</h2>\n";
    if (s.unlisted.empty()) {
        o << "<p>No grid point outside the listed response bands and the wanted channel responded below the "
          << db(r.setup.plan.limits.spur_rejection_db) << " limit.</p>\n";
    } else {
        o << "<table><tr><th>RF band</th><th>Worst at</th><th>Rejection</th><th>Limit</th></tr>\n";
        for (const SweepUnlisted& u : s.unlisted)
            o << "<tr><td class=\"num\">" << freq(u.rf_low_hz) << " to " << freq(u.rf_high_hz)
              << "</td><td class=\"num\">" << freq(u.rf_hz) << "</td><td class=\"num\">" << db(u.rejection_db)
              << "</td><td class=\"num\">" << db(u.limit_db) << "</td></tr>\n";
        o << "</table>\n";
    }
    if (!s.notes.empty()) {
        o << "<h2>Notes</h2>\n<ul>";
        for (const std::string& n : s.notes) o << "<li>" << html_escape(n) << "</li>";
        o << "</ul>\n";
    }
    o << "</body></html>\n";
    return o.str();
}

std::vector<std::uint8_t> sweep_report_png(const SweepReport& r, int width, int height) {
    width = std::clamp(width, 320, 8000);
    height = std::clamp(height, 240, 8000);
    const int scale = width >= 900 ? 2 : 1;
    const int left = 40 * scale + 24, right = 16, top = 26 * scale + 12, bottom = 20 * scale + 20;
    const int pw = width - left - right, ph = height - top - bottom;
    const Layout p = sweep_plot::make_layout(r);
    Canvas cv(width, height, plot::kPaper);
    auto X = [&](double hz) {
        const double x = p.x_of(hz, pw);
        return left + (std::isfinite(x) ? static_cast<int>(std::lround(std::clamp(x, -8.0, pw + 8.0))) : 0);
    };
    auto Y = [&](double v) {
        return top +
               (std::isfinite(v) ? static_cast<int>(std::lround(p.y_of(std::clamp(v, p.db_lo, p.db_hi), ph))) : ph - 1);
    };
    cv.rect(left, top, left + pw - 1, top + ph - 1, {255, 255, 255});
    for (const auto& t : p.y_ticks) {
        cv.line(left, Y(t.value), left + pw - 1, Y(t.value), plot::kGrid);
        text(cv, left - 6 - text_width(t.text, scale), Y(t.value) - 3 * scale, t.text, plot::kInk, scale);
    }
    for (const auto& t : p.x_ticks) {
        cv.line(X(t.value), top, X(t.value), top + ph - 1, plot::kGrid);
        const int tw = text_width(t.text, scale);
        if (X(t.value) + tw / 2 < left + pw && X(t.value) - tw / 2 > left - 20)
            text(cv, X(t.value) - tw / 2, top + ph + 6, t.text, plot::kInk, scale);
    }
    text(cv, left + pw - text_width(p.x_label, scale), top + ph + 8 + 10 * scale, p.x_label, plot::kInk, scale);
    text(cv, left, top - 10 * scale - 4, "rejection (dB)", plot::kInk, scale);
    // A legend under the plot, left: what the two trace colours and the orange marks are.
    int lx = left;
    for (const auto& [name, colour] : {std::pair<const char*, Rgb>{"measured", plot::kTrace},
                                       std::pair<const char*, Rgb>{"lower bound", plot::kFloor},
                                       std::pair<const char*, Rgb>{"limit", plot::kLimit}}) {
        const int ly = top + ph + 8 + 10 * scale;
        cv.rect(lx, ly + 2 * scale, lx + 8 * scale, ly + 5 * scale, colour);
        text(cv, lx + 11 * scale, ly, name, plot::kInk, scale);
        lx += 11 * scale + text_width(name, scale) + 14 * scale;
    }
    const std::string v(r.result.verdict());
    const std::string title = r.title.empty() ? std::string("sweep") : r.title;
    const Rgb vc = v == "pass" ? plot::kPass : v == "fail" ? plot::kFail : plot::kBelow;
    const int vx = left + pw - text_width(v, scale);
    text(cv, vx, top - 10 * scale - 4, v, vc, scale);
    text(cv, vx - 12 * scale - text_width(title, scale), top - 10 * scale - 4, title, plot::kInk, scale);

    if (std::isfinite(p.spur_limit_db))
        for (int d = -1; d <= 0; ++d)
            cv.line(left, Y(p.spur_limit_db) + d, left + pw - 1, Y(p.spur_limit_db) + d, plot::kLimit, 6);
    for (std::size_t i = 1; i < p.trace.size(); ++i) {
        const auto& a = p.trace[i - 1];
        const auto& b = p.trace[i];
        cv.line(X(a.f_hz), Y(a.db), X(b.f_hz), Y(b.db), a.bound && b.bound ? plot::kFloor : plot::kTrace);
    }
    for (const auto& m : p.markers) {
        const Rgb c = colour_of(m);
        const int x = X(m.f_hz), y = Y(m.db);
        if (m.label == "image" && std::isfinite(m.limit_db))
            cv.rect(x - 10, Y(m.limit_db) - 1, x + 10, Y(m.limit_db) + 1, plot::kLimit);
        if (m.bound) {
            for (int k = 0; k < 6; ++k) cv.line(x - k, y - 6 + k, x + k, y - 6 + k, c);
        } else {
            cv.rect(x - 3, y - 3, x + 3, y + 3, c);
        }
        if (m.labelled) {
            const int tw = text_width(m.label, scale);
            const int tx = x + 5 + tw < left + pw ? x + 5 : x - 5 - tw;  // left of the marker at the right edge
            text(cv, tx, std::max(top + 2, y - 8 * scale - 6), m.label, c, scale);
        }
    }
    cv.line(left - 1, top - 1, left + pw, top - 1, plot::kInk);
    cv.line(left - 1, top + ph, left + pw, top + ph, plot::kInk);
    cv.line(left - 1, top - 1, left - 1, top + ph, plot::kInk);
    cv.line(left + pw, top - 1, left + pw, top + ph, plot::kInk);

    return canvas::png(cv);
}

}  // namespace hb
