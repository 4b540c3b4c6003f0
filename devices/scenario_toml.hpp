// A generator scenario (dsp/synth.hpp) written back as TOML in the form devices/scenario_file.hpp reads:
// [scenario] first, then one [[signal]] per signal with only the keys its type (and modulation) uses.
// parse_scenario(scenario_to_toml(s)) == s for any scenario that parse_scenario returned.
#pragma once

#include <string>
#include <string_view>

#include "dsp/synth.hpp"

namespace hb {

std::string scenario_to_toml(const Scenario& s);

// True when TOML text is a generator scenario rather than a session: a top-level [scenario] table or
// [[signal]] array and no [plan]. Text that is not valid TOML is not a scenario (the session loader then
// reports the syntax error).
bool is_scenario_text(std::string_view text, const std::string& name);

}  // namespace hb
