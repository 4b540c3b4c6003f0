#include "devices/session.hpp"

#include <algorithm>
#include <cmath>
#include <cstdio>
#include <filesystem>
#include <fstream>
#include <limits>
#include <map>
#include <set>
#include <sstream>
#include <toml.hpp>

#include "devices/toml_reader.hpp"
#include "dsp/filter_presets.hpp"
#include "dsp/units.hpp"

namespace hb {
namespace {

// The shared TOML reading habits (devices/toml_reader.hpp): problems with file, line and key path, unknown keys.
using toml_reader::line_of;
using toml_reader::Problems;
using toml_reader::sub_table;
using toml_reader::table_array;
using TableReader = toml_reader::Table;

std::string join_keys(std::initializer_list<const char*> keys) {
    std::string s;
    for (const char* k : keys) {
        if (!s.empty()) s += ", ";
        s += k;
    }
    return s;
}

enum class NumberKind { plain, frequency };

// A number: integer or float, finite. Frequencies may also be strings with a unit ("10.7M", "455 kHz").
bool read_double(TableReader& t, const std::string& key, double& out, std::string_view unit,
                 NumberKind kind = NumberKind::plain) {
    return kind == NumberKind::frequency ? t.frequency(key, out) : t.number(key, out, unit);
}

bool read_freq(TableReader& t, const std::string& key, double& out) {
    return t.frequency(key, out);
}

void read_opt_double(TableReader& t, const std::string& key, std::optional<double>& out, std::string_view unit,
                     NumberKind kind = NumberKind::plain) {
    double x = 0;
    if (read_double(t, key, x, unit, kind)) out = x;
}

void read_opt_freq(TableReader& t, const std::string& key, std::optional<double>& out) {
    read_opt_double(t, key, out, "Hz", NumberKind::frequency);
}

// Ints that the Setup keeps as int: the range check against the validator's limits happens there; the reader
// refuses only what cannot even be represented.
void read_int(TableReader& t, const std::string& key, int& out) {
    t.integer(key, out);
}

void read_opt_int(TableReader& t, const std::string& key, std::optional<int>& out) {
    int x = 0;
    if (t.integer(key, x)) out = x;
}

bool read_string(TableReader& t, const std::string& key, std::string& out) {
    return t.string(key, out);
}
bool read_bool(TableReader& t, const std::string& key, bool& out) {
    return t.boolean(key, out);
}

template <class E>
bool read_enum(TableReader& t, const std::string& key, E& out) {
    return t.enumeration(key, out);
}

void read_bench(TableReader& t, BenchInfo& b) {
    read_string(t, "name", b.name);
    long long seed = 0;
    if (t.integer("seed", seed)) {
        if (seed < 0) {
            t.problems.add(t.problems.key_lines["bench.seed"], "bench.seed",
                           "got " + std::to_string(seed) + ", expected an integer of 0 or more");
        } else {
            b.seed = static_cast<std::uint64_t>(seed);
        }
    }
    t.finish(join_keys({"name", "seed"}));
}

void read_source(TableReader& t, SourceSpec& s) {
    if (!read_enum(t, "kind", s.kind) && t.table.as_table().count("kind") == 0)
        t.missing("kind", "one of " + allowed_names<SourceKind>());
    read_string(t, "path", s.path);
    read_string(t, "args", s.args);
    read_string(t, "scenario", s.scenario);
    read_string(t, "format", s.format);
    read_opt_freq(t, "frequency_hz", s.frequency_hz);
    read_opt_freq(t, "sample_rate_hz", s.sample_rate_hz);
    read_opt_double(t, "gain_db", s.gain_db, "dB");
    read_opt_freq(t, "bandwidth_hz", s.bandwidth_hz);
    read_string(t, "antenna", s.antenna);
    read_double(t, "level_offset_db", s.level_offset_db, "dB");
    read_bool(t, "swap_iq", s.swap_iq);
    read_bool(t, "loop", s.loop);
    if (const toml::value* g = sub_table(t, "gains")) {
        TableReader r{*g, t.key_path("gains"), t.problems, {}};
        for (const auto& [name, v] : g->as_table()) {
            NamedGain ng{name, 0.0};
            if (read_double(r, name, ng.db, "dB")) s.gains.push_back(ng);
        }
        std::sort(s.gains.begin(), s.gains.end(), [](const auto& a, const auto& b) { return a.name < b.name; });
    }
    t.finish(join_keys({"kind", "path", "args", "scenario", "format", "frequency_hz", "sample_rate_hz", "gain_db",
                        "bandwidth_hz", "antenna", "level_offset_db", "swap_iq", "loop", "gains"}));
}

void read_filter(TableReader& t, FilterSpec& f) {
    // A preset fills every key first; the keys written beside it override it (dsp/filter_presets.hpp).
    if (auto it = t.table.as_table().find("preset"); it != t.table.as_table().end() && it->second.is_string())
        if (const auto p = filter_preset(it->second.as_string().str)) f = *p;
    read_enum(t, "type", f.type);
    read_string(t, "preset", f.preset);
    read_enum(t, "response", f.response);
    read_freq(t, "center_hz", f.center_hz);
    read_freq(t, "bandwidth_hz", f.bandwidth_hz);
    read_int(t, "order", f.order);
    read_double(t, "ripple_db", f.ripple_db, "dB");
    read_double(t, "stop_atten_db", f.stop_atten_db, "dB");
    read_freq(t, "transition_hz", f.transition_hz);
    read_enum(t, "fir_method", f.fir_method);
    read_int(t, "sections", f.sections);
    read_double(t, "insertion_loss_db", f.insertion_loss_db, "dB");
    read_string(t, "path", f.path);
    read_bool(t, "linear_phase", f.linear_phase);
    t.finish(
        join_keys({"type", "preset", "response", "center_hz", "bandwidth_hz", "order", "ripple_db", "stop_atten_db",
                   "transition_hz", "fir_method", "sections", "insertion_loss_db", "path", "linear_phase"}));
}

void read_phase_noise(TableReader& t, std::vector<PhaseNoisePoint>& out) {
    const toml::value* v = t.find("phase_noise");
    if (!v) return;
    const std::string expected = "an array of [offset_hz, dbc_per_hz] pairs, e.g. [[1e3, -80], [1e5, -120]]";
    if (!v->is_array()) {
        t.bad(*v, "phase_noise", expected);
        return;
    }
    for (const auto& item : v->as_array()) {
        auto number = [](const toml::value& x, double& d) {
            if (x.is_integer())
                d = static_cast<double>(x.as_integer());
            else if (x.is_floating())
                d = x.as_floating();
            else
                return false;
            return std::isfinite(d);
        };
        PhaseNoisePoint p;
        if (!item.is_array() || item.as_array().size() != 2 || !number(item.as_array()[0], p.offset_hz) ||
            !number(item.as_array()[1], p.dbc_per_hz)) {
            t.bad(item, "phase_noise", expected);
            return;
        }
        out.push_back(p);
    }
}

void read_mixer(TableReader& t, MixerSpec& m) {
    read_enum(t, "model", m.model);
    read_string(t, "preset", m.preset);
    read_opt_double(t, "conversion_gain_db", m.conversion_gain_db, "dB");
    read_opt_double(t, "lo_if_isolation_db", m.lo_if_isolation_db, "dB");
    read_opt_double(t, "rf_if_isolation_db", m.rf_if_isolation_db, "dB");
    read_opt_double(t, "iip2_dbm", m.iip2_dbm, "dBm");
    read_opt_double(t, "iip3_dbm", m.iip3_dbm, "dBm");
    read_opt_double(t, "duty_cycle", m.duty_cycle, "");
    read_opt_double(t, "edge_time", m.edge_time, "");
    read_opt_int(t, "harmonics", m.harmonics);
    read_opt_double(t, "iq_gain_error_db", m.iq_gain_error_db, "dB");
    read_opt_double(t, "iq_phase_error_deg", m.iq_phase_error_deg, "degrees");
    read_opt_double(t, "dc_offset_dbfs", m.dc_offset_dbfs, "dBFS");
    read_opt_double(t, "noise_figure_db", m.noise_figure_db, "dB");
    read_opt_double(t, "noise_dbfs_per_hz", m.noise_dbfs_per_hz, "dBFS/Hz");
    if (const toml::value* lo = sub_table(t, "lo")) {
        TableReader r{*lo, t.key_path("lo"), t.problems, {}};
        read_opt_freq(r, "frequency_hz", m.lo.frequency_hz);
        read_double(r, "level_dbm", m.lo.level_dbm, "dBm");
        read_double(r, "offset_ppm", m.lo.offset_ppm, "ppm");
        read_phase_noise(r, m.lo.phase_noise);
        r.finish(join_keys({"frequency_hz", "level_dbm", "offset_ppm", "phase_noise"}));
    }
    t.finish(join_keys({"model", "preset", "conversion_gain_db", "lo_if_isolation_db", "rf_if_isolation_db", "iip2_dbm",
                        "iip3_dbm", "duty_cycle", "edge_time", "harmonics", "iq_gain_error_db", "iq_phase_error_deg",
                        "dc_offset_dbfs", "noise_figure_db", "noise_dbfs_per_hz", "[lo]"}));
}

void read_if_chain(TableReader& t, IfChainSpec& c) {
    read_opt_freq(t, "center_hz", c.center_hz);
    read_opt_freq(t, "sample_rate_hz", c.sample_rate_hz);
    read_int(t, "decimation", c.decimation);
    read_double(t, "gain_db", c.gain_db, "dB");
    t.finish(join_keys({"center_hz", "sample_rate_hz", "decimation", "gain_db"}));
}

void read_analyzer(TableReader& t, AnalyzerSpec& a) {
    read_int(t, "fft_size", a.fft_size);
    read_enum(t, "window", a.window);
    read_double(t, "kaiser_beta", a.kaiser_beta, "");
    read_double(t, "overlap", a.overlap, "");
    read_int(t, "averages", a.averages);
    read_enum(t, "averaging", a.averaging);
    read_enum(t, "unit", a.unit);
    read_double(t, "calibration_db", a.calibration_db, "dB");
    t.finish(
        join_keys({"fft_size", "window", "kaiser_beta", "overlap", "averages", "averaging", "unit", "calibration_db"}));
}

void read_plan(TableReader& t, PlanSpec& p) {
    const bool has_wanted = read_freq(t, "wanted_hz", p.wanted_hz);
    if (!has_wanted && !t.table.as_table().count("wanted_hz")) t.missing("wanted_hz", "the wanted RF frequency in Hz");
    if (!read_freq(t, "if_hz", p.if_hz) && !t.table.as_table().count("if_hz"))
        t.missing("if_hz", "the IF centre frequency in Hz");
    if (!read_freq(t, "if_bandwidth_hz", p.if_bandwidth_hz) && !t.table.as_table().count("if_bandwidth_hz"))
        t.missing("if_bandwidth_hz", "the IF passband width in Hz");
    // A plan without an RF band covers the wanted channel only.
    if (!read_freq(t, "rf_low_hz", p.rf_low_hz)) p.rf_low_hz = p.wanted_hz;
    if (!read_freq(t, "rf_high_hz", p.rf_high_hz)) p.rf_high_hz = p.wanted_hz;
    read_freq(t, "channel_spacing_hz", p.channel_spacing_hz);
    read_enum(t, "injection", p.injection);
    read_int(t, "max_order", p.max_order);
    if (const toml::value* lim = sub_table(t, "limits")) {
        TableReader r{*lim, t.key_path("limits"), t.problems, {}};
        read_double(r, "image_rejection_db", p.limits.image_rejection_db, "dB");
        read_double(r, "spur_dbc", p.limits.spur_dbc, "dBc");
        read_double(r, "lo_feedthrough_dbc", p.limits.lo_feedthrough_dbc, "dBc");
        read_double(r, "spur_rejection_db", p.limits.spur_rejection_db, "dB");
        read_opt_double(r, "iip3_min_dbm", p.limits.iip3_min_dbm, "dBm");
        read_opt_double(r, "iip2_min_dbm", p.limits.iip2_min_dbm, "dBm");
        r.finish(join_keys({"image_rejection_db", "spur_dbc", "lo_feedthrough_dbc", "spur_rejection_db", "iip3_min_dbm",
                            "iip2_min_dbm"}));
    }
    read_freq(t, "two_tone_spacing_hz", p.two_tone_spacing_hz);
    t.finish(join_keys({"rf_low_hz", "rf_high_hz", "channel_spacing_hz", "wanted_hz", "if_hz", "if_bandwidth_hz",
                        "injection", "max_order", "two_tone_spacing_hz", "[limits]"}));
}

void read_sweep(TableReader& t, SweepSpec& w) {
    read_opt_freq(t, "rf_low_hz", w.rf_low_hz);
    read_opt_freq(t, "rf_high_hz", w.rf_high_hz);
    read_opt_freq(t, "step_hz", w.step_hz);
    read_double(t, "reference_dbfs", w.reference_dbfs, "dBFS");
    read_opt_double(t, "tone_dbfs", w.tone_dbfs, "dBFS");
    read_enum(t, "method", w.method);
    t.finish(join_keys({"rf_low_hz", "rf_high_hz", "step_hz", "reference_dbfs", "tone_dbfs", "method"}));
}

std::string folder_of(const std::string& path) {
    std::filesystem::path p(path);
    return p.has_parent_path() ? p.parent_path().string() : std::string();
}

}  // namespace

Setup parse_session(std::string_view text, const std::string& name) {
    Problems pr;
    pr.file = name;
    toml::value root;
    toml_reader::require_parsable(text, name);  // before toml11 sees it (devices/toml_reader.hpp says why)
    try {
        std::istringstream in{std::string(text)};
        root = toml::parse(in, name);
    } catch (const toml::exception& e) {
        throw InputError(name + ": not valid TOML:\n" + e.what());
    } catch (const std::exception& e) {
        throw InputError(name + ": not valid TOML: " + e.what());
    }

    Setup s;
    s.base_dir = folder_of(name);
    TableReader top{root, "", pr, {}};
    if (const toml::value* v = sub_table(top, "bench")) {
        TableReader r{*v, "bench", pr, {}};
        read_bench(r, s.bench);
    }
    const auto sources = table_array(top, "source");
    for (std::size_t i = 0; i < sources.size(); ++i) {
        TableReader r{*sources[i], "source[" + std::to_string(i) + "]", pr, {}};
        SourceSpec src;
        read_source(r, src);
        s.sources.push_back(std::move(src));
    }
    if (const toml::value* v = sub_table(top, "rf_filter")) {
        TableReader r{*v, "rf_filter", pr, {}};
        read_filter(r, s.rf_filter);
    }
    if (const toml::value* v = sub_table(top, "mixer")) {
        TableReader r{*v, "mixer", pr, {}};
        read_mixer(r, s.mixer);
    }
    const auto filters = table_array(top, "if_filter");
    for (std::size_t i = 0; i < filters.size(); ++i) {
        TableReader r{*filters[i], "if_filter[" + std::to_string(i) + "]", pr, {}};
        FilterSpec f;
        read_filter(r, f);
        s.if_filters.push_back(std::move(f));
    }
    if (const toml::value* v = sub_table(top, "if_chain")) {
        TableReader r{*v, "if_chain", pr, {}};
        read_if_chain(r, s.if_chain);
    }
    if (const toml::value* v = sub_table(top, "analyzer")) {
        TableReader r{*v, "analyzer", pr, {}};
        read_analyzer(r, s.analyzer);
    }
    if (const toml::value* v = sub_table(top, "plan")) {
        TableReader r{*v, "plan", pr, {}};
        read_plan(r, s.plan);
    } else {
        pr.add(0, "plan", "missing required section [plan] (wanted_hz, if_hz, if_bandwidth_hz at least)");
    }
    if (const toml::value* v = sub_table(top, "sweep")) {
        TableReader r{*v, "sweep", pr, {}};
        read_sweep(r, s.sweep);
    }
    top.finish("[bench], [[source]], [rf_filter], [mixer], [[if_filter]], [if_chain], [analyzer], [plan], [sweep]");

    // Value and consistency checks only make sense once every key was read cleanly.
    if (pr.items.empty()) pr.add_validation(validate(s));
    pr.throw_if_any();
    return s;
}

Setup load_session(const std::string& path) {
    std::ifstream in(path, std::ios::binary);
    if (!in) throw InputError(path + ": cannot open the session file (does it exist and is it readable?)");
    std::ostringstream ss;
    ss << in.rdbuf();
    if (in.bad()) throw InputError(path + ": read error");
    return parse_session(ss.str(), path);
}

std::string toml_quote(std::string_view s) {
    std::string out = "\"";
    for (char ch : s) {
        const auto c = static_cast<unsigned char>(ch);
        switch (ch) {
            case '"':
                out += "\\\"";
                break;
            case '\\':
                out += "\\\\";
                break;
            case '\n':
                out += "\\n";
                break;
            case '\t':
                out += "\\t";
                break;
            case '\r':
                out += "\\r";
                break;
            default:
                if (c < 0x20 || c == 0x7f) {
                    char buf[8];
                    std::snprintf(buf, sizeof buf, "\\u%04x", c);
                    out += buf;
                } else {
                    out += ch;
                }
        }
    }
    return out + "\"";
}

namespace {

// Writes "key = value" lines in a fixed order.
struct TomlWriter {
    std::ostringstream out;
    void section(const std::string& header) { out << "\n" << header << "\n"; }
    void num(const char* key, double v) {
        std::string t = format_number(v);
        // Keep floats floats: "1e+20" and "0.5" are fine TOML, "-0" reads back as an integer 0.
        out << key << " = " << t << "\n";
    }
    void num(const char* key, const std::optional<double>& v) {
        if (v) num(key, *v);
    }
    void integer(const char* key, long long v) { out << key << " = " << v << "\n"; }
    void str(const char* key, std::string_view v) { out << key << " = " << toml_quote(v) << "\n"; }
    void str_if(const char* key, std::string_view v) {
        if (!v.empty()) str(key, v);
    }
    void boolean(const char* key, bool v) { out << key << " = " << (v ? "true" : "false") << "\n"; }
};

void write_filter(TomlWriter& w, const FilterSpec& f) {
    w.str("type", to_string(f.type));
    w.str_if("preset", f.preset);
    w.str("response", to_string(f.response));
    w.num("center_hz", f.center_hz);
    w.num("bandwidth_hz", f.bandwidth_hz);
    w.integer("order", f.order);
    w.num("ripple_db", f.ripple_db);
    w.num("stop_atten_db", f.stop_atten_db);
    w.num("transition_hz", f.transition_hz);
    w.str("fir_method", to_string(f.fir_method));
    w.integer("sections", f.sections);
    w.num("insertion_loss_db", f.insertion_loss_db);
    w.str_if("path", f.path);
    w.boolean("linear_phase", f.linear_phase);
}

}  // namespace

std::string session_to_toml(const Setup& s) {
    TomlWriter w;
    w.out << "# hetbench session\n";
    w.section("[bench]");
    w.str("name", s.bench.name);
    w.integer("seed", static_cast<long long>(s.bench.seed));
    for (const SourceSpec& src : s.sources) {
        w.section("[[source]]");
        w.str("kind", to_string(src.kind));
        w.str_if("path", src.path);
        w.str_if("args", src.args);
        w.str_if("scenario", src.scenario);
        w.str_if("format", src.format);
        w.num("frequency_hz", src.frequency_hz);
        w.num("sample_rate_hz", src.sample_rate_hz);
        w.num("gain_db", src.gain_db);
        w.num("bandwidth_hz", src.bandwidth_hz);
        w.str_if("antenna", src.antenna);
        w.num("level_offset_db", src.level_offset_db);
        w.boolean("swap_iq", src.swap_iq);
        w.boolean("loop", src.loop);
        if (!src.gains.empty()) {
            w.out << "gains = {";
            for (std::size_t i = 0; i < src.gains.size(); ++i)
                w.out << (i ? ", " : " ") << toml_quote(src.gains[i].name) << " = " << format_number(src.gains[i].db);
            w.out << " }\n";
        }
    }
    w.section("[rf_filter]");
    write_filter(w, s.rf_filter);
    const MixerSpec& m = s.mixer;
    w.section("[mixer]");
    w.str("model", to_string(m.model));
    w.str_if("preset", m.preset);
    w.num("conversion_gain_db", m.conversion_gain_db);
    w.num("lo_if_isolation_db", m.lo_if_isolation_db);
    w.num("rf_if_isolation_db", m.rf_if_isolation_db);
    w.num("iip2_dbm", m.iip2_dbm);
    w.num("iip3_dbm", m.iip3_dbm);
    w.num("duty_cycle", m.duty_cycle);
    w.num("edge_time", m.edge_time);
    if (m.harmonics) w.integer("harmonics", *m.harmonics);
    w.num("iq_gain_error_db", m.iq_gain_error_db);
    w.num("iq_phase_error_deg", m.iq_phase_error_deg);
    w.num("dc_offset_dbfs", m.dc_offset_dbfs);
    w.num("noise_figure_db", m.noise_figure_db);
    w.num("noise_dbfs_per_hz", m.noise_dbfs_per_hz);
    w.section("[mixer.lo]");
    w.num("frequency_hz", m.lo.frequency_hz);
    w.num("level_dbm", m.lo.level_dbm);
    w.num("offset_ppm", m.lo.offset_ppm);
    if (!m.lo.phase_noise.empty()) {
        w.out << "phase_noise = [";
        for (std::size_t i = 0; i < m.lo.phase_noise.size(); ++i)
            w.out << (i ? ", " : "") << "[" << format_number(m.lo.phase_noise[i].offset_hz) << ", "
                  << format_number(m.lo.phase_noise[i].dbc_per_hz) << "]";
        w.out << "]\n";
    }
    for (const FilterSpec& f : s.if_filters) {
        w.section("[[if_filter]]");
        write_filter(w, f);
    }
    w.section("[if_chain]");
    w.num("center_hz", s.if_chain.center_hz);
    w.num("sample_rate_hz", s.if_chain.sample_rate_hz);
    w.integer("decimation", s.if_chain.decimation);
    w.num("gain_db", s.if_chain.gain_db);
    const AnalyzerSpec& a = s.analyzer;
    w.section("[analyzer]");
    w.integer("fft_size", a.fft_size);
    w.str("window", to_string(a.window));
    w.num("kaiser_beta", a.kaiser_beta);
    w.num("overlap", a.overlap);
    w.integer("averages", a.averages);
    w.str("averaging", to_string(a.averaging));
    w.str("unit", to_string(a.unit));
    w.num("calibration_db", a.calibration_db);
    const PlanSpec& p = s.plan;
    w.section("[plan]");
    w.num("rf_low_hz", p.rf_low_hz);
    w.num("rf_high_hz", p.rf_high_hz);
    w.num("channel_spacing_hz", p.channel_spacing_hz);
    w.num("wanted_hz", p.wanted_hz);
    w.num("if_hz", p.if_hz);
    w.num("if_bandwidth_hz", p.if_bandwidth_hz);
    w.str("injection", to_string(p.injection));
    w.integer("max_order", p.max_order);
    if (p.two_tone_spacing_hz > 0) w.num("two_tone_spacing_hz", p.two_tone_spacing_hz);
    w.section("[plan.limits]");
    w.num("image_rejection_db", p.limits.image_rejection_db);
    w.num("spur_dbc", p.limits.spur_dbc);
    w.num("lo_feedthrough_dbc", p.limits.lo_feedthrough_dbc);
    w.num("spur_rejection_db", p.limits.spur_rejection_db);
    w.num("iip3_min_dbm", p.limits.iip3_min_dbm);
    w.num("iip2_min_dbm", p.limits.iip2_min_dbm);
    const SweepSpec& sw = s.sweep;
    if (!(sw == SweepSpec{})) {
        w.section("[sweep]");
        w.num("rf_low_hz", sw.rf_low_hz);
        w.num("rf_high_hz", sw.rf_high_hz);
        w.num("step_hz", sw.step_hz);
        w.num("reference_dbfs", sw.reference_dbfs);
        w.num("tone_dbfs", sw.tone_dbfs);
        w.str("method", to_string(sw.method));
    }
    return w.out.str();
}

void save_session(const Setup& s, const std::string& path) {
    const std::string tmp = path + ".tmp";
    {
        std::ofstream out(tmp, std::ios::binary | std::ios::trunc);
        if (!out) throw InputError(path + ": cannot write the session file");
        out << session_to_toml(s);
        out.flush();
        if (!out) throw InputError(path + ": write failed (disk full?)");
    }
    std::error_code ec;
    std::filesystem::rename(tmp, path, ec);
    if (ec) throw InputError(path + ": cannot replace the session file: " + ec.message());
}

}  // namespace hb
