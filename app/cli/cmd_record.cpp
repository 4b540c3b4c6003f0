// hetbench record: any source (a SoapySDR device, the bench generator, a recording) into a SigMF
// recording NAME.sigmf-meta + NAME.sigmf-data, with every lost sample annotated as a gap.
#include <csignal>
#include <filesystem>
#include <iostream>

#include "cli/commands.hpp"
#include "devices/recorder.hpp"
#include "devices/recording.hpp"
#include "devices/session.hpp"
#include "dsp/errors.hpp"
#include "dsp/units.hpp"

namespace hb::cli {
namespace {

std::atomic<bool> g_stop{false};
extern "C" void on_stop_signal(int) { g_stop.store(true); }

struct RecordArgs {
    std::string source, session, out, format = "cf32_le", input_format, frequency, rate;
    double duration_s = 0.0;
    std::optional<double> gain_db;
    bool realtime = false;
    double flush_s = 1.0;
    double reopen_for_s = 30.0;
    double stall_s = 10.0;
};

double frequency_arg(const std::string& text, const char* option) {
    const auto f = parse_frequency(text);
    if (!f || !std::isfinite(*f)) throw InputError(std::string(option) + ": got \"" + text +
                                                   "\", expected a frequency such as 100e6, \"2.4M\" or \"455 kHz\"");
    return *f;
}

void run_record(const RecordArgs& a, int& rc) {
    Setup setup;
    SourceSpec spec;
    bool have_setup = false;
    if (!a.session.empty()) {
        if (!a.source.empty()) throw InputError("record: give --source or --session, not both");
        setup = load_session(a.session);
        if (setup.sources.empty()) throw InputError(a.session + ": the session has no [[source]] to record");
        spec = setup.sources.front();
        have_setup = true;
    } else if (!a.source.empty()) {
        if (a.source.find('=') != std::string::npos) {
            spec.kind = SourceKind::device;
            spec.args = a.source;
        } else {
            spec.kind = SourceKind::recording;
            spec.path = a.source;
        }
    } else {
        throw InputError("record: give the source to record (--source PATH or DEVICE-ARGS, or --session FILE)");
    }
    if (!a.input_format.empty()) spec.format = a.input_format;
    if (!a.frequency.empty()) spec.frequency_hz = frequency_arg(a.frequency, "--frequency");
    if (!a.rate.empty()) {
        spec.sample_rate_hz = frequency_arg(a.rate, "--rate");
        if (*spec.sample_rate_hz <= 0) throw InputError("--rate: got \"" + a.rate + "\", expected a rate above 0 Hz");
    }
    if (a.gain_db) spec.gain_db = a.gain_db;

    std::unique_ptr<SampleSource> src;
    if (spec.kind == SourceKind::recording) src = open_recording(spec, setup, RecordingOptions{a.realtime, 65536});
    else src = open_soapy(spec, setup);
    const StreamInfo info = src->info();  // a copy: a reopen replaces the source
    std::cout << "source: " << info.description << " (" << info.hardware << "), centre "
              << format_frequency(info.center_hz) << ", " << format_frequency(info.sample_rate_hz) << " sample rate\n";
    if (const RecordingDetails* d = recording_details(*src))
        for (const std::string& w : d->warnings) std::cerr << "hetbench: warning: " << w << "\n";

    RecorderOptions ro;
    ro.out = a.out;
    ro.datatype = a.format;
    ro.duration_s = a.duration_s;
    ro.flush_interval_s = a.flush_s;
    if (have_setup) ro.setup = setup;
    if (spec.kind != SourceKind::recording) {
        // A device that fails or vanishes is closed and opened again with the same arguments, with backoff.
        ro.reopen_for_s = a.reopen_for_s;
        ro.stall_timeout_s = a.stall_s;
        ro.reopen = [&]() -> SampleSource& {
            src.reset();
            src = open_soapy(spec, setup);
            return *src;
        };
        ro.on_event = [](const std::string& what) { std::cerr << "hetbench: " << what << std::endl; };
    }

    g_stop.store(false);
    auto old_int = std::signal(SIGINT, on_stop_signal);
    auto old_term = std::signal(SIGTERM, on_stop_signal);
    RecorderReport r;
    try {
        r = record(*src, ro, &g_stop);
    } catch (...) {
        std::signal(SIGINT, old_int);
        std::signal(SIGTERM, old_term);
        throw;
    }
    std::signal(SIGINT, old_int);
    std::signal(SIGTERM, old_term);

    const SampleFormat f = *parse_datatype(a.format);
    std::cout << "recorded " << r.written << " samples (" << format_number(r.written / info.sample_rate_hz)
              << " s) as " << a.format << " in " << r.captures << (r.captures == 1 ? " capture" : " captures") << "\n"
              << "  data:     " << r.data_path << " (" << r.written * f.sample_bytes() << " bytes)\n"
              << "  metadata: " << r.meta_path << "\n"
              << "  stream:   " << r.produced << " samples produced = " << r.written << " written + "
              << r.overflow_lost << " lost in the source + " << r.dropped << " dropped\n"
              << "  gaps:     " << r.gaps << " annotated";
    if (r.unknown_gaps) std::cout << " (" << r.unknown_gaps << " with an unknown count)";
    std::cout << ", " << r.overflows << " overflows, " << r.timeouts << " timeouts\n";
    if (r.reopens)
        std::cout << "  reopened: " << r.reopens << (r.reopens == 1 ? " time, " : " times, ")
                  << format_number(std::round(r.outage_s * 10) / 10) << " s without the source (" << r.unknown_gaps
                  << " gaps of unknown length)\n";
    if (r.non_finite) std::cout << "  replaced: " << r.non_finite << " NaN/Inf samples by 0\n";
    for (const std::string& w : r.warnings) std::cerr << "hetbench: warning: " << w << "\n";
    if (!r.complete) {
        std::cerr << "hetbench: error: " << r.message << " (the recording is valid up to sample " << r.written << ")\n";
        rc = kExitError;
        return;
    }
    if (g_stop.load()) std::cout << "stopped by signal; the recording is complete up to here\n";
    rc = kExitOk;
}

}  // namespace

void register_record(CLI::App& app, int& rc) {
    auto* cmd = app.add_subcommand("record", "Record a source into a SigMF recording (NAME.sigmf-meta + NAME.sigmf-data)");
    auto a = std::make_shared<RecordArgs>();
    cmd->add_option("--source", a->source,
                    "A recording (.sigmf-meta, .sigmf-data, .wav, or a raw file with --input-format/--rate/--frequency) "
                    "or SoapySDR device arguments (key=value,...)");
    cmd->add_option("--session", a->session, "Record the first [[source]] of this session (and embed the session)");
    cmd->add_option("--out", a->out, "Output name: NAME.sigmf-meta and NAME.sigmf-data are written")->required();
    cmd->add_option("--duration", a->duration_s, "Seconds of stream to record (0 or absent: until the source ends or Ctrl-C)")
        ->check(CLI::NonNegativeNumber);
    cmd->add_option("--format", a->format, "Output datatype")->check(CLI::IsMember({"cf32_le", "ci16_le"}));
    cmd->add_option("--input-format", a->input_format, "Datatype of a raw input file (SigMF name, e.g. ci16_le, cu8)");
    cmd->add_option("--frequency", a->frequency, "Centre frequency: tune a device, or state a raw/WAV file's (\"100M\")");
    cmd->add_option("--rate", a->rate, "Sample rate: set a device's, or state a raw file's (\"2.4M\")");
    cmd->add_option("--gain", a->gain_db, "Device gain in dB");
    cmd->add_flag("--realtime", a->realtime, "Play a recording source at its real rate (default: as fast as possible)");
    cmd->add_option("--flush-interval", a->flush_s, "Seconds between data flushes and metadata rewrites")
        ->check(CLI::PositiveNumber);
    cmd->add_option(
           "--reopen-for", a->reopen_for_s,
           "Devices: seconds to keep reopening a device that failed or vanished (0: stop at the first failure)")
        ->capture_default_str()
        ->check(CLI::NonNegativeNumber);
    cmd->add_option("--stall-timeout", a->stall_s,
                    "Devices: seconds without a sample that count as a failure (0: wait for ever)")
        ->capture_default_str()
        ->check(CLI::NonNegativeNumber);
    cmd->callback([a, &rc] { run_record(*a, rc); });
}

}  // namespace hb::cli
