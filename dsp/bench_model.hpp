// The plan's level model for one session: predicted spur levels from the session's own mixer model
// (dsp/mixer), the RF filter's own response at any frequency (dsp/filter_model) and a quadrature mixer's
// image rejection, in the form the plan engine (dsp/plan) consumes. The plan command, the chain's markers,
// the plan check and the sweep all take their predictions from here, so they cannot disagree.
#pragma once

#include <limits>
#include <string>

#include "dsp/filter_model.hpp"
#include "dsp/mixer.hpp"
#include "dsp/plan.hpp"

namespace hb {

struct BenchModel {
    PlanModel plan;    // what the plan engine uses
    MixerParams mixer; // the resolved mixer
    std::string note;  // one line saying where the levels come from
};

// rf_filter: the RF filter's model, or nullptr when there is none. ref_level_dbfs: the wanted's drive at the
// RF port. Levels come from the session's mixer model; a bypass without a preset has no model, so the
// plan's generic default table is used and the note says so. dbm_at_0dbfs: the RF port calibration (NaN: the
// first source's level_offset_db from the session).
BenchModel make_bench_model(const Setup& s, const FilterModel* rf_filter, double ref_level_dbfs,
                            double dbm_at_0dbfs = std::numeric_limits<double>::quiet_NaN());

}  // namespace hb
