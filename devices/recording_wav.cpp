// WAV recordings through libsndfile: stereo = I left, Q right (common practice, not a standard);
// mono = a real signal (Q = 0). libsndfile scales PCM to +-1.0 (PCM16 divided by 32768), so a
// full-scale stereo pair is a 0 dBFS complex sample. The centre comes from the SourceSpec (default 0 Hz).
#include <sndfile.h>

#include <algorithm>
#include <cmath>
#include <cstring>
#include <filesystem>
#include <fstream>
#include <optional>

#include "devices/recording_reader.hpp"
#include "dsp/errors.hpp"
#include "dsp/units.hpp"

namespace hb {
namespace {

std::string subtype_name(int format) {
    switch (format & SF_FORMAT_SUBMASK) {
        case SF_FORMAT_PCM_U8: return "PCM 8-bit unsigned";
        case SF_FORMAT_PCM_S8: return "PCM 8-bit";
        case SF_FORMAT_PCM_16: return "PCM 16-bit";
        case SF_FORMAT_PCM_24: return "PCM 24-bit";
        case SF_FORMAT_PCM_32: return "PCM 32-bit";
        case SF_FORMAT_FLOAT: return "IEEE float 32-bit";
        case SF_FORMAT_DOUBLE: return "IEEE float 64-bit";
        default: return "libsndfile subtype 0x" + [&] {
            char b[16];
            std::snprintf(b, sizeof b, "%04x", format & SF_FORMAT_SUBMASK);
            return std::string(b);
        }();
    }
}

// libsndfile reads a WAV whose data chunk is shorter than its header says up to the end of the file without a
// word; the header's own length is compared with the file here so a cut-off recording is reported as such.
// Returns the declared and the present data bytes when the data chunk is cut short (RIFF/WAVE only).
std::optional<std::pair<std::uint64_t, std::uint64_t>> short_data_chunk(const std::string& path) {
    std::ifstream in(path, std::ios::binary);
    char head[12];
    if (!in.read(head, 12) || std::memcmp(head, "RIFF", 4) != 0 || std::memcmp(head + 8, "WAVE", 4) != 0)
        return std::nullopt;
    in.seekg(0, std::ios::end);
    const auto size = static_cast<std::uint64_t>(in.tellg());
    std::uint64_t pos = 12;
    for (int i = 0; i < 1000 && pos + 8 <= size; ++i) {  // bounded: a chunk list is short
        in.seekg(static_cast<std::streamoff>(pos));
        unsigned char ch[8];
        if (!in.read(reinterpret_cast<char*>(ch), 8)) return std::nullopt;
        const std::uint64_t len = ch[4] | (ch[5] << 8) | (ch[6] << 16) | (std::uint64_t(ch[7]) << 24);
        pos += 8;
        if (std::memcmp(ch, "data", 4) == 0) {
            if (len == 0 || len == 0xffffffffu) return std::nullopt;  // "unknown length" (a stream being written)
            if (len > size - pos) return std::make_pair(len, size - pos);
            return std::nullopt;
        }
        pos += len + (len & 1);  // chunks are padded to an even length
    }
    return std::nullopt;
}

class WavReader final : public detail::RecordingReader {
public:
    WavReader(const SourceSpec& spec, const std::string& path, const RecordingOptions& options)
        : RecordingReader(spec, options) {
        if (!spec.format.empty())
            throw InputError(path + ": format = \"" + spec.format +
                             "\" is for raw files; a WAV file states its own sample format: remove it");
        SF_INFO sfi{};
        file_.reset(sf_open(path.c_str(), SFM_READ, &sfi));  // closed by file_ on every exit, throws included
        if (!file_) throw InputError(path + ": cannot read as WAV: " + sf_strerror(nullptr));
        if ((sfi.format & SF_FORMAT_TYPEMASK) != SF_FORMAT_WAV && (sfi.format & SF_FORMAT_TYPEMASK) != SF_FORMAT_WAVEX &&
            (sfi.format & SF_FORMAT_TYPEMASK) != SF_FORMAT_RF64) {
            throw InputError(path + ": named .wav but libsndfile reads it as another format (major type 0x" +
                             std::to_string((sfi.format & SF_FORMAT_TYPEMASK) >> 16) + ")");
        }
        if (sfi.channels < 1 || sfi.channels > 2) {
            throw InputError(path + ": has " + std::to_string(sfi.channels) +
                             " channels, expected 1 (a real signal) or 2 (I left, Q right)");
        }
        if (sfi.samplerate <= 0 || sfi.frames <= 0) {
            throw InputError(path + ": holds no samples (" + std::to_string(sfi.frames) + " frames at " +
                             std::to_string(sfi.samplerate) + " Hz)");
        }
        channels_ = sfi.channels;
        const std::size_t chunk = std::min<std::size_t>(options.chunk_samples ? options.chunk_samples : 1, 1 << 20);
        buffer_.resize(chunk * static_cast<std::size_t>(channels_));
        info_.sample_rate_hz = detail::pick_rate(sfi.samplerate, spec, path);
        std::vector<std::string> warnings;
        if (const auto cut = short_data_chunk(path))
            warnings.push_back(path + ": the header says the data chunk holds " + std::to_string(cut->first) +
                               " bytes but the file has only " + std::to_string(cut->second) + "; reading the " +
                               std::to_string(sfi.frames) + " whole frames there (a truncated file?)");
        info_.center_hz = spec.frequency_hz.value_or(0.0);
        info_.total_samples = static_cast<std::uint64_t>(sfi.frames);
        info_.description = std::filesystem::path(path).filename().string();
        info_.hardware = std::string("WAV ") + (channels_ == 2 ? "stereo I/Q, " : "mono real, ") +
                         subtype_name(sfi.format);
        details_ = {"WAV", path, subtype_name(sfi.format), std::move(warnings), std::nullopt};
    }
    WavReader(const WavReader&) = delete;
    WavReader& operator=(const WavReader&) = delete;

protected:
    std::size_t fill(std::span<cf32> out, std::string& error) override {
        const std::size_t n = std::min(out.size(), buffer_.size() / static_cast<std::size_t>(channels_));
        const sf_count_t got = sf_readf_float(file_.get(), buffer_.data(), static_cast<sf_count_t>(n));
        if (got < 0 || (got == 0 && sf_error(file_.get()) != SF_ERR_NO_ERROR)) {
            error = details_.data_path + ": read failed: " + sf_strerror(file_.get());
            return 0;
        }
        const auto k = static_cast<std::size_t>(got);
        if (channels_ == 2)
            for (std::size_t i = 0; i < k; ++i) out[i] = {buffer_[2 * i], buffer_[2 * i + 1]};
        else
            for (std::size_t i = 0; i < k; ++i) out[i] = {buffer_[i], 0.0f};
        return k;
    }
    bool restart(std::string& error) override {
        if (sf_seek(file_.get(), 0, SEEK_SET) < 0) {
            error = details_.data_path + ": cannot rewind: " + sf_strerror(file_.get());
            return false;
        }
        return true;
    }

private:
    std::unique_ptr<SNDFILE, int (*)(SNDFILE*)> file_{nullptr, sf_close};
    int channels_ = 2;
    std::vector<float> buffer_;
};

}  // namespace

namespace detail {
std::unique_ptr<SampleSource> open_wav(const SourceSpec& spec, const std::string& path,
                                       const RecordingOptions& options) {
    return std::make_unique<WavReader>(spec, path, options);
}
}  // namespace detail

void write_wav(const std::string& path, std::span<const cf32> samples, double sample_rate_hz, int channels,
               WavEncoding encoding) {
    if (channels != 1 && channels != 2)
        throw InputError(path + ": channels: got " + std::to_string(channels) + ", expected 1 or 2");
    if (!(sample_rate_hz >= 1 && sample_rate_hz <= 2147483647.0 && sample_rate_hz == std::floor(sample_rate_hz)))
        throw InputError(path + ": sample rate: got " + format_number(sample_rate_hz) +
                         " Hz, expected a whole number of Hz (WAV stores an integer rate)");
    SF_INFO sfi{};
    sfi.samplerate = static_cast<int>(sample_rate_hz);
    sfi.channels = channels;
    const int sub = encoding == WavEncoding::pcm16   ? SF_FORMAT_PCM_16
                    : encoding == WavEncoding::pcm24 ? SF_FORMAT_PCM_24
                    : encoding == WavEncoding::pcm32 ? SF_FORMAT_PCM_32
                                                     : SF_FORMAT_FLOAT;
    sfi.format = SF_FORMAT_WAV | sub;
    SNDFILE* f = sf_open(path.c_str(), SFM_WRITE, &sfi);
    if (!f) throw InputError(path + ": cannot write WAV: " + sf_strerror(nullptr));
    // Full scale +1.0 must map to the largest code, not wrap (libsndfile's float-to-int clipping).
    sf_command(f, SFC_SET_CLIPPING, nullptr, SF_TRUE);
    std::vector<float> frame(4096 * static_cast<std::size_t>(channels));
    for (std::size_t i = 0; i < samples.size();) {
        const std::size_t n = std::min<std::size_t>(4096, samples.size() - i);
        for (std::size_t k = 0; k < n; ++k) {
            if (channels == 2) {
                frame[2 * k] = samples[i + k].real();
                frame[2 * k + 1] = samples[i + k].imag();
            } else {
                frame[k] = samples[i + k].real();
            }
        }
        if (sf_writef_float(f, frame.data(), static_cast<sf_count_t>(n)) != static_cast<sf_count_t>(n)) {
            const std::string msg = sf_strerror(f);
            sf_close(f);
            throw InputError(path + ": write failed: " + msg);
        }
        i += n;
    }
    if (sf_close(f) != 0) throw InputError(path + ": write failed when closing");
}

}  // namespace hb
