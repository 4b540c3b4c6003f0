// Scenario files (TOML) for the bench generator: the virtual RF world it synthesises (dsp/synth.hpp).
//
//   [scenario]                       # optional; defaults shown in dsp/synth.hpp
//   name = "..."
//   full_scale_dbm = 0               # CW level that reads 0 dBFS at 0 dB gain
//   noise_floor_dbm_per_hz = -165    # at the RF port, scaled by the gain
//   adc_noise_dbfs_per_hz = -150     # optional, after the gain
//   clip = true
//
//   [[signal]]
//   type = "cw" | "two-tone" | "am" | "fm" | "stations" | "noise"
//   ...keys of that type (see kSignalKeys in the .cpp, and DEVELOPERS.md)
//
// Every problem is reported with the file, line, key path (signal[2].deviation_hz), the bad value and what is
// expected; keys unknown to a signal's type are errors.
#pragma once

#include <string>
#include <string_view>

#include "dsp/synth.hpp"

namespace hb {

// Parses scenario text; `name` is used in messages. Throws InputError.
Scenario parse_scenario(std::string_view text, const std::string& name);

// Reads and parses a scenario file. Throws InputError.
Scenario load_scenario(const std::string& path);

}  // namespace hb
