// The real-time pipeline: sources → reader threads → lock-free rings → the DSP thread (the SignalChain) → the
// latest finished frame, which the window renders and the headless commands read.
//
//   reader thread per source ──SpscRing──► DSP thread: SignalChain::process, Welch at the probe, plan check
//                                                     │ (try-lock swap, never waits for a reader)
//                                                     ▼
//                                               latest Frame ◄── latest() from the GUI thread
//
// Live mode (a device, or a recording paced to real time): a reader never waits for the DSP. When its ring is full
// it keeps reading the source (so the device does not overflow) and drops the block, counting it; the DSP load and
// the drops are in every frame. Batch mode (headless verification): readers wait for room, recordings are read as
// fast as the DSP takes them, nothing is dropped, and the result does not depend on thread timing.
//
// Settings: apply() hands a new Setup to the DSP thread, which switches between blocks with SignalChain::update
// (only the blocks whose settings changed are rebuilt; the sources and every other block keep their state, so an
// IF gain change keeps the LO phase going). A different [[source]] list restarts the sources and the chain.
//
// Faults: timeouts and overflows are counted and passed on; a source that fails (a stream error, a vanished
// device) is reopened with backoff (0.25 s doubling to 8 s), shown in the status as "reopening"; recordings that
// fail end their stream. NaN/Inf samples are replaced by 0 and counted in the chain.
//
// Recording from the pipeline: start_recording() taps the primary source's blocks (as read, before any drop) into
// a recorder thread (devices/recorder), so a bench can be captured from the window; gaps are annotated.
#pragma once

#include <atomic>
#include <cstdint>
#include <memory>
#include <optional>
#include <string>
#include <vector>

#include "devices/recorder.hpp"
#include "devices/source.hpp"
#include "dsp/setup.hpp"
#include "dsp/signal_chain.hpp"

namespace hb {

struct PipelineOptions {
    bool live = true;                      // see above; false: batch (headless)
    bool pace_recordings = true;           // live mode only: recordings play at their own rate
    std::size_t block_samples = 16384;     // samples per ring slot
    std::size_t ring_blocks = 32;          // slots per source ring, at least
    double ring_seconds = 0.25;            // ... and at least this much stream (up to 4096 slots)
    double frame_interval_s = 1.0 / 30.0;  // wall time between published spectrum frames (live)
    double analysis_interval_s = 0.25;     // wall time between plan checks in live frames
    std::size_t scope_samples = 2048;      // time-domain samples of the probe kept in a frame
    double max_seconds = 0.0;              // stop after this much primary stream time (0: until the sources end)
    Probe probe = Probe::if_output;
    bool reopen = true;  // reopen failed devices with backoff
    double reopen_max_backoff_s = 8.0;
    // Processing delay added per block (tests: a deliberately slow DSP stage).
    double test_dsp_delay_s = 0.0;
};

// Everything the status line shows. A plain copy, taken from atomics.
struct PipelineStatus {
    std::uint64_t samples_in = 0;         // primary-source samples read
    std::uint64_t samples_processed = 0;  // primary-source samples through the chain
    std::uint64_t total_samples = 0;      // primary recording length (0: live or unknown)
    std::uint64_t overflows = 0;          // device overflow events (all sources)
    std::uint64_t lost_samples = 0;       // samples the devices reported lost
    std::uint64_t timeouts = 0;
    std::uint64_t dropped_blocks = 0;  // blocks read but dropped because the DSP fell behind (live)
    std::uint64_t dropped_samples = 0;
    std::uint64_t non_finite = 0;  // NaN/Inf input samples replaced
    std::uint64_t reopens = 0;     // successful reopens after a failure
    std::uint64_t frames = 0;      // frames published
    double dsp_load = 0.0;         // DSP thread's busy time (chain, frames, checks) over stream time, smoothed
    double analysis_ms = 0.0;      // wall time of the last plan check (spectra read, lines measured)
    double stream_time_s = 0.0;    // primary stream time processed
    double sample_rate_hz = 0.0;   // primary source
    double center_hz = 0.0;
    std::string source;     // primary source description
    std::string state;      // "running", "reopening in 2 s: <why>", "ended", "stopped", "error: ..."
    bool finished = false;  // every source ended (batch: the run is complete)
    bool failed = false;    // stopped by an error that reopening cannot fix
    std::string error;
};

// What the DSP thread publishes.
struct Frame {
    std::uint64_t sequence = 0;       // increases with every published frame
    std::uint64_t setup_version = 0;  // increases with every applied Setup
    Probe probe = Probe::if_output;
    Spectrum spectrum;        // at the probe point
    std::vector<cf32> scope;  // the latest samples at the probe point (up to scope_samples)
    double scope_rate_hz = 0.0;
    bool has_analysis = false;  // analysis below is filled (it is computed less often than spectra)
    std::uint64_t analysis_sequence = 0;
    std::uint64_t analysis_setup_version = 0;  // the Setup the analysis was made with
    ChainAnalysis analysis;
    ChainLayout layout;
    PipelineStatus status;
};

class Pipeline {
  public:
    // Opens every source, builds the chain and starts the threads. Throws InputError (a source that cannot be
    // opened, a chain that cannot be built).
    static std::unique_ptr<Pipeline> start(const Setup& setup, const PipelineOptions& options = {});
    ~Pipeline();  // stops and joins
    Pipeline(const Pipeline&) = delete;
    Pipeline& operator=(const Pipeline&) = delete;

    // Queues a new Setup; the DSP thread applies it between blocks. An invalid Setup (validate()) is refused
    // here with InputError; one the chain cannot take shows as an error in the status and the old one stays.
    void apply(const Setup& setup);
    void set_probe(Probe probe);
    // Copies the newest frame into `out` when it is newer than out.sequence; returns whether it did. Never makes
    // the DSP thread wait (the DSP skips a publication rather than wait for this).
    bool latest(Frame& out);
    PipelineStatus status() const;
    // The Setup the DSP runs now.
    Setup setup() const;

    // Blocks until the sources have ended (or max_seconds is reached, or stop()). Returns the final status.
    PipelineStatus wait();
    void stop();
    // After wait()/stop(): the final look at the whole run (batch: every sample of the input) and the chain.
    ChainAnalysis final_analysis() const;
    const SignalChain& chain() const;

    // Records the primary source as it is read (see above). Throws InputError when already recording or the files
    // cannot be created.
    void start_recording(const RecorderOptions& options);
    bool recording() const;
    // Stops the recording and returns its report (nothing when none was running).
    std::optional<RecorderReport> stop_recording();

  private:
    Pipeline() = default;
    struct Impl;
    std::unique_ptr<Impl> impl_;
};

}  // namespace hb
