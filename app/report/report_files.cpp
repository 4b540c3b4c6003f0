// Writes the four plan-check reports side by side.
#include <fstream>

#include "dsp/errors.hpp"
#include "report/plan_report.hpp"

namespace hb {
namespace {

void write_bytes(const std::filesystem::path& p, const void* data, std::size_t size) {
    std::ofstream out(p, std::ios::binary | std::ios::trunc);
    out.write(static_cast<const char*>(data), static_cast<std::streamsize>(size));
    out.close();
    if (!out) throw InputError(p.string() + ": cannot write the report file");
}

void write_text(const std::filesystem::path& p, const std::string& text) {
    write_bytes(p, text.data(), text.size());
}

}  // namespace

ReportPaths write_plan_reports(const PlanReport& r, const std::filesystem::path& dir, const std::string& stem) {
    std::error_code ec;
    std::filesystem::create_directories(dir, ec);
    if (ec) throw InputError(dir.string() + ": cannot create the report folder (" + ec.message() + ")");
    ReportPaths paths{dir / (stem + ".json"), dir / (stem + ".csv"), dir / (stem + ".html"), dir / (stem + ".png")};
    // Text that is not UTF-8 (a file name in another encoding) is written as U+FFFD: the JSON stays valid.
    write_text(paths.json, plan_report_json(r).dump(2, ' ', false, nlohmann::json::error_handler_t::replace) + "\n");
    write_text(paths.csv, plan_report_csv(r));
    write_text(paths.html, plan_report_html(r));
    const std::vector<std::uint8_t> png = plan_report_png(r);
    if (png.empty()) throw InputError(paths.png.string() + ": the PNG encoder produced nothing");
    write_bytes(paths.png, png.data(), png.size());
    return paths;
}

}  // namespace hb
