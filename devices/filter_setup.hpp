// The filters of a Setup as models and chains: reads the Touchstone files that touchstone filters name, and works
// out the envelope windows the RF filter and the IF filters run on.
#pragma once

#include <functional>
#include <optional>
#include <string>
#include <vector>

#include "dsp/filter_chain.hpp"
#include "dsp/filter_model.hpp"
#include "dsp/setup.hpp"

namespace hb {

// The model of one filter spec of `s` (key is its key path, e.g. "if_filter[1]"); an FIR is designed for `window`
// when given. Throws InputError (file and line for a bad .s2p file, key path for a bad spec).
FilterModel load_filter_model(const Setup& s, const FilterSpec& spec, const std::string& key,
                              const std::optional<EnvelopeWindow>& window = std::nullopt);

// The RF window: the first source's frequency_hz and sample_rate_hz, when both are set.
std::optional<EnvelopeWindow> rf_window(const Setup& s);
// The IF window: if_chain.center_hz (default plan.if_hz) and if_chain.sample_rate_hz (default the RF window's rate).
std::optional<EnvelopeWindow> if_window(const Setup& s);

// Models of [rf_filter] and every [[if_filter]]; FIR types are designed at the window's rate when it is known.
FilterModel rf_filter_model(const Setup& s);
std::vector<FilterModel> if_filter_models(const Setup& s);

// The IF chain (IF filters, decimation, gain) on the IF window; the RF filter chain on the RF window.
FilterChain make_if_chain(const Setup& s, const EnvelopeWindow& w);
FilterChain make_rf_filter_chain(const Setup& s, const EnvelopeWindow& w);

// The loader the signal chain uses (dsp/signal_chain.hpp): load_filter_model for this Setup, so touchstone
// filters read their files.
std::function<FilterModel(const FilterSpec&, const std::string&, const std::optional<EnvelopeWindow>&)>
filter_loader(const Setup& s);

}  // namespace hb
