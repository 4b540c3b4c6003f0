#include "devices/scenario_toml.hpp"

#include <sstream>

#include "devices/session.hpp"
#include "devices/toml_reader.hpp"
#include "dsp/errors.hpp"
#include "dsp/units.hpp"

namespace hb {

std::string scenario_to_toml(const Scenario& s) {
    std::ostringstream o;
    auto num = [&](const char* key, double v) { o << key << " = " << format_number(v) << "\n"; };
    auto text = [&](const char* key, std::string_view v) { o << key << " = " << toml_quote(v) << "\n"; };
    o << "# hetbench generator scenario\n[scenario]\n";
    text("name", s.name);
    num("full_scale_dbm", s.full_scale_dbm);
    num("noise_floor_dbm_per_hz", s.noise_floor_dbm_per_hz);
    if (s.has_adc_noise) num("adc_noise_dbfs_per_hz", s.adc_noise_dbfs_per_hz);
    o << "clip = " << (s.clip ? "true" : "false") << "\n";
    for (const SignalSpec& g : s.signals) {
        o << "\n[[signal]]\n";
        text("type", to_string(g.type));
        if (!g.label.empty()) text("label", g.label);
        switch (g.type) {
            case SignalType::cw:
            case SignalType::two_tone:
            case SignalType::am:
            case SignalType::fm:
                num("frequency_hz", g.frequency_hz);
                num("level_dbm", g.level_dbm);
                if (g.type == SignalType::two_tone) num("spacing_hz", g.spacing_hz);
                if (g.type == SignalType::am || g.type == SignalType::fm) {
                    text("modulation", to_string(g.modulation));
                    if (g.modulation == ModSource::tone)
                        num("tone_hz", g.tone_hz);
                    else
                        num("modulation_bandwidth_hz", g.modulation_bandwidth_hz);
                    if (g.type == SignalType::am)
                        num("depth", g.depth);
                    else
                        num("deviation_hz", g.deviation_hz);
                }
                break;
            case SignalType::stations:
                num("first_hz", g.first_hz);
                num("spacing_hz", g.spacing_hz);
                o << "count = " << g.count << "\n";
                num("level_dbm", g.level_dbm);
                num("level_spread_db", g.level_spread_db);
                num("occupancy", g.occupancy);
                text("modulation", to_string(g.station_modulation));
                if (g.station_modulation == ModKind::am)
                    num("depth", g.depth);
                else
                    num("deviation_hz", g.deviation_hz);
                num("tone_low_hz", g.tone_low_hz);
                num("tone_high_hz", g.tone_high_hz);
                break;
            case SignalType::noise:
                num("low_hz", g.low_hz);
                num("high_hz", g.high_hz);
                num("density_dbm_per_hz", g.density_dbm_per_hz);
                break;
        }
    }
    return o.str();
}

bool is_scenario_text(std::string_view text, const std::string& name) {
    try {
        const toml::value root = toml_reader::parse_text(text, name);
        if (!root.is_table()) return false;
        const auto& t = root.as_table();
        return (t.count("scenario") || t.count("signal")) && !t.count("plan");
    } catch (const InputError&) {
        return false;
    }
}

}  // namespace hb
