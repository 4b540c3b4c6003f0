// Opening recordings: the shared reader (pacing, loop, swap, counters), the sample-file reader behind
// SigMF and raw files, and the choice of reader by file name.
#include "devices/recording.hpp"

#include <fcntl.h>
#include <sys/stat.h>
#include <unistd.h>

#include <algorithm>
#include <cerrno>
#include <cmath>
#include <cstring>
#include <filesystem>
#include <thread>

#include "devices/recording_reader.hpp"
#include "dsp/errors.hpp"
#include "dsp/units.hpp"

namespace hb {
namespace detail {

RecordingReader::RecordingReader(const SourceSpec& spec, const RecordingOptions& options)
    : swap_iq_(spec.swap_iq), loop_(spec.loop), options_(options) {
    info_.level_offset_db = spec.level_offset_db;
    info_.live = false;
    if (options_.chunk_samples == 0) options_.chunk_samples = 1;
}

bool RecordingReader::rewind() {
    std::string error;
    if (!restart(error)) return false;
    started_ = false;  // pacing starts again with the next read
    paced_samples_ = 0;
    return true;
}

ReadResult RecordingReader::read(std::span<cf32> out, double timeout_s) {
    ReadResult r;
    if (out.empty()) return r;
    std::size_t want = out.size();
    if (options_.paced && info_.sample_rate_hz > 0) {
        using clock = std::chrono::steady_clock;
        const auto now = clock::now();
        if (!started_) {
            started_ = true;
            t0_ = now;
            paced_samples_ = 0;
        }
        const double rate = info_.sample_rate_hz;
        const auto due_at = [&](double samples) {
            return t0_ + std::chrono::duration_cast<clock::duration>(std::chrono::duration<double>(samples / rate));
        };
        const auto t_need = due_at(static_cast<double>(paced_samples_ + want));
        if (t_need > now) {
            const auto deadline =
                now + std::chrono::duration_cast<clock::duration>(std::chrono::duration<double>(std::max(0.0, timeout_s)));
            if (t_need <= deadline) {
                std::this_thread::sleep_until(t_need);
            } else {
                std::this_thread::sleep_until(deadline);
                const double elapsed = std::chrono::duration<double>(clock::now() - t0_).count();
                const double due = std::floor(elapsed * rate) - static_cast<double>(paced_samples_);
                if (due < 1.0) {
                    r.status = ReadStatus::timeout;
                    r.message = "paced playback: no sample due yet";
                    return r;
                }
                want = std::min(want, static_cast<std::size_t>(due));
            }
        }
    }
    std::span<cf32> block = out.first(std::min(want, options_.chunk_samples));
    std::string error;
    std::size_t n = fill(block, error);
    if (n == 0 && error.empty() && loop_) {
        if (restart(error)) n = fill(block, error);
    }
    if (!error.empty()) {
        ++counters_.errors;
        r.status = ReadStatus::error;
        r.message = error;
        return r;
    }
    if (n == 0) {
        r.status = ReadStatus::end;
        return r;
    }
    for (std::size_t i = 0; i < n; ++i) {
        cf32& z = block[i];
        if (!std::isfinite(z.real()) || !std::isfinite(z.imag())) {
            z = {0.0f, 0.0f};
            ++counters_.non_finite;
        }
        if (swap_iq_) z = {z.imag(), z.real()};
    }
    counters_.samples += n;
    paced_samples_ += n;
    r.count = n;
    return r;
}

double pick_frequency(const std::optional<double>& from_file, const SourceSpec& spec, const std::string& where,
                      std::vector<std::string>& warnings) {
    if (from_file && spec.frequency_hz && *from_file != *spec.frequency_hz)
        throw InputError(where + ": the recording says its centre is " + format_frequency(*from_file) +
                         " but the source asks for " + format_frequency(*spec.frequency_hz) +
                         "; remove frequency_hz from the source or correct it");
    if (from_file) return *from_file;
    if (spec.frequency_hz) return *spec.frequency_hz;
    warnings.push_back(where + ": no centre frequency given; assuming 0 Hz (baseband)");
    return 0.0;
}

double pick_rate(double from_file, const SourceSpec& spec, const std::string& where) {
    if (spec.sample_rate_hz && *spec.sample_rate_hz != from_file)
        throw InputError(where + ": the recording's sample rate is " + format_number(from_file) +
                         " Hz but the source asks for " + format_number(*spec.sample_rate_hz) +
                         " Hz; remove sample_rate_hz from the source or correct it");
    return from_file;
}

}  // namespace detail

namespace {

using detail::RecordingReader;

// A file of samples in one SigMF datatype, cut into capture segments (one for raw files).
class SampleFileReader final : public RecordingReader {
public:
    struct Segment {
        std::uint64_t byte_start = 0;
        std::uint64_t samples = 0;
        double center_hz = 0.0;
    };

    SampleFileReader(const SourceSpec& spec, const RecordingOptions& options, int fd, SampleFormat format,
                     std::vector<Segment> segments)
        : RecordingReader(spec, options), fd_(fd), format_(format), segments_(std::move(segments)),
          buffer_(std::min<std::size_t>(options.chunk_samples ? options.chunk_samples : 1, 1 << 20) *
                  format.sample_bytes()) {
        for (const Segment& s : segments_) info_.total_samples += s.samples;
        info_.center_hz = segments_.front().center_hz;
    }
    ~SampleFileReader() override { ::close(fd_); }
    SampleFileReader(const SampleFileReader&) = delete;
    SampleFileReader& operator=(const SampleFileReader&) = delete;

    using RecordingReader::details_;
    using RecordingReader::info_;

protected:
    std::size_t fill(std::span<cf32> out, std::string& error) override {
        while (seg_ < segments_.size() && pos_ >= segments_[seg_].samples) {
            if (seg_ + 1 == segments_.size()) return 0;
            ++seg_;
            pos_ = 0;
            info_.center_hz = segments_[seg_].center_hz;
        }
        if (seg_ >= segments_.size()) return 0;
        const Segment& s = segments_[seg_];
        const std::size_t ss = format_.sample_bytes();
        const std::size_t n = static_cast<std::size_t>(
            std::min<std::uint64_t>({out.size(), buffer_.size() / ss, s.samples - pos_}));
        const std::size_t bytes = n * ss;
        std::size_t got = 0;
        const auto at = static_cast<off_t>(s.byte_start + pos_ * ss);
        while (got < bytes) {
            const ssize_t k = ::pread(fd_, buffer_.data() + got, bytes - got, at + static_cast<off_t>(got));
            if (k < 0 && errno == EINTR) continue;
            if (k < 0) {
                error = details_.data_path + ": read failed: " + std::strerror(errno);
                return 0;
            }
            if (k == 0) {
                error = details_.data_path + ": the file ended early at byte " + std::to_string(at + got) +
                        " (was it shortened while being read?)";
                return 0;
            }
            got += static_cast<std::size_t>(k);
        }
        decode_samples(format_, buffer_.data(), n, out.data());
        pos_ += n;
        return n;
    }

    bool restart(std::string&) override {
        seg_ = 0;
        pos_ = 0;
        info_.center_hz = segments_.front().center_hz;
        return true;
    }

private:
    int fd_;
    SampleFormat format_;
    std::vector<Segment> segments_;
    std::vector<std::byte> buffer_;
    std::size_t seg_ = 0;
    std::uint64_t pos_ = 0;
};

// Opens a regular file for reading; its size in bytes.
int open_regular(const std::string& path, std::uint64_t& size) {
    const int fd = ::open(path.c_str(), O_RDONLY | O_CLOEXEC);
    if (fd < 0) throw InputError(path + ": cannot open: " + std::strerror(errno));
    struct stat st {};
    if (::fstat(fd, &st) != 0 || !S_ISREG(st.st_mode)) {
        ::close(fd);
        throw InputError(path + ": not a regular file");
    }
    size = static_cast<std::uint64_t>(st.st_size);
    return fd;
}

bool ends_with(const std::string& s, std::string_view suffix) {
    if (s.size() < suffix.size()) return false;
    for (std::size_t i = 0; i < suffix.size(); ++i)
        if (std::tolower(static_cast<unsigned char>(s[s.size() - suffix.size() + i])) != suffix[i]) return false;
    return true;
}

std::unique_ptr<SampleSource> open_raw(const SourceSpec& spec, const std::string& path,
                                       const RecordingOptions& options) {
    if (spec.format.empty())
        throw InputError(path + ": a raw recording needs its format (a SigMF datatype such as cf32_le, ci16_le, cu8)");
    const SampleFormat f = require_datatype(spec.format, path + ": format");
    if (!spec.sample_rate_hz)
        throw InputError(path + ": a raw recording needs its sample rate (sample_rate_hz / --rate)");
    const double rate = *spec.sample_rate_hz;
    if (!std::isfinite(rate) || rate <= 0 || rate > kMaxFrequencyHz)
        throw InputError(path + ": sample rate: got " + format_number(rate) + " Hz, expected above 0 and at most " +
                         format_number(kMaxFrequencyHz) + " Hz");
    if (!spec.frequency_hz)
        throw InputError(path + ": a raw recording needs its centre frequency (frequency_hz / --frequency; 0 for baseband)");
    std::uint64_t size = 0;
    const int fd = open_regular(path, size);
    const std::uint64_t ss = f.sample_bytes();
    const std::uint64_t samples = size / ss;
    std::vector<std::string> warnings;
    if (size % ss != 0)
        warnings.push_back(path + ": " + std::to_string(size % ss) + " trailing byte(s) do not make a whole " +
                           datatype_name(f) + " sample; ignored (truncated file?)");
    if (samples == 0) {
        ::close(fd);
        throw InputError(path + ": holds no whole " + datatype_name(f) + " sample (" + std::to_string(size) + " bytes)");
    }
    auto r = std::make_unique<SampleFileReader>(spec, options, fd, f,
                                                std::vector<SampleFileReader::Segment>{{0, samples, *spec.frequency_hz}});
    r->info_.sample_rate_hz = rate;
    r->info_.description = std::filesystem::path(path).filename().string();
    r->info_.hardware = "raw file " + datatype_name(f);
    r->details_ = {"raw", path, datatype_name(f), std::move(warnings), std::nullopt};
    return r;
}

std::unique_ptr<SampleSource> open_sigmf(const SourceSpec& spec, const std::string& path,
                                         const RecordingOptions& options) {
    SigmfPaths paths = sigmf_paths(path);
    SigmfMeta meta = read_sigmf_meta(paths.meta);
    if (!meta.dataset.empty())
        paths.data = (std::filesystem::path(paths.meta).parent_path() / meta.dataset).string();
    const double rate = detail::pick_rate(meta.sample_rate_hz, spec, paths.meta);
    if (!spec.format.empty() && spec.format != datatype_name(meta.format))
        throw InputError(paths.meta + ": the recording's datatype is " + datatype_name(meta.format) +
                         " but the source says format = \"" + spec.format + "\"; format is for raw files only: remove it");

    std::uint64_t size = 0;
    int fd = -1;
    try {
        fd = open_regular(paths.data, size);
    } catch (const InputError& e) {  // say whose data file it is: the name may come from core:dataset
        throw InputError(std::string(e.what()) + " (the data file of " + paths.meta + ")");
    }
    const std::uint64_t ss = meta.format.sample_bytes();
    std::vector<std::string>& warn = meta.warnings;
    if (meta.trailing_bytes > size) {
        ::close(fd);
        throw InputError(paths.meta + ": core:trailing_bytes is " + std::to_string(meta.trailing_bytes) +
                         " but " + paths.data + " holds only " + std::to_string(size) + " bytes");
    }
    const std::uint64_t data_end = size - meta.trailing_bytes;

    // Each capture's samples start after all header bytes so far (non-conforming datasets). Offsets come from
    // the metadata, so they saturate instead of wrapping: an index whose byte offset exceeds 64 bits lies past
    // the end of any file, not back at its start.
    const auto sat_add = [](std::uint64_t a, std::uint64_t b) { return a > UINT64_MAX - b ? UINT64_MAX : a + b; };
    std::vector<SampleFileReader::Segment> segs;
    std::uint64_t headers = 0;
    std::string cut_at_start;  // the data ends before the first capture: said when nothing is left
    for (std::size_t i = 0; i < meta.captures.size(); ++i) {
        const SigmfCapture& c = meta.captures[i];
        headers = sat_add(headers, c.header_bytes);
        SampleFileReader::Segment s;
        s.byte_start = sat_add(headers, c.sample_start > UINT64_MAX / ss ? UINT64_MAX : c.sample_start * ss);
        if (s.byte_start >= data_end) {
            warn.push_back(paths.data + ": the data ends before capture " + std::to_string(i) + " (core:sample_start " +
                           std::to_string(c.sample_start) + "); the recording is truncated there");
            if (i == 0) cut_at_start = warn.back();
            break;
        }
        const std::uint64_t available = (data_end - s.byte_start) / ss;
        if (i + 1 < meta.captures.size()) {
            const std::uint64_t want = meta.captures[i + 1].sample_start - c.sample_start;
            if (available < want)
                warn.push_back(paths.data + ": capture " + std::to_string(i) + " should hold " + std::to_string(want) +
                               " samples but the data ends after " + std::to_string(available) +
                               "; the recording is truncated there");
            s.samples = std::min(available, want);
        } else {
            s.samples = available;
            const std::uint64_t rest = (data_end - s.byte_start) % ss;
            if (rest != 0)
                warn.push_back(paths.data + ": " + std::to_string(rest) + " trailing byte(s) do not make a whole " +
                               datatype_name(meta.format) + " sample; ignored (a recording cut off mid-write?)");
        }
        s.center_hz = detail::pick_frequency(c.frequency_hz, spec, paths.meta + ": captures[" + std::to_string(i) + "]",
                                             warn);
        if (s.samples > 0) segs.push_back(s);
        if (s.samples < (i + 1 < meta.captures.size() ? meta.captures[i + 1].sample_start - c.sample_start : 1)) break;
    }
    if (meta.sample_count) {  // the recorder's own count: what the metadata was written for
        std::uint64_t total = 0;
        for (const auto& s : segs) total += s.samples;
        if (total < *meta.sample_count)
            warn.push_back(paths.data + ": holds " + std::to_string(total) + " samples but the metadata " +
                           "(hetbench:sample_count) describes " + std::to_string(*meta.sample_count) +
                           "; the recording is truncated there");
        if (total > *meta.sample_count) {
            warn.push_back(paths.data + ": holds " + std::to_string(total - *meta.sample_count) +
                           " samples beyond the " + std::to_string(*meta.sample_count) +
                           " the metadata describes (a recording stopped between flushes); ignored");
            std::uint64_t keep = *meta.sample_count;
            for (auto& s : segs) {
                s.samples = std::min(s.samples, keep);
                keep -= s.samples;
            }
            std::erase_if(segs, [](const SampleFileReader::Segment& s) { return s.samples == 0; });
        }
    }
    if (segs.empty()) {
        ::close(fd);
        throw InputError(paths.data + ": holds no " + datatype_name(meta.format) + " sample (" + std::to_string(size) +
                         " bytes)" + (cut_at_start.empty() ? std::string() : "; " + cut_at_start));
    }
    auto r = std::make_unique<SampleFileReader>(spec, options, fd, meta.format, std::move(segs));
    r->info_.sample_rate_hz = rate;
    r->info_.description = std::filesystem::path(paths.meta).filename().string();
    r->info_.hardware = meta.hw.empty() ? "SigMF recording" : meta.hw;
    const std::string dt = datatype_name(meta.format);
    std::vector<std::string> warnings = meta.warnings;
    r->details_ = {"SigMF", paths.data, dt, std::move(warnings), std::move(meta)};
    return r;
}

}  // namespace

std::unique_ptr<SampleSource> open_recording(const SourceSpec& spec, const Setup& setup,
                                             const RecordingOptions& options) {
    const std::string path = resolve_path(setup, spec.path);
    if (path.empty()) throw InputError("recording source: no path given");
    if (ends_with(path, ".sigmf-meta") || ends_with(path, ".sigmf-data") || ends_with(path, ".sigmf") ||
        ends_with(path, ".sigmf-collection"))
        return open_sigmf(spec, path, options);
    if (ends_with(path, ".wav")) return detail::open_wav(spec, path, options);
    return open_raw(spec, path, options);
}

std::unique_ptr<SampleSource> open_recording(const SourceSpec& spec, const Setup& setup) {
    return open_recording(spec, setup, RecordingOptions{});
}

const RecordingDetails* recording_details(const SampleSource& source) {
    if (const auto* r = dynamic_cast<const detail::RecordingReader*>(&source)) return &r->details();
    return nullptr;
}

}  // namespace hb
