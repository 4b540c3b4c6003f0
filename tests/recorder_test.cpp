// The recorder: with a scripted source that injects overflows, retunes and ends, and with disks that
// stall, are slow, fill up or fail mid-write, every sample is accounted for
//     written + lost in the source + dropped = produced,
// each written sample sits where its capture's core:global_index says (the source writes its own stream
// index into every sample), the metadata validates against the published SigMF schema, and a recording
// cut off mid-way (files copied at that instant, as a kill would leave them) reads up to its last flush.
#include <gtest/gtest.h>
#include <signal.h>
#include <fcntl.h>
#include <sys/wait.h>
#include <unistd.h>

#include <atomic>
#include <condition_variable>
#include <functional>
#include <mutex>
#include <thread>

#include "devices/recorder.hpp"
#include "devices/recording.hpp"
#include "devices/session.hpp"
#include "devices/setup_json.hpp"
#include "recording_support.hpp"

namespace hb {
namespace {

using test::TempDir;

struct Script {
    double rate = 1e6;
    double center = 100e6;
    bool live = true;
    std::uint64_t total = 200000;       // stream samples (delivered + lost), then end
    std::size_t block = 4096;           // at most this many per read
    std::uint64_t overflow_every = 0;   // every N-th read reports an overflow...
    std::uint64_t overflow_lost = 0;    // ...having skipped this many samples
    bool unknown_count = false;         // ...and says it does not know how many
    std::vector<std::pair<std::uint64_t, double>> retune;  // (stream index, new centre)
    double sleep_per_read_s = 0;
    bool fail_at_end = false;           // a stream error instead of the end
    std::function<void(std::uint64_t next_index)> on_read;  // called before each read
};

// A live (or file-like) source whose samples carry their own stream index: I = index, Q = -1.
class ScriptedSource final : public SampleSource {
public:
    explicit ScriptedSource(Script s) : s_(std::move(s)) {
        info_.center_hz = s_.center;
        info_.sample_rate_hz = s_.rate;
        info_.live = s_.live;
        info_.description = "scripted test source";
        info_.hardware = "scripted source (invented)";
    }
    const StreamInfo& info() const override { return info_; }
    const SourceCounters& counters() const override { return c_; }
    std::atomic<bool> exhausted{false};

    ReadResult read(std::span<cf32> out, double) override {
        if (s_.on_read) s_.on_read(next_);
        if (s_.sleep_per_read_s > 0) std::this_thread::sleep_for(std::chrono::duration<double>(s_.sleep_per_read_s));
        ReadResult r;
        ++reads_;
        if (s_.overflow_every && reads_ % s_.overflow_every == 0 && next_ < s_.total) {
            const std::uint64_t skip = std::min(s_.overflow_lost, s_.total - next_);
            next_ += skip;
            r.status = ReadStatus::overflow;
            r.lost = s_.unknown_count ? 0 : skip;
            ++c_.overflows;
            c_.lost_samples += skip;
        }
        for (const auto& [at, f] : s_.retune)
            if (at <= next_) info_.center_hz = f;
        if (next_ >= s_.total) {
            exhausted.store(true);
            if (r.status == ReadStatus::overflow) return r;
            r.status = s_.fail_at_end ? ReadStatus::error : ReadStatus::end;
            r.message = s_.fail_at_end ? "scripted stream error" : "";
            return r;
        }
        std::uint64_t n = std::min<std::uint64_t>({out.size(), s_.block, s_.total - next_});
        for (const auto& [at, f] : s_.retune)  // a block never spans a retune
            if (at > next_ && at < next_ + n) n = at - next_;
        for (std::uint64_t k = 0; k < n; ++k) out[k] = cf32(static_cast<float>(next_ + k), -1.0f);
        next_ += n;
        r.count = static_cast<std::size_t>(n);
        c_.samples += n;
        return r;
    }

private:
    Script s_;
    StreamInfo info_;
    SourceCounters c_;
    std::uint64_t next_ = 0, reads_ = 0;
};

// A disk that can be slow, stall until released, or fail after some bytes (writing part of the block).
class TestSink final : public DataSink {
public:
    explicit TestSink(const std::string& path) : file_(open_file_sink(path)) {}
    double delay_s = 0;
    std::uint64_t fail_after_bytes = UINT64_MAX;
    bool stalled = false;
    std::mutex m;
    std::condition_variable cv;
    void release() {  // notifies under the lock: the sink may be destroyed as soon as the writer moves on
        std::lock_guard lk(m);
        stalled = false;
        cv.notify_all();
    }
    bool write(const std::byte* d, std::size_t n, std::string& error) override {
        {
            std::unique_lock lk(m);
            cv.wait(lk, [&] { return !stalled; });
        }
        if (delay_s > 0) std::this_thread::sleep_for(std::chrono::duration<double>(delay_s));
        if (bytes_ + n > fail_after_bytes) {
            const std::size_t part = static_cast<std::size_t>(fail_after_bytes - bytes_);
            file_->write(d, part, error);  // a partial write, as a filling disk does
            bytes_ += part;
            error = "data file: write failed: No space left on device";
            return false;
        }
        bytes_ += n;
        return file_->write(d, n, error);
    }
    bool flush(std::string& error) override { return file_->flush(error); }
    void truncate(std::uint64_t bytes) override { file_->truncate(bytes); }

private:
    std::unique_ptr<DataSink> file_;
    std::uint64_t bytes_ = 0;
};

// Reads a recording back and checks it against the stream the scripted source produced: every sample's
// I is its stream index as the captures' core:global_index place it; gap annotations sit at capture
// starts and their lost counts close the books. Returns the samples read.
std::uint64_t verify_recording(const std::string& meta_path, std::uint64_t produced, bool expect_complete_books = true) {
    SourceSpec spec;
    spec.kind = SourceKind::recording;
    spec.path = meta_path;
    auto src = open_recording(spec, hb::Setup{});
    const RecordingDetails* det = recording_details(*src);
    EXPECT_TRUE(det && det->sigmf);
    if (!det || !det->sigmf) return 0;
    const SigmfMeta& m = *det->sigmf;
    const auto got = test::read_all(*src, 10000).samples;

    std::uint64_t lost = 0;
    for (const SigmfAnnotation& a : m.annotations) {
        EXPECT_EQ(a.label, "gap");
        EXPECT_EQ(a.sample_count, 0u);
        EXPECT_LE(a.sample_start, got.size());
        EXPECT_TRUE(a.lost_samples.has_value()) << a.comment;
        if (a.lost_samples) {
            lost += *a.lost_samples;
            EXPECT_NE(a.comment.find(std::to_string(*a.lost_samples) + " samples lost"), std::string::npos) << a.comment;
        }
    }
    for (std::size_t c = 0; c < m.captures.size(); ++c) {
        const std::uint64_t start = m.captures[c].sample_start;
        const std::uint64_t end = c + 1 < m.captures.size() ? m.captures[c + 1].sample_start : got.size();
        const std::uint64_t g = c == 0 ? m.captures[c].global_index.value_or(0) : m.captures[c].global_index.value();
        EXPECT_TRUE(m.captures[c].frequency_hz.has_value());
        for (std::uint64_t k = start; k < end && k < got.size(); ++k) {
            if (got[k] != cf32(static_cast<float>(g + (k - start)), -1.0f)) {
                ADD_FAILURE() << "sample " << k << " of capture " << c << " is " << got[k].real() << ", expected stream index "
                              << g + (k - start);
                return got.size();
            }
        }
    }
    if (expect_complete_books) {
        EXPECT_EQ(got.size() + lost, produced) << "written + annotated gaps = produced";
    }
    return got.size();
}

void check_books(const RecorderReport& r) {
    EXPECT_EQ(r.written + r.overflow_lost + r.dropped, r.produced)
        << "written " << r.written << " + lost " << r.overflow_lost << " + dropped " << r.dropped;
}

void validate_schema(const std::string& meta) {
    const auto python = test::python_with_jsonschema();
    const auto schema = test::sigmf_schema();
    if (!python || !schema) return;  // reported by SigmfWrite.OutputValidatesAgainstThePublishedSchema's skip
    EXPECT_EQ(test::schema_errors(*python, *schema, meta), "") << meta;
}

TEST(Recorder, OverflowsAndRetunesAreAnnotatedAndEverySampleAccountedFor) {
    TempDir d;
    Script s;
    s.total = 300000;
    s.overflow_every = 7;
    s.overflow_lost = 1234;
    s.retune = {{150000, 100.2e6}};
    ScriptedSource src(s);
    RecorderOptions o;
    o.out = d.file("ovf").string();
    o.flush_interval_s = 0.01;
    o.queue_blocks = 128;  // 2M samples of queue: nothing is dropped here
    const RecorderReport r = record(src, o);
    EXPECT_TRUE(r.complete) << r.message;
    EXPECT_EQ(r.produced, 300000u);
    EXPECT_GT(r.overflows, 5u);
    EXPECT_EQ(r.overflow_lost, 1234u * r.overflows);
    EXPECT_EQ(r.dropped, 0u);
    EXPECT_EQ(r.gaps, r.overflows);
    check_books(r);
    EXPECT_EQ(verify_recording(r.meta_path, r.produced), r.written);
    const SigmfMeta m = read_sigmf_meta(r.meta_path);
    EXPECT_EQ(m.captures.size(), r.captures);
    EXPECT_EQ(m.captures.size(), 1 + r.overflows + 1);  // one after each gap, one at the retune
    int retuned = 0;
    for (const auto& c : m.captures) retuned += c.frequency_hz == 100.2e6;
    EXPECT_GT(retuned, 0);
    EXPECT_EQ(m.captures.back().frequency_hz, 100.2e6);
    EXPECT_EQ(m.sample_count, r.written);
    EXPECT_EQ(m.hw, "scripted source (invented)");
    validate_schema(r.meta_path);
}

TEST(Recorder, OverflowsWithoutACountAreAnnotatedAsUnknown) {
    TempDir d;
    Script s;
    s.total = 50000;
    s.overflow_every = 4;
    s.overflow_lost = 100;
    s.unknown_count = true;
    ScriptedSource src(s);
    RecorderOptions o;
    o.out = d.file("unk").string();
    const RecorderReport r = record(src, o);
    EXPECT_GT(r.unknown_gaps, 0u);
    EXPECT_EQ(r.unknown_gaps, r.gaps);
    EXPECT_EQ(r.overflow_lost, 0u);  // nothing known to add up
    const SigmfMeta m = read_sigmf_meta(r.meta_path);
    ASSERT_FALSE(m.annotations.empty());
    for (const auto& a : m.annotations) {
        EXPECT_FALSE(a.lost_samples.has_value());
        EXPECT_NE(a.comment.find("unknown"), std::string::npos) << a.comment;
    }
    for (std::size_t c = 1; c < m.captures.size(); ++c) EXPECT_FALSE(m.captures[c].global_index.has_value());
    validate_schema(r.meta_path);
}

// A slow disk with a short queue: the live source is still read at full speed, the blocks that do not
// fit are dropped and annotated, and what was written is exactly the stream minus the gaps.
TEST(Recorder, SlowDiskDropsAreAnnotated) {
    TempDir d;
    Script s;
    s.total = 400000;
    ScriptedSource src(s);
    RecorderOptions o;
    o.out = d.file("slow").string();
    o.queue_blocks = 4;
    o.block_samples = 4096;
    o.flush_interval_s = 0.02;
    auto sink = std::make_unique<TestSink>(o.out + ".sigmf-data");
    sink->delay_s = 0.005;
    const RecorderReport r = record(src, o, nullptr, std::move(sink));
    EXPECT_TRUE(r.complete) << r.message;
    EXPECT_GT(r.dropped, 0u);
    EXPECT_GT(r.gaps, 0u);
    EXPECT_EQ(r.produced, 400000u);
    check_books(r);
    EXPECT_EQ(verify_recording(r.meta_path, r.produced), r.written);
    validate_schema(r.meta_path);
}

// The disk stalls completely: the reader must still read the whole live stream (dropping and
// annotating) instead of waiting for the disk.
TEST(Recorder, ReaderNeverWaitsForAStalledDisk) {
    TempDir d;
    Script s;
    s.total = 300000;
    ScriptedSource src(s);
    RecorderOptions o;
    o.out = d.file("stall").string();
    o.queue_blocks = 3;
    auto sink = std::make_unique<TestSink>(o.out + ".sigmf-data");
    TestSink* stall = sink.get();
    stall->stalled = true;
    std::atomic<bool> read_all_while_stalled{false};
    std::thread watcher([&] {
        const auto until = std::chrono::steady_clock::now() + std::chrono::seconds(10);
        while (!src.exhausted.load() && std::chrono::steady_clock::now() < until)
            std::this_thread::sleep_for(std::chrono::milliseconds(1));
        read_all_while_stalled.store(src.exhausted.load());
        stall->release();
    });
    const RecorderReport r = record(src, o, nullptr, std::move(sink));
    watcher.join();
    EXPECT_TRUE(read_all_while_stalled.load()) << "the reader waited for the disk";
    EXPECT_TRUE(r.complete) << r.message;
    EXPECT_LE(r.written, 4u * o.block_samples);  // at most the queue (+ the block being written)
    EXPECT_GT(r.dropped, 0u);
    check_books(r);
    EXPECT_EQ(verify_recording(r.meta_path, r.produced), r.written);
}

// A file source is never dropped from: the reader waits for the writer instead.
TEST(Recorder, FileSourcesWaitForTheDisk) {
    TempDir d;
    Script s;
    s.total = 100000;
    s.live = false;
    ScriptedSource src(s);
    RecorderOptions o;
    o.out = d.file("file").string();
    o.queue_blocks = 2;
    o.block_samples = 4096;
    auto sink = std::make_unique<TestSink>(o.out + ".sigmf-data");
    sink->delay_s = 0.001;
    const RecorderReport r = record(src, o, nullptr, std::move(sink));
    EXPECT_EQ(r.dropped, 0u);
    EXPECT_EQ(r.written, 100000u);
    EXPECT_EQ(r.gaps, 0u);
    EXPECT_EQ(verify_recording(r.meta_path, r.produced), 100000u);
}

// A real full disk: the data file is a link to /dev/full, where every write fails with ENOSPC.
TEST(Recorder, FullDiskStopsCleanlyWithValidMetadata) {
    if (!std::filesystem::exists("/dev/full")) GTEST_SKIP() << "/dev/full is not available";
    TempDir d;
    std::filesystem::create_symlink("/dev/full", d.file("full.sigmf-data"));
    Script s;
    s.total = 100000;
    ScriptedSource src(s);
    RecorderOptions o;
    o.out = d.file("full").string();
    const RecorderReport r = record(src, o);
    EXPECT_FALSE(r.complete);
    EXPECT_NE(r.message.find("No space left on device"), std::string::npos) << r.message;
    EXPECT_NE(r.message.find("full.sigmf-data"), std::string::npos) << r.message;
    EXPECT_EQ(r.written, 0u);
    check_books(r);
    const SigmfMeta m = read_sigmf_meta(r.meta_path);  // valid
    EXPECT_EQ(m.sample_count, 0u);
    std::uint64_t lost = 0;
    for (const auto& a : m.annotations) lost += a.lost_samples.value_or(0);
    EXPECT_EQ(lost, r.dropped + r.overflow_lost);
    EXPECT_EQ(lost, r.produced);
    validate_schema(r.meta_path);
}

// The disk fills up in the middle of a block: the data is cut back to whole samples, the metadata says
// so, and the recording reads back cleanly up to there.
TEST(Recorder, DiskFailingMidWriteLeavesAReadableRecording) {
    TempDir d;
    Script s;
    s.total = 200000;
    s.overflow_every = 5;
    s.overflow_lost = 77;
    ScriptedSource src(s);
    RecorderOptions o;
    o.out = d.file("mid").string();
    o.queue_blocks = 64;
    auto sink = std::make_unique<TestSink>(o.out + ".sigmf-data");
    sink->fail_after_bytes = 10 * 4096 * 8 + 1001;  // ten blocks and a piece that is not a whole sample
    const RecorderReport r = record(src, o, nullptr, std::move(sink));
    EXPECT_FALSE(r.complete);
    EXPECT_NE(r.message.find("No space left"), std::string::npos) << r.message;
    EXPECT_GT(r.written, 0u);
    EXPECT_EQ(std::filesystem::file_size(r.data_path), r.written * 8);  // whole samples only
    check_books(r);
    SourceSpec spec;
    spec.kind = SourceKind::recording;
    spec.path = r.meta_path;
    EXPECT_TRUE(recording_details(*open_recording(spec, hb::Setup{}))->warnings.empty());
    EXPECT_EQ(verify_recording(r.meta_path, r.produced), r.written);
    validate_schema(r.meta_path);
}

// A kill leaves the files as they are at that instant: copy them mid-recording (metadata first, then the
// data, as a reader finding them would) and read the copy.
TEST(Recorder, RecordingCutOffMidwayReadsUpToTheLastFlush) {
    TempDir d;
    const auto snap = d.file("snap");
    std::filesystem::create_directory(snap);
    Script s;
    s.total = 600000;
    s.sleep_per_read_s = 0.002;  // ~2 MS/s: the recording lasts ~0.3 s with ~15 flushes
    s.overflow_every = 9;
    s.overflow_lost = 500;
    bool copied = false;
    RecorderOptions o;
    o.out = d.file("cut").string();
    o.flush_interval_s = 0.02;
    s.on_read = [&](std::uint64_t next) {
        if (copied || next < 400000) return;
        copied = true;
        // Cut after at least one flush (fsync can be slow on a busy disk): wait for it, up to 10 s.
        for (int i = 0; i < 1000 && read_sigmf_meta(o.out + ".sigmf-meta").sample_count.value_or(0) == 0; ++i)
            std::this_thread::sleep_for(std::chrono::milliseconds(10));
        std::filesystem::copy_file(o.out + ".sigmf-meta", snap / "cut.sigmf-meta");
        std::filesystem::copy_file(o.out + ".sigmf-data", snap / "cut.sigmf-data");
    };
    ScriptedSource src(s);
    const RecorderReport r = record(src, o);
    ASSERT_TRUE(copied);
    EXPECT_TRUE(r.complete);
    check_books(r);
    EXPECT_EQ(verify_recording(r.meta_path, r.produced), r.written);

    const SigmfMeta cut = read_sigmf_meta((snap / "cut.sigmf-meta").string());
    ASSERT_TRUE(cut.sample_count.has_value());
    EXPECT_GT(*cut.sample_count, 0u) << "no flush happened before the cut";
    EXPECT_LT(*cut.sample_count, r.written);
    // The copy reads exactly the samples its metadata describes, each at its right stream index.
    const std::uint64_t n = verify_recording((snap / "cut.sigmf-meta").string(), 0, false);
    EXPECT_EQ(n, *cut.sample_count);
    validate_schema((snap / "cut.sigmf-meta").string());
}

TEST(Recorder, DurationSourceErrorsAndStop) {
    TempDir d;
    {  // The duration counts stream time, lost samples included.
        Script s;
        s.total = 1000000;
        s.overflow_every = 3;
        s.overflow_lost = 1000;
        ScriptedSource src(s);
        RecorderOptions o;
        o.out = d.file("dur.sigmf-meta").string();  // a suffix is stripped
        o.duration_s = 0.1;
        const RecorderReport r = record(src, o);
        EXPECT_EQ(r.meta_path, d.file("dur.sigmf-meta").string());
        EXPECT_EQ(r.data_path, d.file("dur.sigmf-data").string());
        EXPECT_GE(r.produced, 100000u);
        EXPECT_LT(r.produced, 100000u + 1000u);
        check_books(r);
    }
    {  // A stream error stops the recording, reported, with valid files.
        Script s;
        s.total = 20000;
        s.fail_at_end = true;
        ScriptedSource src(s);
        RecorderOptions o;
        o.out = d.file("err").string();
        const RecorderReport r = record(src, o);
        EXPECT_FALSE(r.complete);
        EXPECT_NE(r.message.find("scripted stream error"), std::string::npos) << r.message;
        EXPECT_EQ(r.written, 20000u);
        EXPECT_EQ(verify_recording(r.meta_path, r.produced), 20000u);
    }
    {  // Stop: set from another thread.
        std::atomic<bool> stop{false};
        Script s;
        s.total = UINT64_MAX / 2;
        s.on_read = [&](std::uint64_t next) {
            if (next >= 50000) stop.store(true);  // as a signal handler would, between two reads
        };
        ScriptedSource src(s);
        RecorderOptions o;
        o.out = d.file("stop").string();
        const RecorderReport r = record(src, o, &stop);
        EXPECT_TRUE(r.complete);
        EXPECT_GE(r.written, 50000u);
        EXPECT_LT(r.written, 50000u + o.block_samples);
        EXPECT_EQ(verify_recording(r.meta_path, r.produced), r.written);
    }
}

TEST(Recorder, Ci16OutputScalesAndCountsClipping) {
    TempDir d;
    class Const final : public SampleSource {
    public:
        StreamInfo i{0, 48000, 0, "const", "const", 0, false};
        SourceCounters c;
        int left = 4;
        const StreamInfo& info() const override { return i; }
        const SourceCounters& counters() const override { return c; }
        ReadResult read(std::span<cf32> out, double) override {
            if (left-- <= 0) return {ReadStatus::end, 0, 0, ""};
            for (auto& z : out.first(1000)) z = cf32(0.5f, 1.5f);  // Q beyond full scale
            return {ReadStatus::ok, 1000, 0, ""};
        }
    } src;
    RecorderOptions o;
    o.out = d.file("i16").string();
    o.datatype = "ci16_le";
    const RecorderReport r = record(src, o);
    EXPECT_EQ(r.written, 4000u);
    EXPECT_EQ(r.clipped, 4000u);
    ASSERT_EQ(r.warnings.size(), 1u);
    EXPECT_NE(r.warnings[0].find("clipped"), std::string::npos);
    const std::string data = test::read_file(r.data_path);
    ASSERT_EQ(data.size(), 16000u);
    std::int16_t iq[2];
    std::memcpy(iq, data.data(), 4);
    EXPECT_EQ(iq[0], 16384);  // round(0.5 * 32767) = 16384 (16383.5 rounds to even)
    EXPECT_EQ(iq[1], 32767);
    EXPECT_EQ(read_sigmf_meta(r.meta_path).format, *parse_datatype("ci16_le"));

    o.datatype = "cu8";
    EXPECT_THROW(record(src, o), InputError);
}

TEST(Recorder, EmbedsTheSetup) {
    TempDir d;
    const hb::Setup setup = parse_session(R"([bench]
name = "invented 2 m receiver"
[plan]
wanted_hz = 145.5e6
if_hz = 10.7e6
if_bandwidth_hz = 15e3
)", d.file("s.toml").string());
    Script s;
    s.total = 1000;
    ScriptedSource src(s);
    RecorderOptions o;
    o.out = d.file("emb").string();
    o.setup = setup;
    const RecorderReport r = record(src, o);
    const SigmfMeta m = read_sigmf_meta(r.meta_path);
    ASSERT_TRUE(m.setup);
    hb::Setup back = setup_from_json(*m.setup, d.file("s.toml").string());
    EXPECT_EQ(back, setup);
    validate_schema(r.meta_path);
}

}  // namespace
}  // namespace hb

// ---- hetbench record (the command line) ----

namespace hb {
namespace {

// A raw cf32 file whose samples carry their index (I = index, Q = 0.25).
std::filesystem::path index_file(const TempDir& d, std::size_t n) {
    std::string b(n * 8, '\0');
    for (std::size_t i = 0; i < n; ++i) {
        const float iq[2] = {static_cast<float>(i), 0.25f};
        std::memcpy(b.data() + 8 * i, iq, 8);
    }
    const auto p = d.file("index.cf32");
    test::write_file(p, b);
    return p;
}

pid_t spawn_hetbench(const std::vector<std::string>& args, const std::filesystem::path& log) {
    const pid_t pid = ::fork();
    if (pid == 0) {
        const int fd = ::open(log.c_str(), O_WRONLY | O_CREAT | O_TRUNC, 0600);
        ::dup2(fd, 1);
        ::dup2(fd, 2);
        std::vector<std::string> all{test::hetbench_exe().string()};
        all.insert(all.end(), args.begin(), args.end());
        std::vector<char*> argv;
        for (auto& a : all) argv.push_back(a.data());
        argv.push_back(nullptr);
        ::execv(argv[0], argv.data());
        ::_exit(127);
    }
    return pid;
}

// Waits (up to 10 s) until the recording's metadata describes at least `n` samples.
bool wait_for_flush(const std::string& meta, std::uint64_t n) {
    for (int i = 0; i < 1000; ++i) {
        try {
            if (read_sigmf_meta(meta).sample_count.value_or(0) >= n) return true;
        } catch (const InputError&) {  // not written yet
        }
        std::this_thread::sleep_for(std::chrono::milliseconds(10));
    }
    return false;
}

TEST(RecordCommand, RecordsARecordingAndReportsIt) {
    TempDir d;
    const auto raw = index_file(d, 50000);
    const auto out = d.file("rec");
    auto r = test::run_hetbench({"record", "--source", raw.string(), "--input-format", "cf32_le", "--rate", "250k",
                                 "--frequency", "7.05M", "--duration", "0.1", "--out", out.string()});
    ASSERT_EQ(r.exit_code, 0) << r.out << r.err;
    EXPECT_NE(r.out.find("recorded 25000 samples"), std::string::npos) << r.out;
    EXPECT_NE(r.out.find("rec.sigmf-data"), std::string::npos) << r.out;
    EXPECT_NE(r.out.find("0 annotated"), std::string::npos) << r.out;
    const SigmfMeta m = read_sigmf_meta(out.string() + ".sigmf-meta");
    EXPECT_EQ(m.sample_rate_hz, 250e3);
    EXPECT_EQ(m.captures[0].frequency_hz, 7.05e6);
    EXPECT_EQ(m.sample_count, 25000u);
    validate_schema(out.string() + ".sigmf-meta");
    // Re-record the recording as ci16 (its .sigmf-data names the pair).
    r = test::run_hetbench({"record", "--source", out.string() + ".sigmf-data", "--format", "ci16_le", "--out",
                            d.file("again").string()});
    ASSERT_EQ(r.exit_code, 0) << r.out << r.err;
    EXPECT_EQ(read_sigmf_meta(d.file("again.sigmf-meta").string()).format, *parse_datatype("ci16_le"));
    EXPECT_EQ(std::filesystem::file_size(d.file("again.sigmf-data")), 25000u * 4);
}

TEST(RecordCommand, BadInputExitsTwoWithAClearMessage) {
    TempDir d;
    const auto raw = index_file(d, 100);
    auto r = test::run_hetbench({"record", "--source", raw.string(), "--rate", "1M", "--frequency", "0", "--out",
                                 d.file("x").string()});
    EXPECT_EQ(r.exit_code, 2);
    EXPECT_NE(r.err.find("index.cf32"), std::string::npos) << r.err;
    EXPECT_NE(r.err.find("format"), std::string::npos) << r.err;
    r = test::run_hetbench({"record", "--out", d.file("x").string()});
    EXPECT_EQ(r.exit_code, 2);
    EXPECT_NE(r.err.find("--source"), std::string::npos) << r.err;
    r = test::run_hetbench({"record", "--source", raw.string(), "--format", "cu8", "--out", d.file("x").string()});
    EXPECT_EQ(r.exit_code, 2);
    r = test::run_hetbench({"record", "--source", raw.string(), "--input-format", "cf32_le", "--rate", "fast",
                            "--frequency", "0", "--out", d.file("x").string()});
    EXPECT_EQ(r.exit_code, 2);
    EXPECT_NE(r.err.find("--rate"), std::string::npos) << r.err;
    r = test::run_hetbench({"record", "--session", d.file("none.toml").string(), "--out", d.file("x").string()});
    EXPECT_EQ(r.exit_code, 2);
    EXPECT_NE(r.err.find("none.toml"), std::string::npos) << r.err;
}

TEST(RecordCommand, RecordsTheSessionsFirstSourceAndEmbedsTheSession) {
    TempDir d;
    index_file(d, 10000);
    test::write_file(d.file("bench.toml"), R"([bench]
name = "invented 40 m bench"
[[source]]
kind = "recording"
path = "index.cf32"
format = "cf32_le"
sample_rate_hz = 48000
frequency_hz = "7.1M"
[plan]
wanted_hz = 7.1e6
if_hz = 455e3
if_bandwidth_hz = 3e3
)");
    const auto r = test::run_hetbench({"record", "--session", d.file("bench.toml").string(), "--out", d.file("s").string()});
    ASSERT_EQ(r.exit_code, 0) << r.out << r.err;
    const SigmfMeta m = read_sigmf_meta(d.file("s.sigmf-meta").string());
    EXPECT_EQ(m.sample_count, 10000u);
    ASSERT_TRUE(m.setup);
    EXPECT_EQ((*m.setup)["bench"]["name"], "invented 40 m bench");
    EXPECT_EQ(setup_from_json(*m.setup, "s.sigmf-meta").plan.if_hz, 455e3);
}

// A real kill (SIGKILL, no chance to close): the recording reads up to its last flush, sample-exact.
TEST(RecordCommand, KilledRecordingIsReadableUpToItsLastFlush) {
    TempDir d;
    const auto raw = index_file(d, 400000);
    const std::string out = d.file("killed").string();
    const pid_t pid = spawn_hetbench({"record", "--source", raw.string(), "--input-format", "cf32_le", "--rate", "200k",
                                      "--frequency", "1M", "--realtime", "--flush-interval", "0.05", "--duration", "30",
                                      "--out", out},
                                     d.file("log"));
    ASSERT_GT(pid, 0);
    const bool flushed = wait_for_flush(out + ".sigmf-meta", 20000);
    ::kill(pid, SIGKILL);
    int status = 0;
    ::waitpid(pid, &status, 0);
    ASSERT_TRUE(flushed) << test::read_file(d.file("log"));
    ASSERT_TRUE(WIFSIGNALED(status));
    const SigmfMeta m = read_sigmf_meta(out + ".sigmf-meta");
    ASSERT_TRUE(m.sample_count);
    SourceSpec spec;
    spec.kind = SourceKind::recording;
    spec.path = out + ".sigmf-data";
    const auto got = test::read_all(*open_recording(spec, hb::Setup{})).samples;
    ASSERT_EQ(got.size(), *m.sample_count);
    ASSERT_GE(got.size(), 20000u);
    ASSERT_LT(got.size(), 400000u);
    for (std::size_t i = 0; i < got.size(); ++i) ASSERT_EQ(got[i], cf32(static_cast<float>(i), 0.25f)) << i;
}

// Ctrl-C (SIGINT) ends the recording cleanly: exit 0, complete metadata.
TEST(RecordCommand, InterruptClosesTheRecording) {
    TempDir d;
    const auto raw = index_file(d, 400000);
    const std::string out = d.file("intr").string();
    const pid_t pid = spawn_hetbench({"record", "--source", raw.string(), "--input-format", "cf32_le", "--rate", "200k",
                                      "--frequency", "1M", "--realtime", "--flush-interval", "0.05", "--out", out},
                                     d.file("log"));
    ASSERT_GT(pid, 0);
    const bool flushed = wait_for_flush(out + ".sigmf-meta", 10000);
    ::kill(pid, SIGINT);
    int status = 0;
    ::waitpid(pid, &status, 0);
    ASSERT_TRUE(flushed);
    ASSERT_TRUE(WIFEXITED(status)) << test::read_file(d.file("log"));
    EXPECT_EQ(WEXITSTATUS(status), 0) << test::read_file(d.file("log"));
    EXPECT_NE(test::read_file(d.file("log")).find("stopped by signal"), std::string::npos);
    const SigmfMeta m = read_sigmf_meta(out + ".sigmf-meta");
    EXPECT_EQ(m.sample_count.value_or(0) * 8, std::filesystem::file_size(out + ".sigmf-data"));
}

}  // namespace
}  // namespace hb
