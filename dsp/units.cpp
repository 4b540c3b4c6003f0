#include "dsp/units.hpp"

#include <array>
#include <cctype>
#include <charconv>
#include <cstdio>

namespace hb {

std::string format_number(double v) {
    std::array<char, 64> buf{};
    // Whole numbers below 1e15 read best written out ("100000000", not "1e+08"); they stay exact.
    const auto fmt = (std::isfinite(v) && v == std::trunc(v) && std::abs(v) < 1e15) ? std::chars_format::fixed
                                                                                  : std::chars_format::general;
    auto [end, ec] = std::to_chars(buf.data(), buf.data() + buf.size(), v, fmt);
    if (ec != std::errc()) return "?";
    return std::string(buf.data(), end);
}

std::string format_frequency(double hz, int significant) {
    if (!std::isfinite(hz)) return format_number(hz) + " Hz";
    struct Scale { double factor; const char* unit; };
    static constexpr std::array<Scale, 4> scales{{{1e9, "GHz"}, {1e6, "MHz"}, {1e3, "kHz"}, {1.0, "Hz"}}};
    const double a = std::abs(hz);
    for (const Scale& s : scales) {
        if (a >= s.factor || s.factor == 1.0) {
            std::array<char, 64> buf{};
            std::snprintf(buf.data(), buf.size(), "%.*g %s", significant, hz / s.factor, s.unit);
            return buf.data();
        }
    }
    return "?";
}

std::optional<double> parse_frequency(std::string_view text) {
    auto trim = [](std::string_view s) {
        while (!s.empty() && std::isspace(static_cast<unsigned char>(s.front()))) s.remove_prefix(1);
        while (!s.empty() && std::isspace(static_cast<unsigned char>(s.back()))) s.remove_suffix(1);
        return s;
    };
    text = trim(text);
    if (text.empty()) return std::nullopt;
    double value = 0;
    const char* first = text.data();
    if (*first == '+') ++first;
    auto [ptr, ec] = std::from_chars(first, text.data() + text.size(), value);
    if (ec != std::errc() || !std::isfinite(value)) return std::nullopt;
    std::string_view rest = trim(std::string_view(ptr, static_cast<std::size_t>(text.data() + text.size() - ptr)));
    // Strip a trailing "Hz" (any case), then read one SI prefix.
    if (rest.size() >= 2) {
        std::string_view tail = rest.substr(rest.size() - 2);
        if ((tail[0] == 'H' || tail[0] == 'h') && (tail[1] == 'z' || tail[1] == 'Z')) rest = trim(rest.substr(0, rest.size() - 2));
    }
    double factor = 1.0;
    if (rest.size() == 1) {
        switch (rest[0]) {
            case 'k': case 'K': factor = 1e3; break;
            case 'M': factor = 1e6; break;
            case 'G': case 'g': factor = 1e9; break;
            case 'm': factor = 1e6; break;  // "98.3m" typed for MHz; milli-hertz is never meant here
            default: return std::nullopt;
        }
    } else if (!rest.empty()) {
        return std::nullopt;
    }
    return value * factor;
}

}  // namespace hb
