#include "dsp/bench_model.hpp"

#include <algorithm>
#include <cmath>

namespace hb {

BenchModel make_bench_model(const Setup& s, const FilterModel* rf_filter, double ref_level_dbfs, double dbm_at_0dbfs) {
    BenchModel b;
    b.mixer = std::isnan(dbm_at_0dbfs) ? resolve_mixer(s) : resolve_mixer(s.mixer, lo_frequency_hz(s), dbm_at_0dbfs);
    const int order = s.plan.max_order;
    if (b.mixer.predicts) {
        b.plan.spurs = predict_spur_table(b.mixer, ref_level_dbfs, order, order);
        b.note = "the session's mixer model (" + std::string(to_string(b.mixer.predict_model)) +
                 (b.mixer.preset.empty() ? "" : ", preset " + b.mixer.preset) +
                 "); products the model does not produce (RF orders above 3, balanced even harmonics) have no level";
    } else {
        b.plan.spurs = default_spur_table(order, order, ref_level_dbfs);
        b.note = "generic double-balanced table (common-practice figures): the bypass mixer has no model";
    }
    b.plan.rf_level_dbfs = ref_level_dbfs;
    // A perfectly balanced IQ mixer rejects the image completely; 300 dB stands for that in reports (JSON has no inf).
    if (b.mixer.predict_model == MixerModel::quadrature)
        b.plan.quadrature_irr_db = std::min(300.0, image_rejection_db(b.mixer));
    if (rf_filter && rf_filter->kind != ModelKind::none) {
        // Attenuation relative to the filter's pass-band peak, so insertion loss does not count as rejection.
        const double peak = std::max(rf_filter->section_peak(), 1e-300);
        const int sections = std::max(1, rf_filter->spec.sections);
        const FilterModel model = *rf_filter;
        b.plan.rf_attenuation_db = [model, peak, sections](double f_hz) {
            const double mag = std::abs(filter_response(model, f_hz));
            return -20.0 * std::log10(std::max(mag, 1e-300)) + 20.0 * sections * std::log10(peak);
        };
    }
    return b;
}

}  // namespace hb
