// Where IQ comes from: a SoapySDR device, a recording (SigMF, WAV, raw) or the bench generator (which is
// itself a SoapySDR device module). One small interface so the pipeline and the commands need not care.
//
// Life cycle: open_source() -> read() blocks until the stream ends or fails -> close(). A source that
// failed can be opened again by the caller (reopen with backoff is the pipeline's job).
#pragma once

#include <complex>
#include <cstdint>
#include <memory>
#include <span>
#include <string>
#include <vector>

#include "dsp/setup.hpp"

namespace hb {

using cf32 = std::complex<float>;

// What the stream is: the values the device actually applied, not what was asked for.
struct StreamInfo {
    double center_hz = 0.0;       // RF frequency of the stream's 0 Hz
    double sample_rate_hz = 0.0;
    double level_offset_db = 0.0; // dBm at the RF port = dBFS + level_offset_db
    std::string description;      // one line for status lines and reports ("hetbench-gen: vhf.toml", a file name)
    std::string hardware;         // device or file description for metadata
    std::uint64_t total_samples = 0;  // recordings: samples in the file (0 = unknown or live)
    bool live = false;                // a device (samples lost when not read in time) vs a file
};

enum class ReadStatus {
    ok,        // count samples delivered
    timeout,   // nothing arrived in time; carry on
    overflow,  // the device dropped samples before these; count (if known) in `lost`
    end,       // the recording ended (no more samples, not an error)
    error,     // the stream failed or the device vanished; `message` says why; reopen to continue
};

struct ReadResult {
    ReadStatus status = ReadStatus::ok;
    std::size_t count = 0;      // samples written to the buffer
    std::uint64_t lost = 0;     // samples known to be lost before this block (overflow), 0 if unknown
    std::string message;        // for error (and informative for overflow/timeout)
};

// Counters every source keeps, surfaced in status lines and reports.
struct SourceCounters {
    std::uint64_t samples = 0;
    std::uint64_t overflows = 0;
    std::uint64_t lost_samples = 0;
    std::uint64_t timeouts = 0;
    std::uint64_t errors = 0;
    std::uint64_t non_finite = 0;  // NaN/Inf samples replaced by 0
};

class SampleSource {
public:
    virtual ~SampleSource() = default;
    virtual const StreamInfo& info() const = 0;
    // Fills up to out.size() samples. Never throws for stream conditions: they are statuses.
    virtual ReadResult read(std::span<cf32> out, double timeout_s) = 0;
    // Restarts a recording from its beginning (for loops); devices return false.
    virtual bool rewind() { return false; }
    virtual const SourceCounters& counters() const = 0;
};

// Opens the source a SourceSpec describes (paths are read against setup.base_dir).
// Throws InputError naming the file or argument on failure. Dispatches to the two below.
std::unique_ptr<SampleSource> open_source(const SourceSpec& spec, const Setup& setup);

// kind = recording: SigMF, WAV or raw (devices/recording*.cpp).
std::unique_ptr<SampleSource> open_recording(const SourceSpec& spec, const Setup& setup);
// kind = device or generator: any SoapySDR device; the generator is the hetbench-gen module (devices/soapy_source.cpp).
std::unique_ptr<SampleSource> open_soapy(const SourceSpec& spec, const Setup& setup);

}  // namespace hb
