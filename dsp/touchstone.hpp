// Touchstone version 1 two-port files (.s2p): text -> data. Reading the file is devices/touchstone_file.*.
//
// What is accepted (Touchstone File Format Specification rev. 1.1, EIA/IBIS Open Forum, 2002, from memory):
//   ! comment            anywhere on a line; the rest of the line is ignored
//   # <unit> <param> <format> R <ohms>   the option line; tokens in any order, any case, each optional
//                        unit Hz|kHz|MHz|GHz (default GHz), param S (Y, Z, H, G are refused: a filter needs S21),
//                        format MA|DB|RI (default MA), R reference resistance (default 50). Only the first option
//                        line counts; later ones are ignored, as the specification says.
//   f  S11 S21 S12 S22   one line per frequency, each parameter a pair (MA: magnitude, angle in degrees;
//                        DB: 20 log10|S|, angle in degrees; RI: real, imaginary). Note the two-port order 11 21 12 22.
//   noise data           a line whose frequency does not exceed the last network frequency and that has 5 numbers
//                        starts the optional noise-parameter block; it is checked for shape and otherwise ignored.
// Refused, each with the line number: a bad option line, Touchstone 2 keywords ([Version] ...), a wrong number of
// columns, text or NaN/infinity where a number belongs, negative or non-increasing frequencies, fewer than two
// frequency points.
#pragma once

#include <array>
#include <complex>
#include <string>
#include <string_view>
#include <vector>

namespace hb {

enum class TouchstoneFormat { ma, db, ri };

struct TouchstoneData {
    std::string name;  // where it came from (file path), for messages
    double reference_ohms = 50.0;
    TouchstoneFormat format = TouchstoneFormat::ma;
    double unit_hz = 1e9;  // frequency multiplier from the option line
    std::vector<double> freq_hz;
    std::vector<std::array<std::complex<double>, 4>> s;  // S11, S21, S12, S22 at each frequency
    std::vector<int> line;                               // source line of each frequency point
};

// Parses two-port Touchstone v1 text. `name` prefixes every message ("name:line: ..."). Throws InputError.
TouchstoneData parse_touchstone(std::string_view text, const std::string& name);

// S21 as a smooth function of frequency: linear interpolation of 20 log10|S21| and of the unwrapped phase between
// the measured points; outside the measured range both are held at the end values (a measurement says nothing
// there; holding is the least surprising choice, and the model reports the range it is valid over).
struct S21Table {
    std::vector<double> freq_hz;
    std::vector<double> mag_db;
    std::vector<double> phase_rad;  // unwrapped: steps between points taken as the smallest (|step| <= pi)
    std::complex<double> at(double f_hz) const;
    double group_delay_s(double f_hz) const;  // -dphi/domega of the interpolant (constant on each segment)
    double peak_gain() const;                 // largest |S21| in the data
};

S21Table s21_table(const TouchstoneData& d);

}  // namespace hb
