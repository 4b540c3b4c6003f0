// hetbench bench [--json] [--runs N] [--samples N] [--no-numpy]: throughput of the hot kernels and of the default
// chain (dsp/throughput_chain.hpp), in Msamples/s of complex-float input on one core, with, in the same run:
//   - the memory-streaming ceiling (one read pass over the chain's input buffer) and the chain's fraction of it,
//   - the same chain in numpy/scipy (tests/bench/chain_numpy.py; "numpy not measured" when Debian's
//     python3-numpy/scipy are missing) and built from liquid-dsp primitives, and the ratios,
//   - the real-time factor at common device rates.
// Every figure is the median of the runs; the machine's other load shows as spread (min and max are printed too).
#include <algorithm>
#include <chrono>
#include <cmath>
#include <cstdio>
#include <cstdlib>
#include <filesystem>
#include <functional>
#include <iostream>
#include <nlohmann/json.hpp>
#include <sstream>
#include <string>
#include <vector>

#include "cli/commands.hpp"
#include "cli/fft_wisdom.hpp"
#include "dsp/errors.hpp"
#include "dsp/filter_kernels.hpp"
#include "dsp/lo.hpp"
#include "dsp/mixer.hpp"
#include "dsp/mixer_emulator.hpp"
#include "dsp/simd.hpp"
#include "dsp/throughput_chain.hpp"

namespace hb::cli {
namespace {

using cf32 = std::complex<float>;
using Clock = std::chrono::steady_clock;

struct Figure {
    std::string name, what;
    std::vector<double> runs;  // MS/s
    double median() const {
        std::vector<double> v = runs;
        std::sort(v.begin(), v.end());
        return v.empty() ? NAN : (v.size() % 2 ? v[v.size() / 2] : 0.5 * (v[v.size() / 2 - 1] + v[v.size() / 2]));
    }
    double lo() const { return runs.empty() ? NAN : *std::min_element(runs.begin(), runs.end()); }
    double hi() const { return runs.empty() ? NAN : *std::max_element(runs.begin(), runs.end()); }
};

// Runs `body` (which processes `samples` input samples) `runs` times after one warm-up, in MS/s.
Figure measure(const std::string& name, const std::string& what, int runs, std::size_t samples,
               const std::function<void()>& body) {
    Figure f{name, what, {}};
    body();  // warm-up: caches, page faults, FFTW's first execution
    for (int r = 0; r < runs; ++r) {
        const auto t0 = Clock::now();
        body();
        const double s = std::chrono::duration<double>(Clock::now() - t0).count();
        f.runs.push_back(static_cast<double>(samples) / s / 1e6);
    }
    return f;
}

volatile float g_sink = 0.0f;  // keeps results alive

// On cache-line boundaries, as a stream's own buffers are (a full-width load then never straddles two lines).
simd::line_vector<cf32> make_input(std::size_t n) {
    // −26 dBFS of white noise per component and a tone at 0.0123 of the rate, 0.3 full scale.
    GaussRng r = GaussRng::make(7);
    std::vector<float> a(n), b(n);
    r.fill_pairs(a.data(), b.data(), n);
    simd::line_vector<cf32> x(n);
    const double w = 6.283185307179586 * 0.0123;
    std::complex<double> rot(0.3, 0.0);
    const std::complex<double> step = std::polar(1.0, w);
    for (std::size_t i = 0; i < n; ++i) {
        if (i % 1024 == 0) rot = std::polar(0.3, std::fmod(w * static_cast<double>(i), 6.283185307179586));
        x[i] = cf32(0.05f * a[i] + static_cast<float>(rot.real()), 0.05f * b[i] + static_cast<float>(rot.imag()));
        rot *= step;
    }
    return x;
}

// Memory ceiling: one read pass (a sum with independent vector accumulators) over the buffer.
float read_pass(const cf32* x, std::size_t n) {
    using simd::vf;
    constexpr std::size_t W = static_cast<std::size_t>(simd::kWidth);
    const float* p = reinterpret_cast<const float*>(x);
    const std::size_t m = 2 * n;
    vf a0{}, a1{}, a2{}, a3{};
    std::size_t i = 0;
    for (; i + 4 * W <= m; i += 4 * W) {
        a0 += simd::load(p + i);
        a1 += simd::load(p + i + W);
        a2 += simd::load(p + i + 2 * W);
        a3 += simd::load(p + i + 3 * W);
    }
    const vf s = (a0 + a1) + (a2 + a3);
    float t = 0.0f;
    for (int l = 0; l < simd::kWidth; ++l) t += s[l];
    for (; i < m; ++i) t += p[i];
    return t;
}

std::string shell_quote(const std::string& s) {
    std::string o = "'";
    for (char c : s) o += c == '\'' ? std::string("'\\''") : std::string(1, c);
    return o + "'";
}

std::string run_capture(const std::string& cmd, int& status) {
    std::string out;
    FILE* f = popen(cmd.c_str(), "r");
    if (!f) {
        status = -1;
        return out;
    }
    char buf[4096];
    std::size_t got;
    while ((got = std::fread(buf, 1, sizeof buf, f)) > 0) out.append(buf, got);
    status = pclose(f);
    return out;
}

// The numpy script: beside the executable, under HETBENCH_SOURCE_DIR (environment, then the build's), or nothing.
std::string find_numpy_script() {
    namespace fs = std::filesystem;
    std::vector<fs::path> c;
    std::error_code ec;
    const fs::path exe = fs::read_symlink("/proc/self/exe", ec);
    if (!ec) {
        c.push_back(exe.parent_path() / "chain_numpy.py");
        c.push_back(exe.parent_path().parent_path() / "share" / "hetbench" / "chain_numpy.py");
    }
    if (const char* e = std::getenv("HETBENCH_SOURCE_DIR"))
        c.push_back(fs::path(e) / "tests" / "bench" / "chain_numpy.py");
#ifdef HETBENCH_SOURCE_DIR
    c.push_back(fs::path(HETBENCH_SOURCE_DIR) / "tests" / "bench" / "chain_numpy.py");
#endif
    for (const fs::path& p : c)
        if (fs::is_regular_file(p, ec)) return p.string();
    return {};
}

// A Python with Debian's numpy and scipy: $HETBENCH_PYTHON, /usr/bin/python3, python3 on the PATH.
std::string find_python() {
    std::vector<std::string> c;
    if (const char* e = std::getenv("HETBENCH_PYTHON")) c.push_back(e);
    c.push_back("/usr/bin/python3");
    c.push_back("python3");
    for (const std::string& p : c) {
        int st = 0;
        run_capture(shell_quote(p) + " -c 'import numpy, scipy.signal' >/dev/null 2>&1", st);
        if (st == 0) return p;
    }
    return {};
}

nlohmann::json num(double v) {
    return std::isfinite(v) ? nlohmann::json(v) : nlohmann::json(nullptr);
}

nlohmann::json figure_json(const Figure& f) {
    return {{"name", f.name},          {"what", f.what},          {"msps", num(f.median())},
            {"min_msps", num(f.lo())}, {"max_msps", num(f.hi())}, {"runs_msps", f.runs}};
}

struct Options {
    bool json = false;
    int runs = 7;
    std::size_t samples = std::size_t{1} << 24;
    std::size_t ref_samples = std::size_t{1} << 22;
    bool numpy = true;
};

int run_bench(const Options& o) {
    const ScopedFftWisdom wisdom(std::cerr);  // the measured Welch plans, kept between runs
    const int R = o.runs;
    const std::size_t N = o.samples;
    const simd::line_vector<cf32> input = make_input(N);
    const ThroughputChainSpec spec;
    constexpr std::size_t B = ThroughputChain::kBlock;
    std::vector<Figure> stages, kernels;

    // Memory ceiling: a read pass over the chain's own input buffer.
    const Figure mem = measure("memory_read", "one read pass over the input buffer (the streaming ceiling)", R, N,
                               [&] { g_sink = g_sink + read_pass(input.data(), N); });

    // Stages of the chain, each on its own.
    {
        LoMixKernel lo;
        LoMixSpec ls;
        ls.lo_cycles = spec.lo_cycles;
        ls.harmonic = default_lo_harmonics(spec.harmonics);
        ls.a3 = spec.a3;
        ls.iq_gain_db = spec.iq_gain_db;
        ls.iq_phase_deg = spec.iq_phase_deg;
        ls.dc = spec.dc;
        lo.init(ls);
        simd::line_vector<float> re(B), im(B);
        stages.push_back(
            measure("lo_mix", "LO K=8 harmonics + 3rd-order nonlinearity + IQ imbalance + DC, from memory", R, N, [&] {
                for (std::size_t p = 0; p < N; p += B)  // the next block prefetched, as in the chain
                    lo.process(input.data() + p, std::min(B, N - p), re.data(), im.data(),
                               p + 2 * B <= N ? input.data() + p + B : nullptr);
                g_sink = g_sink + re[0];
            }));
    }
    const std::size_t M = std::min<std::size_t>(N, std::size_t{1} << 22);  // cache-resident stages: L1 blocks
    {
        const auto h = throughput_fir_taps(spec.fir_taps, spec.decimation);
        FirKernel k;
        k.init(std::vector<std::complex<double>>(h.begin(), h.end()), B);
        std::vector<cf32> y(B);
        int ph = 0;
        stages.push_back(measure("fir_decim8", "128-tap real FIR decimating by 8 (input samples/s)", R, M, [&] {
            for (std::size_t p = 0; p < M; p += B) k.process(input.data(), B, y.data(), 8, ph);
            g_sink = g_sink + y[0].real();
        }));
    }
    {
        Welch w = Welch::make(spec.analyzer, 0.0, 1.0, Fft::Effort::measure);
        const std::size_t m = M / 8;
        stages.push_back(
            measure("welch", "Welch 4096 Blackman-Harris 50 % overlap (its own input samples/s)", R, m, [&] {
                for (std::size_t p = 0; p < m; p += 256) w.push(std::span<const cf32>(input.data(), 256));
            }));
    }
    // Chain: every stage on every block while it is in cache, the input streamed from memory once.
    ThroughputChain chain = ThroughputChain::make(spec);
    const Figure whole =
        measure("chain", "the default chain, one core, input from memory", R, N, [&] { chain.process(input); });

    // Kernels beside the chain (cache-resident input).
    {
        std::vector<std::complex<double>> hr(128), hc(128);
        for (std::size_t i = 0; i < 128; ++i) {
            hr[i] = std::cos(0.05 * static_cast<double>(i)) / 64.0;
            hc[i] = std::polar(1.0 / 64.0, 0.37 * static_cast<double>(i));
        }
        for (int cplx = 0; cplx < 2; ++cplx) {
            FirKernel k;
            k.init(cplx ? hc : hr, B);
            std::vector<cf32> y(B);
            int ph = 0;
            kernels.push_back(measure(cplx ? "fir128_complex" : "fir128",
                                      cplx ? "128-tap FIR, complex taps" : "128-tap FIR, real taps", R, M / 4, [&] {
                                          for (std::size_t p = 0; p < M / 4; p += B)
                                              k.process(input.data(), B, y.data(), 1, ph);
                                          g_sink = g_sink + y[0].real();
                                      }));
        }
        // 8th-order IIR as 8 complex one-pole sections (a band-pass envelope's realisation) and as 4 biquads.
        std::vector<PoleSection> ps(8);
        for (std::size_t s = 0; s < ps.size(); ++s) {
            ps[s].a1 = std::polar(0.95, 0.1 + 0.01 * static_cast<double>(s));
            ps[s].b0 = 0.05;
            ps[s].b1 = 0.0;
        }
        PoleCascadeKernel pc;
        pc.init(ps);
        std::vector<cf32> buf(input.begin(), input.begin() + static_cast<std::ptrdiff_t>(B));
        kernels.push_back(measure("iir8_pole_sections", "8 complex one-pole sections in cascade", R, M / 4, [&] {
            for (std::size_t p = 0; p < M / 4; p += B) pc.process(buf.data(), B);
        }));
        std::vector<BiquadCascadeKernel::Section> bs(4, {0.02, 0.04, 0.02, -1.56, 0.64});
        BiquadCascadeKernel bq;
        bq.init(bs);
        kernels.push_back(measure("iir8_biquads", "4 real biquads (8th order) on complex samples", R, M / 4, [&] {
            for (std::size_t p = 0; p < M / 4; p += B) bq.process(buf.data(), B);
        }));
        // The zone emulator (its bench: tests/bench/mixer_bench.cpp): a ±1 switch mixer with K = 8 harmonics.
        for (int mf = 0; mf < 2; ++mf) {
            MixerSpec s;
            s.model = MixerModel::bipolar;
            s.harmonics = 8;
            s.duty_cycle = 0.505;
            s.edge_time = 0.02;
            s.iip2_dbm = 40;
            s.iip3_dbm = 10;
            s.conversion_gain_db = -6;
            const double lo = mf ? 1.455e6 : 110.7e6;
            const MixerParams p = resolve_mixer(s, lo);
            EmulatorConfig c;
            c.rf_center_hz = mf ? 1e6 : 100e6;
            c.sample_rate_hz = 2.4e6;
            c.output_center_hz = mf ? 455e3 : 10.7e6;
            c.rf_occupied_hz = 2.4e6;
            MixerEmulator em = MixerEmulator::make(p, c);
            std::vector<cf32> y(16384);
            const std::size_t m = M / 16;
            kernels.push_back(measure(mf ? "mixer_emulator_mf" : "mixer_emulator_vhf",
                                      mf ? "zone emulator, 455 kHz IF: 12 terms, x2 synthesis, positive-frequency FIR"
                                         : "zone emulator, 10.7 MHz IF: 1 term, x2 synthesis",
                                      R, m, [&] {
                                          for (std::size_t q = 0; q < m; q += y.size())
                                              em.process(std::span<const cf32>(input.data() + q, y.size()), y);
                                          g_sink = g_sink + y[0].real();
                                      }));
        }
    }

    // The same chain from liquid-dsp primitives.
    const std::size_t RN = std::min(N, o.ref_samples);
    LiquidChain lq = LiquidChain::make(spec);
    const Figure liquid =
        measure("liquid_chain", "the same chain from liquid-dsp 1.5 primitives", std::max(3, R / 2 + 1), RN,
                [&] { lq.process(std::span<const cf32>(input.data(), RN)); });

    // The same chain in numpy/scipy, in a child process.
    Figure numpy{"numpy_chain", "the same chain in numpy/scipy (tests/bench/chain_numpy.py)", {}};
    std::string numpy_note;
    if (!o.numpy) {
        numpy_note = "numpy not measured: --no-numpy";
    } else if (const std::string script = find_numpy_script(); script.empty()) {
        numpy_note = "numpy not measured: tests/bench/chain_numpy.py not found (set HETBENCH_SOURCE_DIR)";
    } else if (const std::string py = find_python(); py.empty()) {
        numpy_note = "numpy not measured: no python3 with numpy and scipy (Debian: python3-numpy python3-scipy)";
    } else {
        int st = 0;
        const std::string out =
            run_capture(shell_quote(py) + " " + shell_quote(script) + " --samples " + std::to_string(RN) + " --runs " +
                            std::to_string(std::max(5, R / 2 + 1)) + " 2>/dev/null",
                        st);
        try {
            const auto j = nlohmann::json::parse(out);
            for (const auto& v : j.at("runs_msps")) numpy.runs.push_back(v.get<double>());
            numpy_note =
                "numpy " + j.value("numpy", std::string("?")) + ", scipy " + j.value("scipy", std::string("?"));
        } catch (const std::exception&) {
            numpy_note = "numpy not measured: the script failed (exit " + std::to_string(st) + ")";
        }
    }

    const double chain_msps = whole.median();
    const double mem_msps = mem.median();
    const double numpy_msps = numpy.median(), liquid_msps = liquid.median();
    const double numpy_ratio = numpy.runs.empty() ? NAN : chain_msps / numpy_msps;
    const double liquid_ratio = chain_msps / liquid_msps;
    const double rates[] = {2.4, 10.0, 20.0, 56.0};

    if (o.json) {
        nlohmann::json j;
        j["schema"] = "hetbench.bench/1";
        j["build"] = {{"simd_width_floats", simd::kWidth}, {"target", simd::kTarget.name}, {"compiler", __VERSION__}};
        j["runs"] = R;
        j["samples"] = N;
        j["reference_samples"] = RN;
        nlohmann::json rt = nlohmann::json::object();
        for (double r : rates) {
            char k[16];
            std::snprintf(k, sizeof k, "%g", r);
            rt[k] = num(chain_msps / r);
        }
        j["chain"] = figure_json(whole);
        j["chain"]["realtime_factor"] = rt;
        j["chain"]["memory_fraction"] = num(chain_msps / mem_msps);
        j["memory"] = figure_json(mem);
        j["memory"]["gbytes_per_s"] = num(mem_msps * 8e-3);
        j["stages"] = nlohmann::json::array();
        for (const Figure& f : stages) j["stages"].push_back(figure_json(f));
        j["kernels"] = nlohmann::json::array();
        for (const Figure& f : kernels) j["kernels"].push_back(figure_json(f));
        j["liquid"] = figure_json(liquid);
        j["numpy"] = figure_json(numpy);
        j["numpy"]["note"] = numpy_note;
        j["numpy_ratio"] = num(numpy_ratio);
        j["liquid_ratio"] = num(liquid_ratio);
        std::cout << j.dump(2) << "\n";
        return kExitOk;
    }
    std::ostringstream t;
    char line[256];
    auto row = [&](const Figure& f) {
        std::snprintf(line, sizeof line, "  %-22s %9.1f  (%.1f .. %.1f)  %s\n", f.name.c_str(), f.median(), f.lo(),
                      f.hi(), f.what.c_str());
        t << line;
    };
    t << "hetbench bench: Msamples/s of complex-float input, one core, median of " << R << " runs (min .. max)\n";
    t << "Target " << simd::kTarget.name << ", SIMD width " << simd::kWidth << " floats; input " << N
      << " samples from memory\n\n";
    t << "Stages of the default chain\n";
    for (const Figure& f : stages) row(f);
    t << "\nWhole chain\n";
    row(whole);
    std::snprintf(line, sizeof line,
                  "  real-time factor: %.0fx at 2.4 MS/s, %.1fx at 10, %.1fx at 20, %.1fx at 56 MS/s\n",
                  chain_msps / 2.4, chain_msps / 10, chain_msps / 20, chain_msps / 56);
    t << line;
    row(mem);
    std::snprintf(line, sizeof line, "  the chain runs at %.0f %% of the memory-streaming ceiling (%.1f GB/s read)\n",
                  100.0 * chain_msps / mem_msps, mem_msps * 8e-3);
    t << line << "\nThe same chain elsewhere (same run, " << RN << " samples)\n";
    row(liquid);
    if (numpy.runs.empty())
        t << "  numpy_chain            " << numpy_note << "\n";
    else
        row(numpy);
    std::snprintf(line, sizeof line, "  hetbench/liquid = %.1fx, hetbench/numpy = %s\n", liquid_ratio,
                  numpy.runs.empty() ? "not measured"
                                     : (std::to_string(static_cast<int>(std::lround(numpy_ratio))) + "x").c_str());
    t << line;
    if (!numpy.runs.empty()) t << "  (" << numpy_note << ")\n";
    t << "\nOther kernels\n";
    for (const Figure& f : kernels) row(f);
    std::cout << t.str();
    return kExitOk;
}

}  // namespace

void register_bench(CLI::App& app, int& rc) {
    auto* cmd = app.add_subcommand(
        "bench", "Throughput of the kernels and the default chain, against numpy/scipy and liquid-dsp");
    auto o = std::make_shared<Options>();
    cmd->add_flag("--json", o->json, "Print one JSON document (schema hetbench.bench/1) instead of the table");
    cmd->add_option("--runs", o->runs, "Timed runs per figure; the median is reported (default 7)")
        ->check(CLI::Range(1, 100));
    cmd->add_option("--samples", o->samples, "Input samples of the chain runs (default 16777216)")
        ->check(CLI::Range(std::size_t{1} << 16, std::size_t{1} << 28));
    cmd->add_option("--reference-samples", o->ref_samples, "Samples of the numpy and liquid runs (default 4194304)")
        ->check(CLI::Range(std::size_t{1} << 16, std::size_t{1} << 26));
    cmd->add_flag(
        "--no-numpy", [o](std::int64_t) { o->numpy = false; }, "Do not run the numpy/scipy chain");
    cmd->callback([o, &rc] { rc = run_bench(*o); });
}

}  // namespace hb::cli
