#include "gui/gui_helpers.hpp"

#include <algorithm>
#include <cmath>
#include <cstdio>
#include <limits>

#include "dsp/setup.hpp"
#include "dsp/units.hpp"

namespace hb::gui {

// ---- Column reduction ----------------------------------------------------------------------------------

void reduce_columns(std::span<const float> values, double first_bin, double last_bin, std::span<float> out_min,
                    std::span<float> out_max) {
    const std::size_t cols = std::min(out_min.size(), out_max.size());
    const double nan = std::numeric_limits<float>::quiet_NaN();
    const auto n = static_cast<std::int64_t>(values.size());
    if (cols == 0) return;
    const double w = (last_bin - first_bin) / static_cast<double>(cols);
    for (std::size_t c = 0; c < cols; ++c) {
        const double a = first_bin + static_cast<double>(c) * w;
        const double b = a + w;
        // Bins overlapping [a, b): floor(a) .. ceil(b) − 1, and at least floor(a).
        auto k0 = static_cast<std::int64_t>(std::floor(a));
        auto k1 = std::max(k0, static_cast<std::int64_t>(std::ceil(b)) - 1);
        k0 = std::max<std::int64_t>(k0, 0);
        k1 = std::min<std::int64_t>(k1, n - 1);
        float lo = static_cast<float>(nan), hi = static_cast<float>(nan);
        for (std::int64_t k = k0; k <= k1; ++k) {
            const float v = values[static_cast<std::size_t>(k)];
            if (std::isnan(v)) continue;
            if (std::isnan(lo) || v < lo) lo = v;
            if (std::isnan(hi) || v > hi) hi = v;
        }
        out_min[c] = lo;
        out_max[c] = hi;
    }
}

void reduce_max_groups(std::span<const float> values, std::span<float> out) {
    const std::size_t n = values.size(), w = out.size();
    for (std::size_t c = 0; c < w; ++c) {
        const std::size_t k0 = c * n / w, k1 = std::max(k0 + 1, (c + 1) * n / w);
        float hi = -std::numeric_limits<float>::infinity();
        for (std::size_t k = k0; k < k1 && k < n; ++k)
            if (values[k] > hi) hi = values[k];
        out[c] = hi;
    }
}

// ---- Colour map ----------------------------------------------------------------------------------------

namespace {

struct Lin {
    double r, g, b;
};

// Ottosson's OKLab → linear sRGB matrices (published with the space).
Lin oklab_to_linear(double L, double a, double b) {
    const double l_ = L + 0.3963377774 * a + 0.2158037573 * b;
    const double m_ = L - 0.1055613458 * a - 0.0638541728 * b;
    const double s_ = L - 0.0894841775 * a - 1.2914855480 * b;
    const double l = l_ * l_ * l_, m = m_ * m_ * m_, s = s_ * s_ * s_;
    return {+4.0767416621 * l - 3.3077115913 * m + 0.2309699292 * s,
            -1.2684380046 * l + 2.6097574011 * m - 0.3413193965 * s,
            -0.0041960863 * l - 0.7034186147 * m + 1.7076147010 * s};
}

std::uint8_t encode_srgb(double v) {
    v = std::clamp(v, 0.0, 1.0);
    const double e = v <= 0.0031308 ? 12.92 * v : 1.055 * std::pow(v, 1.0 / 2.4) - 0.055;
    return static_cast<std::uint8_t>(std::lround(std::clamp(e, 0.0, 1.0) * 255.0));
}

bool in_gamut(const Lin& c) {
    constexpr double eps = 1e-9;
    return c.r >= -eps && c.r <= 1 + eps && c.g >= -eps && c.g <= 1 + eps && c.b >= -eps && c.b <= 1 + eps;
}

}  // namespace

Rgb8 oklab_to_srgb8(double L, double a, double b) {
    const Lin c = oklab_to_linear(L, a, b);
    return {encode_srgb(c.r), encode_srgb(c.g), encode_srgb(c.b)};
}

Rgb8 colormap(double t) {
    t = std::clamp(std::isnan(t) ? 0.0 : t, 0.0, 1.0);
    const double L = 0.13 + 0.84 * t;
    const double hue = (215.0 - 150.0 * t) * kPi / 180.0;
    double chroma = 0.045 + 0.075 * std::sin(kPi * t);
    // Keep the lightness: give up chroma (bisection on the scale) until the colour is inside sRGB.
    if (!in_gamut(oklab_to_linear(L, chroma * std::cos(hue), chroma * std::sin(hue)))) {
        double lo = 0.0, hi = chroma;
        for (int i = 0; i < 40; ++i) {
            const double mid = 0.5 * (lo + hi);
            (in_gamut(oklab_to_linear(L, mid * std::cos(hue), mid * std::sin(hue))) ? lo : hi) = mid;
        }
        chroma = lo;
    }
    return oklab_to_srgb8(L, chroma * std::cos(hue), chroma * std::sin(hue));
}

const std::array<std::uint32_t, 256>& colormap_lut() {
    static const std::array<std::uint32_t, 256> lut = [] {
        std::array<std::uint32_t, 256> t{};
        for (int i = 0; i < 256; ++i) {
            const Rgb8 c = colormap(i / 255.0);
            t[static_cast<std::size_t>(i)] = 0xFF000000u | (std::uint32_t(c.b) << 16) | (std::uint32_t(c.g) << 8) | c.r;
        }
        return t;
    }();
    return lut;
}

// ---- Numbers with units ---------------------------------------------------------------------------------

std::optional<double> parse_frequency_entry(std::string_view text, std::string* error, double min_hz) {
    auto fail = [&](const std::string& why) -> std::optional<double> {
        if (error) *error = why;
        return std::nullopt;
    };
    while (!text.empty() && (text.front() == ' ' || text.front() == '\t')) text.remove_prefix(1);
    while (!text.empty() && (text.back() == ' ' || text.back() == '\t')) text.remove_suffix(1);
    if (text.empty()) return fail("type a frequency, e.g. 98.3M, 455k or 10.7 MHz");
    const auto v = parse_frequency(text);
    if (!v || !std::isfinite(*v))
        return fail("'" + std::string(text) +
                    "' is not a frequency: expected a number with an optional k, M or G "
                    "and optional Hz, e.g. 98.3M, 455k, 10.7 MHz");
    if (*v < min_hz) return fail("'" + std::string(text) + "' is below " + freq_text(min_hz));
    if (*v > kMaxFrequencyHz) return fail("'" + std::string(text) + "' is above 1 THz");
    if (error) error->clear();
    return v;
}

std::string fixed_trim(double v, int max_decimals) {
    char b[64];
    std::snprintf(b, sizeof b, "%.*f", std::max(0, max_decimals), v);
    std::string s = b;
    if (s.find('.') != std::string::npos) {
        while (!s.empty() && s.back() == '0') s.pop_back();
        if (!s.empty() && s.back() == '.') s.pop_back();
    }
    if (s == "-0") s = "0";
    if (!s.empty() && s.front() == '-') s = "\u2212" + s.substr(1);
    return s;
}

std::string freq_text(double hz, int significant) {
    if (std::isnan(hz)) return "n/a";
    std::string s = format_frequency(hz, significant);
    if (!s.empty() && s.front() == '-') s = "\u2212" + s.substr(1);
    return s;
}

std::string db_text(double v, std::string_view unit, int decimals) {
    if (std::isnan(v)) return "n/a";
    if (std::isinf(v)) return std::string(v < 0 ? "\u2212\u221e " : "+\u221e ") + std::string(unit);
    if (v <= -300.0) return "< \u2212300 " + std::string(unit);  // the models' floor for "no such product"
    char b[64];
    std::snprintf(b, sizeof b, "%.*f", decimals, std::abs(v));
    const bool neg = v < 0 && std::string_view(b).find_first_not_of("0.") != std::string_view::npos;
    return (neg ? "\u2212" : "") + std::string(b) + " " + std::string(unit);
}

std::string rate_text(double hz) {
    if (std::isnan(hz) || hz <= 0) return "n/a";
    if (hz >= 1e6) return fixed_trim(hz / 1e6, 4) + " MS/s";
    if (hz >= 1e3) return fixed_trim(hz / 1e3, 3) + " kS/s";
    return fixed_trim(hz, 1) + " S/s";
}

std::string time_text(double s) {
    const double a = std::abs(s);
    if (a == 0) return "0 s";
    if (a < 1e-6) return fixed_trim(s * 1e9, 1) + " ns";
    if (a < 1e-3) return fixed_trim(s * 1e6, 2) + " \u00b5s";
    if (a < 1) return fixed_trim(s * 1e3, 2) + " ms";
    return fixed_trim(s, 2) + " s";
}

FreqUnit freq_unit_for(double max_abs_hz) {
    const double a = std::abs(max_abs_hz);
    if (a >= 1e9) return {1e9, "GHz"};
    if (a >= 1e6) return {1e6, "MHz"};
    if (a >= 1e3) return {1e3, "kHz"};
    return {1.0, "Hz"};
}

// ---- Axes -----------------------------------------------------------------------------------------------

std::vector<double> nice_ticks(double lo, double hi, int target, double* step_out) {
    std::vector<double> t;
    if (!(hi > lo) || !std::isfinite(lo) || !std::isfinite(hi) || target < 1) {
        if (step_out) *step_out = 0;
        return t;
    }
    const double raw = (hi - lo) / target;
    const double p = std::pow(10.0, std::floor(std::log10(raw)));
    double step = p;
    for (double f : {1.0, 2.0, 5.0, 10.0})
        if (f * p >= raw) {
            step = f * p;
            break;
        }
    if (step_out) *step_out = step;
    // Multiples of the step (not a running sum, which drifts).
    const double k0 = std::ceil(lo / step - 1e-9);
    for (double k = k0; k * step <= hi + 1e-9 * step && t.size() < 1000; k += 1.0) t.push_back(k == 0 ? 0.0 : k * step);
    return t;
}

int decimals_for_step(double step, double scale) {
    if (!(step > 0)) return 0;
    const double s = step / scale;
    return std::clamp(static_cast<int>(std::ceil(-std::log10(s) - 1e-9)), 0, 9);
}

// ---- Worked arithmetic ----------------------------------------------------------------------------------

namespace {

// "2·LO", "RF", "3·RF"
std::string coef_name(int c, const char* name) {
    return (c == 1 ? std::string() : std::to_string(c) + "\u00b7") + name;
}
// "2×1.455", "1"
std::string coef_value(int c, double v, const FreqUnit& u) {
    return (c == 1 ? std::string() : std::to_string(c) + "\u00d7") + fixed_trim(v / u.scale, 9);
}

}  // namespace

std::string explain_product(int m, int n, double lo_hz, double rf_hz, bool keep_sign) {
    const double signed_hz = m * lo_hz + n * rf_hz;
    int cm = m, cn = n;
    if (!keep_sign && signed_hz < 0) {
        cm = -m;
        cn = -n;
    }
    const FreqUnit u = freq_unit_for(std::max({std::abs(lo_hz), std::abs(rf_hz), std::abs(signed_hz)}));
    struct Term {
        int c;
        const char* name;
        double v;
    };
    std::vector<Term> terms;
    if (cm != 0) terms.push_back({cm, "LO", lo_hz});
    if (cn != 0) terms.push_back({cn, "RF", rf_hz});
    // Positive terms first, so "RF − LO" rather than "−LO + RF".
    std::stable_sort(terms.begin(), terms.end(), [](const Term& a, const Term& b) { return (a.c > 0) > (b.c > 0); });
    std::string names, values;
    for (std::size_t i = 0; i < terms.size(); ++i) {
        const Term& t = terms[i];
        const char* sep = i == 0 ? (t.c < 0 ? "\u2212" : "") : (t.c < 0 ? " \u2212 " : " + ");
        names += sep + coef_name(std::abs(t.c), t.name);
        values += sep + coef_value(std::abs(t.c), t.v, u);
    }
    if (terms.empty()) return "DC = 0 Hz";
    const double result = keep_sign ? signed_hz : std::abs(signed_hz);
    std::string out = names + " = ";
    if (terms.size() > 1 || std::abs(terms[0].c) != 1) out += values + " = ";
    return out + fixed_trim(result / u.scale, 9) + " " + u.name;
}

std::string explain_response(int m, int n, double lo_hz, double if_signed_hz) {
    if (n == 0) return "an LO harmonic: no RF input involved";
    const int k = std::abs(n);
    const double rf = (if_signed_hz - m * lo_hz) / n;
    const FreqUnit u = freq_unit_for(std::max({std::abs(lo_hz), std::abs(rf), std::abs(if_signed_hz)}));
    std::string lhs;
    if (m != 0) lhs = coef_name(m, "LO");
    lhs += (n < 0 ? (lhs.empty() ? "\u2212" : " \u2212 ") : (lhs.empty() ? "" : " + ")) + coef_name(k, "RF");
    const std::string rhs = if_signed_hz < 0 ? "\u2212IF" : "IF";
    const std::string ifv = fixed_trim(std::abs(if_signed_hz) / u.scale, 9);
    // RF = (if − m·LO)/n: for n < 0 that is (m·LO − if)/k.
    std::string num;
    if (n < 0) {
        if (m != 0) num = coef_value(m, lo_hz, u);
        num += (if_signed_hz >= 0 ? (num.empty() ? "\u2212" : " \u2212 ") : (num.empty() ? "" : " + ")) + ifv;
    } else {
        num = (if_signed_hz < 0 ? "\u2212" : "") + ifv;
        if (m != 0) num += " \u2212 " + coef_value(m, lo_hz, u);
    }
    const bool compound = num.find(' ') != std::string::npos;
    std::string solved = k == 1 ? num : (compound ? "(" + num + ")" : num) + "/" + std::to_string(k);
    return lhs + " = " + rhs + " \u2192 RF = " + solved + " = " + fixed_trim(rf / u.scale, 9) + " " + u.name;
}

}  // namespace hb::gui
