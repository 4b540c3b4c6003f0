#include "devices/recorder.hpp"

#include <fcntl.h>
#include <unistd.h>

#include <cerrno>
#include <chrono>
#include <cmath>
#include <condition_variable>
#include <cstring>
#include <deque>
#include <mutex>
#include <thread>

#include "devices/recording.hpp"
#include "devices/setup_json.hpp"
#include "dsp/errors.hpp"
#include "dsp/units.hpp"

namespace hb {
namespace {

class FileSink final : public DataSink {
public:
    explicit FileSink(const std::string& path) : path_(path) {
        fd_ = ::open(path.c_str(), O_WRONLY | O_CREAT | O_TRUNC | O_CLOEXEC, 0644);
        if (fd_ < 0) throw InputError(path + ": cannot create the data file: " + std::strerror(errno));
    }
    ~FileSink() override { ::close(fd_); }
    FileSink(const FileSink&) = delete;
    FileSink& operator=(const FileSink&) = delete;

    bool write(const std::byte* data, std::size_t n, std::string& error) override {
        std::size_t done = 0;
        while (done < n) {
            const ssize_t k = ::write(fd_, data + done, n - done);
            if (k < 0 && errno == EINTR) continue;
            if (k <= 0) {
                error = path_ + ": write failed: " + std::strerror(k < 0 ? errno : ENOSPC);
                return false;
            }
            done += static_cast<std::size_t>(k);
        }
        return true;
    }
    bool flush(std::string& error) override {
        if (::fdatasync(fd_) != 0 && errno != EINVAL && errno != EROFS) {  // EINVAL: not a file that syncs
            error = path_ + ": flush failed: " + std::strerror(errno);
            return false;
        }
        return true;
    }
    void truncate(std::uint64_t bytes) override {
        if (::ftruncate(fd_, static_cast<off_t>(bytes)) == 0) ::lseek(fd_, static_cast<off_t>(bytes), SEEK_SET);
    }

private:
    std::string path_;
    int fd_ = -1;
};

struct Block {
    std::vector<cf32> samples;
    std::size_t count = 0;
};

// The bounded queue between the reader and the writer: indices of preallocated blocks.
struct BlockQueue {
    std::mutex m;
    std::condition_variable to_writer, to_reader;
    std::deque<std::size_t> full;  // sized once: never grows past the block count
    std::vector<std::size_t> free;
    bool done = false;
};

std::string strip_sigmf_suffix(std::string s) {
    for (std::string_view suf : {".sigmf-meta", ".sigmf-data"})
        if (s.size() > suf.size() && s.compare(s.size() - suf.size(), suf.size(), suf) == 0)
            return s.substr(0, s.size() - suf.size());
    return s;
}

}  // namespace

std::unique_ptr<DataSink> open_file_sink(const std::string& path) { return std::make_unique<FileSink>(path); }

RecorderReport record(SampleSource& source, const RecorderOptions& opt, const std::atomic<bool>* stop,
                      std::unique_ptr<DataSink> sink) {
    using clock = std::chrono::steady_clock;
    const SampleFormat format = require_datatype(opt.datatype, "recorder format");
    if (!can_encode(format))
        throw InputError("recorder format: got \"" + opt.datatype + "\", expected cf32_le or ci16_le");
    if (opt.out.empty()) throw InputError("recorder: no output name given");
    if (!std::isfinite(opt.duration_s) || opt.duration_s < 0)
        throw InputError("recorder duration: got " + format_number(opt.duration_s) + " s, expected 0 or more seconds");
    if (opt.block_samples == 0 || opt.queue_blocks == 0)
        throw InputError("recorder: block_samples and queue_blocks must be at least 1");
    if (!std::isfinite(opt.reopen_for_s) || opt.reopen_for_s < 0 || !(opt.reopen_first_delay_s > 0) ||
        !(opt.reopen_max_delay_s >= opt.reopen_first_delay_s) || !std::isfinite(opt.stall_timeout_s) ||
        opt.stall_timeout_s < 0)
        throw InputError("recorder: reopen_for_s and stall_timeout_s must be 0 or more, the reopen delays above 0");
    if (!(opt.flush_interval_s > 0))
        throw InputError("recorder flush interval: got " + format_number(opt.flush_interval_s) + " s, expected above 0");

    const StreamInfo info0 = source.info();  // a copy: after a reopen `source` is gone
    SampleSource* src = &source;             // the source being read (a new one after each reopen)
    bool src_is_original = true;
    const double rate = info0.sample_rate_hz;
    if (!(rate > 0) || !std::isfinite(rate))
        throw InputError("recorder: the source reports a sample rate of " + format_number(rate) + " Hz");

    RecorderReport rep;
    const std::string base = strip_sigmf_suffix(opt.out);
    rep.meta_path = base + ".sigmf-meta";
    rep.data_path = base + ".sigmf-data";
    const std::uint64_t target =
        opt.duration_s > 0 ? static_cast<std::uint64_t>(std::llround(opt.duration_s * rate)) : UINT64_MAX;

    // The metadata the reader thread extends (captures at frequency changes and after gaps, gap
    // annotations) and the writer thread publishes; guarded by meta_m.
    std::mutex meta_m;
    SigmfMeta meta;
    meta.format = format;
    meta.sample_rate_hz = rate;
    meta.hw = info0.hardware;
    meta.description = opt.description.empty() ? info0.description : opt.description;
    meta.recorder = "hetbench";
    if (opt.setup) meta.setup = setup_to_json(*opt.setup);
    const auto wall0 = std::chrono::system_clock::now();
    auto datetime_at = [&](std::uint64_t stream_index) {
        return iso8601_utc(wall0 + std::chrono::duration_cast<std::chrono::system_clock::duration>(
                                       std::chrono::duration<double>(static_cast<double>(stream_index) / rate)));
    };
    meta.captures.push_back({0, info0.center_hz, std::nullopt, datetime_at(0), 0});
    meta.sample_count = 0;

    if (!sink) sink = open_file_sink(rep.data_path);
    write_sigmf_meta(meta, rep.meta_path);  // valid before the first sample

    const std::size_t nblocks = opt.queue_blocks + 1;  // +1: the one the reader is filling
    std::vector<Block> blocks(nblocks);
    for (Block& b : blocks) b.samples.resize(opt.block_samples);
    Block scratch;  // where a live source is read into when the queue is full (then dropped)
    scratch.samples.resize(opt.block_samples);
    BlockQueue q;
    for (std::size_t i = 0; i < nblocks; ++i) q.free.push_back(i);

    // Writer state, published to the reader through atomics.
    std::atomic<bool> writer_failed{false};
    std::string writer_error;
    std::vector<std::string> writer_warnings;
    std::atomic<std::uint64_t> written{0};
    std::uint64_t clipped = 0;

    // Publishes the metadata for the samples already durable: captures that start at or after the end of
    // the data are left out (a reader would see them as truncation), gaps up to the end are kept.
    auto publish = [&](std::uint64_t durable) -> bool {
        SigmfMeta snap;
        {
            std::lock_guard lk(meta_m);
            snap = meta;
        }
        std::erase_if(snap.captures, [&](const SigmfCapture& c) { return c.sample_start != 0 && c.sample_start >= durable; });
        std::erase_if(snap.annotations, [&](const SigmfAnnotation& a) { return a.sample_start > durable; });
        snap.sample_count = durable;
        try {
            write_sigmf_meta(snap, rep.meta_path);
            return true;
        } catch (const InputError& e) {
            writer_warnings.push_back(e.what());
            return false;
        }
    };

    // Set under the queue's lock so a reader waiting for a free block cannot miss it.
    auto fail = [&](const std::string& err) {
        {
            std::lock_guard lk(q.m);
            writer_error = err;
            writer_failed.store(true);
        }
        q.to_reader.notify_all();
    };

    std::thread writer([&] {
        std::vector<std::byte> bytes(opt.block_samples * format.sample_bytes());
        const auto interval = std::chrono::duration_cast<clock::duration>(std::chrono::duration<double>(opt.flush_interval_s));
        auto next_flush = clock::now() + interval;
        std::uint64_t done_samples = 0;
        for (;;) {
            std::size_t idx = SIZE_MAX;
            bool finished = false;
            {
                std::unique_lock lk(q.m);
                q.to_writer.wait_until(lk, next_flush, [&] { return !q.full.empty() || q.done; });
                if (!q.full.empty()) {
                    idx = q.full.front();
                    q.full.pop_front();
                } else if (q.done) {
                    finished = true;
                }
            }
            if (idx != SIZE_MAX) {
                Block& b = blocks[idx];
                clipped += encode_samples(format, b.samples.data(), b.count, bytes.data());
                std::string err;
                const bool ok = sink->write(bytes.data(), b.count * format.sample_bytes(), err);
                if (ok) done_samples += b.count;
                {
                    std::lock_guard lk(q.m);
                    q.free.push_back(idx);
                }
                q.to_reader.notify_one();
                if (!ok) {
                    sink->truncate(done_samples * format.sample_bytes());
                    written.store(done_samples);
                    fail(err);
                    return;
                }
                written.store(done_samples);
            }
            if (finished || clock::now() >= next_flush) {
                std::string err;
                if (!sink->flush(err)) {
                    fail(err);
                    return;
                }
                publish(done_samples);
                next_flush = clock::now() + interval;
            }
            if (finished) return;
        }
    });

    // ---- The reader (this thread) ----
    std::uint64_t enqueued = 0;             // dataset index of the next sample handed to the writer
    std::uint64_t produced = 0;             // stream index of the next sample from the source
    std::uint64_t gap_lost = 0, gap_overflow = 0, gap_dropped = 0;  // the gap being accumulated
    std::uint64_t gap_earlier = 0;  // earlier gaps folded in when the disk failed
    bool gap_open = false, gap_unknown = false, stream_index_known = true;
    std::string gap_note;  // why the gap has no count (a reopened source), for its comment
    double center = info0.center_hz;

    auto close_gap = [&] {  // called before the first sample after a gap is enqueued, and at the end
        if (!gap_open) return;
        SigmfAnnotation a;
        a.sample_start = enqueued;
        a.sample_count = 0;
        a.label = "gap";
        a.generator = "hetbench";
        std::string what;
        if (gap_overflow) what += std::to_string(gap_overflow) + " lost in the source (overflow)";
        if (gap_dropped) what += std::string(what.empty() ? "" : ", ") + std::to_string(gap_dropped) +
                                 (writer_failed.load() ? " read but not written (the disk failed)"
                                                       : " dropped (the writer fell behind)");
        if (gap_earlier) what += std::string(what.empty() ? "" : ", ") + std::to_string(gap_earlier) +
                                 " in earlier gaps after the last written sample";
        if (gap_unknown)
            a.comment = "samples lost before this sample: an unknown number (" +
                        (gap_note.empty() ? std::string("overflow without a count") : gap_note) + ")" +
                        (what.empty() ? std::string() : "; counted: " + what);
        else
            a.comment = std::to_string(gap_lost) + " samples lost before this sample (" + what + ")";
        if (!gap_unknown) a.lost_samples = gap_lost;
        std::lock_guard lk(meta_m);
        meta.annotations.push_back(std::move(a));
        ++rep.gaps;
        if (gap_unknown) ++rep.unknown_gaps;
    };
    // The samples about to be enqueued continue the stream after a gap or at a new frequency: a new capture.
    auto begin_capture = [&](double freq) {
        SigmfCapture c;
        c.sample_start = enqueued;
        c.frequency_hz = freq;
        if (stream_index_known) {
            c.global_index = produced;
            c.datetime = datetime_at(produced);
        }
        std::lock_guard lk(meta_m);
        if (meta.captures.back().sample_start == enqueued) meta.captures.back() = c;  // nothing written since
        else meta.captures.push_back(c);
    };

    auto handle = [&](Block& b, bool queued) {
        // Called with b.count samples just read; `queued` false means they go nowhere (queue full).
        const double f = src->info().center_hz;
        if (!queued) {
            gap_open = true;
            gap_lost += b.count;
            gap_dropped += b.count;
            rep.dropped += b.count;
            produced += b.count;
            return;
        }
        const bool after_gap = gap_open;
        close_gap();
        if (after_gap || f != center) begin_capture(f);
        center = f;
        gap_open = gap_unknown = false;
        gap_lost = gap_overflow = gap_dropped = 0;
        gap_note.clear();
        enqueued += b.count;
        produced += b.count;
    };

    std::uint64_t own_non_finite = 0;  // replaced here (a source that broke its contract)
    const std::uint64_t source_non_finite0 = source.counters().non_finite;
    std::uint64_t source_non_finite = 0;  // replaced by the sources before this one (after a reopen)
    const auto tell = [&](const std::string& what) {
        if (opt.on_event) opt.on_event(what);
    };
    // A failed live source: open it again with backoff. True when a new source is being read; the samples
    // missed meanwhile are an unknown-count gap, and stream indices are unknown from here on.
    const auto recover = [&](const std::string& why) -> bool {
        if (!opt.reopen || !(opt.reopen_for_s > 0) || !info0.live) return false;
        const auto t0 = clock::now();
        const auto elapsed = [&] { return std::chrono::duration<double>(clock::now() - t0).count(); };
        double delay = opt.reopen_first_delay_s;
        tell("the source failed: " + why + "; reopening it (for up to " + format_number(opt.reopen_for_s) + " s)");
        std::string last_error = why;
        for (int attempt = 1;; ++attempt) {
            // Wait out the delay in short steps so a stop request or a failed disk is seen at once.
            const auto until =
                clock::now() + std::chrono::duration_cast<clock::duration>(std::chrono::duration<double>(delay));
            while (clock::now() < until) {
                if ((stop && stop->load()) || writer_failed.load()) return false;
                std::this_thread::sleep_for(
                    std::min<clock::duration>(std::chrono::milliseconds(20), until - clock::now()));
            }
            try {
                if (src) source_non_finite += src->counters().non_finite - (src_is_original ? source_non_finite0 : 0);
                src = nullptr;  // reopen() closes it
                src_is_original = false;
                SampleSource& fresh = opt.reopen();
                src = &fresh;
                if (fresh.info().sample_rate_hz != rate)
                    throw InputError("the reopened source runs at " + format_number(fresh.info().sample_rate_hz) +
                                     " Hz, not the recording's " + format_number(rate) + " Hz");
                const double out_s = elapsed();
                ++rep.reopens;
                rep.outage_s += out_s;
                gap_open = gap_unknown = true;
                stream_index_known = false;
                gap_note = "the source failed (" + why + ") and was reopened after " +
                           format_number(std::round(out_s * 1000) / 1000) + " s, about " +
                           std::to_string(std::llround(out_s * rate)) + " samples at the stream rate";
                tell("the source is back after " + format_number(std::round(out_s * 10) / 10) + " s (" +
                     std::to_string(attempt) + (attempt == 1 ? " attempt" : " attempts") +
                     "); recording goes on after an annotated gap");
                return true;
            } catch (const std::exception& e) {
                last_error = e.what();
            }
            if (elapsed() + delay >= opt.reopen_for_s) {
                rep.outage_s += elapsed();
                tell("the source did not come back within " + format_number(opt.reopen_for_s) + " s: " + last_error);
                return false;
            }
            delay = std::min(delay * 2, opt.reopen_max_delay_s);
            tell("reopen attempt " + std::to_string(attempt) + " failed: " + last_error + "; next in " +
                 format_number(delay) + " s");
        }
    };

    ReadResult r;
    std::size_t holding = SIZE_MAX;  // the free block the reader is filling
    auto last_sample = clock::now();  // for the stall timeout
    try {
    while (produced < target) {
        if (stop && stop->load()) break;
        if (writer_failed.load()) break;
        if (holding == SIZE_MAX) {
            std::unique_lock lk(q.m);
            if (q.free.empty() && !info0.live)
                q.to_reader.wait(lk, [&] { return !q.free.empty() || writer_failed.load(); });
            if (!q.free.empty()) {
                holding = q.free.back();
                q.free.pop_back();
            }
        }
        if (writer_failed.load()) break;
        Block& b = holding == SIZE_MAX ? scratch : blocks[holding];
        const std::size_t want = static_cast<std::size_t>(std::min<std::uint64_t>(opt.block_samples, target - produced));
        try {
            r = src->read(std::span<cf32>(b.samples.data(), want), opt.read_timeout_s);
        } catch (const std::exception& e) {  // a source must not throw from read(); if one does, it has failed
            r = ReadResult{ReadStatus::error, 0, 0, e.what()};
        }
        if (r.status == ReadStatus::timeout) {
            ++rep.timeouts;
            const double idle = std::chrono::duration<double>(clock::now() - last_sample).count();
            if (!(info0.live && opt.stall_timeout_s > 0 && idle >= opt.stall_timeout_s)) continue;
            r = ReadResult{ReadStatus::error, 0, 0,
                           "no samples for " + format_number(std::round(idle * 10) / 10) + " s"};
        }
        if (r.status == ReadStatus::end) break;
        if (r.status == ReadStatus::error) {
            if (recover(r.message)) {
                last_sample = clock::now();
                continue;
            }
            rep.complete = false;
            rep.message = "the source failed: " + r.message;
            if (!src) rep.message += " (and could not be reopened)";
            break;
        }
        if (r.count > 0) last_sample = clock::now();
        if (r.status == ReadStatus::overflow) {
            ++rep.overflows;
            gap_open = true;
            if (r.lost == 0) {
                gap_unknown = true;
                stream_index_known = false;  // from here on the stream index of a sample is not known
            }
            gap_lost += r.lost;
            gap_overflow += r.lost;
            rep.overflow_lost += r.lost;
            produced += r.lost;
        }
        if (r.count == 0) continue;
        b.count = std::min(r.count, want);
        // Sources replace NaN/Inf themselves (SampleSource's contract); a sample that still is not finite is
        // replaced here, so it can reach neither the file nor a measurement made from it.
        for (std::size_t i = 0; i < b.count; ++i) {
            cf32& z = b.samples[i];
            if (!std::isfinite(z.real()) || !std::isfinite(z.imag())) {
                z = {0.0f, 0.0f};
                ++own_non_finite;
            }
        }
        if (holding == SIZE_MAX) {
            handle(b, false);
            continue;
        }
        handle(b, true);
        {
            std::lock_guard lk(q.m);
            q.full.push_back(holding);
        }
        holding = SIZE_MAX;
        q.to_writer.notify_one();
    }
    } catch (const std::exception& e) {  // a failing reopen() or source accessor: stop cleanly
        rep.complete = false;
        rep.message = std::string("the source failed: ") + e.what();
    }
    if (holding != SIZE_MAX) {
        std::lock_guard lk(q.m);
        q.free.push_back(holding);
    }
    {
        std::lock_guard lk(q.m);
        q.done = true;
    }
    q.to_writer.notify_one();
    writer.join();

    // What the writer could not write (the disk failed) counts as dropped, annotated as a gap at the end.
    rep.written = written.load();
    if (writer_failed.load()) {
        rep.complete = false;
        rep.message = "the recording stopped: " + writer_error;
        const std::uint64_t unwritten = enqueued - rep.written;
        enqueued = rep.written;
        if (unwritten) {
            gap_open = true;
            gap_lost += unwritten;
            gap_dropped += unwritten;
            rep.dropped += unwritten;
        }
        // Gaps already annotated among the unwritten samples now lie beyond the data: fold them into
        // the final gap so their counts stay accounted for.
        std::lock_guard lk(meta_m);
        std::erase_if(meta.annotations, [&](const SigmfAnnotation& a) {
            if (a.label != "gap" || a.sample_start <= rep.written) return false;
            gap_open = true;
            if (a.lost_samples) gap_lost += *a.lost_samples, gap_earlier += *a.lost_samples;
            else gap_unknown = true;
            --rep.gaps;
            if (!a.lost_samples) --rep.unknown_gaps;
            return true;
        });
    }
    close_gap();
    rep.produced = produced;
    rep.clipped = clipped;
    rep.non_finite = own_non_finite + source_non_finite +
                     (src ? src->counters().non_finite - (src_is_original ? source_non_finite0 : 0) : 0);
    if (rep.non_finite)
        rep.warnings.push_back(std::to_string(rep.non_finite) +
                               " NaN or infinite samples from the source were replaced by 0 (not recorded as such)");
    if (clipped)
        rep.warnings.push_back(std::to_string(clipped) + " sample components exceeded full scale and were clipped in " +
                               opt.datatype);
    rep.warnings.insert(rep.warnings.end(), writer_warnings.begin(), writer_warnings.end());
    {
        std::lock_guard lk(meta_m);
        std::erase_if(meta.captures, [&](const SigmfCapture& c) { return c.sample_start != 0 && c.sample_start >= rep.written; });
        rep.captures = meta.captures.size();
    }
    // The final metadata: everything, for exactly the samples in the data file.
    meta.sample_count = rep.written;
    std::string err;
    if (!writer_failed.load() && !sink->flush(err)) {
        rep.complete = false;
        rep.message = "the recording stopped: " + err;
    }
    try {
        write_sigmf_meta(meta, rep.meta_path);
    } catch (const InputError& e) {
        rep.complete = false;
        rep.message += (rep.message.empty() ? "" : "; ") + std::string(e.what());
    }
    return rep;
}

}  // namespace hb
