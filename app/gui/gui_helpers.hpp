// Pure helpers of the bench window: no GL, no ImGui, so tests link them without a display.
//   - the per-pixel-column min/max reduction of a spectrum (wide spectra are reduced, never decimated)
//   - the waterfall colour map, computed in OKLab with a lightness that rises evenly from dark to light
//   - frequency entry with unit suffixes, and the number formats of the window (every number with its unit)
//   - axis ticks, and the worked-out arithmetic of a mixer product or a spurious response for tooltips
#pragma once

#include <array>
#include <cstdint>
#include <optional>
#include <span>
#include <string>
#include <string_view>
#include <vector>

namespace hb::gui {

// ---- Column reduction ----------------------------------------------------------------------------------

// Bin k of `values` covers the bin coordinates [k, k + 1). The plot's left edge sits at bin coordinate
// first_bin and its right edge at last_bin; column c of out_min.size() columns covers
//   [first_bin + c·w, first_bin + (c + 1)·w),  w = (last_bin − first_bin) / columns,
// and gets the minimum and the maximum of every bin that overlaps it (at least the bin holding its left
// edge, so a column narrower than a bin repeats that bin). Columns outside the data get NaN. NaN bins are
// skipped. O(bins + columns). out_max.size() must equal out_min.size().
void reduce_columns(std::span<const float> values, double first_bin, double last_bin, std::span<float> out_min,
                    std::span<float> out_max);

// The same reduction to a fixed count of equal groups over the whole array (the waterfall's texture row):
// out[c] = max over bins [c·N/W, (c+1)·N/W) (integer bounds, every bin in exactly one group).
void reduce_max_groups(std::span<const float> values, std::span<float> out);

// ---- Colour map ----------------------------------------------------------------------------------------

struct Rgb8 {
    std::uint8_t r = 0, g = 0, b = 0;
};

// OKLab (Björn Ottosson, "A perceptual color space for image processing", 2020) to 8-bit sRGB (IEC 61966-2-1
// transfer curve). Colours outside sRGB are clipped per channel.
Rgb8 oklab_to_srgb8(double L, double a, double b);

// The waterfall map at t in [0, 1] (clamped): OKLab lightness rising linearly from 0.13 to 0.97 while the hue
// turns from a dark slate teal through sea green and straw to a pale cream; the chroma is lowered where the
// colour would leave sRGB, so the lightness stays exact. Our own path, not any published map.
Rgb8 colormap(double t);
// 256 entries of colormap as packed 0xAABBGGRR (the byte order of an RGBA8 texture row), alpha 255.
const std::array<std::uint32_t, 256>& colormap_lut();

// ---- Numbers with units ---------------------------------------------------------------------------------

// A frequency typed by a user: "98.3M", "455k", "10.7 MHz", "2.4e6", "1.2 GHz". Nothing on bad text or a value
// outside [min_hz, 1 THz]; then *error says what was expected.
std::optional<double> parse_frequency_entry(std::string_view text, std::string* error = nullptr, double min_hz = 0.0);

// "1.455 MHz", "455 kHz" (`significant` digits, trailing zeros dropped); "n/a" for NaN.
std::string freq_text(double hz, int significant = 7);
// "−52.3 dBc" (one decimal, the given unit); "n/a" for NaN.
std::string db_text(double v, std::string_view unit, int decimals = 1);
// A sample rate: "2.4 MS/s", "48 kS/s".
std::string rate_text(double hz);
// A time: "12.5 µs", "1.2 ms", "3 s".
std::string time_text(double s);

// One unit for a frequency axis, chosen from the largest magnitude on it.
struct FreqUnit {
    double scale = 1.0;
    const char* name = "Hz";
};
FreqUnit freq_unit_for(double max_abs_hz);

// A number in a unit with trailing zeros dropped: fixed_trim(1.45500, 6) = "1.455", fixed_trim(2, 6) = "2".
std::string fixed_trim(double v, int max_decimals);

// ---- Axes -----------------------------------------------------------------------------------------------

// Tick positions at 1, 2 or 5 × 10^k spacing covering [lo, hi], about `target` of them (at least 2 apart from
// degenerate ranges). The step is returned in *step when given.
std::vector<double> nice_ticks(double lo, double hi, int target, double* step = nullptr);
// Decimals needed to tell ticks `step` apart in a unit of `scale`.
int decimals_for_step(double step, double scale);

// ---- Worked arithmetic for tooltips -----------------------------------------------------------------------

// The product m·LO + n·RF written the way round that is positive for a real output (|m·f_LO + n·f_RF|),
// with the numbers put in: "2·LO − RF = 2×1.455 − 1 = 1.91 MHz". `keep_sign` (a complex IF) writes the
// signed sum instead: "RF − LO = 1 − 1.455 = −0.455 MHz". One unit for every number, from the largest.
std::string explain_product(int m, int n, double lo_hz, double rf_hz, bool keep_sign = false);

// The RF input that a spurious response (m, n) carries onto the IF: m·LO + n·RF = if_signed, solved for RF:
// "2·LO − 2·RF = IF → RF = (2×1.455 − 0.455)/2 = 1.2275 MHz".
std::string explain_response(int m, int n, double lo_hz, double if_signed_hz);

}  // namespace hb::gui
