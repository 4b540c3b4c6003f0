// Predicted mixer product levels: the m x n spur table that connects the mixer model (dsp/mixer)
// with the plan engine (dsp/plan), the markers and the plan check.
//
// Entry (m, n) is the level of the product m·f_LO + n·f_RF at the mixer output relative to the wanted
// (1, ±1) output, in dBc, for an RF drive of ref_level_dbfs at the RF port. A product of RF order |n|
// grows |n| dB per dB of RF drive while the wanted output grows 1 dB per dB, so relative to the wanted
// it moves (|n| − 1) dB per dB (common practice for spur charts; exact for the polynomial model at low
// drive).
#pragma once

#include <cmath>
#include <cstdlib>
#include <limits>
#include <vector>

namespace hb {

struct SpurTable {
    int max_m = 0;                 // LO harmonic order covered, 0..max_m
    int max_n = 0;                 // RF order covered, |n| = 0..max_n
    double ref_level_dbfs = -10.0; // RF drive the entries are for
    std::vector<double> dbc;       // (max_m + 1) x (max_n + 1), row m, column |n|; NaN: no such product

    static constexpr double kNone = std::numeric_limits<double>::quiet_NaN();

    double& entry(int m, int n) { return dbc[static_cast<std::size_t>(m * (max_n + 1) + std::abs(n))]; }
    double entry(int m, int n) const { return dbc[static_cast<std::size_t>(m * (max_n + 1) + std::abs(n))]; }
    bool covers(int m, int n) const { return m >= 0 && m <= max_m && std::abs(n) <= max_n; }

    // Level in dBc at another RF drive, by the (|n| − 1) dB/dB rule. NaN where the table has no entry.
    double at(int m, int n, double level_dbfs) const {
        if (!covers(m, n)) return kNone;
        const double v = entry(m, n);
        if (std::isnan(v)) return v;
        return v + (std::abs(n) - 1) * (level_dbfs - ref_level_dbfs);
    }

    static SpurTable make(int max_m, int max_n, double ref_level_dbfs) {
        SpurTable t;
        t.max_m = max_m;
        t.max_n = max_n;
        t.ref_level_dbfs = ref_level_dbfs;
        t.dbc.assign(static_cast<std::size_t>((max_m + 1) * (max_n + 1)), kNone);
        return t;
    }
};

}  // namespace hb
