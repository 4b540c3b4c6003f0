// The plan-check report as one self-contained HTML page: a summary, the spectrum as inline SVG with markers and
// limits, and the tables. No scripts, no external files; every string from inputs is escaped.
#include <algorithm>
#include <cmath>
#include <sstream>

#include "devices/setup_json.hpp"
#include "devices/utf8.hpp"
#include "dsp/units.hpp"
#include "report/plan_report.hpp"
#include "report/plot.hpp"

namespace hb {
namespace {

using plot::fixed;

std::string freq(double hz) {
    return std::isfinite(hz) ? format_frequency(hz) : "—";
}

std::string db(double v, const char* unit) {
    return std::isfinite(v) ? fixed(v, 2) + " " + unit : "—";
}

std::string status_cell(LineStatus st) {
    const std::string s(to_string(st));
    return "<td class=\"st " + s + "\">" + s + "</td>";
}

constexpr int kW = 1000, kH = 420;                               // SVG size
constexpr int kLeft = 64, kRight = 16, kTop = 28, kBottom = 44;  // plot margins
constexpr int kPw = kW - kLeft - kRight, kPh = kH - kTop - kBottom;

std::string svg_plot(const plot::Plot& p) {
    std::ostringstream o;
    auto X = [&](double hz) { return kLeft + p.x_of(hz, kPw); };
    auto Y = [&](double v) { return kTop + p.y_of(std::clamp(v, p.db_lo, p.db_hi), kPh); };
    o << "<svg xmlns=\"http://www.w3.org/2000/svg\" viewBox=\"0 0 " << kW << " " << kH << "\" role=\"img\">\n";
    o << "<rect x=\"" << kLeft << "\" y=\"" << kTop << "\" width=\"" << kPw << "\" height=\"" << kPh
      << "\" fill=\"#ffffff\" stroke=\"" << css(plot::kInk) << "\"/>\n";
    for (const auto& t : p.y_ticks) {
        o << "<line x1=\"" << kLeft << "\" x2=\"" << kLeft + kPw << "\" y1=\"" << Y(t.value) << "\" y2=\"" << Y(t.value)
          << "\" stroke=\"" << css(plot::kGrid) << "\"/>";
        o << "<text x=\"" << kLeft - 6 << "\" y=\"" << Y(t.value) + 4 << "\" text-anchor=\"end\">"
          << html_escape(t.text) << "</text>\n";
    }
    for (const auto& t : p.x_ticks) {
        o << "<line x1=\"" << X(t.value) << "\" x2=\"" << X(t.value) << "\" y1=\"" << kTop << "\" y2=\"" << kTop + kPh
          << "\" stroke=\"" << css(plot::kGrid) << "\"/>";
        if (X(t.value) < kLeft + kPw - 24)  // leave the corner to the axis unit
            o << "<text x=\"" << X(t.value) << "\" y=\"" << kTop + kPh + 16 << "\" text-anchor=\"middle\">"
              << html_escape(t.text) << "</text>\n";
    }
    o << "<text x=\"" << kLeft + kPw << "\" y=\"" << kTop + kPh + 16 << "\" text-anchor=\"end\">"
      << html_escape(p.x_label) << "</text>\n";
    o << "<text x=\"14\" y=\"" << kTop + kPh / 2 << "\" text-anchor=\"middle\" transform=\"rotate(-90 14 "
      << kTop + kPh / 2 << ")\">" << html_escape(p.y_label) << "</text>\n";

    auto polyline = [&](const std::vector<float>& v, plot::Rgb colour, const char* extra) {
        o << "<polyline fill=\"none\" stroke=\"" << css(colour) << "\" " << extra << " points=\"";
        const double n = static_cast<double>(v.size());
        for (std::size_t i = 0; i < v.size(); ++i) {
            if (!std::isfinite(v[i])) continue;
            o << fixed(kLeft + (static_cast<double>(i) + 0.5) / n * kPw, 1) << "," << fixed(Y(v[i]), 1) << " ";
        }
        o << "\"/>\n";
    };
    polyline(p.floor, plot::kFloor, "stroke-dasharray=\"5 4\" stroke-width=\"1\"");
    polyline(p.trace, plot::kTrace, "stroke-width=\"1\"");

    // Limits: a bar at the limit level across the line's search window.
    for (const auto& m : p.markers) {
        if (!std::isfinite(m.limit_db)) continue;
        const double x0 = std::isfinite(m.search_low_hz) ? X(m.search_low_hz) : X(m.freq_hz) - 4;
        const double x1 = std::isfinite(m.search_high_hz) ? X(m.search_high_hz) : X(m.freq_hz) + 4;
        const double half = std::max(4.0, (x1 - x0) / 2), xc = (x0 + x1) / 2;
        o << "<line x1=\"" << fixed(xc - half, 1) << "\" x2=\"" << fixed(xc + half, 1) << "\" y1=\""
          << fixed(Y(m.limit_db), 1) << "\" y2=\"" << fixed(Y(m.limit_db), 1) << "\" stroke=\"" << css(plot::kLimit)
          << "\" stroke-width=\"3\"><title>limit " << html_escape(m.label) << " " << fixed(m.limit_db, 1)
          << "</title></line>\n";
    }
    // Markers: a stem to the level (dashed for an upper bound), a head and the label.
    for (const auto& m : p.markers) {
        const std::string c = css(plot::status_colour(m));
        const double x = X(m.freq_hz);
        const double y = std::isfinite(m.level_db) ? Y(m.level_db) : kTop + kPh;
        o << "<g><title>" << html_escape(m.label) << " " << freq(m.freq_hz)
          << (std::isfinite(m.level_db) ? (m.upper_bound ? " ≤ " : " ") + fixed(m.level_db, 1) : std::string())
          << "</title>";
        o << "<line x1=\"" << fixed(x, 1) << "\" x2=\"" << fixed(x, 1) << "\" y1=\"" << fixed(y, 1) << "\" y2=\""
          << kTop + kPh << "\" stroke=\"" << c << "\" stroke-width=\"1\""
          << (m.upper_bound ? " stroke-dasharray=\"2 3\"" : "") << "/>";
        if (m.unexplained)
            o << "<path d=\"M" << fixed(x, 1) << " " << fixed(y - 2, 1) << " l-5 -9 h10 z\" fill=\"" << c << "\"/>";
        else
            o << "<circle cx=\"" << fixed(x, 1) << "\" cy=\"" << fixed(y, 1) << "\" r=\"3.5\" fill=\""
              << (m.upper_bound ? "#ffffff" : c) << "\" stroke=\"" << c << "\"/>";
        o << "<text x=\"" << fixed(x + 4, 1) << "\" y=\"" << fixed(std::max<double>(kTop + 10, y - 8), 1)
          << "\" fill=\"" << c << "\" font-size=\"11\">" << html_escape(m.label) << "</text></g>\n";
    }
    o << "</svg>\n";
    return o.str();
}

}  // namespace

std::string html_escape(std::string_view text) {
    // Markup characters become references; bytes that are not UTF-8 (a file name in another encoding) and control
    // characters (not allowed in HTML text) become U+FFFD, so the page is well-formed whatever the input.
    static constexpr std::string_view kReplacement = "\xEF\xBF\xBD";
    std::string out;
    out.reserve(text.size());
    for (std::size_t i = 0; i < text.size(); ++i) {
        const char ch = text[i];
        const auto c = static_cast<unsigned char>(ch);
        if (c >= 0x80) {
            const std::size_t n = utf8_sequence_length(text, i);
            if (n == 0) {
                out += kReplacement;
            } else {
                out.append(text.substr(i, n));
                i += n - 1;
            }
            continue;
        }
        switch (ch) {
            case '&':
                out += "&amp;";
                break;
            case '<':
                out += "&lt;";
                break;
            case '>':
                out += "&gt;";
                break;
            case '"':
                out += "&quot;";
                break;
            case '\'':
                out += "&#39;";
                break;
            case '\t':
            case '\n':
            case '\r':
                out += ch;
                break;
            default:
                if (c < 0x20 || c == 0x7f)
                    out += kReplacement;
                else
                    out += ch;
        }
    }
    return out;
}

std::string plan_report_html(const PlanReport& r) {
    const Spectrum& s = r.spectrum;
    const PlanCheck& c = r.check;
    const char* unit = s.spec.unit == LevelUnit::dbm ? "dBm" : "dBFS";
    const double offset = s.unit_offset_db();
    const std::string v(verdict(r));
    std::ostringstream o;
    o << "<!DOCTYPE html>\n<html lang=\"en\"><head><meta charset=\"utf-8\">\n<title>"
      << html_escape(r.title.empty() ? "plan check" : r.title) << " — hetbench plan check</title>\n<style>"
      << plot::kReportStyle << "</style></head><body>\n";
    o << "<h1>" << html_escape(r.title.empty() ? "Plan check" : r.title) << " <span class=\"verdict " << v << "\">" << v
      << "</span></h1>\n";
    o << "<p class=\"sub\">hetbench " << HETBENCH_VERSION << " plan check · source " << html_escape(r.source)
      << "</p>\n";
    if (!r.description.empty()) o << "<p class=\"desc\">" << html_escape(r.description) << "</p>\n";

    o << "<dl class=\"kv\">";
    o << "<dt>Wanted output</dt><dd>" << html_escape(c.wanted.line.label) << " at "
      << freq(std::isfinite(c.wanted.freq_hz) ? c.wanted.freq_hz : c.wanted.line.freq_hz) << ", "
      << db(c.wanted.level_dbfs + offset, unit) << " (" << to_string(c.wanted.status) << ")</dd>";
    o << "<dt>Noise floor</dt><dd>" << db(c.floor.db_per_hz, unit) << "/Hz, " << db(c.floor.dbfs_per_rbw + offset, unit)
      << " in the RBW</dd>";
    o << "<dt>Analyzer</dt><dd>" << to_string(s.spec.window) << " window, " << s.size() << " points, RBW "
      << freq(s.rbw_hz) << ", " << to_string(s.spec.averaging) << " over " << s.frames << " frames, overlap "
      << fixed(100 * s.spec.overlap, 0) << " %</dd>";
    o << "<dt>Span</dt><dd>" << freq(s.low_hz()) << " to " << freq(s.high_hz()) << " (" << freq(s.sample_rate_hz)
      << " sample rate)</dd>";
    if (s.spec.unit == LevelUnit::dbm)
        o << "<dt>Calibration</dt><dd>dBm = dBFS " << fixed(s.spec.calibration_db, 2) << " dB</dd>";
    o << "</dl>\n";

    o << "<h2>Spectrum</h2>\n" << svg_plot(plot::make_plot(r, kPw));
    o << "<p class=\"legend\">";
    struct Key {
        const char* name;
        plot::Rgb colour;
    };
    for (const Key& k :
         {Key{"pass", plot::kPass}, Key{"fail", plot::kFail}, Key{"below floor (bound)", plot::kBelow},
          Key{"unexplained", plot::kUnexplained}, Key{"limit", plot::kLimit}, Key{"noise floor", plot::kFloor}})
        o << "<span><i class=\"sw\" style=\"background:" << css(k.colour) << "\"></i>" << k.name << "</span>";
    o << "</p>\n";

    o << "<h2>Expected lines</h2>\n<table><tr><th>Line</th><th>Kind</th><th>m, n</th><th>Expected</th>"
         "<th>Error</th><th>Level</th><th>dBc</th><th>Predicted</th><th>Limit</th><th>Margin</th><th>Status</th>"
         "<th>Note</th></tr>\n";
    auto row = [&](const LineResult& l) {
        const bool bound = l.status == LineStatus::below_floor;
        o << "<tr><td>" << html_escape(l.line.label) << "</td><td>" << to_string(l.line.kind) << "</td><td>" << l.line.m
          << ", " << l.line.n << "</td><td class=\"num\">" << freq(l.line.freq_hz) << "</td><td class=\"num\">"
          << (std::isfinite(l.freq_error_hz) ? fixed(l.freq_error_hz, 1) + " Hz" : "—") << "</td><td class=\"num\">"
          << (bound ? "≤ " + db(l.upper_bound_dbfs + offset, unit) : db(l.level_dbfs + offset, unit))
          << "</td><td class=\"num\">" << (bound ? "≤ " + db(l.upper_bound_dbc, "dBc") : db(l.level_dbc, "dBc"))
          << "</td><td class=\"num\">" << db(l.line.predicted_dbc, "dBc") << "</td><td class=\"num\">"
          << db(l.line.limit_dbc, "dBc") << "</td><td class=\"num\">" << db(l.margin_db, "dB") << "</td>"
          << status_cell(l.status) << "<td>" << html_escape(l.note) << "</td></tr>\n";
    };
    row(c.wanted);
    for (const LineResult& l : c.lines) row(l);
    o << "</table>\n";

    o << "<h2>Unexplained peaks</h2>\n";
    if (c.unexplained.empty()) {
        o << "<p>None more than " << fixed(c.unexplained_threshold_db, 1)
          << " dB above the local floor outside the expected lines.</p>\n";
    } else {
        o << "<table><tr><th>Frequency</th><th>Level</th><th>dBc</th><th>Above floor</th><th>Explained by</th>"
             "<th>Rejection</th></tr>\n";
        for (const UnexplainedPeak& u : c.unexplained) {
            o << "<tr><td class=\"num\">" << freq(u.freq_hz) << "</td><td class=\"num\">"
              << db(u.level_dbfs + offset, unit) << "</td><td class=\"num\">" << db(u.level_dbc, "dBc")
              << "</td><td class=\"num\">" << db(u.above_floor_db, "dB") << "</td><td>";
            if (!u.response.empty())
                o << html_escape(u.response) << " response of the signal at " << freq(u.source_rf_hz) << " ("
                  << db(u.source_rf_dbfs + offset, unit) << " at RF)";
            o << "</td><td class=\"num\">" << db(u.rejection_db, "dB") << "</td></tr>\n";
        }
        o << "</table>\n";
        if (c.unexplained_truncated) o << "<p>More peaks were found than listed.</p>\n";
    }

    o << "<h2>Image rejection</h2>\n";
    if (r.image) {
        const ImageRejection& im = *r.image;
        o << "<table><tr><th>Image RF</th><th>Rejection</th><th>Limit</th><th>Status</th><th>Note</th></tr><tr><td "
             "class=\"num\">"
          << freq(im.rf_hz) << "</td><td class=\"num\">" << (im.lower_bound ? "≥ " : "") << db(im.rejection_db, "dB")
          << "</td><td class=\"num\">" << db(im.limit_db, "dB") << "</td>" << status_cell(im.status) << "<td>"
          << html_escape(im.note) << "</td></tr></table>\n";
    } else {
        o << "<p>Not measured in this run (no image-band signal).</p>\n";
    }

    if (r.two_tone) {
        const TwoToneResult& t = *r.two_tone;
        o << "<h2>Two-tone test</h2>\n<table><tr><th>Tones</th><th>Per tone at RF</th><th>Gain</th><th>IM3 low / high"
             "</th><th>IM2 (f1+f2)</th><th>IIP3</th><th>IIP2</th></tr><tr><td class=\"num\">"
          << freq(t.f1_hz) << ", " << freq(t.f2_hz) << "</td><td class=\"num\">" << db(t.tone_rf_dbfs + offset, unit)
          << "</td><td class=\"num\">" << db(t.gain_db, "dB") << "</td><td class=\"num\">"
          << db(t.im3_low_dbfs + offset, unit) << " / " << db(t.im3_high_dbfs + offset, unit)
          << "</td><td class=\"num\">" << (t.im2_bound ? "< " : "") << db(t.im2_dbfs + offset, unit)
          << "</td><td class=\"num\">" << (t.im3_bound ? "≥ " : "") << db(t.iip3_dbm, "dBm") << " ("
          << html_escape(to_string(t.iip3_status)) << ")</td><td class=\"num\">" << (t.im2_bound ? "≥ " : "")
          << db(t.iip2_dbm, "dBm") << " (" << html_escape(to_string(t.iip2_status))
          << ")</td></tr></table>\n<p>IIP3 = P_in + (P_fund − P_IM3)/2 and "
             "IIP2 = P_in + (P_fund − P_IM2), P_in per tone at the RF port. "
          << html_escape(t.note) << "</p>\n";
    }

    o << "<h2>Setup</h2>\n<details><summary>Full setup (JSON)</summary><pre>"
      << html_escape(setup_to_json(r.setup).dump(2, ' ', false, nlohmann::json::error_handler_t::replace))
      << "</pre></details>\n";
    o << "</body></html>\n";
    return o.str();
}

}  // namespace hb
