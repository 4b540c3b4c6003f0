#include "devices/filter_setup.hpp"

#include "devices/touchstone_file.hpp"
#include "dsp/errors.hpp"

namespace hb {

FilterModel load_filter_model(const Setup& s, const FilterSpec& spec, const std::string& key,
                              const std::optional<EnvelopeWindow>& window) {
    ModelOptions opt;
    opt.fir_window = window;
    TouchstoneData data;
    if (spec.type == FilterType::touchstone) {
        if (spec.path.empty()) throw InputError(key + ".path: a touchstone filter needs the path of its .s2p file");
        data = read_touchstone_file(resolve_path(s, spec.path));
        opt.touchstone = &data;
    }
    return make_filter_model(spec, key, opt);
}

std::optional<EnvelopeWindow> rf_window(const Setup& s) {
    if (s.sources.empty() || !s.sources.front().frequency_hz || !s.sources.front().sample_rate_hz) return std::nullopt;
    return EnvelopeWindow{*s.sources.front().frequency_hz, *s.sources.front().sample_rate_hz};
}

std::optional<EnvelopeWindow> if_window(const Setup& s) {
    std::optional<double> rate = s.if_chain.sample_rate_hz;
    if (!rate) {
        if (const auto rf = rf_window(s)) rate = rf->sample_rate_hz;
    }
    if (!rate) return std::nullopt;
    return EnvelopeWindow{s.if_chain.center_hz ? *s.if_chain.center_hz : s.plan.if_hz, *rate};
}

FilterModel rf_filter_model(const Setup& s) {
    return load_filter_model(s, s.rf_filter, "rf_filter", rf_window(s));
}

std::vector<FilterModel> if_filter_models(const Setup& s) {
    const auto w = if_window(s);
    std::vector<FilterModel> out;
    for (std::size_t i = 0; i < s.if_filters.size(); ++i)
        out.push_back(load_filter_model(s, s.if_filters[i], "if_filter[" + std::to_string(i) + "]", w));
    return out;
}

FilterChain make_if_chain(const Setup& s, const EnvelopeWindow& w) {
    ChainOptions o;
    o.window = w;
    o.decimation = s.if_chain.decimation;
    o.gain_db = s.if_chain.gain_db;
    return make_filter_chain(if_filter_models(s), o);
}

FilterChain make_rf_filter_chain(const Setup& s, const EnvelopeWindow& w) {
    ChainOptions o;
    o.window = w;
    return make_filter_chain({rf_filter_model(s)}, o);
}

std::function<FilterModel(const FilterSpec&, const std::string&, const std::optional<EnvelopeWindow>&)>
filter_loader(const Setup& s) {
    return [s](const FilterSpec& spec, const std::string& key, const std::optional<EnvelopeWindow>& w) {
        return load_filter_model(s, spec, key, w);
    };
}

}  // namespace hb
