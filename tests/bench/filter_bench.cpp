// Filter kernel throughput on complex floats (items = input samples; items_per_second / 1e6 = MS/s).
//   build/tests/bench/filter_bench --benchmark_min_time=0.5
// liquid-dsp's scalar equivalents run alongside for comparison.
#include <benchmark/benchmark.h>

#include <random>

// clang-format off
#include <complex>  // before liquid.h, so that liquid_float_complex is std::complex<float>
#include <liquid/liquid.h>
// clang-format on

#include "dsp/filter_chain.hpp"
#include "dsp/filter_kernels.hpp"
#include "dsp/filter_presets.hpp"

namespace {

using hb::cf32;
constexpr std::size_t kBlock = 4096;

std::vector<cf32> noise(std::size_t n) {
    std::mt19937 rng(1);
    std::normal_distribution<float> g(0.0f, 0.3f);
    std::vector<cf32> x(n);
    for (auto& v : x) v = {g(rng), g(rng)};
    return x;
}

std::vector<std::complex<double>> taps(std::size_t n) {
    std::mt19937 rng(2);
    std::normal_distribution<double> g(0.0, 0.1);
    std::vector<std::complex<double>> h(n);
    for (auto& v : h) v = {g(rng), g(rng)};
    return h;
}

void fir(benchmark::State& st, int decimation) {
    hb::FirKernel k;
    k.init(taps(static_cast<std::size_t>(st.range(0))), kBlock);
    const auto x = noise(kBlock);
    std::vector<cf32> y(kBlock);
    int phase = 0;
    for (auto _ : st) {
        k.process(x.data(), kBlock, y.data(), decimation, phase);
        benchmark::DoNotOptimize(y.data());
    }
    st.SetItemsProcessed(static_cast<int64_t>(st.iterations() * kBlock));
}
void BM_Fir(benchmark::State& st) {
    fir(st, 1);
}
void BM_FirDecim8(benchmark::State& st) {
    fir(st, 8);
}
BENCHMARK(BM_Fir)->Arg(128);
BENCHMARK(BM_FirDecim8)->Arg(128);

// 8th-order IIR: an order-8 prototype realised as 8 complex one-pole sections (low-pass on a baseband window).
void BM_Iir8(benchmark::State& st) {
    hb::FilterSpec s;
    s.type = hb::FilterType::butterworth;
    s.response = hb::FilterResponse::lowpass;
    s.bandwidth_hz = 20e3;
    s.order = 8;
    const auto r = hb::realise_pole_sections(hb::make_filter_model(s, "bench"), {0.0, 1e6});
    hb::PoleCascadeKernel k;
    k.init(r.sections);
    auto x = noise(kBlock);
    for (auto _ : st) {
        k.process(x.data(), kBlock);
        benchmark::DoNotOptimize(x.data());
    }
    st.SetItemsProcessed(static_cast<int64_t>(st.iterations() * kBlock));
}
BENCHMARK(BM_Iir8);

// A bench IF chain: the 455 kHz narrow preset on a 2.4 MS/s window (two bands in parallel), anti-alias FIR, /8.
void BM_IfChain455kDecim8(benchmark::State& st) {
    const auto m = hb::make_filter_model(*hb::filter_preset("ceramic-455k"), "if_filter[0]");
    hb::FilterChain c = hb::make_filter_chain({m}, hb::ChainOptions{{455e3, 2.4e6}, 8, 0.0, kBlock});
    const auto x = noise(kBlock);
    std::vector<cf32> y(c.max_output(kBlock));
    for (auto _ : st) {
        c.process(x.data(), kBlock, y.data());
        benchmark::DoNotOptimize(y.data());
    }
    st.SetItemsProcessed(static_cast<int64_t>(st.iterations() * kBlock));
}
BENCHMARK(BM_IfChain455kDecim8);

void BM_LiquidFirdecim128Decim8(benchmark::State& st) {
    const auto h = taps(128);
    std::vector<liquid_float_complex> lh(h.size());
    for (std::size_t i = 0; i < h.size(); ++i) lh[i] = {float(h[i].real()), float(h[i].imag())};
    firdecim_cccf q = firdecim_cccf_create(8, lh.data(), static_cast<unsigned>(lh.size()));
    auto x = noise(kBlock);
    std::vector<liquid_float_complex> y(kBlock / 8);
    for (auto _ : st) {
        firdecim_cccf_execute_block(q, reinterpret_cast<liquid_float_complex*>(x.data()), kBlock / 8, y.data());
        benchmark::DoNotOptimize(y.data());
    }
    firdecim_cccf_destroy(q);
    st.SetItemsProcessed(static_cast<int64_t>(st.iterations() * kBlock));
}
BENCHMARK(BM_LiquidFirdecim128Decim8);

void BM_LiquidIir8(benchmark::State& st) {
    iirfilt_crcf q = iirfilt_crcf_create_prototype(LIQUID_IIRDES_BUTTER, LIQUID_IIRDES_LOWPASS, LIQUID_IIRDES_SOS, 8,
                                                   0.02f, 0.0f, 0.5f, 60.0f);
    auto x = noise(kBlock);
    std::vector<cf32> y(kBlock);
    for (auto _ : st) {
        iirfilt_crcf_execute_block(q, reinterpret_cast<liquid_float_complex*>(x.data()), kBlock,
                                   reinterpret_cast<liquid_float_complex*>(y.data()));
        benchmark::DoNotOptimize(y.data());
    }
    iirfilt_crcf_destroy(q);
    st.SetItemsProcessed(static_cast<int64_t>(st.iterations() * kBlock));
}
BENCHMARK(BM_LiquidIir8);

}  // namespace
