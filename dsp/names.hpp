// Small shared helpers for settings: enum <-> name tables, and a collector of range problems with key paths.
// Used by the Setup (dsp/setup.cpp) and the generator's scenarios (dsp/synth.cpp).
#pragma once

#include <array>
#include <cmath>
#include <string>
#include <string_view>
#include <utility>
#include <vector>

#include "dsp/setup.hpp"
#include "dsp/units.hpp"

namespace hb {

template <class E, std::size_t N>
using NameTable = std::array<std::pair<E, std::string_view>, N>;

template <class E, std::size_t N>
std::string_view name_of(const NameTable<E, N>& table, E value) {
    for (const auto& [v, n] : table)
        if (v == value) return n;
    return "?";
}

template <class E, std::size_t N>
bool value_of(const NameTable<E, N>& table, std::string_view text, E& out) {
    for (const auto& [v, n] : table)
        if (n == text) {
            out = v;
            return true;
        }
    return false;
}

// "a|b|c", for messages.
template <class E, std::size_t N>
std::string join_names(const NameTable<E, N>& table) {
    std::string s;
    for (const auto& [v, n] : table) {
        if (!s.empty()) s += '|';
        s += n;
    }
    return s;
}

// Collects problems with their key paths; every check reads as one line at the call site.
struct Checker {
    std::vector<SetupProblem> problems;

    void fail(std::string key, std::string message) { problems.push_back({std::move(key), std::move(message)}); }

    // A finite number in [lo, hi].
    void range(const std::string& key, double v, double lo, double hi, std::string_view unit) {
        if (!std::isfinite(v) || v < lo || v > hi)
            fail(key, "got " + format_number(v) + ", expected a finite number from " + format_number(lo) + " to " +
                          format_number(hi) + (unit.empty() ? "" : " " + std::string(unit)));
    }
    // A finite number in (0, hi].
    void positive(const std::string& key, double v, double hi, std::string_view unit) {
        if (!std::isfinite(v) || v <= 0 || v > hi)
            fail(key, "got " + format_number(v) + ", expected a finite number above 0 and at most " +
                          format_number(hi) + " " + std::string(unit));
    }
    void int_range(const std::string& key, long long v, long long lo, long long hi) {
        if (v < lo || v > hi)
            fail(key, "got " + std::to_string(v) + ", expected an integer from " + std::to_string(lo) + " to " +
                          std::to_string(hi));
    }
    template <class Opt>
    void opt_range(const std::string& key, const Opt& v, double lo, double hi, std::string_view unit) {
        if (v) range(key, *v, lo, hi, unit);
    }
};

}  // namespace hb
