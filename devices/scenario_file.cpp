#include "devices/scenario_file.hpp"

#include <fstream>
#include <sstream>

#include "devices/toml_reader.hpp"
#include "dsp/errors.hpp"

namespace hb {
namespace {

using toml_reader::Problems;
using toml_reader::Table;

// The keys each signal type reads (besides type and label), in the order they are documented.
std::string keys_of(SignalType t) {
    switch (t) {
        case SignalType::cw: return "type, label, frequency_hz, level_dbm";
        case SignalType::two_tone: return "type, label, frequency_hz, spacing_hz, level_dbm";
        case SignalType::am:
            return "type, label, frequency_hz, level_dbm, modulation (tone|noise), tone_hz, modulation_bandwidth_hz, "
                   "depth";
        case SignalType::fm:
            return "type, label, frequency_hz, level_dbm, modulation (tone|noise), tone_hz, modulation_bandwidth_hz, "
                   "deviation_hz";
        case SignalType::stations:
            return "type, label, first_hz, spacing_hz, count, level_dbm, level_spread_db, occupancy, modulation "
                   "(am|fm), depth, deviation_hz, tone_low_hz, tone_high_hz";
        case SignalType::noise: return "type, label, low_hz, high_hz, density_dbm_per_hz";
    }
    return "";
}

void require(Table& t, const std::string& key, const std::string& what, bool got) {
    if (!got && !t.has(key)) t.missing(key, what);
}

void read_modulation(Table& t, SignalSpec& s, SignalType type) {
    t.enumeration("modulation", s.modulation);
    if (s.modulation == ModSource::tone) t.frequency("tone_hz", s.tone_hz);
    else t.frequency("modulation_bandwidth_hz", s.modulation_bandwidth_hz);
    if (type == SignalType::am) t.number("depth", s.depth, "");
    else t.frequency("deviation_hz", s.deviation_hz);
}

void read_signal(Table& t, SignalSpec& s) {
    if (!t.enumeration("type", s.type)) {
        if (!t.has("type")) t.missing("type", "one of " + allowed_names<SignalType>());
        return;  // without a type the other keys cannot be judged
    }
    t.string("label", s.label);
    switch (s.type) {
        case SignalType::cw:
        case SignalType::two_tone:
        case SignalType::am:
        case SignalType::fm:
            require(t, "frequency_hz", "the carrier frequency in Hz", t.frequency("frequency_hz", s.frequency_hz));
            require(t, "level_dbm", "the level in dBm at the RF port", t.number("level_dbm", s.level_dbm, "dBm"));
            if (s.type == SignalType::two_tone)
                require(t, "spacing_hz", "the tone spacing in Hz", t.frequency("spacing_hz", s.spacing_hz));
            if (s.type == SignalType::am || s.type == SignalType::fm) read_modulation(t, s, s.type);
            break;
        case SignalType::stations:
            require(t, "first_hz", "the first raster channel in Hz", t.frequency("first_hz", s.first_hz));
            require(t, "spacing_hz", "the channel raster in Hz", t.frequency("spacing_hz", s.spacing_hz));
            require(t, "count", "the number of raster channels", t.integer("count", s.count));
            require(t, "level_dbm", "the mean carrier level in dBm", t.number("level_dbm", s.level_dbm, "dBm"));
            t.number("level_spread_db", s.level_spread_db, "dB");
            t.number("occupancy", s.occupancy, "");
            t.enumeration("modulation", s.station_modulation);
            if (s.station_modulation == ModKind::am) t.number("depth", s.depth, "");
            else t.frequency("deviation_hz", s.deviation_hz);
            t.frequency("tone_low_hz", s.tone_low_hz);
            t.frequency("tone_high_hz", s.tone_high_hz);
            break;
        case SignalType::noise:
            require(t, "low_hz", "the lower band edge in Hz", t.frequency("low_hz", s.low_hz));
            require(t, "high_hz", "the upper band edge in Hz", t.frequency("high_hz", s.high_hz));
            require(t, "density_dbm_per_hz", "the noise density in dBm/Hz",
                    t.number("density_dbm_per_hz", s.density_dbm_per_hz, "dBm/Hz"));
            break;
    }
    t.finish(keys_of(s.type) + " (for type " + std::string(to_string(s.type)) + ")");
}

}  // namespace

Scenario parse_scenario(std::string_view text, const std::string& name) {
    const toml::value root = toml_reader::parse_text(text, name);
    Problems pr;
    pr.file = name;
    Scenario sc;
    Table top{root, "", pr, {}};
    if (const toml::value* v = toml_reader::sub_table(top, "scenario")) {
        Table t{*v, "scenario", pr, {}};
        t.string("name", sc.name);
        t.number("full_scale_dbm", sc.full_scale_dbm, "dBm");
        t.number("noise_floor_dbm_per_hz", sc.noise_floor_dbm_per_hz, "dBm/Hz");
        sc.has_adc_noise = t.number("adc_noise_dbfs_per_hz", sc.adc_noise_dbfs_per_hz, "dBFS/Hz");
        t.boolean("clip", sc.clip);
        t.finish("name, full_scale_dbm, noise_floor_dbm_per_hz, adc_noise_dbfs_per_hz, clip");
    }
    const auto signals = toml_reader::table_array(top, "signal");
    for (std::size_t i = 0; i < signals.size(); ++i) {
        Table t{*signals[i], "signal[" + std::to_string(i) + "]", pr, {}};
        SignalSpec s;
        read_signal(t, s);
        sc.signals.push_back(std::move(s));
    }
    top.finish("[scenario], [[signal]]");
    // Values and consistency only once every key was read cleanly.
    if (pr.items.empty()) pr.add_validation(validate_scenario(sc));
    pr.throw_if_any();
    return sc;
}

Scenario load_scenario(const std::string& path) {
    std::ifstream in(path, std::ios::binary);
    if (!in) throw InputError(path + ": cannot open the scenario file (does it exist and is it readable?)");
    std::ostringstream ss;
    ss << in.rdbuf();
    if (in.bad()) throw InputError(path + ": read error");
    return parse_scenario(ss.str(), path);
}

}  // namespace hb
