// hetbench record under every fault the bench generator can inject (overflow storms, timeouts, stream errors, a
// vanished device, a frozen one) and under a disk that is full or fills up mid-way, through the real command line:
// what the user sees (exit code, the lines on stdout and stderr) and that every sample is accounted for,
//     written + lost in the source + dropped = produced,
// with the metadata describing exactly the samples in the data file, the lost ones in its gap annotations, and
// each written sample equal to the one at its stream index in a clean recording (the generator's sample n depends
// only on the scenario, the seed, the tuning and n). Also the recorder's reopen with backoff and its NaN guard,
// with scripted sources.
#include <fcntl.h>
#include <gtest/gtest.h>
#include <signal.h>
#include <sys/resource.h>
#include <sys/wait.h>
#include <unistd.h>

#include <cmath>
#include <regex>
#include <thread>

#include "devices/recorder.hpp"
#include "devices/recording.hpp"
#include "recording_support.hpp"

namespace hb {
namespace {

using test::TempDir;

const std::vector<std::string> kEnv = {"SOAPY_SDR_ROOT=/nonexistent",
                                       "SOAPY_SDR_PLUGIN_PATH=" + (test::binary_dir() / "devices" / "soapy").string()};

std::string generator(const std::string& faults) {
    std::string a = "driver=hetbench-gen,throttle=false,seed=3,scenario=" +
                    (test::source_dir() / "recordings" / "scenarios" / "vhf-bench.toml").string();
    return faults.empty() ? a : a + "," + faults;
}

std::vector<std::string> record_args(const std::string& faults, const std::string& out, double seconds) {
    return {"record", "--source",   generator(faults),       "--rate", "250k", "--frequency",
            "100.1M", "--duration", std::to_string(seconds), "--out",  out};
}

struct Accounting {
    std::uint64_t produced = 0, written = 0, lost = 0, dropped = 0;
};

// The "stream:" line of hetbench record's summary.
Accounting accounting(const std::string& out) {
    static const std::regex re(
        R"(stream: +(\d+) samples produced = (\d+) written \+ (\d+) lost in the source \+ (\d+) dropped)");
    std::smatch m;
    Accounting a;
    if (!std::regex_search(out, m, re)) {
        ADD_FAILURE() << "no stream line in:\n" << out;
        return a;
    }
    a.produced = std::stoull(m[1]);
    a.written = std::stoull(m[2]);
    a.lost = std::stoull(m[3]);
    a.dropped = std::stoull(m[4]);
    return a;
}

std::vector<cf32> read_samples(const std::string& path) {
    SourceSpec spec;
    spec.kind = SourceKind::recording;
    spec.path = path;
    return test::read_all(*open_recording(spec, hb::Setup{})).samples;
}

// What every recording must satisfy: the sums add up, the metadata describes exactly the data file, its gaps hold
// every counted loss, and the samples sit at the stream index their capture says (checked against `clean`).
void expect_accounted(const std::string& base, const Accounting& a, const std::vector<cf32>& clean) {
    EXPECT_EQ(a.written + a.lost + a.dropped, a.produced);
    const SigmfMeta m = read_sigmf_meta(base + ".sigmf-meta");
    EXPECT_EQ(m.sample_count, a.written);
    EXPECT_EQ(std::filesystem::file_size(base + ".sigmf-data"), a.written * 8);
    std::uint64_t annotated = 0;
    for (const SigmfAnnotation& g : m.annotations)
        if (g.label == "gap" && g.lost_samples) annotated += *g.lost_samples;
    EXPECT_EQ(annotated, a.lost + a.dropped) << "the gap annotations do not hold every lost sample";
    if (a.written == 0) return;
    const auto got = read_samples(base + ".sigmf-meta");
    ASSERT_EQ(got.size(), a.written);
    for (std::size_t c = 0; c < m.captures.size(); ++c) {
        const SigmfCapture& cap = m.captures[c];
        if (!cap.global_index) continue;  // after a reopen the stream index is not known
        const std::uint64_t end = c + 1 < m.captures.size() ? m.captures[c + 1].sample_start : a.written;
        for (std::uint64_t j = cap.sample_start; j < end; j += 97) {
            const std::uint64_t n = *cap.global_index + (j - cap.sample_start);
            ASSERT_LT(n, clean.size());
            ASSERT_EQ(got[j], clean[n]) << "sample " << j << " of capture " << c << " is not stream sample " << n;
        }
    }
}

// A clean 0.6 s recording of the same generator: the reference for every sample index.
const std::vector<cf32>& clean_stream() {
    static const std::vector<cf32> s = [] {
        TempDir d;
        const auto r = test::run_hetbench(record_args("", d.file("clean").string(), 0.6), kEnv);
        EXPECT_EQ(r.exit_code, 0) << r.out << r.err;
        EXPECT_EQ(accounting(r.out).dropped, 0u) << "the clean reference itself dropped samples";
        return read_samples(d.file("clean.sigmf-meta").string());
    }();
    return s;
}

TEST(RecordFaults, OverflowStormEverySampleAccountedFor) {
    TempDir d;
    const std::string out = d.file("storm").string();
    const auto r = test::run_hetbench(record_args("overflow_every=3000,overflow_skip=700", out, 0.4), kEnv);
    ASSERT_EQ(r.exit_code, 0) << r.out << r.err;
    const Accounting a = accounting(r.out);
    // The duration is stream time: reached by samples delivered or lost (the last overflow may pass it).
    EXPECT_GE(a.produced, 100000u);
    EXPECT_LE(a.produced, 100000u + 700);
    // One overflow every 3000 stream samples, each losing 700: the user sees the count of each.
    EXPECT_GE(a.lost, 700u * 30);
    EXPECT_EQ(a.lost % 700, 0u);
    EXPECT_NE(r.out.find(std::to_string(a.lost / 700) + " overflows"), std::string::npos) << r.out;
    expect_accounted(out, a, clean_stream());
    const SigmfMeta m = read_sigmf_meta(out + ".sigmf-meta");
    EXPECT_GE(m.captures.size(), a.lost / 700);  // a new capture after each gap, with its stream index
}

TEST(RecordFaults, TimeoutsAreCountedAndLoseNothing) {
    TempDir d;
    const std::string out = d.file("slow").string();
    const auto r = test::run_hetbench(record_args("timeout_at=0.05,timeout_count=3", out, 0.2), kEnv);
    ASSERT_EQ(r.exit_code, 0) << r.out << r.err;
    EXPECT_NE(r.out.find("3 timeouts"), std::string::npos) << r.out;
    const Accounting a = accounting(r.out);
    EXPECT_EQ(a.produced, 50000u);
    EXPECT_EQ(a.lost, 0u);
    expect_accounted(out, a, clean_stream());
}

// A stream error or a vanished device: the device is closed and opened again; the user is told each time; the
// missed stretch is a gap of unknown length and the new stream starts a capture of its own.
void expect_reopened(const std::string& fault, const std::string& user_sees) {
    TempDir d;
    const std::string out = d.file("re").string();
    const auto r = test::run_hetbench(record_args(fault + "=0.1", out, 0.3), kEnv);
    ASSERT_EQ(r.exit_code, 0) << r.out << r.err;
    EXPECT_NE(r.err.find("hetbench: the source failed: "), std::string::npos) << r.err;
    EXPECT_NE(r.err.find(user_sees), std::string::npos) << r.err;
    EXPECT_NE(r.err.find("reopening it"), std::string::npos) << r.err;
    EXPECT_NE(r.err.find("hetbench: the source is back after "), std::string::npos) << r.err;
    // 0.3 s at 250 kS/s from devices that fail after 0.1 s each: two reopens.
    EXPECT_NE(r.out.find("reopened: 2 times"), std::string::npos) << r.out;
    EXPECT_NE(r.out.find("2 with an unknown count"), std::string::npos) << r.out;
    const Accounting a = accounting(r.out);
    EXPECT_EQ(a.written, 75000u);
    expect_accounted(out, a, clean_stream());
    const SigmfMeta m = read_sigmf_meta(out + ".sigmf-meta");
    int reopen_gaps = 0;
    for (const SigmfAnnotation& g : m.annotations)
        if (g.label == "gap" && g.comment.find("was reopened after") != std::string::npos) {
            ++reopen_gaps;
            EXPECT_FALSE(g.lost_samples) << "a reopen gap has no known count";
        }
    EXPECT_EQ(reopen_gaps, 2);
    // Each reopened device streams from its own start: the capture after each gap repeats the stream's start.
    const auto got = read_samples(out + ".sigmf-meta");
    ASSERT_GE(m.captures.size(), 3u);
    for (std::size_t c = 1; c < m.captures.size(); ++c) {
        EXPECT_FALSE(m.captures[c].global_index);
        for (std::size_t k = 0; k < 1000; k += 37)
            ASSERT_EQ(got[m.captures[c].sample_start + k], clean_stream()[k]) << c;
    }
}

TEST(RecordFaults, StreamErrorReopensTheDevice) {
    expect_reopened("error_at", "stream error");
}
TEST(RecordFaults, VanishedDeviceIsReopened) {
    expect_reopened("disconnect_at", "the device vanished");
}

TEST(RecordFaults, FrozenDeviceIsReopenedAfterTheStallTimeout) {
    TempDir d;
    const std::string out = d.file("frozen").string();
    auto args = record_args("freeze_at=0.1", out, 0.15);
    args.insert(args.end(), {"--stall-timeout", "0.5"});
    const auto r = test::run_hetbench(args, kEnv);
    ASSERT_EQ(r.exit_code, 0) << r.out << r.err;
    EXPECT_NE(r.err.find("no samples for 0.5 s"), std::string::npos) << r.err;
    EXPECT_NE(r.out.find("reopened: 1 time"), std::string::npos) << r.out;
    const Accounting a = accounting(r.out);
    EXPECT_EQ(a.written, 37500u);
    expect_accounted(out, a, clean_stream());
}

// Without reopening, a failure ends the recording: exit 2, the reason, and a recording valid up to there.
TEST(RecordFaults, WithoutReopenAFailureEndsAValidRecording) {
    for (const std::string fault : {"error_at=0.1", "disconnect_at=0.1", "freeze_at=0.1"}) {
        TempDir d;
        const std::string out = d.file("ended").string();
        auto args = record_args(fault, out, 1.0);
        args.insert(args.end(), {"--reopen-for", "0", "--stall-timeout", "0.5"});
        const auto r = test::run_hetbench(args, kEnv);
        EXPECT_EQ(r.exit_code, 2) << fault << "\n" << r.out << r.err;
        EXPECT_NE(r.err.find("hetbench: error: the source failed: "), std::string::npos) << r.err;
        EXPECT_NE(r.err.find("(the recording is valid up to sample "), std::string::npos) << r.err;
        const Accounting a = accounting(r.out);
        // The 0.1 s before the fault, and the rest of the block being read when it struck.
        EXPECT_GE(a.written, 25000u) << fault;
        EXPECT_LE(a.written, 25000u + RecorderOptions{}.block_samples) << fault;
        EXPECT_EQ(read_sigmf_meta(out + ".sigmf-meta").sample_count, a.written);
        expect_accounted(out, a, clean_stream());
    }
}

// The data file is /dev/full: every write fails with ENOSPC. Exit 2, "No space left on device", valid metadata.
TEST(RecordFaults, FullDiskStopsCleanlyAndSaysSo) {
    if (!std::filesystem::exists("/dev/full")) GTEST_SKIP() << "/dev/full is not available";
    TempDir d;
    const std::string out = d.file("full").string();
    std::filesystem::create_symlink("/dev/full", out + ".sigmf-data");
    const auto r = test::run_hetbench(record_args("", out, 0.2), kEnv);
    EXPECT_EQ(r.exit_code, 2) << r.out << r.err;
    EXPECT_NE(r.err.find("hetbench: error: the recording stopped: "), std::string::npos) << r.err;
    EXPECT_NE(r.err.find("No space left on device"), std::string::npos) << r.err;
    const Accounting a = accounting(r.out);
    EXPECT_EQ(a.written, 0u);
    EXPECT_EQ(a.written + a.lost + a.dropped, a.produced);
    const SigmfMeta m = read_sigmf_meta(out + ".sigmf-meta");
    EXPECT_EQ(m.sample_count, 0u);
}

// The disk fills up part-way (a file size limit: writes past it fail with EFBIG, mid-block): exit 2 with the
// reason, the data cut back to whole samples, the metadata describing exactly those, the rest counted as dropped.
TEST(RecordFaults, DiskFillingMidwayLeavesAnAccountedRecording) {
    TempDir d;
    const std::string out = d.file("filling").string();
    const auto log = d.file("log");
    const pid_t pid = ::fork();
    ASSERT_GE(pid, 0);
    if (pid == 0) {
        const rlimit lim{1000000, 1000000};  // bytes: not a whole number of blocks or samples
        ::setrlimit(RLIMIT_FSIZE, &lim);
        ::signal(SIGXFSZ, SIG_IGN);  // a write past the limit then fails with EFBIG instead of killing
        const int fd = ::open(log.c_str(), O_WRONLY | O_CREAT | O_TRUNC, 0600);
        const int fe = ::open((log.string() + ".err").c_str(), O_WRONLY | O_CREAT | O_TRUNC, 0600);
        ::dup2(fd, 1);
        ::dup2(fe, 2);
        for (const auto& kv : kEnv) ::putenv(const_cast<char*>(kv.c_str()));
        std::vector<std::string> all{test::hetbench_exe().string()};
        const auto args = record_args("", out, 1.0);  // 2 MB of cf32 at 250 kS/s
        all.insert(all.end(), args.begin(), args.end());
        std::vector<char*> argv;
        for (auto& s : all) argv.push_back(s.data());
        argv.push_back(nullptr);
        ::execv(argv[0], argv.data());
        ::_exit(127);
    }
    int status = 0;
    ::waitpid(pid, &status, 0);
    const std::string sout = test::read_file(log), serr = test::read_file(log.string() + ".err");
    ASSERT_TRUE(WIFEXITED(status)) << serr;
    EXPECT_EQ(WEXITSTATUS(status), 2) << sout << serr;
    EXPECT_NE(serr.find("the recording stopped: "), std::string::npos) << serr;
    EXPECT_NE(serr.find("File too large"), std::string::npos) << serr;
    const Accounting a = accounting(sout);
    // The block that hit the limit is cut back off (the sink keeps whole blocks): the blocks under the limit remain.
    const std::uint64_t block = RecorderOptions{}.block_samples;
    EXPECT_LE(a.written * 8, 1000000u);
    EXPECT_GT(a.written * 8, 1000000u - 8 * block);
    EXPECT_GT(a.dropped, 0u);
    expect_accounted(out, a, clean_stream());
}

// ---- The recorder's reopen and NaN guard with scripted sources ----

// A live source of index-valued samples that fails (stream error) after `fail_after` samples.
class Failing final : public SampleSource {
  public:
    Failing(std::uint64_t fail_after, bool nan_every_100 = false) : fail_after_(fail_after), nan_(nan_every_100) {
        info_.sample_rate_hz = 1e5;
        info_.center_hz = 1e6;
        info_.live = true;
        info_.description = "scripted";
    }
    const StreamInfo& info() const override { return info_; }
    const SourceCounters& counters() const override { return counters_; }
    ReadResult read(std::span<cf32> out, double) override {
        if (next_ >= fail_after_) return {ReadStatus::error, 0, 0, "scripted stream error"};
        const std::size_t n = static_cast<std::size_t>(std::min<std::uint64_t>(out.size(), fail_after_ - next_));
        for (std::size_t i = 0; i < n; ++i, ++next_)
            out[i] = nan_ && next_ % 100 == 0 ? cf32(std::nanf(""), 0.0f) : cf32(static_cast<float>(next_), 1.0f);
        return {ReadStatus::ok, n, 0, ""};
    }

  private:
    StreamInfo info_;
    SourceCounters counters_;
    std::uint64_t fail_after_, next_ = 0;
    bool nan_;
};

TEST(RecorderReopen, BacksOffUntilTheDeviceIsBackAndTellsEachStep) {
    TempDir d;
    Failing first(5000);
    std::unique_ptr<Failing> current;
    int calls = 0;
    std::vector<std::string> events;
    RecorderOptions o;
    o.out = d.file("r").string();
    o.duration_s = 0.1;  // 10000 samples: 5000 before the failure, 5000 after
    o.block_samples = 1000;
    o.reopen_first_delay_s = 0.05;
    o.reopen_max_delay_s = 0.1;
    o.reopen = [&]() -> SampleSource& {
        current.reset();
        if (++calls < 3) throw InputError("device not found (unplugged)");
        current = std::make_unique<Failing>(1000000);
        return *current;
    };
    o.on_event = [&](const std::string& e) { events.push_back(e); };
    const auto t0 = std::chrono::steady_clock::now();
    const RecorderReport r = record(first, o);
    const double took = std::chrono::duration<double>(std::chrono::steady_clock::now() - t0).count();
    EXPECT_TRUE(r.complete) << r.message;
    EXPECT_EQ(calls, 3);
    EXPECT_EQ(r.reopens, 1u);
    EXPECT_EQ(r.written, 10000u);
    EXPECT_EQ(r.unknown_gaps, 1u);
    // Delays 0.05, then doubled to 0.1, then held at the 0.1 cap: at least 0.25 s without the source.
    EXPECT_GE(r.outage_s, 0.25);
    EXPECT_GE(took, 0.25);
    ASSERT_EQ(events.size(), 4u);
    EXPECT_NE(events[0].find("the source failed: scripted stream error; reopening it"), std::string::npos) << events[0];
    EXPECT_NE(events[1].find("reopen attempt 1 failed: device not found (unplugged); next in 0.1 s"), std::string::npos)
        << events[1];
    EXPECT_NE(events[2].find("reopen attempt 2 failed"), std::string::npos) << events[2];
    EXPECT_NE(events[3].find("the source is back after"), std::string::npos) << events[3];
    EXPECT_NE(events[3].find("(3 attempts)"), std::string::npos) << events[3];
    const SigmfMeta m = read_sigmf_meta(d.file("r.sigmf-meta").string());
    ASSERT_EQ(m.captures.size(), 2u);
    EXPECT_EQ(m.captures[1].sample_start, 5000u);
    ASSERT_EQ(m.annotations.size(), 1u);
    EXPECT_EQ(m.annotations[0].sample_start, 5000u);
    EXPECT_NE(m.annotations[0].comment.find("reopened after"), std::string::npos) << m.annotations[0].comment;
    const auto got = read_samples(d.file("r.sigmf-meta").string());
    ASSERT_EQ(got.size(), 10000u);
    EXPECT_EQ(got[4999], cf32(4999.0f, 1.0f));
    EXPECT_EQ(got[5000], cf32(0.0f, 1.0f));  // the reopened source's first sample
}

TEST(RecorderReopen, GivesUpWhenTheDeviceStaysAway) {
    TempDir d;
    Failing first(3000);
    std::vector<std::string> events;
    RecorderOptions o;
    o.out = d.file("r").string();
    o.reopen_for_s = 0.3;
    o.reopen_first_delay_s = 0.05;
    o.reopen_max_delay_s = 0.1;
    o.reopen = [&]() -> SampleSource& { throw InputError("device not found"); };
    o.on_event = [&](const std::string& e) { events.push_back(e); };
    const RecorderReport r = record(first, o);
    EXPECT_FALSE(r.complete);
    EXPECT_NE(r.message.find("scripted stream error (and could not be reopened)"), std::string::npos) << r.message;
    EXPECT_EQ(r.written, 3000u);
    EXPECT_EQ(r.reopens, 0u);
    ASSERT_FALSE(events.empty());
    EXPECT_NE(events.back().find("did not come back within 0.3 s: device not found"), std::string::npos)
        << events.back();
    EXPECT_EQ(read_sigmf_meta(d.file("r.sigmf-meta").string()).sample_count, 3000u);
}

TEST(RecorderReopen, AStopRequestEndsTheWaitAtOnce) {
    TempDir d;
    Failing first(3000);
    std::atomic<bool> stop{false};
    RecorderOptions o;
    o.out = d.file("r").string();
    o.reopen_first_delay_s = 5.0;
    o.reopen_max_delay_s = 5.0;
    o.reopen = [&]() -> SampleSource& { throw InputError("device not found"); };
    o.on_event = [&](const std::string&) { stop.store(true); };  // Ctrl-C while it waits
    const auto t0 = std::chrono::steady_clock::now();
    const RecorderReport r = record(first, o, &stop);
    EXPECT_LT(std::chrono::duration<double>(std::chrono::steady_clock::now() - t0).count(), 2.0);
    EXPECT_EQ(r.written, 3000u);
}

TEST(RecorderNonFinite, NaNFromASourceIsReplacedAndCounted) {
    // A source that breaks the contract (sources replace NaN themselves): the recorder replaces and counts.
    TempDir d;
    Failing src(1000, true);
    RecorderOptions o;
    o.out = d.file("n").string();
    const RecorderReport r = record(src, o);
    EXPECT_EQ(r.non_finite, 10u);
    ASSERT_FALSE(r.warnings.empty());
    EXPECT_NE(r.warnings.back().find("10 NaN or infinite samples"), std::string::npos) << r.warnings.back();
    const auto got = read_samples(d.file("n.sigmf-meta").string());
    ASSERT_EQ(got.size(), 1000u);
    for (std::size_t i = 0; i < got.size(); ++i)
        ASSERT_EQ(got[i], i % 100 == 0 ? cf32(0.0f, 0.0f) : cf32(static_cast<float>(i), 1.0f)) << i;
}

TEST(RecorderNonFinite, TheCommandLineShowsTheCount) {
    // A raw recording with NaN and infinities: the reader replaces them, the recorder reports its count.
    TempDir d;
    std::vector<float> iq(2 * 1000, 0.5f);
    iq[10] = std::nanf("");
    iq[21] = INFINITY;
    iq[500] = -INFINITY;
    test::write_file(d.file("bad.cf32"), std::string(reinterpret_cast<const char*>(iq.data()), iq.size() * 4));
    const auto r = test::run_hetbench({"record", "--source", d.file("bad.cf32").string(), "--input-format", "cf32_le",
                                       "--rate", "48k", "--frequency", "0", "--out", d.file("o").string()});
    ASSERT_EQ(r.exit_code, 0) << r.out << r.err;
    EXPECT_NE(r.out.find("replaced: 3 NaN/Inf samples by 0"), std::string::npos) << r.out;
    EXPECT_NE(r.err.find("hetbench: warning: 3 NaN or infinite samples"), std::string::npos) << r.err;
    const auto got = read_samples(d.file("o.sigmf-meta").string());
    ASSERT_EQ(got.size(), 1000u);
    EXPECT_EQ(got[5], cf32(0.0f, 0.0f));
    EXPECT_EQ(got[6], cf32(0.5f, 0.5f));
}

}  // namespace
}  // namespace hb
