// hetbench verify SESSION.toml [--input REC ...] [--seconds S] [--out DIR] [--jobs N]: runs the session's chain
// over its sources (or over each --input recording in place of the first source) in batch mode, writes the
// plan-check reports (JSON, CSV, HTML, PNG) and prints a short summary.
// Exit: 0 every limit passed, 1 a limit failed or the wanted output was not seen, 2 an error.
#include <spawn.h>
#include <sys/wait.h>
#include <unistd.h>

#include <chrono>
#include <cstdio>
#include <filesystem>
#include <fstream>
#include <iostream>
#include <thread>

#include "cli/commands.hpp"
#include "devices/session.hpp"
#include "dsp/errors.hpp"
#include "dsp/units.hpp"
#include "pipeline/pipeline.hpp"
#include "report/plan_report.hpp"

extern char** environ;

namespace hb::cli {
namespace {

namespace fs = std::filesystem;

struct VerifyArgs {
    std::string session, out = "hetbench-report", stem;
    std::vector<std::string> inputs;
    double seconds = 0.0;
    int jobs = 1;
    bool quiet = false;
};

// What one run gave, for the summary table.
struct RunSummary {
    std::string name, verdict, note;
    int exit_code = kExitError;
    double wanted_dbfs = kNaN, image_db = kNaN, worst_margin_db = kNaN;
    std::string worst_label;
    int fails = 0, unexplained = 0;
    fs::path html;
};

std::string stem_of(const std::string& path) {
    std::string name = fs::path(path).filename().string();
    for (const char* suffix : {".sigmf-meta", ".sigmf-data", ".wav", ".toml"})
        if (name.size() > std::strlen(suffix) && name.ends_with(suffix)) {
            name.resize(name.size() - std::strlen(suffix));
            break;
        }
    std::string out;
    for (char c : name)
        out += (std::isalnum(static_cast<unsigned char>(c)) || c == '-' || c == '_' || c == '.') ? c : '_';
    return out.empty() ? "report" : out;
}

// The session with the recording in place of its first source (keeping that source's swap, level offset, ...).
Setup with_input(Setup s, const std::string& input) {
    SourceSpec spec = s.sources.empty() ? SourceSpec{} : s.sources.front();
    spec.kind = SourceKind::recording;
    std::error_code ec;
    const fs::path abs = fs::absolute(input, ec);
    spec.path = ec ? input : abs.lexically_normal().string();
    spec.args.clear();
    spec.scenario.clear();
    if (s.sources.empty())
        s.sources.push_back(spec);
    else
        s.sources.front() = spec;
    return s;
}

// A progress line on stderr when it is a terminal: percentage, MS/s, time left.
void show_progress(const PipelineStatus& st, double elapsed_s, double limit_samples) {
    const double total = limit_samples > 0 ? limit_samples : static_cast<double>(st.total_samples);
    const double done = static_cast<double>(st.samples_processed);
    const double msps = elapsed_s > 0 ? done / elapsed_s / 1e6 : 0.0;
    if (total > 0) {
        const double frac = std::min(1.0, done / total);
        const int width = 30, fill = static_cast<int>(frac * width);
        const double left = msps > 0 ? (total - done) / (msps * 1e6) : 0.0;
        std::fprintf(stderr, "\r[%s%s] %5.1f %%  %7.1f MS/s  %5.1f s left ", std::string(fill, '#').c_str(),
                     std::string(width - fill, '.').c_str(), 100.0 * frac, msps, left);
    } else {
        std::fprintf(stderr, "\r%.3g samples  %7.1f MS/s ", done, msps);
    }
    std::fflush(stderr);
}

nlohmann::json run_json(const PipelineStatus& st, const ChainAnalysis& a, double wall_s) {
    nlohmann::json notes = nlohmann::json::array();
    for (const auto& n : a.notes) notes.push_back(n);
    auto num = [](double v) -> nlohmann::json { return std::isfinite(v) ? nlohmann::json(v) : nlohmann::json(); };
    (void)wall_s;  // timing is not written: reports of the same input are identical run to run
    return {{"samples_processed", st.samples_processed},
            {"stream_seconds", num(st.stream_time_s)},
            {"sample_rate_hz", num(st.sample_rate_hz)},
            {"center_hz", num(st.center_hz)},
            {"overflows", st.overflows},
            {"lost_samples", st.lost_samples},
            {"dropped_samples", st.dropped_samples},
            {"non_finite_samples", st.non_finite},
            {"wanted_rf_dbfs", num(a.wanted_rf_dbfs)},
            {"drive_dbfs", num(a.drive_dbfs)},
            {"notes", notes}};
}

RunSummary summarise(const PlanReport& r, const fs::path& html, const std::string& name) {
    RunSummary s;
    s.name = name;
    s.html = html;
    s.verdict = std::string(verdict(r));
    s.exit_code = s.verdict == "pass" ? kExitOk : kExitFail;
    s.wanted_dbfs = r.check.wanted.level_dbfs;
    if (r.image) s.image_db = r.image->rejection_db;
    for (const LineResult& l : r.check.lines) {
        if (l.status == LineStatus::fail) ++s.fails;
        if (std::isfinite(l.margin_db) && (!std::isfinite(s.worst_margin_db) || l.margin_db < s.worst_margin_db)) {
            s.worst_margin_db = l.margin_db;
            s.worst_label = l.line.label;
        }
    }
    if (r.image && r.image->status == LineStatus::fail) ++s.fails;
    s.unexplained = static_cast<int>(r.check.unexplained.size());
    if (s.verdict == "incomplete") s.note = "the wanted output was not seen: " + r.check.wanted.note;
    return s;
}

// Reads a summary back from a report JSON a child process wrote.
RunSummary summary_from_json(const fs::path& json_path, const std::string& name, int exit_code) {
    RunSummary s;
    s.name = name;
    s.exit_code = exit_code;
    s.html = fs::path(json_path).replace_extension(".html");
    std::ifstream f(json_path);
    if (!f) {
        s.verdict = "error";
        return s;
    }
    try {
        const nlohmann::json j = nlohmann::json::parse(f);
        auto get = [](const nlohmann::json& v) { return v.is_number() ? v.get<double>() : kNaN; };
        s.verdict = j.value("verdict", "error");
        s.wanted_dbfs = get(j["wanted"]["level_dbfs"]);
        s.image_db = get(j["image"]["rejection_db"]);
        if (j["image"].value("status", "") == "fail") ++s.fails;
        for (const auto& p : j["products"]) {
            if (p.value("status", "") == "fail") ++s.fails;
            const double m = get(p["margin_db"]);
            if (std::isfinite(m) && (!std::isfinite(s.worst_margin_db) || m < s.worst_margin_db)) {
                s.worst_margin_db = m;
                s.worst_label = p.value("label", "");
            }
        }
        s.unexplained = static_cast<int>(j["unexplained"].size());
    } catch (const std::exception&) {
        s.verdict = "error";
    }
    return s;
}

std::string db_text(double v) {
    if (!std::isfinite(v)) return "-";
    char b[32];
    std::snprintf(b, sizeof b, "%.2f", v);
    return b;
}

// One run in this process.
RunSummary run_one(Setup setup, const std::string& source_name, const std::string& stem, const VerifyArgs& a) {
    // A looping recording is read once unless --seconds asks for a length: a batch run must end.
    if (a.seconds <= 0)
        for (SourceSpec& src : setup.sources) src.loop = false;
    PipelineOptions o;
    o.live = false;
    o.max_seconds = a.seconds;
    const auto t0 = std::chrono::steady_clock::now();
    auto p = Pipeline::start(setup, o);
    const bool tty = !a.quiet && ::isatty(STDERR_FILENO);
    const double limit = a.seconds > 0 ? a.seconds * p->status().sample_rate_hz : 0.0;
    auto elapsed = [&] { return std::chrono::duration<double>(std::chrono::steady_clock::now() - t0).count(); };
    while (tty && !p->status().finished) {
        show_progress(p->status(), elapsed(), limit);
        std::this_thread::sleep_for(std::chrono::milliseconds(100));
    }
    const PipelineStatus st = p->wait();
    if (tty) {
        show_progress(st, elapsed(), limit);
        std::fprintf(stderr, "\n");
    }
    if (st.failed) throw InputError(source_name + ": " + st.error);
    if (st.samples_processed == 0) throw InputError(source_name + ": the source delivered no samples");
    const ChainAnalysis an = p->final_analysis();
    PlanReport r{setup,
                 an.if_out,
                 an.check,
                 an.image,
                 setup.bench.name,
                 st.source,
                 source_name,
                 an.two_tone.active ? std::optional<TwoToneResult>(an.two_tone) : std::nullopt,
                 run_json(st, an, elapsed())};
    const ReportPaths paths = write_plan_reports(r, a.out, stem);
    RunSummary s = summarise(r, paths.html, stem);
    if (!a.quiet) {
        std::cout << stem << ": " << s.verdict << " (" << format_number(st.stream_time_s) << " s of "
                  << format_frequency(st.sample_rate_hz) << "/s from " << st.source << ")\n";
        std::cout << "  wanted   " << db_text(an.check.wanted.level_dbfs) << " dBFS at "
                  << format_frequency(an.check.wanted.freq_hz) << "\n";
        std::cout << "  image    "
                  << (an.image.status == LineStatus::not_observable
                          ? "not observable (" + an.image.note + ")"
                          : db_text(an.image.rejection_db) + " dB rejection, limit " + db_text(an.image.limit_db) +
                                " dB: " + std::string(to_string(an.image.status)))
                  << "\n";
        int counts[4] = {0, 0, 0, 0};
        for (const LineResult& l : an.check.lines) ++counts[static_cast<int>(l.status)];
        std::cout << "  products " << counts[0] << " pass, " << counts[1] << " fail, " << counts[2]
                  << " below the floor, " << counts[3] << " not observable\n";
        // Peaks no line of the wanted explains: most are other RF signals through their own responses.
        std::size_t traced = 0, in_band = 0;
        for (const UnexplainedPeak& u : an.check.unexplained)
            if (!u.response.empty()) {
                ++traced;
                if (u.in_if_band) ++in_band;
            }
        std::cout << "  other    " << an.check.unexplained.size() << " peaks no line of the wanted explains: " << traced
                  << " traced to another RF signal's response (" << in_band << " in the IF passband, judged), "
                  << an.check.unexplained.size() - traced << " unexplained\n";
        for (const LineResult& l : an.check.lines)
            if (l.status == LineStatus::fail)
                std::cout << "    fail: " << l.line.label << " at " << format_frequency(l.line.freq_hz) << " "
                          << db_text(l.level_dbc) << " dBc, limit " << db_text(l.line.limit_dbc) << " dBc\n";
        if (an.two_tone.active) {
            const TwoToneResult& t = an.two_tone;
            std::cout << "  two-tone " << format_frequency(t.f1_hz) << " + " << format_frequency(t.f2_hz) << ": IIP3 "
                      << (t.im3_bound ? ">= " : "") << db_text(t.iip3_dbm) << " dBm (" << to_string(t.iip3_status)
                      << "), IIP2 " << (t.im2_bound ? ">= " : "") << db_text(t.iip2_dbm) << " dBm ("
                      << to_string(t.iip2_status) << ")\n";
        }
        if (st.non_finite) std::cout << "  " << st.non_finite << " NaN/Inf input samples replaced by 0\n";
        std::cout << "  report   " << paths.html.string() << " (and .json, .csv, .png)\n";
    }
    return s;
}

void write_index(const fs::path& dir, const std::string& title, const std::vector<RunSummary>& runs) {
    std::ofstream f(dir / "index.html", std::ios::trunc);
    f << "<!DOCTYPE html><html><head><meta charset=\"utf-8\"><title>" << html_escape(title)
      << "</title><style>body{font-family:sans-serif;margin:2em}td,th{padding:4px 10px;border-bottom:1px solid "
         "#ccc}.pass{color:#176b2c}.fail{color:#a4161a}.incomplete,.error{color:#8a5a00}</style></head><body><h1>"
      << html_escape(title)
      << "</h1><table><tr><th>input</th><th>verdict</th><th>wanted (dBFS)</th><th>image "
         "rejection (dB)</th><th>worst margin (dB)</th><th>failures</th><th>unexplained</th></tr>";
    for (const RunSummary& r : runs)
        f << "<tr><td><a href=\"" << html_escape(r.html.filename().string()) << "\">" << html_escape(r.name)
          << "</a></td><td class=\"" << html_escape(r.verdict) << "\">" << html_escape(r.verdict) << "</td><td>"
          << db_text(r.wanted_dbfs) << "</td><td>" << db_text(r.image_db) << "</td><td>" << db_text(r.worst_margin_db)
          << (r.worst_label.empty() ? "" : " (" + html_escape(r.worst_label) + ")") << "</td><td>" << r.fails
          << "</td><td>" << r.unexplained << "</td></tr>";
    f << "</table></body></html>\n";
    if (!f) throw InputError((dir / "index.html").string() + ": cannot write the summary page");
}

// Runs each input in a child process, at most `jobs` at a time.
std::vector<RunSummary> run_children(const VerifyArgs& a, const std::vector<std::string>& stems) {
    const std::string exe = fs::read_symlink("/proc/self/exe").string();
    std::vector<RunSummary> out(a.inputs.size());
    std::vector<std::pair<pid_t, std::size_t>> running;
    std::size_t next = 0;
    auto reap = [&](bool block) {
        for (auto it = running.begin(); it != running.end();) {
            int status = 0;
            const pid_t r = ::waitpid(it->first, &status, block ? 0 : WNOHANG);
            if (r == 0) {
                ++it;
                continue;
            }
            const int code = r > 0 && WIFEXITED(status) ? WEXITSTATUS(status) : kExitError;
            const std::size_t k = it->second;
            out[k] = summary_from_json(fs::path(a.out) / (stems[k] + ".json"), stems[k], code);
            if (code == kExitError) out[k].verdict = "error";
            it = running.erase(it);
            if (block) return;
        }
    };
    while (next < a.inputs.size() || !running.empty()) {
        while (next < a.inputs.size() && static_cast<int>(running.size()) < a.jobs) {
            std::vector<std::string> args{exe,     "verify", a.session, "--input",   a.inputs[next],
                                          "--out", a.out,    "--stem",  stems[next], "--quiet"};
            if (a.seconds > 0) args.insert(args.end(), {"--seconds", format_number(a.seconds)});
            std::vector<char*> argv;
            for (auto& s : args) argv.push_back(s.data());
            argv.push_back(nullptr);
            pid_t pid = 0;
            if (::posix_spawn(&pid, exe.c_str(), nullptr, nullptr, argv.data(), environ) != 0)
                throw InputError("verify: cannot start a job for " + a.inputs[next]);
            running.emplace_back(pid, next++);
        }
        reap(true);
    }
    return out;
}

void run_verify(const VerifyArgs& a, int& rc) {
    const Setup session = load_session(a.session);
    if (a.jobs < 1) throw InputError("--jobs: got " + std::to_string(a.jobs) + ", expected 1 or more");
    std::vector<RunSummary> runs;
    if (a.inputs.empty()) {
        if (session.sources.empty())
            throw InputError(a.session + ": the session has no [[source]]; add one or give --input RECORDING");
        const SourceSpec& s0 = session.sources.front();
        const std::string name =
            s0.kind == SourceKind::recording ? s0.path : (s0.scenario.empty() ? s0.args : s0.scenario);
        runs.push_back(run_one(session, name, a.stem.empty() ? stem_of(a.session) : a.stem, a));
    } else {
        std::vector<std::string> stems;
        for (const auto& in : a.inputs) {
            std::string st = a.inputs.size() == 1 && !a.stem.empty() ? a.stem : stem_of(in);
            while (std::find(stems.begin(), stems.end(), st) != stems.end()) st += "_";
            stems.push_back(st);
        }
        if (a.jobs > 1 && a.inputs.size() > 1) {
            runs = run_children(a, stems);
        } else {
            for (std::size_t k = 0; k < a.inputs.size(); ++k) {
                try {
                    runs.push_back(run_one(with_input(session, a.inputs[k]), a.inputs[k], stems[k], a));
                } catch (const InputError& e) {
                    if (a.inputs.size() == 1) throw;
                    std::cerr << "hetbench: error: " << e.what() << "\n";
                    RunSummary s;
                    s.name = stems[k];
                    s.verdict = "error";
                    runs.push_back(s);
                }
            }
        }
    }
    if (!a.quiet) {
        write_index(a.out, session.bench.name, runs);
        if (runs.size() > 1) {
            std::printf("\n%-28s %-10s %12s %12s %14s %6s %6s\n", "input", "verdict", "wanted dBFS", "image dB",
                        "worst margin", "fails", "unexpl");
            for (const RunSummary& r : runs)
                std::printf("%-28s %-10s %12s %12s %14s %6d %6d\n", r.name.c_str(), r.verdict.c_str(),
                            db_text(r.wanted_dbfs).c_str(), db_text(r.image_db).c_str(),
                            db_text(r.worst_margin_db).c_str(), r.fails, r.unexplained);
        }
        std::cout << "summary: " << (fs::path(a.out) / "index.html").string() << "\n";
    }
    rc = kExitOk;
    for (const RunSummary& r : runs) {
        if (r.verdict == "error")
            rc = kExitError;
        else if (r.verdict != "pass" && rc != kExitError)
            rc = kExitFail;
    }
}

}  // namespace

void register_verify(CLI::App& app, int& rc) {
    auto* cmd = app.add_subcommand("verify",
                                   "Run a session's chain over its sources or recordings and check the plan's "
                                   "limits: reports (JSON, CSV, HTML, PNG); exit 0 pass, 1 fail, 2 error");
    auto a = std::make_shared<VerifyArgs>();
    cmd->add_option("session", a->session, "Session file (TOML)")->required();
    cmd->add_option("--input", a->inputs,
                    "Recording(s) to run in place of the session's first source: one report each plus a summary");
    cmd->add_option("--seconds", a->seconds, "Stream seconds to analyse (default: the whole input)")
        ->check(CLI::NonNegativeNumber);
    cmd->add_option("--out", a->out, "Report folder (default hetbench-report)");
    cmd->add_option("--jobs", a->jobs, "Inputs run in parallel processes (default 1)");
    cmd->add_option("--stem", a->stem, "Report file name without extension (default: the input's or the session's)");
    cmd->add_flag("--quiet", a->quiet, "No summary, no progress");
    cmd->callback([a, &rc] { run_verify(*a, rc); });
}

}  // namespace hb::cli
