#include "dsp/plan.hpp"

#include "dsp/mixer.hpp"

#include <algorithm>
#include <cmath>
#include <cstdlib>

#include "dsp/errors.hpp"
#include "dsp/units.hpp"

namespace hb {
namespace {

// Channels without a vector: validate() walks up to a million of them on every session load.
std::size_t channel_count(const PlanSpec& p) {
    const double span = p.rf_high_hz - p.rf_low_hz;
    if (!(p.channel_spacing_hz > 0) || !std::isfinite(span) || span < 0) return 1;
    // The small allowance keeps a band edge that is a whole number of channels away (88 to 108 MHz in
    // 200 kHz steps = 100 steps) from being lost to rounding.
    return static_cast<std::size_t>(std::floor(span / p.channel_spacing_hz * (1 + 1e-12) + 1e-9)) + 1;
}

double channel_at(const PlanSpec& p, std::size_t k) {
    if (!(p.channel_spacing_hz > 0)) return p.wanted_hz;
    return p.rf_low_hz + static_cast<double>(k) * p.channel_spacing_hz;
}

PlanSpec spec_of(const FrequencyPlan& p) {
    PlanSpec s;
    s.rf_low_hz = p.rf_low_hz;
    s.rf_high_hz = p.rf_high_hz;
    s.channel_spacing_hz = p.channel_spacing_hz;
    s.wanted_hz = p.wanted_hz;
    return s;
}

bool has_table(const PlanModel& model) {
    const SpurTable& t = model.spurs;
    return t.max_m >= 0 && t.max_n >= 0 && !t.dbc.empty() &&
           t.dbc.size() == static_cast<std::size_t>((t.max_m + 1) * (t.max_n + 1));
}

double drive_dbfs(const PlanModel& model) {
    return model.rf_level_dbfs.value_or(model.spurs.ref_level_dbfs);
}

double attenuation_db(const PlanModel& model, double f_hz) {
    return model.rf_attenuation_db ? model.rf_attenuation_db(f_hz) : 0.0;
}

int side_of(double signed_hz) {
    return signed_hz < 0 ? -1 : 1;
}

std::string join_problems(const std::vector<SetupProblem>& problems) {
    std::string s;
    for (const SetupProblem& p : problems) s += (s.empty() ? "" : "; ") + p.key + ": " + p.message;
    return s;
}

}  // namespace

std::vector<double> channel_frequencies(const PlanSpec& p) {
    const std::size_t n = channel_count(p);
    std::vector<double> out(n);
    for (std::size_t k = 0; k < n; ++k) out[k] = channel_at(p, k);
    return out;
}

std::vector<double> channel_frequencies(const FrequencyPlan& p) {
    return channel_frequencies(spec_of(p));
}

std::vector<SetupProblem> check_plan_channels(const Setup& s) {
    const PlanSpec& p = s.plan;
    const Band if_band{p.if_hz, p.if_bandwidth_hz};
    const std::size_t count = channel_count(p);
    std::vector<SetupProblem> out;
    if (s.mixer.lo.frequency_hz) {
        const double lo = *s.mixer.lo.frequency_hz;
        const int wanted_n = wanted_conversion(lo, p.wanted_hz, if_band);
        if (wanted_n == 0) {
            out.push_back({"mixer.lo.frequency_hz",
                           "got " + format_number(lo) + " Hz: the wanted " + format_number(p.wanted_hz) +
                               " Hz converts to " + format_number(std::abs(lo - p.wanted_hz)) +
                               " Hz (difference) and " + format_number(lo + p.wanted_hz) +
                               " Hz (sum), neither inside the IF passband " + format_number(if_band.low_hz()) + " to " +
                               format_number(if_band.high_hz()) + " Hz; expected an LO at plan.wanted_hz plus or minus plan.if_hz"});
            return out;
        }
        for (std::size_t k = 0; k < count; ++k) {
            const double c = channel_at(p, k);
            const double if_c = std::abs(lo + wanted_n * c);
            if (if_c <= if_band.width_hz / 2) {
                out.push_back(
                    {"mixer.lo.frequency_hz",
                     "got " + format_number(lo) + " Hz: the channel at " + format_number(c) + " Hz would convert to " +
                         format_number(if_c) +
                         " Hz, so its IF passband would contain 0 Hz; expected the fixed LO at least half the "
                         "IF bandwidth (" +
                         format_number(if_band.width_hz / 2) + " Hz) away from every channel"});
                break;
            }
        }
        return out;
    }
    const bool high = p.injection == Injection::high;
    for (std::size_t k = 0; k < count; ++k) {
        const double c = channel_at(p, k);
        const double lo = high ? c + p.if_hz : c - p.if_hz;
        if (!(lo > 0)) {
            out.push_back({"plan.rf_low_hz", "the channel at " + format_number(c) + " Hz would need a low-side LO at " +
                                                 format_number(lo) + " Hz; expected every channel above plan.if_hz (" +
                                                 format_number(p.if_hz) + " Hz), or injection = \"high\""});
            break;
        }
        if (if_band.contains(lo)) {
            out.push_back({"plan.injection", "for the channel at " + format_number(c) + " Hz the " +
                                                 (high ? "high" : "low") + "-side LO at " + format_number(lo) +
                                                 " Hz falls inside the IF passband " + format_number(if_band.low_hz()) +
                                                 " to " + format_number(if_band.high_hz()) + " Hz"});
            break;
        }
    }
    return out;
}

FrequencyPlan frequency_plan(const Setup& s) {
    const std::vector<SetupProblem> problems = validate(s);
    if (!problems.empty()) throw InputError("the frequency plan cannot be used: " + join_problems(problems));
    const PlanSpec& ps = s.plan;
    FrequencyPlan p;
    p.wanted_hz = ps.wanted_hz;
    p.lo_hz = lo_frequency_hz(s);
    p.if_band = {ps.if_hz, ps.if_bandwidth_hz};
    p.injection = ps.injection;
    p.fixed_lo = s.mixer.lo.frequency_hz.has_value();
    p.complex_if = output_model(s.mixer) == MixerModel::quadrature;
    p.wanted_n = p.fixed_lo ? wanted_conversion(p.lo_hz, p.wanted_hz, p.if_band) : -1;
    p.rf_low_hz = ps.rf_low_hz;
    p.rf_high_hz = ps.rf_high_hz;
    p.channel_spacing_hz = ps.channel_spacing_hz;
    p.max_order = ps.max_order;
    // The analysis window: the IF chain's output, IF centre ± rate / 2 (rate = input rate / decimation).
    std::optional<double> rate = s.if_chain.sample_rate_hz;
    if (!rate && !s.sources.empty()) rate = s.sources.front().sample_rate_hz;
    if (rate) p.window = Band{s.if_chain.center_hz.value_or(ps.if_hz), *rate / s.if_chain.decimation};
    return p;
}

ChannelTuning tune_channel(const FrequencyPlan& p, double rf_hz) {
    ChannelTuning t;
    t.rf_hz = rf_hz;
    if (p.fixed_lo) {
        t.lo_hz = p.lo_hz;
        t.wanted_n = p.wanted_n;
        t.if_band = {std::abs(p.lo_hz + p.wanted_n * rf_hz), p.if_band.width_hz};
    } else {
        t.lo_hz = p.injection == Injection::high ? rf_hz + p.if_band.center_hz : rf_hz - p.if_band.center_hz;
        t.wanted_n = -1;
        t.if_band = p.if_band;
    }
    return t;
}

// ---- Predicted levels ----------------------------------------------------------------------------------

SpurTable default_spur_table(int max_m, int max_n, double ref_level_dbfs) {
    return default_spur_table(max_m, max_n, ref_level_dbfs, DefaultSpurModel{});
}

SpurTable default_spur_table(int max_m, int max_n, double ref_level_dbfs, const DefaultSpurModel& d) {
    if (max_m < 1 || max_n < 1 || max_m > 63 || max_n > 63)
        throw InputError("spur table size: got " + std::to_string(max_m) + " x " + std::to_string(max_n) +
                         ", expected 1 to 63 LO harmonics and RF orders");
    SpurTable t = SpurTable::make(max_m, max_n, ref_level_dbfs);
    for (int m = 0; m <= max_m; ++m) {
        // Harmonic m of a ±1 square wave has amplitude 4/(πm) for odd m: 1/m relative to the fundamental.
        const double lo_weight_db = m == 0 ? 0.0 : -db_from_amplitude(m);
        for (int k = 0; k <= max_n; ++k) {
            if (m == 0 && k == 0) continue;  // DC
            const bool even = (m % 2 == 0) || (k % 2 == 0 && k > 0);
            double v;
            if (k == 0) {
                v = d.lo_feedthrough_dbc + lo_weight_db + (m % 2 == 0 ? -d.balance_db : 0.0);
            } else {
                // A product of RF order k relative to the first-order one: (k − 1)·(drive − intercept).
                const double rf_db = k == 1 ? 0.0 : k == 2 ? -d.iip2_margin_db : -(k - 1) * d.iip3_margin_db;
                v = lo_weight_db + rf_db + (even ? -d.balance_db : 0.0);
            }
            t.entry(m, k) = v;
        }
    }
    return t;
}

double predict_product_dbc(const PlanModel& model, int m, int n, double rf_hz) {
    if (m == 1 && std::abs(n) == 1) return 0.0;  // the first-order output is the reference itself
    if (!has_table(model)) return kUnknownDbc;
    return model.spurs.at(m, n, drive_dbfs(model) - attenuation_db(model, rf_hz));
}

void predict_products(std::vector<Product>& products, const PlanModel& model, double rf_hz) {
    for (Product& p : products)
        p.predicted_dbc = p.kind == ProductKind::wanted ? 0.0 : predict_product_dbc(model, p.m, p.n, rf_hz);
}

double predict_response_dbc(const PlanModel& model, int m, int n, double rf_hz, double if_signed_hz,
                            double wanted_rf_hz, int wanted_side) {
    const bool first_order = m == 1 && std::abs(n) == 1;
    if (!first_order && !has_table(model)) return kUnknownDbc;
    const double level = drive_dbfs(model);
    const double at_mixer = level - attenuation_db(model, rf_hz);
    const double wanted_at_mixer = level - attenuation_db(model, wanted_rf_hz);
    double v = at_mixer - wanted_at_mixer + (first_order ? 0.0 : model.spurs.at(m, n, at_mixer));
    if (wanted_side != 0 && side_of(if_signed_hz) != wanted_side) v -= model.quadrature_irr_db;
    return v;
}

void predict_responses(std::vector<Response>& responses, const PlanModel& model, double wanted_rf_hz) {
    // Stop at the first match: GCC 12.2 at -O3 miscompiles the "last match wins" form of this loop
    // (a vectorised conditional reduction returned 0; -fno-tree-loop-vectorize or a break avoids it).
    int wanted_side = 0;
    for (const Response& r : responses)
        if (r.kind == ProductKind::wanted) {
            wanted_side = side_of(r.if_signed_hz);
            break;
        }
    for (Response& r : responses)
        r.predicted_dbc = r.kind == ProductKind::wanted ? 0.0
                                                        : predict_response_dbc(model, r.m, r.n, r.rf_hz, r.if_signed_hz,
                                                                               wanted_rf_hz, wanted_side);
}

// ---- Tuning range ----------------------------------------------------------------------------------------

bool worse(const ChannelSpur& a, const ChannelSpur& b) {
    const bool ka = !std::isnan(a.predicted_dbc), kb = !std::isnan(b.predicted_dbc);
    if (ka != kb) return ka;
    if (ka && a.predicted_dbc != b.predicted_dbc) return a.predicted_dbc > b.predicted_dbc;
    return a.order < b.order;
}

TuningAnalysis analyze_tuning_range(const FrequencyPlan& p, const PlanModel& model) {
    const std::vector<double> chans = channel_frequencies(p);
    const int N = p.max_order;
    TuningAnalysis t;
    t.channels.reserve(chans.size());
    // Per (m, |n|): how often and how badly, indexed m·(N + 1) + |n|.
    std::vector<MnSummary> mn(static_cast<std::size_t>((N + 1) * (N + 1)));
    std::vector<long> last_channel(mn.size(), -1);

    for (std::size_t ci = 0; ci < chans.size(); ++ci) {
        const double c = chans[ci];
        const ChannelTuning ct = tune_channel(p, c);
        const double lo = ct.lo_hz;
        const Band& ifb = ct.if_band;
        const int wanted_side = side_of(lo + ct.wanted_n * c);
        ChannelResult cr;
        cr.wanted_hz = c;
        cr.lo_hz = lo;
        cr.if_hz = ifb.center_hz;

        // The channel's own products in its IF passband (LO harmonics included: they are there whenever
        // this channel is tuned).
        for (int m = 0; m <= N; ++m) {
            const int kmax = N - m;
            for (int n = (m == 0 ? 1 : -kmax); n <= kmax; ++n) {
                if (m == 1 && n == ct.wanted_n) continue;
                const double s = m * lo + n * c;
                if (!ifb.contains(std::abs(s))) continue;
                ChannelSpur sp;
                sp.m = m;
                sp.n = n;
                sp.order = m + std::abs(n);
                sp.label = mix_expression(m, n, s);
                sp.kind = n == 0 ? ProductKind::lo_feedthrough
                                 : (m == 0 && n == 1 ? ProductKind::rf_feedthrough : ProductKind::spur);
                sp.if_hz = s;
                sp.rf_hz = sp.rf_low_hz = sp.rf_high_hz = c;
                sp.predicted_dbc = predict_product_dbc(model, m, n, c);
                if (side_of(s) != wanted_side) sp.predicted_dbc -= model.quadrature_irr_db;
                cr.spurs.push_back(std::move(sp));
            }
        }

        // Spurious responses overlapping the RF band. A band that holds the channel itself describes the
        // channel's own product (or the wanted conversion): already listed above.
        const double half_if_hz = (c + lo) / 2;
        for_each_response_band(lo, ifb, N, [&](int m, int n, double rf, double rlo, double rhi, double ifs) {
            if (rhi < p.rf_low_hz || rlo > p.rf_high_hz) return;
            if (c >= rlo && c <= rhi) return;
            ChannelSpur sp;
            sp.m = m;
            sp.n = n;
            sp.order = m + std::abs(n);
            sp.response = true;
            if (m == 1 && std::abs(n) == 1) {
                sp.kind = ProductKind::image;
                sp.label = "image";
            } else if (m == 2 && std::abs(n) == 2 && half_if_hz >= rlo && half_if_hz <= rhi) {
                sp.kind = ProductKind::half_if;
                sp.label = "half-IF";
            } else if (m == 0 && n == 1) {
                sp.kind = ProductKind::if_feedthrough;
                sp.label = "IF";
            } else {
                sp.label = mix_expression(m, n, m * lo + n * rf);
            }
            sp.if_hz = ifs;
            sp.rf_hz = rf;
            sp.rf_low_hz = rlo;
            sp.rf_high_hz = rhi;
            sp.predicted_dbc = predict_response_dbc(model, m, n, rf, ifs, c, wanted_side);
            cr.spurs.push_back(std::move(sp));
        });

        std::sort(cr.spurs.begin(), cr.spurs.end(), worse);
        if (!cr.spurs.empty()) {
            ++t.channels_with_spurs;
            if (t.worst_channel < 0) {
                t.worst_channel = static_cast<int>(ci);
            } else {
                const ChannelResult& w = t.channels[static_cast<std::size_t>(t.worst_channel)];
                const ChannelSpur &a = cr.spurs.front(), &b = w.spurs.front();
                if (worse(a, b) || (!worse(b, a) && cr.spurs.size() > w.spurs.size()))
                    t.worst_channel = static_cast<int>(ci);
            }
        }
        for (const ChannelSpur& sp : cr.spurs) {
            const auto key = static_cast<std::size_t>(sp.m * (N + 1) + std::abs(sp.n));
            MnSummary& e = mn[key];
            // Count each channel once per (m, |n|); spurs are sorted worst first, so the first one seen in a
            // channel is that channel's worst of this (m, |n|).
            if (last_channel[key] == static_cast<long>(ci)) continue;
            last_channel[key] = static_cast<long>(ci);
            ++e.channels;
            if (e.channels == 1 || worse(sp, e.worst)) {
                e.m = sp.m;
                e.n = std::abs(sp.n);
                e.order = sp.order;
                e.worst = sp;
                e.worst_channel = static_cast<int>(ci);
            }
        }
        t.channels.push_back(std::move(cr));
    }
    for (MnSummary& e : mn)
        if (e.channels > 0) t.by_mn.push_back(std::move(e));
    std::stable_sort(t.by_mn.begin(), t.by_mn.end(),
                     [](const MnSummary& a, const MnSummary& b) { return worse(a.worst, b.worst); });
    return t;
}

PlanAnalysis analyze_plan(const FrequencyPlan& p, const PlanModel& model) {
    PlanAnalysis r;
    r.plan = p;
    ProductQuery pq;
    pq.lo_hz = p.lo_hz;
    pq.rf_hz = p.wanted_hz;
    pq.max_order = p.max_order;
    pq.if_band = p.if_band;
    pq.window = p.window;
    pq.wanted_n = p.wanted_n;
    r.products = enumerate_products(pq);
    predict_products(r.products, model, p.wanted_hz);

    ResponseQuery rq;
    rq.lo_hz = p.lo_hz;
    rq.max_order = p.max_order;
    rq.if_band = p.if_band;
    rq.wanted_rf_hz = p.wanted_hz;
    rq.rf_low_hz = p.rf_low_hz;
    rq.rf_high_hz = p.rf_high_hz;
    r.responses = spurious_responses(rq);
    predict_responses(r.responses, model, p.wanted_hz);

    r.tuning = analyze_tuning_range(p, model);
    return r;
}

}  // namespace hb
