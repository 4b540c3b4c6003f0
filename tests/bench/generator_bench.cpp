// Synthesiser throughput (Msamples/s of complex-float output) for the bench generator's typical worlds.
// The bench window streams 10 MS/s from the generator, so each case must stay well above that on one core.
//   ./build/tests/bench/generator_bench --benchmark_counters_tabular=true
#include <benchmark/benchmark.h>

#include <complex>
#include <vector>

#include "dsp/synth.hpp"

namespace {

using namespace hb;

Scenario world(int stations, ModKind kind, bool noise_band) {
    Scenario sc;
    sc.full_scale_dbm = -10;
    sc.noise_floor_dbm_per_hz = -168;
    SignalSpec band;
    band.type = SignalType::stations;
    band.first_hz = 95e6 + 100e3;  // the raster fills the 10 MHz window around 100 MHz
    band.spacing_hz = 10e6 / stations;
    band.count = stations;
    band.level_dbm = -70;
    band.level_spread_db = 20;
    band.occupancy = 1.0;
    band.station_modulation = kind;
    band.deviation_hz = 5e3;
    band.depth = 0.5;
    sc.signals.push_back(band);
    if (noise_band) {
        SignalSpec n;
        n.type = SignalType::noise;
        n.low_hz = 101e6;
        n.high_hz = 103e6;
        n.density_dbm_per_hz = -140;
        sc.signals.push_back(n);
    }
    return sc;
}

void run(benchmark::State& state, const Scenario& sc) {
    Synth s(sc, 1);
    Tuning t;
    t.center_hz = 100e6;
    t.sample_rate_hz = 10e6;
    t.gain_db = 20;
    s.tune(t);
    std::vector<std::complex<float>> out(kSynthBlock);
    for (auto _ : state) {
        s.process(out);
        benchmark::DoNotOptimize(out.data());
    }
    state.counters["MS/s"] = benchmark::Counter(double(state.iterations()) * kSynthBlock / 1e6,
                                                benchmark::Counter::kIsRate);
    state.counters["tones"] = s.contents().tones;
    state.counters["carriers"] = s.contents().carriers;
}

void BM_NoiseFloorOnly(benchmark::State& state) { run(state, world(1, ModKind::am, false)); }
void BM_AmStations(benchmark::State& state) {
    run(state, world(static_cast<int>(state.range(0)), ModKind::am, false));
}
void BM_FmStations(benchmark::State& state) {
    run(state, world(static_cast<int>(state.range(0)), ModKind::fm, false));
}
void BM_FmStationsAndNoiseBand(benchmark::State& state) {
    run(state, world(static_cast<int>(state.range(0)), ModKind::fm, true));
}

BENCHMARK(BM_NoiseFloorOnly);
BENCHMARK(BM_AmStations)->Arg(10)->Arg(50);
BENCHMARK(BM_FmStations)->Arg(10)->Arg(50);
BENCHMARK(BM_FmStationsAndNoiseBand)->Arg(50);

}  // namespace
