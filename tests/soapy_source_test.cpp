// The SoapySDR source with the hetbench-gen module loaded through SoapySDR itself (SOAPY_SDR_PLUGIN_PATH at the
// build tree, SOAPY_SDR_ROOT away from the system modules): tuning, read-back of applied values, a scenario
// tone's level and frequency, determinism, and every injected fault as the source reports and counts it.
// The Remote.* test runs only under tests/remote_test.sh, which starts a SoapyRemote server.
#include <gtest/gtest.h>

#include <chrono>
#include <cstdlib>

#include "devices/soapy_source.hpp"
#include "dsp/errors.hpp"
#include "support/test_support.hpp"
#include "support/tone_check.hpp"

namespace hb {
namespace {

// Before anything touches SoapySDR: the module from this build tree only, no system modules. Under
// tests/remote_test.sh the script sets both (the client also needs the remote module).
const bool kEnvironment = [] {
    if (std::getenv("HETBENCH_REMOTE_ARGS")) return false;
    ::setenv("SOAPY_SDR_PLUGIN_PATH", (test::binary_dir() / "devices" / "soapy").c_str(), 1);
    ::setenv("SOAPY_SDR_ROOT", "/nonexistent", 1);
    return true;
}();

// full scale -10 dBm; tone -50 dBm at 100.1 MHz; the floor far below.
constexpr const char* kScenario = R"([scenario]
name = "test bench"
full_scale_dbm = -10
noise_floor_dbm_per_hz = -190

[[signal]]
type = "cw"
frequency_hz = 100.1e6
level_dbm = -50
)";

constexpr double kRate = 1.024e6;

struct Bench {
    test::TempDir dir;
    Setup setup;
    Bench() {
        test::write_file(dir.file("world.toml"), kScenario);
        setup.base_dir = dir.path.string();
        setup.bench.seed = 3;
    }
    SourceSpec spec(const std::string& extra = "throttle=false", double fc = 100e6) const {
        SourceSpec s;
        s.kind = SourceKind::generator;
        s.scenario = "world.toml";  // relative: read against the session's folder
        s.args = extra;
        s.frequency_hz = fc;
        s.sample_rate_hz = kRate;
        s.gain_db = 20;
        return s;
    }
};

// Reads exactly n samples (ok or overflow results), failing the test on anything else.
std::vector<cf32> read_n(SampleSource& src, std::size_t n) {
    std::vector<cf32> x(n);
    std::size_t got = 0;
    while (got < n) {
        const auto r = src.read(std::span<cf32>(x).subspan(got), 1.0);
        if (r.status != ReadStatus::ok && r.status != ReadStatus::overflow) {
            ADD_FAILURE() << "unexpected status " << int(r.status) << ": " << r.message;
            break;
        }
        got += r.count;
    }
    return x;
}

TEST(SoapySource, GeneratorModuleComesThroughSoapySdr) {
    // SOAPY_SDR_PLUGIN_PATH provides it: hetbench's own fallback loader has nothing to do.
    EXPECT_EQ(load_generator_module(), "");
    const auto found = enumerate_devices("driver=hetbench-gen");
    ASSERT_EQ(found.size(), 1u);
    EXPECT_EQ(found[0].at("driver"), "hetbench-gen");
    EXPECT_TRUE(enumerate_devices("driver=hetbench-gen,serial=someone-else").empty());
}

TEST(SoapySource, ScenarioToneLevelAndFrequency) {
    Bench b;
    auto opened = open_soapy_detailed(b.spec(), b.setup);
    SampleSource& src = *opened.source;
    EXPECT_EQ(opened.applied.driver, "hetbench-gen");
    EXPECT_DOUBLE_EQ(src.info().center_hz, 100e6);
    EXPECT_DOUBLE_EQ(src.info().sample_rate_hz, kRate);
    EXPECT_TRUE(src.info().live);
    // dBm = dBFS + (full_scale_dbm - gain) = dBFS - 30 (the module states its calibration).
    EXPECT_DOUBLE_EQ(src.info().level_offset_db, -30.0);
    const auto x = read_n(src, 65536);
    const auto sp = test::tone_spectrum(x, kRate, test::ToneWindow::flat_top);  // 15.6 Hz bins
    EXPECT_NEAR(sp.frequency(sp.peak()), 100e3, sp.bin_hz / 2);
    EXPECT_NEAR(sp.level_db_near(100e3, 1), -20.0, 0.1);                              // dBFS
    EXPECT_NEAR(sp.level_db_near(100e3, 1) + src.info().level_offset_db, -50.0, 0.1);  // dBm, the scenario's
    EXPECT_EQ(src.counters().samples, 65536u);
    EXPECT_EQ(src.counters().overflows + src.counters().timeouts + src.counters().errors, 0u);
}

TEST(SoapySource, ReportsWhatTheDriverApplied) {
    Bench b;
    SourceSpec s = b.spec();
    s.frequency_hz = 100000000.7;  // 1 Hz steps
    s.sample_rate_hz = 1000000.4;  // whole Hz
    s.gain_db = 19.3;              // LNA 18 (3 dB steps) + IF 1.5 (0.5 dB steps)
    s.bandwidth_hz = 300e3;
    s.antenna = "TERM";
    auto o = open_soapy_detailed(s, b.setup);
    EXPECT_DOUBLE_EQ(o.applied.frequency_hz, 100000001.0);
    EXPECT_DOUBLE_EQ(o.applied.sample_rate_hz, 1000000.0);
    EXPECT_DOUBLE_EQ(o.applied.gain_db, 19.5);
    EXPECT_DOUBLE_EQ(o.applied.bandwidth_hz, 300e3);
    EXPECT_EQ(o.applied.antenna, "TERM");
    ASSERT_EQ(o.applied.named_gains.size(), 2u);
    EXPECT_EQ(o.applied.named_gains[0], (std::pair<std::string, double>("LNA", 18.0)));
    EXPECT_EQ(o.applied.named_gains[1], (std::pair<std::string, double>("IF", 1.5)));
    EXPECT_DOUBLE_EQ(o.source->info().center_hz, 100000001.0);
    EXPECT_DOUBLE_EQ(o.source->info().level_offset_db, -10 - 19.5);

    // One device, one stream: SoapySDR hands the same device to the same args, so close before reopening.
    o.source.reset();
    s.gains = {{"IF", 4.2}, {"LNA", 7}};  // named gains after the overall gain: IF 4 (0.5 steps), LNA 6
    o = open_soapy_detailed(s, b.setup);
    EXPECT_DOUBLE_EQ(o.applied.gain_db, 10.0);
    o.source.reset();
    s.gains = {{"MIXER", 3}};
    try {
        open_soapy_detailed(s, b.setup);
        FAIL() << "accepted an unknown gain element";
    } catch (const InputError& e) {
        EXPECT_NE(std::string(e.what()).find("no gain element \"MIXER\" (the device has: LNA, IF)"), std::string::npos)
            << e.what();
    }
}

TEST(SoapySource, Cs16NativeFormatIsScaledByItsFullScale) {
    Bench b;
    auto o = open_soapy_detailed(b.spec("throttle=false,format=CS16"), b.setup);
    EXPECT_EQ(o.applied.stream_format, "CS16");
    EXPECT_DOUBLE_EQ(o.applied.full_scale, 32767.0);
    const auto x = read_n(*o.source, 65536);
    const auto sp = test::tone_spectrum(x, kRate, test::ToneWindow::flat_top);
    EXPECT_NEAR(sp.level_db_near(100e3, 1), -20.0, 0.1);
}

TEST(SoapySource, TuningMovesTheToneAsATunerWould) {
    Bench b;
    for (double fc : {100e6, 100.05e6, 100.3e6}) {
        auto src = open_soapy(b.spec("throttle=false", fc), b.setup);
        const auto sp = test::tone_spectrum(read_n(*src, 65536), kRate, test::ToneWindow::flat_top);
        EXPECT_NEAR(sp.frequency(sp.peak()), 100.1e6 - fc, sp.bin_hz / 2) << "centre " << fc;
        EXPECT_NEAR(sp.level_db_near(100.1e6 - fc, 1), -20.0, 0.1);
    }
}

TEST(SoapySource, SameSeedSameSamples) {
    Bench b;
    std::vector<cf32> first, again, other;
    {
        auto s = open_soapy(b.spec(), b.setup);
        first = read_n(*s, 100000);
    }
    {
        auto s = open_soapy(b.spec(), b.setup);
        again = read_n(*s, 100000);
    }
    b.setup.bench.seed = 4;
    {
        auto s = open_soapy(b.spec(), b.setup);
        other = read_n(*s, 100000);
    }
    EXPECT_EQ(first, again);
    EXPECT_NE(first, other);
}

TEST(SoapySource, OverflowIsCountedWithTheExactLoss) {
    Bench b;
    auto ref = open_soapy(b.spec(), b.setup);
    const auto reference = read_n(*ref, 300000);
    auto src = open_soapy(b.spec("throttle=false,overflow_every=50000,overflow_skip=5000"), b.setup);
    std::vector<cf32> buf(8192);
    std::size_t position = 0;  // stream index of the next sample (delivered or lost)
    int overflows = 0;
    while (position + buf.size() < reference.size()) {
        const auto r = src->read(buf, 1.0);
        ASSERT_TRUE(r.status == ReadStatus::ok || r.status == ReadStatus::overflow) << r.message;
        if (r.status == ReadStatus::overflow) {
            ++overflows;
            EXPECT_EQ(r.lost, 5000u);  // from the device's timestamps
            position += r.lost;
        }
        // The samples after a gap are the world's samples after the gap: really skipped, not paused.
        for (std::size_t i = 0; i < r.count && position + i < reference.size(); ++i)
            ASSERT_EQ(buf[i], reference[position + i]) << "at stream index " << position + i;
        position += r.count;
    }
    EXPECT_GE(overflows, 4);
    EXPECT_EQ(src->counters().overflows, static_cast<std::uint64_t>(overflows));
    EXPECT_EQ(src->counters().lost_samples, 5000u * static_cast<std::uint64_t>(overflows));
}

TEST(SoapySource, TimeoutsAreCountedAndTheStreamCarriesOn) {
    Bench b;
    auto ref = open_soapy(b.spec(), b.setup);
    const auto reference = read_n(*ref, 40000);
    auto src = open_soapy(b.spec("throttle=false,timeout_at=0.01,timeout_count=2"), b.setup);
    std::vector<cf32> got;
    std::vector<cf32> buf(4096);
    int timeouts = 0;
    while (got.size() < reference.size()) {
        const auto r = src->read(buf, 0.02);
        if (r.status == ReadStatus::timeout) {
            ++timeouts;
            EXPECT_NE(r.message.find("no samples for"), std::string::npos) << r.message;
            continue;
        }
        ASSERT_EQ(r.status, ReadStatus::ok) << r.message;
        got.insert(got.end(), buf.begin(), buf.begin() + static_cast<long>(r.count));
    }
    EXPECT_EQ(timeouts, 2);
    EXPECT_EQ(src->counters().timeouts, 2u);
    got.resize(reference.size());
    EXPECT_EQ(got, reference);  // a timeout loses nothing
}

// Reads until the first error (or gives up), returning it.
ReadResult read_until_error(SampleSource& src, int max_reads = 1000) {
    std::vector<cf32> buf(4096);
    for (int i = 0; i < max_reads; ++i) {
        const auto r = src.read(buf, 0.02);
        if (r.status == ReadStatus::error) return r;
    }
    return {};
}

TEST(SoapySource, StreamErrorEndsTheStreamAndReopeningWorks) {
    Bench b;
    auto src = open_soapy(b.spec("throttle=false,error_at=0.01"), b.setup);
    const auto r = read_until_error(*src);
    ASSERT_EQ(r.status, ReadStatus::error);
    EXPECT_NE(r.message.find("stream error -2 (STREAM_ERROR)"), std::string::npos) << r.message;
    EXPECT_NE(r.message.find("open the source again"), std::string::npos) << r.message;
    EXPECT_NE(r.message.find("driver=hetbench-gen"), std::string::npos) << r.message;
    std::vector<cf32> buf(16);
    EXPECT_EQ(src->read(buf, 0.01).status, ReadStatus::error);  // stays ended
    EXPECT_EQ(src->counters().errors, 1u);
    EXPECT_GE(src->counters().samples, 10240u);  // 0.01 s at 1.024 MS/s came first
    src.reset();
    auto again = open_soapy(b.spec("throttle=false,error_at=0.01"), b.setup);
    EXPECT_EQ(again->read(buf, 1.0).status, ReadStatus::ok);
}

TEST(SoapySource, VanishedDeviceEndsTheStream) {
    Bench b;
    auto src = open_soapy(b.spec("throttle=false,disconnect_at=0.02"), b.setup);
    const auto r = read_until_error(*src);
    ASSERT_EQ(r.status, ReadStatus::error);
    EXPECT_NE(r.message.find("the device vanished: hetbench-gen: device disconnected"), std::string::npos)
        << r.message;
    EXPECT_EQ(src->counters().errors, 1u);
}

TEST(SoapySource, FrozenStreamShowsAsGrowingTimeouts) {
    Bench b;
    auto src = open_soapy(b.spec("throttle=false,freeze_at=0.01"), b.setup);
    std::vector<cf32> buf(4096);
    ReadResult last;
    int timeouts = 0;
    for (int i = 0; i < 20 && timeouts < 4; ++i) {
        last = src->read(buf, 0.02);
        if (last.status == ReadStatus::timeout) ++timeouts;
        else ASSERT_EQ(last.status, ReadStatus::ok);
    }
    EXPECT_EQ(timeouts, 4);
    EXPECT_EQ(src->counters().timeouts, 4u);
    EXPECT_NE(last.message.find("no samples for"), std::string::npos);
    EXPECT_LE(src->counters().samples, 10240u + 4096u);
}

TEST(SoapySource, ThrottledByDefault) {
    Bench b;
    auto src = open_soapy(b.spec(""), b.setup);
    const auto t0 = std::chrono::steady_clock::now();
    read_n(*src, static_cast<std::size_t>(0.1 * kRate));
    const double took = std::chrono::duration<double>(std::chrono::steady_clock::now() - t0).count();
    EXPECT_GT(took, 0.08);  // 0.1 s of samples cannot arrive much sooner in real time
    EXPECT_EQ(src->counters().overflows, 0u);
}

TEST(SoapySource, BadDeviceArgumentsAndScenariosAreRefusedClearly) {
    Bench b;
    auto message = [&](const SourceSpec& s) {
        try {
            open_soapy(s, b.setup);
        } catch (const InputError& e) {
            return std::string(e.what());
        }
        return std::string();
    };
    EXPECT_NE(message(b.spec("bogus=1")).find("unknown device arg \"bogus\""), std::string::npos);
    EXPECT_NE(message(b.spec("overflow_every=often")).find("overflow_every=\"often\": expected a number"),
              std::string::npos);
    test::write_file(b.dir.file("world.toml"), "[[signal]]\ntype = \"cw\"\nfrequency_hz = 1e6\nlevel_dbm = \"hot\"\n");
    const std::string m = message(b.spec());
    EXPECT_NE(m.find("world.toml:4: signal[0].level_dbm: got \"hot\" (a string)"), std::string::npos) << m;
    SourceSpec dev;
    dev.kind = SourceKind::device;
    dev.args = "driver=no-such-driver";
    EXPECT_NE(message(dev).find("no SoapySDR module provides driver \"no-such-driver\""), std::string::npos);
}

TEST(SoapySource, DevicesCommandFindsTheGeneratorInTheBuildTree) {
    // No plugin path: hetbench loads the module from its own build tree.
    const auto r = test::run_hetbench({"devices", "driver=hetbench-gen", "--probe"},
                                      {"SOAPY_SDR_PLUGIN_PATH=/nonexistent", "SOAPY_SDR_ROOT=/nonexistent"});
    EXPECT_EQ(r.exit_code, 0) << r.err;
    EXPECT_NE(r.out.find("driver = hetbench-gen"), std::string::npos) << r.out;
    EXPECT_NE(r.out.find("gain LNA: [0, 30] dB, step 3 dB"), std::string::npos) << r.out;
    EXPECT_NE(r.out.find("antennas: RX, TERM"), std::string::npos) << r.out;
    const auto none = test::run_hetbench({"devices", "driver=no-such-driver"}, {"SOAPY_SDR_ROOT=/nonexistent"});
    EXPECT_EQ(none.exit_code, 0);
    EXPECT_NE(none.out.find("No SoapySDR device matches"), std::string::npos);
}

// Run by tests/remote_test.sh (disabled otherwise) with a SoapyRemote server serving the generator on loopback.
TEST(Remote, DISABLED_GeneratorThroughSoapyRemote) {
    const char* args = std::getenv("HETBENCH_REMOTE_ARGS");
    if (!args) GTEST_SKIP() << "runs under tests/remote_test.sh (needs a SoapyRemote server)";
    Bench b;
    SourceSpec s;
    s.kind = SourceKind::device;
    s.args = std::string(args) + ",scenario=" + b.dir.file("world.toml").string();
    s.frequency_hz = 100e6;
    s.sample_rate_hz = kRate;
    s.gain_db = 20;
    auto o = open_soapy_detailed(s, b.setup);
    EXPECT_EQ(o.applied.driver, "hetbench-gen");  // SoapyRemote forwards the served device's driver key
    EXPECT_NE(o.applied.args.find("driver=remote"), std::string::npos);
    EXPECT_DOUBLE_EQ(o.applied.sample_rate_hz, kRate);
    EXPECT_DOUBLE_EQ(o.applied.gain_db, 20.0);
    // Skip the first samples (stream start-up), then measure 64 k samples.
    read_n(*o.source, 16384);
    const auto x = read_n(*o.source, 65536);
    const auto sp = test::tone_spectrum(x, kRate, test::ToneWindow::flat_top);
    EXPECT_NEAR(sp.frequency(sp.peak()), 100e3, sp.bin_hz / 2);
    EXPECT_NEAR(sp.level_db_near(100e3, 1), -20.0, 0.1);
    // The module's calibration setting travels through SoapyRemote too.
    EXPECT_DOUBLE_EQ(o.source->info().level_offset_db, -30.0);
    EXPECT_EQ(o.source->counters().errors, 0u);
}

}  // namespace
}  // namespace hb
