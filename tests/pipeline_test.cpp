// The real-time pipeline: a faithful conduit in batch mode (the same numbers as running the chain directly), a
// slow DSP that makes the drop counter rise instead of blocking the reader, live frames, settings applied while
// streaming, a probe switch, faults (overflow storms, stream errors and vanished devices, reopened with backoff),
// and a recording tapped from the running pipeline that accounts for every sample.
//
// Sources are the hetbench-gen SoapySDR module (through real SoapySDR) and SigMF recordings written here.
#include "pipeline/pipeline.hpp"

#include <gtest/gtest.h>

#include <chrono>
#include <cmath>
#include <thread>

#include "devices/recording.hpp"
#include "devices/session.hpp"
#include "dsp/units.hpp"
#include "support/test_support.hpp"

namespace hb {
namespace {

using namespace std::chrono_literals;
using test::TempDir;

// The MF bench: wanted 1 MHz, 455 kHz IF, high-side LO, a ±1 switching mixer.
const char* kPlan = R"toml(
[mixer]
model = "bipolar"
[analyzer]
fft_size = 4096
averages = 4
[plan]
rf_low_hz = 530e3
rf_high_hz = 1700e3
wanted_hz = 1000e3
if_hz = 455e3
if_bandwidth_hz = 10e3
injection = "high"
max_order = 5
[plan.limits]
image_rejection_db = 30
spur_dbc = -60
)toml";

// A generator world: the wanted at −20 dBm (−20 dBFS at full_scale 0 dBm), a floor well below.
const char* kScenario = R"toml(
[scenario]
name = "pipeline test bench (invented)"
full_scale_dbm = 0
noise_floor_dbm_per_hz = -150
[[signal]]
type = "cw"
frequency_hz = 1.0e6
level_dbm = -20
)toml";

hb::Setup generator_setup(const TempDir& d, const std::string& args) {
    test::write_file(d.file("world.toml"), kScenario);
    const std::string text = std::string(kPlan) + "[[source]]\nkind = \"generator\"\nscenario = \"world.toml\"\n" +
                             "frequency_hz = 1.2e6\nsample_rate_hz = 2.4e6\ngain_db = 0\nargs = \"" + args + "\"\n";
    test::write_file(d.file("s.toml"), text);
    return load_session(d.file("s.toml").string());
}

// Polls until pred() or the timeout; returns pred().
template <class F>
bool eventually(F pred, std::chrono::milliseconds timeout = 10s) {
    const auto until = std::chrono::steady_clock::now() + timeout;
    while (!pred()) {
        if (std::chrono::steady_clock::now() > until) return pred();
        std::this_thread::sleep_for(5ms);
    }
    return true;
}

// The wanted's IF level in a frame with a plan check.
double wanted_dbfs(const Frame& f) {
    return f.analysis.check.wanted.level_dbfs;
}

TEST(Pipeline, BatchRecordingGivesTheChainsOwnNumbers) {
    TempDir d;
    // A SigMF recording: the wanted at −20 dBFS and a weaker tone, 2^19 samples.
    const double fs = 2.4e6, fc = 1.2e6;
    const std::size_t n = 1 << 19;
    std::vector<cf32> x(n);
    for (std::size_t i = 0; i < n; ++i) {
        const double t = static_cast<double>(i) / fs;
        x[i] = cf32(std::polar(0.1, kTwoPi * std::fmod((1.0e6 - fc) * t, 1.0))) +
               cf32(std::polar(0.003, kTwoPi * std::fmod((1.3e6 - fc) * t, 1.0)));
    }
    const auto base = d.file("rec").string();
    {
        FILE* f = std::fopen((base + ".sigmf-data").c_str(), "wb");
        ASSERT_TRUE(f);
        ASSERT_EQ(std::fwrite(x.data(), sizeof(cf32), n, f), n);
        std::fclose(f);
    }
    SigmfMeta meta;
    meta.format = *parse_datatype("cf32_le");
    meta.sample_rate_hz = fs;
    meta.captures.push_back({0, fc, std::nullopt, "", 0});
    write_sigmf_meta(meta, base + ".sigmf-meta");

    hb::Setup s = parse_session(std::string(kPlan) + "[[source]]\nkind = \"recording\"\npath = \"rec.sigmf-meta\"\n",
                                d.file("s.toml").string());
    PipelineOptions o;
    o.live = false;
    o.block_samples = 10000;  // not a divisor of anything in the chain: the result must not care
    auto p = Pipeline::start(s, o);
    const PipelineStatus st = p->wait();
    EXPECT_TRUE(st.finished);
    EXPECT_FALSE(st.failed) << st.error;
    EXPECT_EQ(st.samples_processed, n);
    EXPECT_EQ(st.dropped_blocks, 0u);
    const ChainAnalysis a = p->final_analysis();

    // The same samples straight through a chain built the same way.
    const RfInput in{fc, fs, 0.0};
    SignalChain direct = SignalChain::make(s, std::span<const RfInput>(&in, 1));
    direct.process(x);
    const ChainAnalysis b = direct.analyze();
    ASSERT_EQ(b.check.wanted.status, LineStatus::pass);
    // Equal to float rounding: the emulator re-seeds its NCOs at block boundaries, which differ (its own test
    // holds outputs for any block sizes to 1e-5 of full scale).
    EXPECT_NEAR(a.check.wanted.level_dbfs, b.check.wanted.level_dbfs, 1e-5);
    EXPECT_NEAR(a.wanted_rf_dbfs, b.wanted_rf_dbfs, 1e-5);
    EXPECT_EQ(a.check.unexplained.size(), b.check.unexplained.size());
    // And the number itself: −20 dBFS through a ±1 switch, 2/π (reference-values M2).
    EXPECT_NEAR(a.check.wanted.level_dbfs, -20.0 + 20 * std::log10(2 / kPi), 0.15);
}

TEST(Pipeline, BatchStopsAfterMaxSeconds) {
    TempDir d;
    PipelineOptions o;
    o.live = false;
    o.max_seconds = 0.1;
    auto p = Pipeline::start(generator_setup(d, "throttle=false"), o);
    const PipelineStatus st = p->wait();
    EXPECT_TRUE(st.finished);
    EXPECT_EQ(st.samples_processed, 240000u);
    EXPECT_NEAR(st.stream_time_s, 0.1, 1e-12);
    EXPECT_EQ(p->final_analysis().check.wanted.status, LineStatus::pass);
}

TEST(Pipeline, SlowDspMakesDropsRiseInsteadOfBlockingTheReader) {
    TempDir d;
    PipelineOptions o;
    o.live = true;
    o.block_samples = 4096;
    o.ring_blocks = 4;
    o.ring_seconds = 0.0;       // exactly 4 slots
    o.test_dsp_delay_s = 0.02;  // 20 ms per 1.7 ms block: far behind real time
    auto p = Pipeline::start(generator_setup(d, "throttle=false"), o);
    ASSERT_TRUE(eventually([&] {
        const PipelineStatus s = p->status();
        return s.dropped_blocks > 20 && s.samples_processed >= 3 * o.block_samples;
    }));
    const PipelineStatus st = p->status();
    // The reader kept reading: far more samples in than the DSP took, and every one accounted for.
    EXPECT_GT(st.samples_in, 10 * st.samples_processed);
    EXPECT_GT(st.dsp_load, 5.0) << "20 ms per 1.7 ms of stream is more than 5x real time";
    EXPECT_LE(st.samples_processed + st.dropped_samples, st.samples_in);
    EXPECT_GE(st.samples_processed + st.dropped_samples + o.ring_blocks * o.block_samples + o.block_samples,
              st.samples_in);
    p->stop();
}

TEST(Pipeline, LiveFramesSettingsAndProbe) {
    TempDir d;
    const hb::Setup s = generator_setup(d, "");  // throttled: real time
    PipelineOptions o;
    o.analysis_interval_s = 0.05;
    auto p = Pipeline::start(s, o);
    Frame f;
    ASSERT_TRUE(eventually([&] {
        p->latest(f);
        return f.has_analysis && f.analysis.check.wanted.status == LineStatus::pass && f.analysis.if_out.frames >= 4;
    })) << p->status().state;
    const std::uint64_t seq = f.sequence;
    const double before = wanted_dbfs(f);
    EXPECT_NEAR(before, -20.0 + 20 * std::log10(2 / kPi), 0.2);
    EXPECT_EQ(f.probe, Probe::if_output);
    EXPECT_NEAR(f.spectrum.center_hz, 455e3, 1.0);
    EXPECT_FALSE(f.scope.empty());
    EXPECT_LT(f.status.dsp_load, 1.0) << "the chain keeps up with 2.4 MS/s";

    // 10 dB more IF gain, applied while streaming: the next plan checks read 10 dB more.
    hb::Setup louder = s;
    louder.if_chain.gain_db = 10.0;
    p->apply(louder);
    ASSERT_TRUE(eventually([&] {
        p->latest(f);
        return f.analysis_setup_version == 1 && f.has_analysis && f.analysis.if_out.frames >= 4 &&
               f.analysis.check.wanted.status == LineStatus::pass;
    }));
    EXPECT_GT(f.sequence, seq);
    EXPECT_NEAR(wanted_dbfs(f) - before, 10.0, 0.2);
    EXPECT_EQ(p->setup().if_chain.gain_db, 10.0);

    // The probe moves to the RF input: its spectrum is the RF window, the wanted at 1 MHz at −20 dBFS.
    p->set_probe(Probe::rf_input);
    ASSERT_TRUE(eventually([&] {
        p->latest(f);
        return f.probe == Probe::rf_input && f.spectrum.frames >= 4;
    }));
    EXPECT_NEAR(f.spectrum.center_hz, 1.2e6, 1.0);
    const Tone t = measure_tone(f.spectrum, 0.99e6, 1.01e6);
    EXPECT_NEAR(t.level_dbfs, -20.0, 0.2);

    // A Setup that fails validation is refused at once, and the running one stays.
    hb::Setup broken = s;
    broken.plan.if_hz = -1;
    EXPECT_THROW(p->apply(broken), InputError);
    p->stop();
    EXPECT_TRUE(p->status().finished);
}

TEST(Pipeline, OverflowStormIsCountedAndStreamingGoesOn) {
    TempDir d;
    PipelineOptions o;
    auto p = Pipeline::start(generator_setup(d, "throttle=false,overflow_every=50000,overflow_skip=1000"), o);
    ASSERT_TRUE(eventually([&] { return p->status().overflows >= 20; }));
    const PipelineStatus st = p->status();
    EXPECT_EQ(st.lost_samples, 1000 * st.overflows) << "the device said exactly how many it dropped";
    EXPECT_GT(st.samples_processed, 0u);
    EXPECT_FALSE(st.failed);
    p->stop();
}

TEST(Pipeline, StreamErrorIsReopenedWithBackoff) {
    TempDir d;
    PipelineOptions o;
    // The generator fails 20 ms of stream time after every (re)open.
    auto p = Pipeline::start(generator_setup(d, "throttle=false,error_at=0.02"), o);
    bool saw_reopening = false;
    ASSERT_TRUE(eventually([&] {
        const PipelineStatus s = p->status();
        saw_reopening = saw_reopening || s.state.starts_with("reopening");
        return s.reopens >= 2;
    }));
    EXPECT_TRUE(saw_reopening) << "the user is shown that the device is being reopened";
    // Samples from after a reopen reach the chain (the DSP may still be working through the ring: wait for it).
    EXPECT_TRUE(eventually([&] { return p->status().samples_processed >= 2 * 48000u; }))
        << p->status().samples_processed << " samples processed";
    EXPECT_FALSE(p->status().failed);
    p->stop();
}

TEST(Pipeline, VanishedDeviceIsReopened) {
    TempDir d;
    PipelineOptions o;
    auto p = Pipeline::start(generator_setup(d, "throttle=false,disconnect_at=0.02"), o);
    std::string state;
    ASSERT_TRUE(eventually([&] {
        const PipelineStatus s = p->status();
        if (s.state.starts_with("reopening")) state = s.state;
        return s.reopens >= 1;
    }));
    EXPECT_NE(state.find("reopening in"), std::string::npos) << state;
    p->stop();
}

TEST(Pipeline, RecordingTapAccountsForEverySample) {
    TempDir d;
    PipelineOptions o;
    // Real-time generator with an overflow every 0.1 s of stream: gaps the recording must annotate.
    auto p = Pipeline::start(generator_setup(d, "overflow_every=240000,overflow_skip=2400"), o);
    RecorderOptions ro;
    ro.out = d.file("tap").string();
    ro.flush_interval_s = 0.1;
    // Overflows before the recording has started (while the pipeline settles, or while start_recording creates
    // its files on a loaded machine) are not the recording's gaps: wait for three more once it runs.
    p->start_recording(ro);
    const auto before = p->status().overflows;
    EXPECT_TRUE(p->recording());
    EXPECT_THROW(p->start_recording(ro), InputError);
    ASSERT_TRUE(eventually([&] { return p->status().overflows >= before + 3; }))
        << p->status().state << ", in " << p->status().samples_in << ", overflows " << p->status().overflows
        << ", timeouts " << p->status().timeouts;
    const auto r = p->stop_recording();
    ASSERT_TRUE(r.has_value());
    EXPECT_FALSE(p->recording());
    EXPECT_TRUE(r->complete) << r->message;
    EXPECT_EQ(r->written + r->overflow_lost + r->dropped, r->produced);
    // Each overflow (2400 samples skipped) makes its own gap, so three after the start make at least two in the
    // recording. A recorder thread starved on a loaded machine (seen with a parallel build running) fills its
    // ring: the blocks lost to it merge with the next overflow into one gap, still accounted for above, and the
    // lost count is then more than 2400 a gap.
    const bool starved = r->overflow_lost != 2400 * r->gaps;
    EXPECT_GE(r->gaps, starved ? 1u : 2u) << "lost " << r->overflow_lost;
    EXPECT_GT(r->written, 100000u);
    // The files read back: as many samples as the report says were written, the session embedded.
    SourceSpec spec;
    spec.kind = SourceKind::recording;
    spec.path = r->meta_path;
    auto src = open_recording(spec, hb::Setup{});
    std::vector<cf32> buf(65536);
    std::uint64_t total = 0;
    for (;;) {
        const ReadResult rr = src->read(buf, 1.0);
        if (rr.status == ReadStatus::end || rr.status == ReadStatus::error) break;
        total += rr.count;
    }
    EXPECT_EQ(total, r->written);
    const RecordingDetails* det = recording_details(*src);
    ASSERT_NE(det, nullptr);
    ASSERT_TRUE(det->sigmf.has_value());
    EXPECT_TRUE(det->sigmf->setup.has_value());
    p->stop();
}

TEST(Pipeline, SourceThatCannotOpenIsAClearError) {
    TempDir d;
    hb::Setup s =
        parse_session(std::string(kPlan) + "[[source]]\nkind = \"recording\"\npath = \"missing.sigmf-meta\"\n",
                      d.file("s.toml").string());
    try {
        Pipeline::start(s, {});
        FAIL() << "expected InputError";
    } catch (const InputError& e) {
        EXPECT_NE(std::string(e.what()).find("missing.sigmf-meta"), std::string::npos) << e.what();
        EXPECT_NE(std::string(e.what()).find("source[0]"), std::string::npos) << e.what();
    }
}

}  // namespace
}  // namespace hb
