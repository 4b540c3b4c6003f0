// Fuzz target: the recording readers on file contents made by someone else: WAV (libsndfile behind
// devices/recording_wav.cpp), raw sample files and SigMF pairs (devices/recording.cpp, the segment and
// truncation logic).
//
// Input layout: byte 0 picks the reader (mod 3: WAV, raw, SigMF) and swap/loop flags; byte 1 picks a raw
// datatype; for SigMF bytes 2-3 are the metadata length L (little-endian), then L bytes of metadata, then
// the data file. Everything after the header is the file's contents.
#include <unistd.h>

#include <array>
#include <cmath>
#include <filesystem>
#include <fstream>
#include <vector>

#include "devices/recording.hpp"
#include "dsp/errors.hpp"
#include "fuzz/fuzz_support.hpp"

namespace {

const std::array<const char*, 12> kFormats = {"cf32_le", "ci16_le", "cu8",     "ci8",     "cf64_be", "ri16_be",
                                              "cu16_le", "ru8",     "ci32_be", "cu32_le", "rf32_le", "rf64_le"};

// One folder per process (libFuzzer may run several jobs): the files are rewritten for every input.
const std::filesystem::path& work_dir() {
    static const std::filesystem::path dir = [] {
        std::filesystem::path base =
            std::filesystem::exists("/dev/shm") ? "/dev/shm" : std::filesystem::temp_directory_path();
        auto d = base / ("hetbench-fuzz-recording-" + std::to_string(::getpid()));
        std::filesystem::create_directories(d);
        return d;
    }();
    return dir;
}

void put(const std::filesystem::path& p, const std::uint8_t* data, std::size_t size) {
    std::ofstream out(p, std::ios::binary | std::ios::trunc);
    out.write(reinterpret_cast<const char*>(data), static_cast<std::streamsize>(size));
}

void read_some(hb::SampleSource& s, bool loop) {
    // Enough reads to cross capture boundaries and, with loop, a restart; bounded so a loop ends.
    std::vector<hb::cf32> buf(777);
    std::size_t total = 0;
    for (int i = 0; i < 64 && total < (1u << 16); ++i) {
        const hb::ReadResult r = s.read(buf, 0.0);
        if (r.count > buf.size()) __builtin_trap();
        for (std::size_t k = 0; k < r.count; ++k)  // non-finite samples are replaced, never passed on
            if (!std::isfinite(buf[k].real()) || !std::isfinite(buf[k].imag())) __builtin_trap();
        total += r.count;
        if (r.status == hb::ReadStatus::end || r.status == hb::ReadStatus::error) break;
    }
    if (!loop && s.info().total_samples && total > s.info().total_samples) __builtin_trap();
}

}  // namespace

extern "C" int LLVMFuzzerTestOneInput(const std::uint8_t* data, std::size_t size) {
    if (size < 4) return 0;
    const int mode = data[0] % 3;
    hb::SourceSpec spec;
    spec.kind = hb::SourceKind::recording;
    spec.swap_iq = (data[0] & 0x10) != 0;
    spec.loop = (data[0] & 0x20) != 0;
    hb::RecordingOptions opt;
    opt.chunk_samples = 1 + data[1] % 200;  // small chunks: many reads per input
    const auto& dir = work_dir();
    try {
        if (mode == 0) {
            spec.path = (dir / "f.wav").string();
            put(spec.path, data + 2, size - 2);
        } else if (mode == 1) {
            spec.path = (dir / "f.raw").string();
            spec.format = kFormats[data[1] % kFormats.size()];
            spec.sample_rate_hz = 48000.0;
            spec.frequency_hz = 0.0;
            put(spec.path, data + 2, size - 2);
        } else {
            const std::size_t len = std::min<std::size_t>(data[2] | (std::size_t(data[3]) << 8), size - 4);
            put(dir / "f.sigmf-meta", data + 4, len);
            put(dir / "f.sigmf-data", data + 4 + len, size - 4 - len);
            spec.path = (dir / "f.sigmf-meta").string();
        }
        auto src = hb::open_recording(spec, hb::Setup{}, opt);
        read_some(*src, spec.loop);
        if (src->rewind()) read_some(*src, spec.loop);
    } catch (const hb::InputError&) {
    }
    return 0;
}
