// The per-block paths allocate nothing: global operator new is replaced in this test executable only and counts
// every allocation; after make() and one warm-up block, further blocks must not allocate at all.
#include <gtest/gtest.h>

#include <atomic>
#include <complex>
#include <cstdlib>
#include <new>
#include <random>
#include <vector>

#include "devices/filter_setup.hpp"
#include "devices/session.hpp"
#include "dsp/filter_chain.hpp"
#include "dsp/filter_presets.hpp"
#include "dsp/lo.hpp"
#include "dsp/mixer.hpp"
#include "dsp/mixer_emulator.hpp"
#include "dsp/signal_chain.hpp"
#include "dsp/spectrum.hpp"
#include "dsp/throughput_chain.hpp"

namespace {
std::atomic<long> g_allocs{0};
}

void* operator new(std::size_t n) {
    ++g_allocs;
    if (void* p = std::malloc(n ? n : 1)) return p;
    throw std::bad_alloc();
}
void* operator new[](std::size_t n) {
    ++g_allocs;
    if (void* p = std::malloc(n ? n : 1)) return p;
    throw std::bad_alloc();
}
void* operator new(std::size_t n, std::align_val_t a) {
    ++g_allocs;
    const std::size_t al = static_cast<std::size_t>(a);
    if (void* p = std::aligned_alloc(al, (n + al - 1) / al * al)) return p;
    throw std::bad_alloc();
}
// The rest of the family, so that every new/delete pair meets the same allocator: an array or nothrow form left
// to the runtime would be freed here by std::free, which AddressSanitizer rightly reports as a mismatch.
void* operator new[](std::size_t n, std::align_val_t a) {
    return ::operator new(n, a);
}
void* operator new(std::size_t n, const std::nothrow_t&) noexcept {
    ++g_allocs;
    return std::malloc(n ? n : 1);
}
void* operator new[](std::size_t n, const std::nothrow_t&) noexcept {
    ++g_allocs;
    return std::malloc(n ? n : 1);
}
void* operator new(std::size_t n, std::align_val_t a, const std::nothrow_t&) noexcept {
    ++g_allocs;
    const std::size_t al = static_cast<std::size_t>(a);
    return std::aligned_alloc(al, (n + al - 1) / al * al);
}
void* operator new[](std::size_t n, std::align_val_t a, const std::nothrow_t& t) noexcept {
    return ::operator new(n, a, t);
}
void operator delete(void* p, const std::nothrow_t&) noexcept {
    std::free(p);
}
void operator delete[](void* p, const std::nothrow_t&) noexcept {
    std::free(p);
}
void operator delete[](void* p, std::align_val_t) noexcept {
    std::free(p);
}
void operator delete[](void* p, std::size_t, std::align_val_t) noexcept {
    std::free(p);
}
void operator delete(void* p, std::align_val_t, const std::nothrow_t&) noexcept {
    std::free(p);
}
void operator delete[](void* p, std::align_val_t, const std::nothrow_t&) noexcept {
    std::free(p);
}
void operator delete(void* p) noexcept {
    std::free(p);
}
void operator delete[](void* p) noexcept {
    std::free(p);
}
void operator delete(void* p, std::size_t) noexcept {
    std::free(p);
}
void operator delete[](void* p, std::size_t) noexcept {
    std::free(p);
}
void operator delete(void* p, std::align_val_t) noexcept {
    std::free(p);
}
void operator delete(void* p, std::size_t, std::align_val_t) noexcept {
    std::free(p);
}

namespace hb {
namespace {

using cvec = std::vector<std::complex<float>>;

cvec noise(std::size_t n) {
    std::mt19937 rng(1);
    std::normal_distribution<float> g(0.0f, 0.1f);
    cvec x(n);
    for (auto& v : x) v = {g(rng), g(rng)};
    return x;
}

// Allocations made by f.
template <class F>
long allocations(F&& f) {
    const long before = g_allocs.load();
    f();
    return g_allocs.load() - before;
}

TEST(NoAlloc, CounterWorks) {
    // The replaced operator new is the one in use (else every check below would pass vacuously).
    volatile std::size_t n = 1000;
    EXPECT_GE(allocations([&] {
                  std::vector<int> v(n);
                  v[n - 1] = 1;
                  g_allocs += v[n - 1] - 1;  // keeps v observable
              }),
              1);
}

TEST(NoAlloc, MixerEmulatorProcess) {
    MixerSpec s;
    s.model = MixerModel::bipolar;
    s.harmonics = 8;
    s.iip3_dbm = 10;
    s.lo_if_isolation_db = 35;
    s.dc_offset_dbfs = -60;
    s.noise_dbfs_per_hz = -150;
    s.lo.phase_noise = {{1e3, -80}, {1e4, -95}, {1e5, -115}};
    for (double out_c : {455e3, 10.7e6}) {  // with the positive-frequency filter, and the 2× path
        EmulatorConfig c;
        c.rf_center_hz = out_c > 1e6 ? 100e6 : 1e6;
        c.sample_rate_hz = 2.4e6;
        c.output_center_hz = out_c;
        MixerEmulator em = MixerEmulator::make(resolve_mixer(s, out_c > 1e6 ? 110.7e6 : 1.455e6), c);
        const cvec x = noise(10000);
        cvec y(x.size());
        em.process(x, y);
        EXPECT_EQ(allocations([&] {
                      for (int k = 0; k < 3; ++k) em.process(x, y);
                  }),
                  0)
            << out_c;
    }
}

TEST(NoAlloc, FilterChainProcess) {
    const FilterModel m = make_filter_model(*filter_preset("ceramic-455k"), "if_filter[0]");
    ChainOptions o;
    o.window = {455e3, 2.4e6};
    o.decimation = 8;
    FilterChain c = make_filter_chain({m}, o);
    const cvec x = noise(20000);
    cvec y(c.max_output(x.size()));
    c.process(x.data(), x.size(), y.data());
    EXPECT_EQ(allocations([&] { c.process(x.data(), x.size(), y.data()); }), 0);
}

TEST(NoAlloc, WelchPush) {
    for (Averaging a : {Averaging::rms, Averaging::exponential, Averaging::max_hold}) {
        AnalyzerSpec s;
        s.averaging = a;
        Welch w = Welch::make(s, 0.0, 1e6);
        const cvec x = noise(50000);
        w.push(x);
        Spectrum sp;
        w.read(sp);  // sizes sp once
        EXPECT_EQ(allocations([&] {
                      w.push(x);
                      w.read(sp);
                  }),
                  0);
    }
}

TEST(NoAlloc, ThroughputChainProcess) {
    ThroughputChain c = ThroughputChain::make({});
    const cvec x = noise(50000);
    c.process(x);
    EXPECT_EQ(allocations([&] { c.process(x); }), 0);
}

TEST(NoAlloc, SignalChainProcess) {
    const hb::Setup s = parse_session(R"(
[mixer]
model = "bipolar"
iip3_dbm = 10
[rf_filter]
type = "butterworth"
center_hz = 1e6
bandwidth_hz = 300e3
order = 3
[[if_filter]]
preset = "ceramic-455k"
[if_chain]
decimation = 8
[plan]
wanted_hz = 1000e3
if_hz = 455e3
if_bandwidth_hz = 10e3
injection = "high"
)",
                                      "noalloc.toml");
    const RfInput in{1.2e6, 2.4e6, 0.0};
    SignalChain chain = SignalChain::make(s, std::span<const RfInput>(&in, 1), {}, filter_loader(s));
    const cvec x = noise(40000);
    chain.process(x);
    EXPECT_EQ(allocations([&] {
                  for (int k = 0; k < 3; ++k) chain.process(x);
              }),
              0);
}

}  // namespace
}  // namespace hb
