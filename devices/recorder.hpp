// The recorder: any SampleSource into a SigMF recording (NAME.sigmf-data + NAME.sigmf-meta).
//
// The calling thread reads the source; a writer thread writes behind a bounded queue of preallocated
// blocks, so reading a live source never waits for the disk. No sample is lost silently: samples a
// device reports lost (overflow) and blocks dropped because the writer fell behind (queue full) become
// "gap" annotations (zero-length, at the first sample after the gap, with the lost count in the comment
// and in hetbench:lost_samples), and the next samples start a new capture whose core:global_index is
// their index in the source's stream. So  written + lost + dropped = produced  always holds.
// A file source (info().live false) is never dropped from: the reader waits for the writer instead.
//
// The metadata is valid at every moment: written before the first sample, rewritten atomically
// (temporary file + rename) at every flush and at the end, each time describing only samples already
// made durable, with that count in hetbench:sample_count. A recording killed mid-way is readable up to
// its last flush (the data may hold more; the reader ignores that tail with a warning).
// A failing disk (full, removed) stops the recording cleanly with valid metadata and a clear message.
#pragma once

#include <atomic>
#include <cstddef>
#include <cstdint>
#include <functional>
#include <memory>
#include <optional>
#include <string>
#include <vector>

#include "devices/source.hpp"
#include "dsp/setup.hpp"

namespace hb {

// Where the sample bytes go: the data file by default; tests put a stalling or failing one in its place.
struct DataSink {
    virtual ~DataSink() = default;
    // Writes all n bytes, or returns false with `error` set ("No space left on device").
    virtual bool write(const std::byte* data, std::size_t n, std::string& error) = 0;
    // Makes what was written durable (fdatasync).
    virtual bool flush(std::string& error) = 0;
    // Cuts the data back to `bytes` after a failed write, so it ends on a whole sample. Best effort.
    virtual void truncate(std::uint64_t bytes) = 0;
};

// Creates (truncates) the data file. Throws InputError naming it.
std::unique_ptr<DataSink> open_file_sink(const std::string& path);

struct RecorderOptions {
    std::string out;                   // base name; a .sigmf-meta / .sigmf-data suffix is stripped
    std::string datatype = "cf32_le";  // cf32_le or ci16_le (ci16: x 32767, saturating; clips are counted)
    double duration_s = 0.0;           // stream time to record; 0 = until the source ends or stop is set
    std::size_t block_samples = 16384;
    std::size_t queue_blocks = 64;     // the bounded queue to the writer (memory = blocks x block x 8 bytes)
    double flush_interval_s = 1.0;     // data fdatasync + metadata rewrite
    double read_timeout_s = 0.25;
    std::string description;           // core:description (default: the source's description)
    std::optional<Setup> setup;        // embedded as hetbench:setup when given

    // A live source that fails (a stream error, a vanished device, or no samples for stall_timeout_s) is opened
    // again through `reopen`, with a backoff from reopen_first_delay_s doubling up to reopen_max_delay_s, for at
    // most reopen_for_s seconds. The samples missed meanwhile are one gap of unknown count and the stream goes on
    // in a new capture. Without `reopen` (or with reopen_for_s = 0) a failure ends the recording early.
    // reopen() closes the failed source and returns a new one, owned by the caller and valid until the next call
    // or the end of record(); it throws (InputError) while the device is not back. After the first call the
    // `source` given to record() is no longer used.
    std::function<SampleSource&()> reopen;
    double reopen_for_s = 30.0;
    double reopen_first_delay_s = 0.1;
    double reopen_max_delay_s = 2.0;
    double stall_timeout_s = 0.0;  // live sources: this long without a sample is a failure (0: wait for ever)
    // Told of every failure, reopen attempt and recovery as it happens (the command line prints them).
    std::function<void(const std::string&)> on_event;
};

struct RecorderReport {
    std::string meta_path, data_path;
    std::uint64_t produced = 0;       // samples of stream time covered: delivered by the source + reported lost
    std::uint64_t written = 0;        // samples in the data file (and described by the metadata)
    std::uint64_t overflow_lost = 0;  // samples the source reported lost (device overflow)
    std::uint64_t dropped = 0;        // samples read but not written (writer queue full, or the disk failed)
    std::uint64_t gaps = 0;           // gap annotations written
    std::uint64_t unknown_gaps = 0;   // of which the source could not say how many samples were lost
    std::uint64_t overflows = 0;      // overflow events from the source
    std::uint64_t timeouts = 0;
    std::uint64_t clipped = 0;        // ci16 components that saturated
    std::uint64_t non_finite = 0;     // NaN/Inf samples replaced by 0 (by the source, or here if it did not)
    std::uint64_t reopens = 0;        // times the source failed and was opened again
    double outage_s = 0.0;            // wall time spent without a source while reopening
    std::size_t captures = 0;         // capture segments in the metadata
    bool complete = true;             // false when a source or disk error stopped the recording early
    std::string message;              // why it stopped early
    std::vector<std::string> warnings;
};

// Records until the duration is reached, the source ends or fails, the disk fails, or *stop becomes true.
// Throws InputError only for bad options or when the files cannot be created; everything after that is
// in the report. `sink` replaces the data file writer (tests wrap open_file_sink(NAME.sigmf-data) to
// make a slow or failing disk); without it the data file is created (truncated) here.
RecorderReport record(SampleSource& source, const RecorderOptions& options, const std::atomic<bool>* stop = nullptr,
                      std::unique_ptr<DataSink> sink = nullptr);

}  // namespace hb
