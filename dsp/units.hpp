// Units and number formatting shared by every layer (design.md §4):
// frequencies in Hz as double, levels in dB, and the text forms people type and read.
#pragma once

#include <cmath>
#include <optional>
#include <string>
#include <string_view>

namespace hb {

inline constexpr double kPi = 3.14159265358979323846;
inline constexpr double kTwoPi = 2.0 * kPi;
// Boltzmann constant (exact since the 2019 SI redefinition) and the standard noise temperature.
inline constexpr double kBoltzmann = 1.380649e-23;  // J/K
inline constexpr double kT0 = 290.0;                // K

inline double db_from_power(double p) { return 10.0 * std::log10(p); }
inline double db_from_amplitude(double a) { return 20.0 * std::log10(a); }
inline double power_from_db(double db) { return std::pow(10.0, db / 10.0); }
inline double amplitude_from_db(double db) { return std::pow(10.0, db / 20.0); }

// Thermal noise density kT in dBm/Hz at temperature t_kelvin (−173.975 dBm/Hz at 290 K).
inline double thermal_noise_dbm_per_hz(double t_kelvin = kT0) {
    return db_from_power(kBoltzmann * t_kelvin / 1e-3);
}

// Shortest text that reads back to the same double ("10700000", "0.5", "1e-05", "nan").
std::string format_number(double v);

// A frequency as people read it, with a unit: "10.7 MHz", "455 kHz", "-3.2 kHz", "0 Hz".
std::string format_frequency(double hz, int significant = 9);

// Reads a frequency typed with an optional SI suffix and optional "Hz":
// "98.3M", "455k", "10.7 MHz", "2.4e6", "1G", "12.5 kHz". Returns nothing on anything else.
std::optional<double> parse_frequency(std::string_view text);

}  // namespace hb
