// Reports of a plan check: one JSON document (schema "hetbench.plan-check/1"), a CSV table, a self-contained
// HTML page (inline SVG plot and tables) and a PNG of the spectrum with its markers.
//
// Every level carries its unit in its key (…_dbfs, …_dbm, …_dbc, …_db, …_hz). Non-finite numbers are written
// as JSON null and as empty CSV cells, never as NaN. Text from inputs (titles, descriptions, file names,
// labels, notes) is escaped in HTML and quoted in CSV.
#pragma once

#include <cstdint>
#include <filesystem>
#include <nlohmann/json.hpp>
#include <optional>
#include <string>
#include <string_view>
#include <vector>

#include "dsp/measure.hpp"
#include "dsp/setup.hpp"
#include "dsp/signal_chain.hpp"
#include "dsp/spectrum.hpp"

namespace hb {

inline constexpr std::string_view kPlanCheckSchema = "hetbench.plan-check/1";

struct PlanReport {
    const Setup& setup;
    const Spectrum& spectrum;
    const PlanCheck& check;
    std::optional<ImageRejection> image;  // when the caller measured one
    std::string title;                    // e.g. the bench name
    std::string description;              // the source's own description (a recording's text, a device)
    std::string source;                   // file name or device arguments
    std::optional<TwoToneResult> two_tone = std::nullopt;  // a two-tone test's intercepts
    std::optional<nlohmann::json> run = std::nullopt;  // how the run went (samples, drops, notes): written as "run" in the JSON
};

// pass: the wanted output was seen and nothing failed; fail: a line or the image rejection failed;
// incomplete: the wanted output was not seen (nothing could be judged).
std::string_view verdict(const PlanReport& r);

nlohmann::json plan_report_json(const PlanReport& r);
std::string plan_report_csv(const PlanReport& r);
std::string plan_report_html(const PlanReport& r);
// PNG file contents (RGB) of the spectrum plot.
std::vector<std::uint8_t> plan_report_png(const PlanReport& r, int width = 1200, int height = 640);

struct ReportPaths {
    std::filesystem::path json, csv, html, png;
};
// Writes <dir>/<stem>.json, .csv, .html and .png (creating dir). Throws InputError naming the path that
// could not be written.
ReportPaths write_plan_reports(const PlanReport& r, const std::filesystem::path& dir, const std::string& stem);

// &, <, >, " and ' as character references.
std::string html_escape(std::string_view text);
// A CSV field (RFC 4180): quoted when it holds a comma, quote or line break. Text that a spreadsheet would read
// as a formula (starting with =, +, -, @, tab or CR) is prefixed with an apostrophe.
std::string csv_text(std::string_view text);

}  // namespace hb
