// hetbench sweep SESSION.toml [--out DIR] [--stem NAME] [--quiet]: the spurious-response test in emulation
// (dsp/sweep.hpp): a CW test tone at every predicted response and across an RF grid, through the session's own
// chain, the rejection of each against the plan's limits; reports (JSON, CSV, HTML, PNG) and a summary with the
// speed in points per second. Exit: 0 every limit passed, 1 a limit failed (or could not be shown), 2 an error.
#include <unistd.h>

#include <chrono>
#include <cstdio>
#include <filesystem>
#include <iostream>

#include "cli/commands.hpp"
#include "devices/filter_setup.hpp"
#include "devices/session.hpp"
#include "dsp/errors.hpp"
#include "dsp/sweep.hpp"
#include "dsp/units.hpp"
#include "report/sweep_report.hpp"

namespace hb::cli {
namespace {

namespace fs = std::filesystem;

struct SweepArgs {
    std::string session, out = "hetbench-sweep", stem;
    bool quiet = false;
};

std::string stem_of(const std::string& path) {
    std::string name = fs::path(path).filename().string();
    if (name.size() > 5 && name.ends_with(".toml")) name.resize(name.size() - 5);
    std::string out;
    for (char c : name)
        out += (std::isalnum(static_cast<unsigned char>(c)) || c == '-' || c == '_' || c == '.') ? c : '_';
    return out.empty() ? "sweep" : out + "-sweep";
}

std::string db_text(double v) {
    if (!std::isfinite(v)) return "-";
    char b[32];
    std::snprintf(b, sizeof b, "%.2f", v);
    return b;
}

std::string rejection_text(const ToneMeasurement& m) {
    return (m.lower_bound ? ">= " : "") + db_text(m.rejection_db) + " dB";
}

void print_named(const char* name, const SweepResult& r, int i) {
    std::printf("  %-9s", name);
    if (i < 0) {
        std::printf("not in the response list\n");
        return;
    }
    const SweepResponse& x = r.responses[static_cast<std::size_t>(i)];
    std::printf("%s: %s, limit %s dB: %s\n", format_frequency(x.response.rf_hz).c_str(),
                rejection_text(x.measured).c_str(), db_text(x.limit_db).c_str(),
                std::string(to_string(x.status)).c_str());
}

void run_sweep_command(const SweepArgs& a, int& rc) {
    const Setup setup = load_session(a.session);
    const bool tty = !a.quiet && ::isatty(STDERR_FILENO);
    SweepOptions opt;
    if (tty)
        opt.progress = [](std::size_t done, std::size_t total) {
            const double frac = total ? static_cast<double>(done) / static_cast<double>(total) : 1.0;
            const int width = 30, fill = static_cast<int>(frac * width);
            std::fprintf(stderr, "\r[%s%s] %zu/%zu tones ", std::string(fill, '#').c_str(),
                         std::string(width - fill, '.').c_str(), done, total);
            std::fflush(stderr);
        };
    const auto t0 = std::chrono::steady_clock::now();
    SweepResult r;
    try {
        r = run_sweep(setup, filter_loader(setup), opt);
    } catch (const InputError& e) {
        if (tty) std::fprintf(stderr, "\n");
        throw InputError(a.session + ": " + e.what());  // the keys in the message are this file's
    }
    const double wall = std::chrono::duration<double>(std::chrono::steady_clock::now() - t0).count();
    if (tty) std::fprintf(stderr, "\n");

    // Timing goes to the summary only: reports of the same session are identical run to run.
    const SweepReport report{setup, r, setup.bench.name, a.session};
    const ReportPaths paths = write_sweep_reports(report, a.out, a.stem.empty() ? stem_of(a.session) : a.stem);
    const std::string verdict(r.verdict());
    if (!a.quiet) {
        const std::size_t tones = r.points.size() + r.responses.size() + 1;
        std::printf("%s: %s (%s, wanted %s at %s dBFS -> %s dBFS, gain %s dB)\n", setup.bench.name.c_str(),
                    verdict.c_str(), std::string(to_string(r.method)).c_str(), format_frequency(r.wanted.rf_hz).c_str(),
                    db_text(r.reference_dbfs).c_str(), db_text(r.wanted.if_dbfs).c_str(),
                    db_text(r.wanted_gain_db).c_str());
        print_named("image", r, r.image);
        print_named("half-IF", r, r.half_if);
        print_named("IF", r, r.if_feedthrough);
        int counts[4] = {0, 0, 0, 0};
        for (const SweepResponse& x : r.responses) ++counts[static_cast<int>(x.status)];
        std::printf("  responses %zu: %d pass, %d fail, %d below the floor, %d not tested\n", r.responses.size(),
                    counts[0], counts[1], counts[2], counts[3]);
        int shown = 0;
        for (const SweepResponse& x : r.responses) {
            if (shown == 5 || !std::isfinite(x.margin_db)) break;
            std::printf("    %-10s (%d, %d) %-14s %-14s limit %s dB, %s\n", x.response.label.c_str(), x.response.m,
                        x.response.n, format_frequency(x.response.rf_hz).c_str(), rejection_text(x.measured).c_str(),
                        db_text(x.limit_db).c_str(), std::string(to_string(x.status)).c_str());
            ++shown;
        }
        for (const SweepUnlisted& u : r.unlisted)
            std::printf("  unlisted response %s to %s: %s dB, limit %s dB: fail\n",
                        format_frequency(u.rf_low_hz).c_str(), format_frequency(u.rf_high_hz).c_str(),
                        db_text(u.rejection_db).c_str(), db_text(u.limit_db).c_str());
        std::printf("  grid      %zu points, %s to %s, step %s\n", r.grid.points,
                    format_frequency(r.grid.low_hz).c_str(), format_frequency(r.grid.high_hz).c_str(),
                    format_frequency(r.grid.step_hz).c_str());
        std::printf("  speed     %zu tones (%zu chain runs, %.3g samples, %d RF windows) in %.2f s: %.0f points/s\n",
                    tones, r.runs, static_cast<double>(r.samples), r.tiles, wall,
                    wall > 0 ? static_cast<double>(tones) / wall : 0.0);
        for (const std::string& n : r.notes) std::printf("  note: %s\n", n.c_str());
        std::printf("  report    %s (and .json, .csv, .png)\n", paths.html.string().c_str());
    }
    rc = verdict == "pass" ? kExitOk : kExitFail;
}

}  // namespace

void register_sweep(CLI::App& app, int& rc) {
    auto* cmd = app.add_subcommand("sweep",
                                   "Spurious-response test in emulation: a CW tone at every predicted response and "
                                   "across an RF grid through the session's chain, rejection against the limits; "
                                   "reports (JSON, CSV, HTML, PNG); exit 0 pass, 1 fail, 2 error");
    auto a = std::make_shared<SweepArgs>();
    cmd->add_option("session", a->session, "Session file (TOML); [sweep] sets the range, levels and method")
        ->required();
    cmd->add_option("--out", a->out, "Report folder (default hetbench-sweep)");
    cmd->add_option("--stem", a->stem, "Report file name without extension (default: <session>-sweep)");
    cmd->add_flag("--quiet", a->quiet, "No summary, no progress");
    cmd->callback([a, &rc] { run_sweep_command(*a, rc); });
}

}  // namespace hb::cli
