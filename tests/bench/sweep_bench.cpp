// Spurious-response sweep speed (issue 10: "thousands of sweep points in seconds"): the whole run_sweep of an
// invented MF bench, 1000 grid points plus every response to max order 5; items_per_second is tones per second.
#include <benchmark/benchmark.h>

#include "devices/filter_setup.hpp"
#include "devices/session.hpp"
#include "dsp/sweep.hpp"

namespace hb {
namespace {

const char* kBench = R"(
[plan]
rf_low_hz = 0.5e6
rf_high_hz = 1.7e6
wanted_hz = 1.0e6
if_hz = 455e3
if_bandwidth_hz = 10e3
injection = "high"
max_order = 5
[rf_filter]
type = "butterworth"
center_hz = 1.0e6
bandwidth_hz = 200e3
order = 4
)";

// Arg 0: a linear ±1 switch at the capture's 2.4 MS/s; 1: the same with IIP2/IIP3 (narrower tiles) and no source
// rate (the sweep picks one); 2: as 0 with a narrow ceramic IF filter and decimation by 4 (long settling).
std::string session_text(int which) {
    std::string s = kBench;
    if (which == 1)
        s += "[mixer]\nmodel = \"unipolar\"\nduty_cycle = 0.3\niip2_dbm = 10\niip3_dbm = 0\n";
    else
        s += "[mixer]\nmodel = \"bipolar\"\n[[source]]\nkind = \"generator\"\nfrequency_hz = 1.2e6\n"
             "sample_rate_hz = 2.4e6\n";
    if (which == 2) s += "[[if_filter]]\npreset = \"ceramic-455k\"\n[if_chain]\ndecimation = 4\n";
    return s;
}

void BM_Sweep(benchmark::State& state) {
    const Setup s = parse_session(session_text(static_cast<int>(state.range(0))), "bench.toml");
    const auto loader = filter_loader(s);
    std::size_t tones = 0, runs = 0;
    for (auto _ : state) {
        const SweepResult r = run_sweep(s, loader);
        tones = r.points.size() + r.responses.size() + 1;
        runs = r.runs;
        benchmark::DoNotOptimize(r.responses.data());
    }
    state.counters["tones"] = static_cast<double>(tones);
    state.counters["runs"] = static_cast<double>(runs);
    state.SetItemsProcessed(static_cast<int64_t>(state.iterations() * tones));
}
BENCHMARK(BM_Sweep)->Arg(0)->Arg(1)->Arg(2)->Unit(benchmark::kMillisecond)->Iterations(3);

}  // namespace
}  // namespace hb
