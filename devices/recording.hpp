// Recordings: SigMF (open standard v1.2.5), WAV (through libsndfile) and raw sample files, read as a
// SampleSource, plus the SigMF metadata reader/writer the recorder uses.
//
// Which reader: a path ending in .sigmf-meta or .sigmf-data (either names the pair) is SigMF, .wav is
// WAV, anything else is a raw file whose datatype (SourceSpec::format), rate and centre must be given.
//
// Playback: as fast as the caller reads (default, what tests and headless reports want) or paced to
// real time (RecordingOptions::paced). SourceSpec::loop restarts at the end; SourceSpec::swap_iq
// exchanges I and Q (a conjugate: a tone at +f moves to -f); SourceSpec::level_offset_db becomes the
// stream's calibration. A SigMF recording with several captures is read one capture at a time: a read()
// never returns samples of two captures, and info().center_hz is the centre of the samples last returned.
#pragma once

#include <chrono>
#include <cstdint>
#include <memory>
#include <nlohmann/json.hpp>
#include <optional>
#include <span>
#include <string>
#include <vector>

#include "devices/sample_format.hpp"
#include "devices/source.hpp"

namespace hb {

struct RecordingOptions {
    bool paced = false;                // deliver samples no faster than the recording's sample rate
    std::size_t chunk_samples = 65536; // largest block read from disk at once (the buffer is made once)
};

// ---- SigMF metadata -------------------------------------------------------------------------------

inline constexpr const char* kSigmfVersion = "1.2.5";
inline constexpr const char* kHetbenchExtension = "hetbench";  // our namespace: hetbench:setup, hetbench:lost_samples
inline constexpr const char* kHetbenchExtensionVersion = "1.0.0";

struct SigmfCapture {
    std::uint64_t sample_start = 0;
    std::optional<double> frequency_hz;        // core:frequency
    std::optional<std::uint64_t> global_index; // core:global_index: index in the original stream
    std::string datetime;                      // core:datetime, ISO 8601 UTC ("...Z"), empty if absent
    std::uint64_t header_bytes = 0;            // core:header_bytes (non-conforming datasets)
};

struct SigmfAnnotation {
    std::uint64_t sample_start = 0;
    std::optional<std::uint64_t> sample_count;
    std::optional<double> freq_lower_edge_hz;
    std::optional<double> freq_upper_edge_hz;
    std::string label;
    std::string comment;
    std::string generator;
    std::optional<std::uint64_t> lost_samples;  // hetbench:lost_samples on "gap" annotations
};

struct SigmfMeta {
    SampleFormat format;                // core:datatype
    std::string version = kSigmfVersion;
    double sample_rate_hz = 0.0;        // core:sample_rate (required by hetbench)
    std::string description, hw, author, recorder;
    std::string dataset;                // core:dataset: a file name in the same folder, empty if absent
    std::uint64_t offset = 0;           // core:offset
    std::uint64_t trailing_bytes = 0;   // core:trailing_bytes
    std::vector<SigmfCapture> captures;
    std::vector<SigmfAnnotation> annotations;
    std::optional<nlohmann::json> setup;  // hetbench:setup, a Setup in setup_to_json form
    // hetbench:sample_count: samples the metadata describes (the recorder's last flush). Data beyond it
    // (a recording killed between flushes) is ignored by the reader with a warning.
    std::optional<std::uint64_t> sample_count;
    std::vector<std::string> warnings;    // things the reader tolerated (filled by the reader)
};

struct SigmfPaths {
    std::string meta, data;
};
// The pair named by a .sigmf-meta or .sigmf-data path (or by their common base name). Throws InputError
// for .sigmf archives and collections, which are not read.
SigmfPaths sigmf_paths(const std::string& path);

// Parses metadata text; `name` (the file) starts every message. Throws InputError.
SigmfMeta parse_sigmf_meta(const std::string& text, const std::string& name);
SigmfMeta read_sigmf_meta(const std::string& meta_path);

// The metadata as SigMF JSON (core:recorder "hetbench", our extension declared).
nlohmann::json sigmf_meta_to_json(const SigmfMeta& m);
// Writes the metadata atomically: a temporary file in the same folder, fsync, then rename, so a reader
// (or a crash) only ever sees the old or the new file. Throws InputError naming the file.
void write_sigmf_meta(const SigmfMeta& m, const std::string& meta_path);

// "2025-10-02T12:34:56.789Z" (RFC 3339, UTC, milliseconds).
std::string iso8601_utc(std::chrono::system_clock::time_point t);

// ---- Opening recordings ---------------------------------------------------------------------------

// What a recording source can say beyond StreamInfo.
struct RecordingDetails {
    std::string kind;  // "SigMF", "WAV" or "raw"
    std::string data_path;
    std::string datatype;               // SigMF name of the stored format (WAV: its libsndfile subtype)
    std::vector<std::string> warnings;  // tolerated problems: truncation, trailing bytes, ...
    std::optional<SigmfMeta> sigmf;     // SigMF only: captures, annotations, embedded setup
};

// open_recording with options (the SourceSpec overload in source.hpp uses the defaults).
std::unique_ptr<SampleSource> open_recording(const SourceSpec& spec, const Setup& setup,
                                             const RecordingOptions& options);

// The details of a source opened by open_recording, nullptr for any other source.
const RecordingDetails* recording_details(const SampleSource& source);

// ---- WAV writing (libsndfile) -----------------------------------------------------------------------

enum class WavEncoding { pcm16, pcm24, pcm32, float32 };

// Writes samples as WAV: 2 channels = I left, Q right (common practice); 1 channel = the real part.
// Throws InputError naming the file.
void write_wav(const std::string& path, std::span<const cf32> samples, double sample_rate_hz, int channels,
               WavEncoding encoding);

}  // namespace hb
