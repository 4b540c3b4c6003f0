// The zone emulator's throughput in Msamples/s of complex-float input (items_per_second), for 2.4 MS/s-class
// blocks of 16384 samples, one source, K = 8 LO harmonics and a 3rd-order RF polynomial.
//   build/tests/bench/mixer_bench --benchmark_min_time=1
// Plans (invented benches):
//   vhf:    RF window 100 MHz, LO 110.7 MHz, IF window 10.7 MHz: only the wanted term reaches the window
//   mf:     RF window 1 MHz, LO 1.455 MHz, IF window 455 kHz ± 1.2 MHz: many zone/harmonic terms land in it
//   mf_all: the same with LO and RF leakage, DC offset, LO phase noise and added noise
#include <benchmark/benchmark.h>

#include <complex>
#include <vector>

#include "dsp/lo.hpp"
#include "dsp/mixer.hpp"
#include "dsp/mixer_emulator.hpp"

namespace {

using cf32 = std::complex<float>;
constexpr std::size_t kBlock = 16384;
constexpr double kFs = 2.4e6;

std::vector<cf32> wideband_input() {
    hb::GaussRng r = hb::GaussRng::make(3);
    std::vector<cf32> x(kBlock);
    for (auto& v : x) {
        double a, b;
        r.gauss_pair(a, b);
        v = cf32(static_cast<float>(0.1 * a), static_cast<float>(0.1 * b));  // about −17 dBFS
    }
    return x;
}

hb::MixerSpec spec(int impairments) {
    hb::MixerSpec s;
    s.model = hb::MixerModel::bipolar;
    s.harmonics = 8;
    s.duty_cycle = 0.505;  // duty error: even harmonics too
    s.edge_time = 0.02;
    s.iip2_dbm = 40;
    s.iip3_dbm = 10;
    s.conversion_gain_db = -6;
    if (impairments & 1) {
        s.lo_if_isolation_db = 35;
        s.rf_if_isolation_db = 30;
        s.dc_offset_dbfs = -60;
    }
    if (impairments & 2) s.noise_dbfs_per_hz = -150;
    if (impairments & 4) s.lo.phase_noise = {{1e3, -80}, {1e4, -95}, {1e5, -115}, {1e6, -135}};
    return s;
}

void run(benchmark::State& state, double rf_center, double lo, double out_center, int impairments) {
    const hb::MixerParams p = hb::resolve_mixer(spec(impairments), lo);
    hb::EmulatorConfig c;
    c.rf_center_hz = rf_center;
    c.sample_rate_hz = kFs;
    c.output_center_hz = out_center;
    c.rf_occupied_hz = kFs;  // a full capture: keep every term that reaches the window
    hb::MixerEmulator em = hb::MixerEmulator::make(p, c);
    const auto x = wideband_input();
    std::vector<cf32> y(kBlock);
    for (auto _ : state) {
        em.process(x, y);
        benchmark::DoNotOptimize(y.data());
        benchmark::ClobberMemory();
    }
    state.SetItemsProcessed(static_cast<std::int64_t>(state.iterations()) * static_cast<std::int64_t>(kBlock));
    state.counters["terms"] = static_cast<double>(em.terms().size());
}

void BM_ZoneVhf(benchmark::State& s) { run(s, 100e6, 110.7e6, 10.7e6, 0); }
void BM_ZoneMf(benchmark::State& s) { run(s, 1e6, 1.455e6, 455e3, 0); }
void BM_ZoneMfLeakage(benchmark::State& s) { run(s, 1e6, 1.455e6, 455e3, 1); }
void BM_ZoneMfNoise(benchmark::State& s) { run(s, 1e6, 1.455e6, 455e3, 2); }
void BM_ZoneMfPhaseNoise(benchmark::State& s) { run(s, 1e6, 1.455e6, 455e3, 4); }
void BM_ZoneMfAllImpairments(benchmark::State& s) { run(s, 1e6, 1.455e6, 455e3, 7); }

}  // namespace

BENCHMARK(BM_ZoneVhf);
BENCHMARK(BM_ZoneMf);
BENCHMARK(BM_ZoneMfLeakage);
BENCHMARK(BM_ZoneMfNoise);
BENCHMARK(BM_ZoneMfPhaseNoise);
BENCHMARK(BM_ZoneMfAllImpairments);

namespace {
// The LO phase-noise process alone (profile from 1 kHz: 32768-tap FIR by overlap-save FFT).
void BM_PhaseNoiseSource(benchmark::State& state) {
    const std::vector<hb::PhaseNoisePoint> prof{{1e3, -80}, {1e4, -95}, {1e5, -115}, {1e6, -135}};
    hb::PhaseNoiseSource src = hb::PhaseNoiseSource::make(prof, kFs, 1);
    std::vector<float> phi(kBlock);
    for (auto _ : state) {
        src.generate(phi.data(), phi.size());
        benchmark::DoNotOptimize(phi.data());
    }
    state.SetItemsProcessed(static_cast<std::int64_t>(state.iterations()) * static_cast<std::int64_t>(kBlock));
    state.counters["taps"] = static_cast<double>(src.filter_length());
}
// Gaussian pairs (one complex noise sample per pair).
void BM_GaussPairs(benchmark::State& state) {
    hb::GaussRng r = hb::GaussRng::make(1);
    std::vector<float> a(kBlock), b(kBlock);
    for (auto _ : state) {
        r.fill_pairs(a.data(), b.data(), kBlock);
        benchmark::DoNotOptimize(a.data());
    }
    state.SetItemsProcessed(static_cast<std::int64_t>(state.iterations()) * static_cast<std::int64_t>(kBlock));
}
}  // namespace
BENCHMARK(BM_PhaseNoiseSource);
BENCHMARK(BM_GaussPairs);
