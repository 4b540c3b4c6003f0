// Speed of the Welch estimator (Msamples/s of complex-float input) and of the plan check on a finished
// spectrum. Run: build/tests/bench/spectrum_bench
#include <benchmark/benchmark.h>

#include <complex>
#include <cstring>
#include <random>
#include <vector>

#include "dsp/fft.hpp"
#include "dsp/measure.hpp"
#include "dsp/spectrum.hpp"

namespace {

using cf = std::complex<float>;

std::vector<cf> noise(std::size_t n) {
    std::mt19937 rng(1);
    std::normal_distribution<float> g(0.0f, 0.1f);
    std::vector<cf> x(n);
    for (auto& v : x) v = {g(rng), g(rng)};
    return x;
}

// Args: FFT size, window, overlap in percent. Blocks of 8192 samples, as a pipeline would deliver them.
void BM_Welch(benchmark::State& state) {
    hb::AnalyzerSpec a;
    a.fft_size = static_cast<int>(state.range(0));
    a.window = static_cast<hb::WindowType>(state.range(1));
    a.overlap = static_cast<double>(state.range(2)) / 100.0;
    a.averages = 16;
    hb::Welch wl = hb::Welch::make(a, 0.0, 1e6);
    const std::vector<cf> x = noise(1 << 20);  // 8 MB: streams from memory like a live source
    constexpr std::size_t kBlock = 8192;
    std::size_t pos = 0;
    for (auto _ : state) {
        wl.push(std::span<const cf>(x).subspan(pos, kBlock));
        pos = (pos + kBlock) % x.size();
    }
    state.SetItemsProcessed(static_cast<std::int64_t>(state.iterations()) * static_cast<std::int64_t>(kBlock));
    state.counters["MS/s"] =
        benchmark::Counter(static_cast<double>(state.iterations()) * kBlock / 1e6, benchmark::Counter::kIsRate);
}
BENCHMARK(BM_Welch)
    ->Args({4096, static_cast<int>(hb::WindowType::blackman_harris), 50})
    ->Args({65536, static_cast<int>(hb::WindowType::blackman_harris), 50})
    ->Args({4096, static_cast<int>(hb::WindowType::hann), 0})
    ->Args({65536, static_cast<int>(hb::WindowType::flat_top), 75})
    ->Unit(benchmark::kMicrosecond);

// The bare FFT of the same size (FFTW, same planning), for scale: Welch at 50 % overlap runs two per hop.
void BM_FftOnly(benchmark::State& state) {
    const auto n = static_cast<std::size_t>(state.range(0));
    hb::Fft fft(n, n <= 65536 ? hb::Fft::Effort::measure : hb::Fft::Effort::estimate);
    const std::vector<cf> x = noise(n);
    std::memcpy(static_cast<void*>(fft.in()), x.data(), n * sizeof(cf));
    for (auto _ : state) {
        fft.execute();
        benchmark::ClobberMemory();  // (DoNotOptimize on a std::complex<float> makes GCC 12 fail with AVX-512)
    }
    state.counters["MS/s"] = benchmark::Counter(static_cast<double>(state.iterations()) * static_cast<double>(n) / 1e6,
                                                benchmark::Counter::kIsRate);
}
BENCHMARK(BM_FftOnly)->Arg(4096)->Arg(65536)->Unit(benchmark::kMicrosecond);

// The plan check (window response, floor profile, 12 lines, peak search) on a finished spectrum.
void BM_PlanCheck(benchmark::State& state) {
    hb::AnalyzerSpec a;
    a.fft_size = static_cast<int>(state.range(0));
    a.averages = 4;
    hb::Welch wl = hb::Welch::make(a, 10.7e6, 1e6);
    wl.push(noise(static_cast<std::size_t>(a.fft_size) * 3));
    const hb::Spectrum s = wl.read();
    std::vector<hb::ExpectedLine> lines{{"RF-LO", 1, -1, hb::LineKind::wanted, 10.7e6 + 1e3, hb::kNaN, hb::kNaN}};
    for (int i = 1; i < 12; ++i)
        lines.push_back({"spur", i, -i, hb::LineKind::spur, 10.7e6 - 4.5e5 + i * 7.3e4, hb::kNaN, -60.0});
    for (auto _ : state) benchmark::DoNotOptimize(hb::check_plan(s, lines));
}
BENCHMARK(BM_PlanCheck)->Arg(4096)->Arg(65536)->Unit(benchmark::kMillisecond);

}  // namespace
