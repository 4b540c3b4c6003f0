// hetbench synth SCENARIO.toml --frequency F --rate R --seconds S --out NAME: a SigMF recording of the bench
// generator's world, made through SoapySDR exactly as from a receiver tuned there, with the scenario itself (its
// text) and the tuning in the metadata, so the recording says what is in it and can be made again.
#include <filesystem>
#include <fstream>
#include <iostream>
#include <nlohmann/json.hpp>
#include <sstream>

#include "cli/commands.hpp"
#include "devices/recorder.hpp"
#include "devices/recording.hpp"
#include "devices/scenario_file.hpp"
#include "devices/soapy_source.hpp"
#include "dsp/errors.hpp"
#include "dsp/units.hpp"

namespace hb::cli {
namespace {

struct SynthArgs {
    std::string scenario, frequency, rate, out, format = "cf32_le";
    double seconds = 0.0;
    double gain_db = 0.0;
    std::uint64_t seed = 1;
};

double frequency_arg(const std::string& text, const char* option) {
    const auto f = parse_frequency(text);
    if (!f || !std::isfinite(*f) || *f < 0)
        throw InputError(std::string(option) + ": got \"" + text +
                         "\", expected a frequency such as 100e6, \"2.4M\" or \"455 kHz\"");
    return *f;
}

std::string read_text(const std::string& path) {
    std::ifstream f(path, std::ios::binary);
    if (!f) throw InputError(path + ": cannot read the scenario file");
    std::ostringstream s;
    s << f.rdbuf();
    return s.str();
}

// Adds our keys to the metadata the recorder wrote, atomically (temporary file, then rename).
void annotate_meta(const std::string& meta_path, const nlohmann::json& extra) {
    nlohmann::json j = nlohmann::json::parse(read_text(meta_path));
    for (const auto& [k, v] : extra.items()) j["global"][k] = v;
    const std::string tmp = meta_path + ".tmp";
    {
        std::ofstream f(tmp, std::ios::binary | std::ios::trunc);
        if (!f) throw InputError(tmp + ": cannot write the metadata");
        f << j.dump(2) << "\n";
        if (!f) throw InputError(tmp + ": cannot write the metadata");
    }
    std::error_code ec;
    std::filesystem::rename(tmp, meta_path, ec);
    if (ec) throw InputError(meta_path + ": cannot replace the metadata: " + ec.message());
}

void run_synth(const SynthArgs& a, int& rc) {
    const Scenario scenario = load_scenario(a.scenario);  // every problem named before anything is written
    const double f = frequency_arg(a.frequency, "--frequency");
    const double fs = frequency_arg(a.rate, "--rate");
    if (!(fs > 0)) throw InputError("--rate: got \"" + a.rate + "\", expected a rate above 0 Hz");
    if (!(a.seconds > 0) || !std::isfinite(a.seconds))
        throw InputError("--seconds: got " + format_number(a.seconds) + ", expected a duration above 0 s");

    SourceSpec spec;
    spec.kind = SourceKind::generator;
    spec.scenario = a.scenario;
    spec.frequency_hz = f;
    spec.sample_rate_hz = fs;
    spec.gain_db = a.gain_db;
    spec.args = "throttle=false";
    Setup setup;
    setup.bench.seed = a.seed;
    auto src = open_soapy(spec, setup);
    const StreamInfo& info = src->info();

    if (a.out.ends_with(".wav")) {
        // A sound-card style stereo I/Q file (I left, Q right: common practice). WAV has no place for the centre
        // frequency or the scenario: the session that plays it states frequency_hz.
        const auto total = static_cast<std::size_t>(std::llround(a.seconds * info.sample_rate_hz));
        std::vector<cf32> x(total);
        std::size_t got = 0;
        while (got < total) {
            const ReadResult r = src->read(std::span<cf32>(x.data() + got, total - got), 1.0);
            if (r.status == ReadStatus::error || r.status == ReadStatus::end)
                throw InputError("synth: the generator stopped: " + r.message);
            got += r.count;
        }
        write_wav(a.out, x, info.sample_rate_hz, 2, a.format == "ci16_le" ? WavEncoding::pcm16 : WavEncoding::float32);
        std::cout << "synth: " << total << " samples of \"" << scenario.name << "\" at "
                  << format_frequency(info.center_hz) << ", " << format_frequency(info.sample_rate_hz) << "/s\n"
                  << "  WAV:      " << a.out << " (stereo I/Q, " << (a.format == "ci16_le" ? "PCM16" : "float32")
                  << "; state frequency_hz = " << format_number(info.center_hz) << " in the session)\n";
        rc = kExitOk;
        return;
    }
    RecorderOptions ro;
    ro.out = a.out;
    ro.datatype = a.format;
    ro.duration_s = a.seconds;
    ro.description = "hetbench synth: " + (scenario.name.empty() ? a.scenario : scenario.name) + ", tuned to " +
                     format_frequency(info.center_hz) + " at " + format_frequency(info.sample_rate_hz) + "/s";
    const RecorderReport r = record(*src, ro);
    if (!r.complete) throw InputError(r.message);
    annotate_meta(r.meta_path, {{"hetbench:scenario", read_text(a.scenario)},
                                {"hetbench:synth",
                                 {{"frequency_hz", info.center_hz},
                                  {"sample_rate_hz", info.sample_rate_hz},
                                  {"seconds", a.seconds},
                                  {"gain_db", a.gain_db},
                                  {"seed", a.seed},
                                  {"level_offset_db", info.level_offset_db}}}});
    std::cout << "synth: " << r.written << " samples (" << format_number(r.written / info.sample_rate_hz) << " s) of \""
              << scenario.name << "\" at " << format_frequency(info.center_hz) << ", "
              << format_frequency(info.sample_rate_hz) << "/s, " << a.format << "\n"
              << "  data:     " << r.data_path << "\n"
              << "  metadata: " << r.meta_path << " (dBm = dBFS + " << format_number(info.level_offset_db) << ")\n";
    if (r.clipped) std::cout << "  warning: " << r.clipped << " components clipped at full scale\n";
    rc = kExitOk;
}

}  // namespace

void register_synth(CLI::App& app, int& rc) {
    auto* cmd = app.add_subcommand(
        "synth",
        "Write a SigMF recording of a generator scenario, tuned like a receiver (the scenario goes in the metadata)");
    auto a = std::make_shared<SynthArgs>();
    cmd->add_option("scenario", a->scenario, "Scenario file (TOML): the virtual RF world")->required();
    cmd->add_option("--frequency", a->frequency, "Centre frequency (\"1.2M\")")->required();
    cmd->add_option("--rate", a->rate, "Sample rate (\"2.4M\")")->required();
    cmd->add_option("--seconds", a->seconds, "Duration in seconds of stream")->required();
    cmd->add_option("--out", a->out, "Output name: NAME.sigmf-meta and NAME.sigmf-data, or NAME.wav (stereo I/Q)")
        ->required();
    cmd->add_option("--gain", a->gain_db, "Receiver gain in dB (dBFS = dBm - full_scale_dbm + gain; default 0)");
    cmd->add_option("--seed", a->seed, "Seed of every random process in the world (default 1)");
    cmd->add_option("--format", a->format, "Output datatype (WAV: ci16_le writes PCM16, cf32_le float)")
        ->check(CLI::IsMember({"cf32_le", "ci16_le"}));
    cmd->callback([a, &rc] { run_synth(*a, rc); });
}

}  // namespace hb::cli
