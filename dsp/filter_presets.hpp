// Named filter presets: common IF filter classes, described generically (no particular part). A session writes
// `preset = "ceramic-10m7"` in [rf_filter] or [[if_filter]]; the preset fills every key first and the keys written
// beside it override (the session loader applies it).
#pragma once

#include <optional>
#include <span>
#include <string>
#include <string_view>

#include "dsp/setup.hpp"

namespace hb {

struct FilterPreset {
    std::string_view name;
    std::string_view description;
    FilterSpec spec;  // spec.preset == name
};

std::span<const FilterPreset> filter_presets();

// The preset's full spec, or nothing for an unknown name.
std::optional<FilterSpec> filter_preset(std::string_view name);

// "ceramic-10m7|ceramic-455k|...", for messages.
std::string filter_preset_names();

}  // namespace hb
