// Plan engine speed: the tuning-range analysis over 1000 channels at max order 15 (issue 3 asks for well
// under a second), and the single-channel enumerations it is built from.
#include <benchmark/benchmark.h>

#include "dsp/plan.hpp"

namespace hb {
namespace {

// An invented VHF band: 88.0 to 107.98 MHz every 20 kHz = 1000 channels, 10.7 MHz IF, high side.
FrequencyPlan vhf_plan(int max_order) {
    FrequencyPlan p;
    p.wanted_hz = 98e6;
    p.lo_hz = 108.7e6;
    p.if_band = {10.7e6, 180e3};
    p.injection = Injection::high;
    p.rf_low_hz = 88e6;
    p.rf_high_hz = 107.98e6;
    p.channel_spacing_hz = 20e3;
    p.max_order = max_order;
    return p;
}

void BM_TuningRange1000Channels(benchmark::State& state) {
    const FrequencyPlan p = vhf_plan(static_cast<int>(state.range(0)));
    PlanModel model;
    model.spurs = default_spur_table(p.max_order, p.max_order, -10.0);
    std::size_t spurs = 0, channels = 0;
    for (auto _ : state) {
        const TuningAnalysis t = analyze_tuning_range(p, model);
        channels = t.channels.size();
        spurs = 0;
        for (const auto& c : t.channels) spurs += c.spurs.size();
        benchmark::DoNotOptimize(t.worst_channel);
    }
    state.counters["channels"] = static_cast<double>(channels);
    state.counters["spurs"] = static_cast<double>(spurs);
    state.SetItemsProcessed(static_cast<int64_t>(state.iterations() * channels));
}
BENCHMARK(BM_TuningRange1000Channels)->Arg(7)->Arg(15)->Arg(31)->Unit(benchmark::kMillisecond);

void BM_AnalyzePlan(benchmark::State& state) {
    const FrequencyPlan p = vhf_plan(15);
    PlanModel model;
    model.spurs = default_spur_table(15, 15, -10.0);
    for (auto _ : state) benchmark::DoNotOptimize(analyze_plan(p, model).products.size());
}
BENCHMARK(BM_AnalyzePlan)->Unit(benchmark::kMillisecond);

void BM_SpuriousResponsesOrder15(benchmark::State& state) {
    ResponseQuery q;
    q.lo_hz = 108.7e6;
    q.max_order = 15;
    q.if_band = {10.7e6, 180e3};
    q.wanted_rf_hz = 98e6;
    q.rf_low_hz = 88e6;
    q.rf_high_hz = 108e6;
    for (auto _ : state) benchmark::DoNotOptimize(spurious_responses(q).size());
}
BENCHMARK(BM_SpuriousResponsesOrder15)->Unit(benchmark::kMicrosecond);

void BM_EnumerateProductsOrder15(benchmark::State& state) {
    ProductQuery q;
    q.lo_hz = 108.7e6;
    q.rf_hz = 98e6;
    q.max_order = 15;
    q.if_band = {10.7e6, 180e3};
    q.wanted_n = -1;
    for (auto _ : state) benchmark::DoNotOptimize(enumerate_products(q).size());
}
BENCHMARK(BM_EnumerateProductsOrder15)->Unit(benchmark::kMicrosecond);

}  // namespace
}  // namespace hb
