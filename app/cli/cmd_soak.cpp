// hetbench soak SESSION.toml [--seconds S] [--interval S] [--json]: the live pipeline on the session's sources for a
// long time, printing what a load test needs: samples processed, the real-time rate, device overflows, blocks dropped
// because the DSP fell behind, the DSP load and the resident memory, at start and every interval, so growth (a leak,
// a queue that fills) shows. Exit 1 when memory grew by more than 10 % (and 16 MiB) or anything was dropped.
#include <unistd.h>

#include <chrono>
#include <csignal>
#include <cstdio>
#include <fstream>
#include <iostream>
#include <nlohmann/json.hpp>
#include <thread>

#include "cli/commands.hpp"
#include "cli/fft_wisdom.hpp"
#include "devices/session.hpp"
#include "dsp/errors.hpp"
#include "dsp/units.hpp"
#include "pipeline/pipeline.hpp"

namespace hb::cli {
namespace {

std::atomic<bool> g_stop{false};
extern "C" void on_soak_signal(int) {
    g_stop.store(true);
}

// Resident set size in MiB (/proc/self/statm: pages).
double rss_mib() {
    std::ifstream f("/proc/self/statm");
    long long size = 0, resident = 0;
    f >> size >> resident;
    return static_cast<double>(resident) * static_cast<double>(::sysconf(_SC_PAGESIZE)) / (1024.0 * 1024.0);
}

struct SoakArgs {
    std::string session;
    double seconds = 600.0, interval = 10.0;
    bool json = false;
};

void run_soak(const SoakArgs& a, int& rc) {
    const ScopedFftWisdom wisdom(std::cerr);  // the analyzer's measured plan, kept between runs
    const Setup setup = load_session(a.session);
    if (!(a.seconds > 0) || !(a.interval > 0)) throw InputError("soak: --seconds and --interval must be above 0");
    g_stop.store(false);
    auto old_int = std::signal(SIGINT, on_soak_signal);
    PipelineOptions o;
    o.live = true;
    auto p = Pipeline::start(setup, o);
    const auto t0 = std::chrono::steady_clock::now();
    auto elapsed = [&] { return std::chrono::duration<double>(std::chrono::steady_clock::now() - t0).count(); };
    // Memory is taken as the baseline once the chain has run a few seconds (buffers, plans, the first frames).
    std::this_thread::sleep_for(std::chrono::duration<double>(std::min(2.0, a.seconds / 4)));
    const double rss0 = rss_mib();
    nlohmann::json rows = nlohmann::json::array();
    double last_samples = static_cast<double>(p->status().samples_processed), last_t = elapsed();
    auto report = [&](bool final_row) {
        const PipelineStatus st = p->status();
        const double t = elapsed();
        const double rate = (static_cast<double>(st.samples_processed) - last_samples) / std::max(t - last_t, 1e-9);
        last_samples = static_cast<double>(st.samples_processed);
        last_t = t;
        const double rss = rss_mib();
        rows.push_back({{"t_s", t},
                        {"samples_processed", st.samples_processed},
                        {"msps", rate / 1e6},
                        {"overflows", st.overflows},
                        {"dropped_blocks", st.dropped_blocks},
                        {"dsp_load", st.dsp_load},
                        {"analysis_ms", st.analysis_ms},
                        {"rss_mib", rss},
                        {"state", st.state}});
        if (!a.json)
            std::printf(
                "%8.1f s  %14llu samples  %8.2f MS/s  load %5.1f %%  check %6.1f ms  overflows %llu  dropped %llu  "
                "RSS %.1f MiB  %s\n",
                t, static_cast<unsigned long long>(st.samples_processed), rate / 1e6, 100.0 * st.dsp_load,
                st.analysis_ms, static_cast<unsigned long long>(st.overflows),
                static_cast<unsigned long long>(st.dropped_blocks), rss, final_row ? "(end)" : st.state.c_str());
        std::fflush(stdout);
    };
    report(false);
    while (!g_stop.load() && elapsed() < a.seconds && !p->status().finished) {
        const double next = last_t + a.interval;
        while (!g_stop.load() && elapsed() < std::min(next, a.seconds))
            std::this_thread::sleep_for(std::chrono::milliseconds(50));
        report(false);
    }
    const PipelineStatus st = p->status();
    const double rss1 = rss_mib();
    p->stop();
    std::signal(SIGINT, old_int);
    const bool grew = rss1 > rss0 * 1.10 && rss1 - rss0 > 16.0;
    const bool dropped = st.dropped_blocks > 0;
    nlohmann::json j{{"session", a.session},
                     {"seconds", elapsed()},
                     {"samples_processed", st.samples_processed},
                     {"mean_msps", static_cast<double>(st.samples_processed) / elapsed() / 1e6},
                     {"overflows", st.overflows},
                     {"lost_samples", st.lost_samples},
                     {"dropped_blocks", st.dropped_blocks},
                     {"dropped_samples", st.dropped_samples},
                     {"rss_start_mib", rss0},
                     {"rss_end_mib", rss1},
                     {"memory_grew", grew},
                     {"rows", rows}};
    if (a.json)
        std::cout << j.dump(2) << "\n";
    else
        std::cout << "soak: " << st.samples_processed << " samples in " << format_number(std::round(elapsed()))
                  << " s (" << format_number(std::round(10 * j["mean_msps"].get<double>()) / 10) << " MS/s mean), "
                  << st.dropped_blocks << " blocks dropped, " << st.overflows << " overflows, RSS "
                  << format_number(std::round(rss0 * 10) / 10) << " -> " << format_number(std::round(rss1 * 10) / 10)
                  << " MiB" << (grew ? " (GREW)" : "") << "\n";
    rc = (grew || dropped) ? kExitFail : kExitOk;
}

}  // namespace

void register_soak(CLI::App& app, int& rc) {
    auto* cmd =
        app.add_subcommand("soak", "Run the live chain for a long time and report throughput, drops and memory");
    auto a = std::make_shared<SoakArgs>();
    cmd->add_option("session", a->session, "Session file (TOML), usually with a generator source")->required();
    cmd->add_option("--seconds", a->seconds, "How long to run (default 600)");
    cmd->add_option("--interval", a->interval, "Seconds between report lines (default 10)");
    cmd->add_flag("--json", a->json, "One JSON document at the end instead of lines");
    cmd->callback([a, &rc] { run_soak(*a, rc); });
}

}  // namespace hb::cli
