#include "pipeline/pipeline.hpp"

#include <algorithm>
#include <chrono>
#include <cmath>
#include <mutex>
#include <thread>

#include "devices/filter_setup.hpp"
#include "devices/recording.hpp"
#include "dsp/errors.hpp"
#include "dsp/units.hpp"
#include "pipeline/ring.hpp"

namespace hb {
namespace {

using Clock = std::chrono::steady_clock;
constexpr double kReadTimeoutS = 0.25;
constexpr auto kIdle = std::chrono::microseconds(200);  // a waiting thread's poll period

double seconds_since(Clock::time_point t) {
    return std::chrono::duration<double>(Clock::now() - t).count();
}

// One slot of a source ring: a block of samples as read, with what happened before it.
struct Block {
    std::vector<cf32> samples;
    std::size_t count = 0;
    std::uint64_t sequence = 0;     // per source, from 0
    std::uint64_t lost_before = 0;  // samples the source reported lost just before this block
    bool gap_unknown = false;       // samples were lost before this block, how many is not known (a reopen)
};

Block make_block(std::size_t n) {
    Block b;
    b.samples.assign(n, cf32{});
    return b;
}

// The recorder's view of the primary source: the reader thread copies every block it reads into this ring, the
// recorder thread reads it as a live source (so a slow disk drops blocks instead of stalling the reader, and the
// drops become gap annotations).
class TapSource final : public SampleSource {
  public:
    TapSource(const StreamInfo& info, std::size_t block) : info_(info), ring_(64, make_block(block)) {
        info_.live = true;
    }
    const StreamInfo& info() const override { return info_; }
    const SourceCounters& counters() const override { return counters_; }

    // Reader thread.
    void push(const cf32* x, std::size_t n, std::uint64_t lost, bool unknown) {
        pending_lost_ += lost;
        pending_unknown_ = pending_unknown_ || unknown;
        Block* b = ring_.claim();
        if (!b) {  // the recorder fell behind: these samples are lost to it, and it is told
            pending_lost_ += n;
            return;
        }
        std::copy(x, x + n, b->samples.begin());
        b->count = n;
        b->lost_before = pending_lost_;
        b->gap_unknown = pending_unknown_;
        pending_lost_ = 0;
        pending_unknown_ = false;
        ring_.publish();
    }
    void close() { closed_.store(true); }

    // Recorder thread.
    ReadResult read(std::span<cf32> out, double timeout_s) override {
        const auto t0 = Clock::now();
        for (;;) {
            if (Block* b = ring_.peek()) {
                ReadResult r;
                if (offset_ == 0 && (b->lost_before > 0 || b->gap_unknown)) {
                    r.status = ReadStatus::overflow;
                    r.lost = b->lost_before;
                    ++counters_.overflows;
                    counters_.lost_samples += b->lost_before;
                }
                const std::size_t n = std::min(out.size(), b->count - offset_);
                std::copy(b->samples.begin() + static_cast<std::ptrdiff_t>(offset_),
                          b->samples.begin() + static_cast<std::ptrdiff_t>(offset_ + n), out.begin());
                offset_ += n;
                if (offset_ == b->count) {
                    offset_ = 0;
                    ring_.release();
                }
                r.count = n;
                counters_.samples += n;
                return r;
            }
            if (closed_.load()) return {ReadStatus::end, 0, 0, ""};
            if (seconds_since(t0) > timeout_s) {
                ++counters_.timeouts;
                return {ReadStatus::timeout, 0, 0, "no samples from the pipeline"};
            }
            std::this_thread::sleep_for(kIdle);
        }
    }

  private:
    StreamInfo info_;
    SourceCounters counters_;
    SpscRing<Block> ring_;
    std::size_t offset_ = 0;
    std::uint64_t pending_lost_ = 0;
    bool pending_unknown_ = false;
    std::atomic<bool> closed_{false};
};

struct Lane {
    SourceSpec spec;
    std::unique_ptr<SampleSource> source;
    StreamInfo info;  // as first opened (the chain was built for it)
    std::unique_ptr<SpscRing<Block>> ring;
    std::thread reader;
    std::atomic<bool> ended{false};
    std::atomic<std::uint64_t> samples_in{0}, overflows{0}, lost{0}, timeouts{0}, dropped_blocks{0}, dropped_samples{0},
        reopens{0};
    std::mutex state_mutex;
    std::string state = "running";
    std::string error;
    // DSP side, secondary sources: samples popped from the ring and not yet fed.
    std::vector<cf32> pending;
    std::size_t pending_head = 0, pending_tail = 0;

    void set_state(std::string s) {
        std::lock_guard lock(state_mutex);
        state = std::move(s);
    }
};

std::unique_ptr<SampleSource> open_lane_source(const SourceSpec& spec, const Setup& setup, const PipelineOptions& opt) {
    if (spec.kind == SourceKind::recording)
        return open_recording(spec, setup, RecordingOptions{opt.live && opt.pace_recordings, 65536});
    return open_source(spec, setup);
}

}  // namespace

struct Pipeline::Impl {
    PipelineOptions opt;
    mutable std::mutex setup_mutex;
    Setup setup;  // what the DSP runs (guarded by setup_mutex for readers on other threads)
    std::optional<Setup> pending_setup;
    std::atomic<bool> has_pending{false};
    std::atomic<int> pending_probe{-1};
    std::atomic<std::uint64_t> setup_version{0};

    std::vector<std::unique_ptr<Lane>> lanes;
    SignalChain chain;
    std::thread dsp;
    std::atomic<bool> stopping{false};
    std::atomic<bool> done{false};

    // Status kept by the DSP thread.
    std::atomic<std::uint64_t> processed{0}, frames{0}, non_finite{0};
    mutable std::mutex lanes_mutex;  // other threads read lanes (status); only the DSP thread replaces them
    std::atomic<double> load{0.0}, analysis_ms{0.0};
    mutable std::mutex status_mutex;
    std::string dsp_error;
    bool failed = false;

    // Frames: the DSP fills `back`, swaps it with `front` under a try-lock.
    std::mutex frame_mutex;
    Frame front, back;
    std::uint64_t sequence = 0;
    ChainAnalysis last_analysis;
    bool have_analysis = false;
    std::uint64_t analysis_sequence = 0, analysis_version = 0;

    // Recording tap.
    std::mutex tap_mutex;
    std::shared_ptr<TapSource> tap;
    std::thread recorder;
    std::atomic<bool> recorder_stop{false};
    std::optional<RecorderReport> recorder_report;

    // ---- sources -------------------------------------------------------------------------------------------

    std::vector<std::unique_ptr<Lane>> open_lanes(const Setup& s) {
        if (s.sources.empty()) throw InputError("source: the session has no [[source]] to run");
        std::vector<std::unique_ptr<Lane>> out;
        for (std::size_t k = 0; k < s.sources.size(); ++k) {
            auto l = std::make_unique<Lane>();
            l->spec = s.sources[k];
            try {
                l->source = open_lane_source(l->spec, s, opt);
            } catch (const InputError& e) {
                throw InputError("source[" + std::to_string(k) + "]: " + e.what());
            }
            l->info = l->source->info();
            // At least ring_seconds of stream, so a plan check (tens of ms on a 65536-point spectrum) fits.
            const auto by_time = static_cast<std::size_t>(
                std::ceil(opt.ring_seconds * l->info.sample_rate_hz / static_cast<double>(opt.block_samples)));
            l->ring = std::make_unique<SpscRing<Block>>(std::max(opt.ring_blocks, std::min<std::size_t>(by_time, 4096)),
                                                        make_block(opt.block_samples));
            out.push_back(std::move(l));
        }
        return out;
    }

    static SignalChain build_chain(const Setup& s, const std::vector<std::unique_ptr<Lane>>& ls,
                                   const PipelineOptions& o) {
        std::vector<RfInput> in;
        for (const auto& l : ls) in.push_back({l->info.center_hz, l->info.sample_rate_hz, l->info.level_offset_db});
        SignalChainOptions co;
        co.probe = o.probe;
        // A batch run writes reports that must be identical run to run; live frames may take the faster plans.
        co.fft_effort = o.live ? Fft::Effort::measure : Fft::Effort::estimate;
        return SignalChain::make(s, in, co, filter_loader(s));
    }

    void start_readers() {
        for (std::size_t k = 0; k < lanes.size(); ++k) {
            Lane* l = lanes[k].get();
            l->reader = std::thread([this, l, k] { read_loop(*l, k == 0); });
        }
    }

    void stop_readers(std::vector<std::unique_ptr<Lane>>& ls) {
        for (auto& l : ls) l->ended.store(true);  // the readers check it between reads
        for (auto& l : ls)
            if (l->reader.joinable()) l->reader.join();
    }

    // The reader thread of one source.
    void read_loop(Lane& l, bool primary) {
        std::vector<cf32> scratch(opt.block_samples);
        std::uint64_t seq = 0, lost_pending = 0;
        bool unknown_pending = false;
        while (!l.ended.load() && !stopping.load()) {
            Block* b = l.ring->claim();
            if (!b && !opt.live) {  // batch: wait for the DSP
                std::this_thread::sleep_for(kIdle);
                continue;
            }
            cf32* dst = b ? b->samples.data() : scratch.data();
            const ReadResult r = l.source->read(std::span<cf32>(dst, opt.block_samples), kReadTimeoutS);
            switch (r.status) {
                case ReadStatus::timeout:
                    ++l.timeouts;
                    continue;
                case ReadStatus::overflow:
                    ++l.overflows;
                    l.lost += r.lost;
                    lost_pending += r.lost;
                    if (r.lost == 0) unknown_pending = true;
                    break;
                case ReadStatus::end:
                    l.set_state("ended");
                    l.ended.store(true);
                    return;
                case ReadStatus::error:
                    if (!reopen(l, r.message)) return;
                    unknown_pending = true;
                    continue;
                case ReadStatus::ok:
                    break;
            }
            if (r.count == 0) continue;
            l.samples_in += r.count;
            if (primary) {
                std::lock_guard lock(tap_mutex);
                if (tap) tap->push(dst, r.count, r.status == ReadStatus::overflow ? r.lost : 0, unknown_pending);
            }
            if (!b) {  // live and the DSP is behind: dropped, counted, never waited for
                ++l.dropped_blocks;
                l.dropped_samples += r.count;
                lost_pending += r.count;
                continue;
            }
            b->count = r.count;
            b->sequence = seq++;
            b->lost_before = lost_pending;
            b->gap_unknown = unknown_pending;
            lost_pending = 0;
            unknown_pending = false;
            l.ring->publish();
        }
    }

    // After a stream error: devices are reopened with backoff; anything else ends. Returns false when the lane
    // has ended.
    bool reopen(Lane& l, const std::string& why) {
        if (!opt.reopen || !l.info.live) {
            {
                std::lock_guard lock(l.state_mutex);
                l.state = "ended: " + why;
                l.error = why;
            }
            l.ended.store(true);
            return false;
        }
        double backoff = 0.25;
        std::string last = why;
        while (!l.ended.load() && !stopping.load()) {
            l.set_state("reopening in " + format_number(backoff) + " s: " + last);
            const auto until = Clock::now() + std::chrono::duration<double>(backoff);
            while (Clock::now() < until && !l.ended.load() && !stopping.load())
                std::this_thread::sleep_for(std::chrono::milliseconds(5));
            if (l.ended.load() || stopping.load()) return false;
            try {
                l.source.reset();  // close before opening the same device again
                l.source = open_lane_source(l.spec, current_setup(), opt);
                ++l.reopens;
                l.set_state("running (reopened after: " + why + ")");
                return true;
            } catch (const std::exception& e) {
                last = e.what();
                backoff = std::min(2.0 * backoff, opt.reopen_max_backoff_s);
            }
        }
        return false;
    }

    Setup current_setup() const {
        std::lock_guard lock(setup_mutex);
        return setup;
    }

    // ---- DSP -----------------------------------------------------------------------------------------------

    // Gathers `need` samples of secondary lane l into its pending buffer (batch: waits; live: what is there, the
    // rest zeros so the primary never waits for a secondary). Returns the span to feed.
    std::span<const cf32> secondary(Lane& l, std::size_t need) {
        if (l.pending.size() < need + opt.block_samples) l.pending.resize(need + opt.block_samples);  // first use only
        while (l.pending_tail - l.pending_head < need) {
            Block* b = l.ring->peek();
            if (!b) {
                if (l.ended.load() && !l.ring->peek()) break;
                if (opt.live) break;
                if (stopping.load()) break;
                std::this_thread::sleep_for(kIdle);
                continue;
            }
            if (l.pending_head > 0) {
                std::copy(l.pending.begin() + static_cast<std::ptrdiff_t>(l.pending_head),
                          l.pending.begin() + static_cast<std::ptrdiff_t>(l.pending_tail), l.pending.begin());
                l.pending_tail -= l.pending_head;
                l.pending_head = 0;
            }
            if (l.pending_tail + b->count > l.pending.size()) l.pending.resize(l.pending_tail + b->count);
            std::copy(b->samples.begin(), b->samples.begin() + static_cast<std::ptrdiff_t>(b->count),
                      l.pending.begin() + static_cast<std::ptrdiff_t>(l.pending_tail));
            l.pending_tail += b->count;
            l.ring->release();
        }
        const std::size_t have = l.pending_tail - l.pending_head;
        if (have < need) {  // ended or behind: silence for the missing part
            if (l.pending_head + need > l.pending.size()) l.pending.resize(l.pending_head + need);
            std::fill(l.pending.begin() + static_cast<std::ptrdiff_t>(l.pending_tail),
                      l.pending.begin() + static_cast<std::ptrdiff_t>(l.pending_head + need), cf32{});
            l.pending_tail = l.pending_head + need;
        }
        const std::span<const cf32> s(l.pending.data() + l.pending_head, need);
        l.pending_head += need;
        if (l.pending_head == l.pending_tail) l.pending_head = l.pending_tail = 0;
        return s;
    }

    void apply_pending() {
        if (const int p = pending_probe.exchange(-1); p >= 0) chain.set_probe(static_cast<Probe>(p));
        if (!has_pending.exchange(false)) return;
        Setup next;
        {
            std::lock_guard lock(setup_mutex);
            if (!pending_setup) return;
            next = std::move(*pending_setup);
            pending_setup.reset();
        }
        try {
            if (next.sources == setup.sources) {
                chain.update(next);
            } else {
                // New sources: open them first, so a failure leaves the old bench running.
                auto fresh = open_lanes(next);
                SignalChain c = build_chain(next, fresh, opt);
                c.set_probe(chain.probe());
                stop_readers(lanes);
                {
                    std::lock_guard lock(lanes_mutex);
                    lanes = std::move(fresh);
                }
                chain = std::move(c);
                start_readers();
            }
            {
                std::lock_guard lock(setup_mutex);
                setup = std::move(next);
            }
            ++setup_version;
            std::lock_guard lock(status_mutex);
            dsp_error.clear();
        } catch (const std::exception& e) {
            std::lock_guard lock(status_mutex);
            dsp_error = std::string("the new settings were not applied: ") + e.what();
        }
    }

    void publish(bool with_analysis) {
        Frame& f = back;
        f.sequence = ++sequence;
        f.setup_version = setup_version.load();
        f.probe = chain.probe();
        f.spectrum = chain.probe_spectrum();
        const std::span<const cf32> p = chain.probe_samples();
        const std::size_t n = std::min(p.size(), opt.scope_samples);
        f.scope.assign(p.end() - static_cast<std::ptrdiff_t>(n), p.end());
        f.scope_rate_hz = chain.probe_window(f.probe).sample_rate_hz;
        if (with_analysis) {
            const auto t0 = Clock::now();
            last_analysis = chain.analyze();
            analysis_ms.store(1e3 * seconds_since(t0));
            have_analysis = true;
            ++analysis_sequence;
            analysis_version = setup_version.load();
        }
        f.has_analysis = have_analysis;
        f.analysis_sequence = analysis_sequence;
        f.analysis_setup_version = analysis_version;
        if (have_analysis) f.analysis = last_analysis;
        f.layout = chain.layout();
        ++frames;
        f.status = status();
        std::unique_lock lock(frame_mutex, std::try_to_lock);
        if (!lock.owns_lock()) return;  // the window is copying the last one: skip, never wait
        std::swap(front, back);
    }

    void dsp_loop() {
        auto last_frame = Clock::now(), last_analysis_t = Clock::now();
        double overhead_s = 0.0;  // publishing time since the last block, charged to the next block's load
        double load_ema = 0.0;
        const double max_samples = opt.max_seconds > 0 ? opt.max_seconds * lanes[0]->info.sample_rate_hz : 0.0;
        std::vector<std::span<const cf32>> spans;
        try {
            while (!stopping.load()) {
                apply_pending();
                Lane& p = *lanes[0];
                Block* b = p.ring->peek();
                if (!b) {
                    if (p.ended.load() && !p.ring->peek()) break;
                    if (opt.live && seconds_since(last_frame) >= opt.frame_interval_s) {
                        const bool a = seconds_since(last_analysis_t) >= opt.analysis_interval_s;
                        publish(a);
                        last_frame = Clock::now();
                        if (a) last_analysis_t = last_frame;
                    }
                    std::this_thread::sleep_for(kIdle);
                    continue;
                }
                std::size_t n = b->count;
                if (max_samples > 0)
                    n = std::min<std::size_t>(n, static_cast<std::size_t>(max_samples - processed.load()));
                const auto t0 = Clock::now();
                if (lanes.size() == 1) {
                    chain.process(std::span<const cf32>(b->samples.data(), n));
                } else {
                    spans.assign(1, std::span<const cf32>(b->samples.data(), n));
                    for (std::size_t k = 1; k < lanes.size(); ++k)
                        spans.push_back(secondary(*lanes[k], chain.samples_for(k, n)));
                    chain.process(spans);
                }
                if (opt.test_dsp_delay_s > 0)
                    std::this_thread::sleep_for(std::chrono::duration<double>(opt.test_dsp_delay_s));
                const double busy = seconds_since(t0) + overhead_s;  // the frames and checks count too
                overhead_s = 0.0;
                const double stream = static_cast<double>(n) / p.info.sample_rate_hz;
                load_ema = load_ema == 0.0 ? busy / stream : 0.9 * load_ema + 0.1 * busy / stream;
                load.store(load_ema);
                non_finite.store(chain.counters().non_finite);
                processed += n;
                p.ring->release();
                if (max_samples > 0 && static_cast<double>(processed.load()) >= max_samples) break;
                if (opt.live && seconds_since(last_frame) >= opt.frame_interval_s) {
                    const bool a = seconds_since(last_analysis_t) >= opt.analysis_interval_s;
                    const auto tp = Clock::now();
                    publish(a);
                    overhead_s += seconds_since(tp);
                    last_frame = Clock::now();
                    if (a) last_analysis_t = last_frame;
                }
            }
            publish(true);
        } catch (const std::exception& e) {
            std::lock_guard lock(status_mutex);
            dsp_error = e.what();
            failed = true;
        }
        done.store(true);
    }

    PipelineStatus status() const {
        PipelineStatus s;
        std::lock_guard lanes_lock(lanes_mutex);
        const Lane& p = *lanes[0];
        for (const auto& l : lanes) {
            s.overflows += l->overflows.load();
            s.lost_samples += l->lost.load();
            s.timeouts += l->timeouts.load();
            s.dropped_blocks += l->dropped_blocks.load();
            s.dropped_samples += l->dropped_samples.load();
            s.reopens += l->reopens.load();
        }
        s.samples_in = p.samples_in.load();
        s.samples_processed = processed.load();
        s.total_samples = p.info.total_samples;
        s.non_finite = non_finite.load();
        s.frames = frames.load();
        s.dsp_load = load.load();
        s.analysis_ms = analysis_ms.load();
        s.sample_rate_hz = p.info.sample_rate_hz;
        s.center_hz = p.info.center_hz;
        s.stream_time_s = static_cast<double>(s.samples_processed) / p.info.sample_rate_hz;
        s.source = p.info.description;
        {
            std::lock_guard lock(const_cast<std::mutex&>(p.state_mutex));
            s.state = p.state;
            if (!p.error.empty()) s.error = p.error;
        }
        std::lock_guard lock(status_mutex);
        if (!dsp_error.empty()) {
            s.error = dsp_error;
            s.state = (failed ? "error: " : "") + dsp_error;
        }
        s.failed = failed;
        s.finished = done.load();
        if (s.finished && !failed && s.state == "running") s.state = stopping.load() ? "stopped" : "ended";
        return s;
    }
};

std::unique_ptr<Pipeline> Pipeline::start(const Setup& setup, const PipelineOptions& options) {
    if (const auto problems = validate(setup); !problems.empty())
        throw InputError(problems.front().key + ": " + problems.front().message);
    if (options.block_samples < 64 || options.ring_blocks < 2)
        throw InputError("pipeline: block_samples must be at least 64 and ring_blocks at least 2");
    std::unique_ptr<Pipeline> p(new Pipeline());
    p->impl_ = std::make_unique<Impl>();
    Impl& m = *p->impl_;
    m.opt = options;
    m.setup = setup;
    m.lanes = m.open_lanes(setup);
    m.chain = Impl::build_chain(setup, m.lanes, options);
    m.start_readers();
    m.dsp = std::thread([&m] { m.dsp_loop(); });
    return p;
}

Pipeline::~Pipeline() {
    if (!impl_) return;
    stop();
    if (recording()) stop_recording();
}

void Pipeline::apply(const Setup& setup) {
    if (const auto problems = validate(setup); !problems.empty())
        throw InputError(problems.front().key + ": " + problems.front().message);
    std::lock_guard lock(impl_->setup_mutex);
    impl_->pending_setup = setup;
    impl_->has_pending.store(true);
}

void Pipeline::set_probe(Probe probe) {
    impl_->pending_probe.store(static_cast<int>(probe));
}

bool Pipeline::latest(Frame& out) {
    std::lock_guard lock(impl_->frame_mutex);
    if (impl_->front.sequence <= out.sequence) return false;
    out = impl_->front;
    return true;
}

PipelineStatus Pipeline::status() const {
    return impl_->status();
}

Setup Pipeline::setup() const {
    return impl_->current_setup();
}

PipelineStatus Pipeline::wait() {
    while (!impl_->done.load()) std::this_thread::sleep_for(std::chrono::milliseconds(2));
    if (impl_->dsp.joinable()) impl_->dsp.join();
    impl_->stopping.store(true);
    impl_->stop_readers(impl_->lanes);
    return status();
}

void Pipeline::stop() {
    impl_->stopping.store(true);
    if (impl_->dsp.joinable()) impl_->dsp.join();
    impl_->stop_readers(impl_->lanes);
}

ChainAnalysis Pipeline::final_analysis() const {
    if (!impl_->done.load()) throw InputError("pipeline: final_analysis() before the run ended");
    return impl_->last_analysis;
}

const SignalChain& Pipeline::chain() const {
    return impl_->chain;
}

void Pipeline::start_recording(const RecorderOptions& options) {
    Impl& m = *impl_;
    if (recording()) throw InputError("record: a recording is already running");
    StreamInfo info;
    {
        std::lock_guard lock(m.lanes_mutex);
        info = m.lanes[0]->info;
    }
    auto tap = std::make_shared<TapSource>(info, m.opt.block_samples);
    m.recorder_stop.store(false);
    m.recorder_report.reset();
    RecorderOptions o = options;
    if (!o.setup) o.setup = m.current_setup();
    // Create the files here, so a bad path is an error of this call.
    auto sink = open_file_sink(sigmf_paths(o.out).data);
    {
        std::lock_guard lock(m.tap_mutex);
        m.tap = tap;
    }
    m.recorder = std::thread([&m, tap, o, s = std::move(sink)]() mutable {
        try {
            m.recorder_report = record(*tap, o, &m.recorder_stop, std::move(s));
        } catch (const std::exception& e) {
            RecorderReport r;
            r.complete = false;
            r.message = e.what();
            m.recorder_report = r;
        }
    });
}

bool Pipeline::recording() const {
    return impl_->recorder.joinable();
}

std::optional<RecorderReport> Pipeline::stop_recording() {
    Impl& m = *impl_;
    if (!m.recorder.joinable()) return std::nullopt;
    std::shared_ptr<TapSource> tap;
    {
        std::lock_guard lock(m.tap_mutex);
        tap = std::move(m.tap);
    }
    if (tap) tap->close();  // the recorder drains what is queued, then sees the end
    m.recorder.join();
    return m.recorder_report;
}

}  // namespace hb
