#include "dsp/touchstone.hpp"

#include <algorithm>
#include <cctype>
#include <cerrno>
#include <cmath>
#include <cstdlib>

#include "dsp/errors.hpp"
#include "dsp/units.hpp"

namespace hb {
namespace {

std::string lower(std::string_view s) {
    std::string out(s);
    for (char& c : out) c = static_cast<char>(std::tolower(static_cast<unsigned char>(c)));
    return out;
}

std::vector<std::string_view> split(std::string_view s) {
    std::vector<std::string_view> out;
    std::size_t i = 0;
    while (i < s.size()) {
        while (i < s.size() && std::isspace(static_cast<unsigned char>(s[i]))) ++i;
        std::size_t j = i;
        while (j < s.size() && !std::isspace(static_cast<unsigned char>(s[j]))) ++j;
        if (j > i) out.push_back(s.substr(i, j - i));
        i = j;
    }
    return out;
}

[[noreturn]] void fail(const std::string& name, int line, const std::string& msg) {
    throw InputError(name + ":" + std::to_string(line) + ": " + msg);
}

// A finite number written as such ("nan", "inf" and trailing junk are refused).
bool to_number(std::string_view tok, double& out) {
    const std::string t(tok);
    const std::string l = lower(t);
    if (l.find("nan") != std::string::npos || l.find("inf") != std::string::npos) return false;
    errno = 0;
    char* end = nullptr;
    out = std::strtod(t.c_str(), &end);
    return end == t.c_str() + t.size() && errno != ERANGE && std::isfinite(out);
}

std::string quote(std::string_view s) {
    std::string q(s.substr(0, 40));
    return "\"" + q + (s.size() > 40 ? "...\"" : "\"");
}

}  // namespace

TouchstoneData parse_touchstone(std::string_view text, const std::string& name) {
    TouchstoneData d;
    d.name = name;
    bool have_options = false, in_noise = false;
    double last_noise_f = -1.0;
    int line_no = 0;
    std::size_t pos = 0;
    while (pos <= text.size()) {
        std::size_t eol = text.find('\n', pos);
        if (eol == std::string_view::npos) eol = text.size();
        std::string_view line = text.substr(pos, eol - pos);
        pos = eol + 1;
        ++line_no;
        if (const auto bang = line.find('!'); bang != std::string_view::npos) line = line.substr(0, bang);
        const auto tok = split(line);
        if (tok.empty()) {
            if (eol == text.size()) break;
            continue;
        }
        if (tok[0].front() == '#') {
            if (have_options || !d.freq_hz.empty()) continue;  // only the first option line counts
            have_options = true;
            std::vector<std::string> words;
            if (tok[0].size() > 1) words.push_back(lower(tok[0].substr(1)));
            for (std::size_t i = 1; i < tok.size(); ++i) words.push_back(lower(tok[i]));
            for (std::size_t i = 0; i < words.size(); ++i) {
                const std::string& w = words[i];
                if (w == "hz")
                    d.unit_hz = 1.0;
                else if (w == "khz")
                    d.unit_hz = 1e3;
                else if (w == "mhz")
                    d.unit_hz = 1e6;
                else if (w == "ghz")
                    d.unit_hz = 1e9;
                else if (w == "s")
                    continue;
                else if (w == "y" || w == "z" || w == "h" || w == "g")
                    fail(name, line_no,
                         "option line: " + w + "-parameters are not supported; a filter needs S-parameters (S21)");
                else if (w == "ma")
                    d.format = TouchstoneFormat::ma;
                else if (w == "db")
                    d.format = TouchstoneFormat::db;
                else if (w == "ri")
                    d.format = TouchstoneFormat::ri;
                else if (w == "r") {
                    double r = 0;
                    if (i + 1 >= words.size() || !to_number(words[i + 1], r) || r <= 0)
                        fail(name, line_no,
                             "option line: R must be followed by a positive reference resistance in ohms" +
                                 std::string(i + 1 < words.size() ? ", got " + quote(words[i + 1]) : ""));
                    d.reference_ohms = r;
                    ++i;
                } else
                    fail(name, line_no,
                         "option line: unknown token " + quote(w) +
                             "; expected # [Hz|kHz|MHz|GHz] [S] [MA|DB|RI] [R ohms]");
            }
            continue;
        }
        if (tok[0].front() == '[')
            fail(name, line_no,
                 "Touchstone 2 keyword " + quote(tok[0]) +
                     " is not supported; save the file as Touchstone version 1 (.s2p)");
        std::vector<double> v(tok.size());
        for (std::size_t i = 0; i < tok.size(); ++i)
            if (!to_number(tok[i], v[i]))
                fail(name, line_no,
                     "column " + std::to_string(i + 1) + ": expected a finite number, got " + quote(tok[i]));
        const double f = v[0] * d.unit_hz;
        if (f < 0) fail(name, line_no, "negative frequency " + format_number(v[0]));
        if (in_noise || (!d.freq_hz.empty() && f <= d.freq_hz.back() && v.size() == 5)) {
            // Noise parameters: frequency, minimum noise figure, reflection (magnitude, angle), normalised resistance.
            if (v.size() != 5)
                fail(name, line_no, "noise-parameter data: expected 5 numbers, got " + std::to_string(v.size()));
            if (in_noise && f <= last_noise_f)
                fail(name, line_no,
                     "noise-parameter frequencies must increase: " + format_number(v[0]) + " after " +
                         format_number(last_noise_f / d.unit_hz));
            in_noise = true;
            last_noise_f = f;
            continue;
        }
        if (v.size() != 9)
            fail(name, line_no,
                 "expected 9 numbers for a two-port file (frequency, then S11 S21 S12 S22 as pairs), got " +
                     std::to_string(v.size()) + (v.size() == 3 ? " (a one-port .s1p file has no S21)" : ""));
        if (!d.freq_hz.empty() && f <= d.freq_hz.back())
            fail(name, line_no,
                 "frequencies must increase: " + format_number(v[0]) + " after " +
                     format_number(d.freq_hz.back() / d.unit_hz));
        std::array<std::complex<double>, 4> s;
        for (int k = 0; k < 4; ++k) {
            const double a = v[1 + 2 * k], b = v[2 + 2 * k];
            switch (d.format) {
                case TouchstoneFormat::ri:
                    s[k] = {a, b};
                    break;
                case TouchstoneFormat::ma:
                    s[k] = std::polar(a, b * kPi / 180.0);
                    break;
                case TouchstoneFormat::db:
                    s[k] = std::polar(std::pow(10.0, a / 20.0), b * kPi / 180.0);
                    break;
            }
            if (d.format == TouchstoneFormat::ma && a < 0)
                fail(name, line_no,
                     "column " + std::to_string(2 + 2 * k) + ": a magnitude cannot be negative (" + format_number(a) +
                         ")");
        }
        d.freq_hz.push_back(f);
        d.s.push_back(s);
        d.line.push_back(line_no);
        if (eol == text.size()) break;
    }
    if (d.freq_hz.size() < 2)
        fail(name, line_no,
             "needs at least 2 frequency points of two-port data, found " + std::to_string(d.freq_hz.size()));
    return d;
}

S21Table s21_table(const TouchstoneData& d) {
    S21Table t;
    t.freq_hz = d.freq_hz;
    double prev = 0.0;
    for (std::size_t i = 0; i < d.s.size(); ++i) {
        const std::complex<double> s21 = d.s[i][1];
        t.mag_db.push_back(20.0 * std::log10(std::max(std::abs(s21), 1e-20)));  // 0 in the data: -400 dB
        double ph = std::arg(s21);
        if (i > 0) ph = prev + std::remainder(ph - prev, kTwoPi);
        t.phase_rad.push_back(ph);
        prev = ph;
    }
    return t;
}

std::complex<double> S21Table::at(double f) const {
    if (freq_hz.empty()) return 0.0;
    if (f <= freq_hz.front()) return std::polar(std::pow(10.0, mag_db.front() / 20.0), phase_rad.front());
    if (f >= freq_hz.back()) return std::polar(std::pow(10.0, mag_db.back() / 20.0), phase_rad.back());
    const auto it = std::upper_bound(freq_hz.begin(), freq_hz.end(), f);
    const std::size_t i = static_cast<std::size_t>(it - freq_hz.begin()) - 1;
    const double u = (f - freq_hz[i]) / (freq_hz[i + 1] - freq_hz[i]);
    const double db = mag_db[i] + u * (mag_db[i + 1] - mag_db[i]);
    const double ph = phase_rad[i] + u * (phase_rad[i + 1] - phase_rad[i]);
    return std::polar(std::pow(10.0, db / 20.0), ph);
}

double S21Table::group_delay_s(double f) const {
    if (freq_hz.size() < 2 || f < freq_hz.front() || f > freq_hz.back()) return 0.0;
    auto it = std::upper_bound(freq_hz.begin(), freq_hz.end(), f);
    std::size_t i = static_cast<std::size_t>(it - freq_hz.begin());
    i = std::clamp<std::size_t>(i, 1, freq_hz.size() - 1) - 1;
    return -(phase_rad[i + 1] - phase_rad[i]) / (kTwoPi * (freq_hz[i + 1] - freq_hz[i]));
}

double S21Table::peak_gain() const {
    double m = -1e300;
    for (double v : mag_db) m = std::max(m, v);
    return std::pow(10.0, m / 20.0);
}

}  // namespace hb
