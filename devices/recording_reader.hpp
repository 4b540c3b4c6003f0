// Internal to devices/: the part every recording reader shares (pacing, loop, swap I/Q, non-finite
// samples, counters). A concrete reader only fills blocks from its file and restarts.
#pragma once

#include <chrono>
#include <string>

#include "devices/recording.hpp"

namespace hb::detail {

class RecordingReader : public SampleSource {
public:
    RecordingReader(const SourceSpec& spec, const RecordingOptions& options);
    const StreamInfo& info() const override { return info_; }
    ReadResult read(std::span<cf32> out, double timeout_s) override;
    bool rewind() override;
    const SourceCounters& counters() const override { return counters_; }
    const RecordingDetails& details() const { return details_; }

protected:
    // Fills up to out.size() samples from one capture segment (updating info_.center_hz when a new
    // segment starts); returns 0 at the end. On an I/O failure returns 0 and sets `error`.
    virtual std::size_t fill(std::span<cf32> out, std::string& error) = 0;
    virtual bool restart(std::string& error) = 0;

    StreamInfo info_;
    RecordingDetails details_;
    SourceCounters counters_;

private:
    bool swap_iq_;
    bool loop_;
    RecordingOptions options_;
    bool started_ = false;
    std::chrono::steady_clock::time_point t0_{};
    std::uint64_t paced_samples_ = 0;  // samples delivered since t0_
};

// The frequency to use for a stream: the file's, else the SourceSpec's, else 0; a disagreement between
// a file and a session is an error rather than a silent choice.
double pick_frequency(const std::optional<double>& from_file, const SourceSpec& spec, const std::string& where,
                      std::vector<std::string>& warnings);
double pick_rate(double from_file, const SourceSpec& spec, const std::string& where);

std::unique_ptr<SampleSource> open_wav(const SourceSpec& spec, const std::string& path,
                                       const RecordingOptions& options);

}  // namespace hb::detail
