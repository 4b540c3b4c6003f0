// The plan-check report as one CSV table: the wanted output, every expected line, every unexplained peak.
#include <cmath>

#include "dsp/units.hpp"
#include "report/plan_report.hpp"
#include "report/plot.hpp"

namespace hb {
namespace {

std::string cell(double v) {
    return std::isfinite(v) ? format_number(v) : std::string();
}

}  // namespace

std::string csv_text(std::string_view text) {
    std::string t(text);
    if (!t.empty() && (t[0] == '=' || t[0] == '+' || t[0] == '-' || t[0] == '@' || t[0] == '\t' || t[0] == '\r'))
        t.insert(t.begin(), '\'');
    if (t.find_first_of(",\"\r\n") == std::string::npos) return t;
    std::string q = "\"";
    for (char ch : t) {
        if (ch == '"') q += '"';
        q += ch;
    }
    return q + "\"";
}

std::string plan_report_csv(const PlanReport& r) {
    std::string out =
        "row,label,kind,m,n,freq_hz,measured_freq_hz,freq_error_hz,level_dbfs,level_dbm,level_dbc,upper_bound_dbfs,"
        "upper_bound_dbc,predicted_dbc,limit_dbc,margin_db,floor_dbfs_per_hz,status,note\r\n";
    auto line = [&](const char* row, const LineResult& l) {
        out += std::string(row) + "," + csv_text(l.line.label) + "," + std::string(to_string(l.line.kind)) + "," +
               std::to_string(l.line.m) + "," + std::to_string(l.line.n) + "," + cell(l.line.freq_hz) + "," +
               cell(l.freq_hz) + "," + cell(l.freq_error_hz) + "," + cell(l.level_dbfs) + "," + cell(l.level_dbm) +
               "," + cell(l.level_dbc) + "," + cell(l.upper_bound_dbfs) + "," + cell(l.upper_bound_dbc) + "," +
               cell(l.line.predicted_dbc) + "," + cell(l.line.limit_dbc) + "," + cell(l.margin_db) + "," +
               cell(l.floor_dbfs_per_hz) + "," + std::string(to_string(l.status)) + "," + csv_text(l.note) + "\r\n";
    };
    line("wanted", r.check.wanted);
    for (const LineResult& l : r.check.lines) line("product", l);
    for (const UnexplainedPeak& u : r.check.unexplained)
        out +=
            "unexplained,,,,,," + cell(u.freq_hz) + ",," + cell(u.level_dbfs) + "," + cell(u.level_dbm) + "," +
            cell(u.level_dbc) + ",,,,,,,," +
            csv_text((std::isfinite(u.above_floor_db) ? plot::fixed(u.above_floor_db, 1) + " dB above the floor" : "") +
                     (u.response.empty()
                          ? ""
                          : "; " + u.response + " response of a signal at " + plot::fixed(u.source_rf_hz, 0) + " Hz (" +
                                plot::fixed(u.source_rf_dbfs, 1) + " dBFS at RF), rejection " +
                                plot::fixed(u.rejection_db, 1) + " dB")) +
            "\r\n";
    return out;
}

}  // namespace hb
