// Recordings: sample-format conversion, reading a SigMF file, and the recorder end to end.
// Items are complex samples (per CPU second; the recorder per wall-clock second, disk included).
// Run e.g.  build/tests/bench/recording_bench --benchmark_min_time=0.2
#include <benchmark/benchmark.h>
#include <unistd.h>

#include <filesystem>
#include <fstream>
#include <random>

#include "devices/recorder.hpp"
#include "devices/recording.hpp"

namespace {

using hb::cf32;
constexpr std::size_t kBlock = 16384;

void BM_Decode(benchmark::State& state, const char* datatype) {
    const hb::SampleFormat f = *hb::parse_datatype(datatype);
    std::vector<std::byte> in(kBlock * f.sample_bytes());
    std::mt19937 rng(1);
    for (auto& b : in) b = static_cast<std::byte>(rng());
    if (f.kind == hb::SampleFormat::Kind::floating)  // finite values, not random bit patterns
        for (std::size_t i = 0; i < kBlock * (f.complex ? 2 : 1); ++i) {
            if (f.bits == 32) {
                const float v = 0.5f;
                std::memcpy(in.data() + 4 * i, &v, 4);
            } else {
                const double v = 0.5;
                std::memcpy(in.data() + 8 * i, &v, 8);
            }
        }
    std::vector<cf32> out(kBlock);
    for (auto _ : state) {
        hb::decode_samples(f, in.data(), kBlock, out.data());
        benchmark::DoNotOptimize(out.data());
    }
    state.SetItemsProcessed(static_cast<std::int64_t>(state.iterations() * kBlock));
}
BENCHMARK_CAPTURE(BM_Decode, cf32_le, "cf32_le");
BENCHMARK_CAPTURE(BM_Decode, ci16_le, "ci16_le");
BENCHMARK_CAPTURE(BM_Decode, ci16_be, "ci16_be");
BENCHMARK_CAPTURE(BM_Decode, cu8, "cu8");
BENCHMARK_CAPTURE(BM_Decode, cf64_le, "cf64_le");

void BM_EncodeCi16(benchmark::State& state) {
    const hb::SampleFormat f = *hb::parse_datatype("ci16_le");
    std::vector<cf32> in(kBlock, cf32(0.3f, -0.7f));
    std::vector<std::byte> out(kBlock * 4);
    for (auto _ : state) {
        benchmark::DoNotOptimize(hb::encode_samples(f, in.data(), kBlock, out.data()));
    }
    state.SetItemsProcessed(static_cast<std::int64_t>(state.iterations() * kBlock));
}
BENCHMARK(BM_EncodeCi16);

// A cf32 SigMF recording of n samples in the temporary folder (page cache after the first pass).
std::string make_recording(std::size_t n) {
    const auto base = std::filesystem::temp_directory_path() / ("hetbench-bench-" + std::to_string(::getpid()));
    std::vector<cf32> v(n, cf32(0.1f, 0.2f));
    std::ofstream(base.string() + ".sigmf-data", std::ios::binary)
        .write(reinterpret_cast<const char*>(v.data()), static_cast<std::streamsize>(n * sizeof(cf32)));
    std::ofstream(base.string() + ".sigmf-meta")
        << R"({"global": {"core:datatype": "cf32_le", "core:version": "1.2.5", "core:sample_rate": 1e6},
              "captures": [{"core:sample_start": 0, "core:frequency": 0}], "annotations": []})";
    return base.string();
}

void BM_ReadSigmf(benchmark::State& state) {
    const std::size_t n = 1 << 22;
    const std::string base = make_recording(n);
    hb::SourceSpec spec;
    spec.kind = hb::SourceKind::recording;
    spec.path = base + ".sigmf-meta";
    std::vector<cf32> buf(65536);
    for (auto _ : state) {
        auto src = hb::open_recording(spec, hb::Setup{});
        while (src->read(buf, 1.0).status == hb::ReadStatus::ok) benchmark::DoNotOptimize(buf.data());
    }
    state.SetItemsProcessed(static_cast<std::int64_t>(state.iterations() * n));
    std::filesystem::remove(base + ".sigmf-data");
    std::filesystem::remove(base + ".sigmf-meta");
}
BENCHMARK(BM_ReadSigmf)->Unit(benchmark::kMillisecond);

// The recorder from a file source to a file (reader thread + writer thread + disk).
void BM_RecordToDisk(benchmark::State& state) {
    const std::size_t n = 1 << 22;
    const std::string base = make_recording(n);
    hb::SourceSpec spec;
    spec.kind = hb::SourceKind::recording;
    spec.path = base + ".sigmf-meta";
    hb::RecorderOptions o;
    o.out = base + "-out";
    o.datatype = state.range(0) ? "ci16_le" : "cf32_le";
    for (auto _ : state) {
        auto src = hb::open_recording(spec, hb::Setup{});
        benchmark::DoNotOptimize(hb::record(*src, o).written);
    }
    state.SetItemsProcessed(static_cast<std::int64_t>(state.iterations() * n));
    for (const char* s : {".sigmf-data", ".sigmf-meta", "-out.sigmf-data", "-out.sigmf-meta"})
        std::filesystem::remove(base + s);
}
BENCHMARK(BM_RecordToDisk)->Arg(0)->Arg(1)->ArgNames({"ci16"})->Unit(benchmark::kMillisecond)->Iterations(3)->UseRealTime();

}  // namespace
