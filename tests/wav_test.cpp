// WAV recordings: files written by scipy.io.wavfile and by libsndfile (hetbench's write_wav) read
// correctly, with their header fields checked byte by byte (reference-values §10 V1/V2); stereo is
// I left / Q right, mono is real; swapping I/Q mirrors a tone; bad channel counts are refused.
#include <gtest/gtest.h>

#include <cmath>
#include <cstring>
#include <sstream>

#include "devices/recording.hpp"
#include "dsp/units.hpp"
#include "recording_support.hpp"

namespace hb {
namespace {

using test::error_of;
using test::read_all;
using test::TempDir;

std::uint32_t u32(const std::string& b, std::size_t at) {
    std::uint32_t v;
    std::memcpy(&v, b.data() + at, 4);
    return v;
}
std::uint16_t u16(const std::string& b, std::size_t at) {
    std::uint16_t v;
    std::memcpy(&v, b.data() + at, 2);
    return v;
}

struct WavFmt {
    std::uint16_t tag = 0, channels = 0, block_align = 0, bits = 0;
    std::uint32_t rate = 0, byte_rate = 0, fmt_size = 0;
    std::size_t data_offset = 0, data_size = 0;
    bool has_fact = false;
    std::uint32_t fact_frames = 0;
};
// Walks the RIFF chunks (Microsoft RIFF/WAVE layout; chunks are padded to even sizes).
WavFmt parse_wav(const std::string& b) {
    WavFmt f;
    EXPECT_EQ(b.substr(0, 4), "RIFF");
    EXPECT_EQ(u32(b, 4), b.size() - 8);
    EXPECT_EQ(b.substr(8, 4), "WAVE");
    for (std::size_t at = 12; at + 8 <= b.size();) {
        const std::string id = b.substr(at, 4);
        const std::uint32_t size = u32(b, at + 4);
        if (id == "fmt ") {
            f.fmt_size = size;
            f.tag = u16(b, at + 8);
            f.channels = u16(b, at + 10);
            f.rate = u32(b, at + 12);
            f.byte_rate = u32(b, at + 16);
            f.block_align = u16(b, at + 20);
            f.bits = u16(b, at + 22);
        } else if (id == "fact") {
            f.has_fact = true;
            f.fact_frames = u32(b, at + 8);
        } else if (id == "data") {
            f.data_offset = at + 8;
            f.data_size = size;
        }
        at += 8 + size + (size & 1);
    }
    return f;
}

SourceSpec wav_spec(const std::filesystem::path& p) {
    SourceSpec s;
    s.kind = SourceKind::recording;
    s.path = p.string();
    return s;
}

// A test tone: I = A cos, Q = A sin at f over fs (an exact number of cycles in n samples).
std::vector<cf32> tone(double a, double f, double fs, std::size_t n) {
    std::vector<cf32> v(n);
    for (std::size_t i = 0; i < n; ++i) {
        const double ph = kTwoPi * f * static_cast<double>(i) / fs;
        v[i] = cf32(static_cast<float>(a * std::cos(ph)), static_cast<float>(a * std::sin(ph)));
    }
    return v;
}

// |X(f)| / n by direct correlation: the amplitude of the complex exponential at f.
double amplitude_at(const std::vector<cf32>& x, double f, double fs) {
    std::complex<double> acc = 0;
    for (std::size_t i = 0; i < x.size(); ++i)
        acc += std::complex<double>(x[i]) * std::polar(1.0, -kTwoPi * f * static_cast<double>(i) / fs);
    return std::abs(acc) / static_cast<double>(x.size());
}

// scipy.io.wavfile writes PCM16 (44-byte header, V1) and float32 (58-byte header with fact, V2); the
// same samples are also dumped raw by numpy so the comparison is exact.
TEST(WavRead, FilesWrittenByScipy) {
    const auto py = test::python_with_scipy();
    if (!py) GTEST_SKIP() << "/usr/bin/python3 with numpy and scipy is not available";
    TempDir d;
    const char* code = R"PY(
import sys, os
import numpy as np
from scipy.io import wavfile
d = sys.argv[1]
fs, n, f = 48000, 4800, 1000.0
t = np.arange(n) / fs
iq = np.stack([0.5 * np.cos(2 * np.pi * f * t), 0.5 * np.sin(2 * np.pi * f * t)], axis=1)
pcm = np.round(iq * 32767).astype('<i2')
wavfile.write(os.path.join(d, 'pcm16.wav'), fs, pcm)
pcm.tofile(os.path.join(d, 'pcm16.bin'))
flt = iq.astype('<f4')
wavfile.write(os.path.join(d, 'float32.wav'), fs, flt)
flt.tofile(os.path.join(d, 'float32.bin'))
mono = np.round(0.25 * np.cos(2 * np.pi * 440 * t) * 32767).astype('<i2')
wavfile.write(os.path.join(d, 'mono.wav'), fs, mono)
mono.tofile(os.path.join(d, 'mono.bin'))
wavfile.write(os.path.join(d, 'three.wav'), fs, np.zeros((100, 3), dtype='<i2'))
)PY";
    const auto r = test::run({*py, "-c", code, d.path.string()});
    ASSERT_EQ(r.exit_code, 0) << r.err;

    {  // V1: PCM16 stereo, a 44-byte header.
        const std::string b = test::read_file(d.file("pcm16.wav"));
        const WavFmt f = parse_wav(b);
        EXPECT_EQ(f.fmt_size, 16u);
        EXPECT_EQ(f.tag, 1);
        EXPECT_EQ(f.channels, 2);
        EXPECT_EQ(f.rate, 48000u);
        EXPECT_EQ(f.byte_rate, 192000u);
        EXPECT_EQ(f.block_align, 4);
        EXPECT_EQ(f.bits, 16);
        EXPECT_EQ(f.data_offset, 44u);
        EXPECT_EQ(f.data_size, 4800u * 4);
        auto s = open_recording(wav_spec(d.file("pcm16.wav")), hb::Setup{});
        EXPECT_EQ(s->info().sample_rate_hz, 48000.0);
        EXPECT_EQ(s->info().center_hz, 0.0);  // WAV carries no centre: default 0
        EXPECT_EQ(s->info().total_samples, 4800u);
        const auto got = read_all(*s, 1000).samples;
        const std::string raw = test::read_file(d.file("pcm16.bin"));
        ASSERT_EQ(got.size(), 4800u);
        for (std::size_t i = 0; i < got.size(); ++i) {
            std::int16_t iq[2];
            std::memcpy(iq, raw.data() + 4 * i, 4);
            ASSERT_EQ(got[i], cf32(iq[0] / 32768.0f, iq[1] / 32768.0f)) << i;  // I left, Q right
        }
        // The tone sits at +1 kHz, 0.5 amplitude (-6.02 dBFS), nothing at -1 kHz beyond quantisation.
        EXPECT_NEAR(amplitude_at(got, 1000, 48000), 0.5, 1e-4);
        EXPECT_LT(amplitude_at(got, -1000, 48000), 1e-4);
    }
    {  // V2: IEEE float32, fmt of 18 bytes (cbSize 0) and a fact chunk, a 58-byte header.
        const std::string b = test::read_file(d.file("float32.wav"));
        const WavFmt f = parse_wav(b);
        EXPECT_EQ(f.fmt_size, 18u);
        EXPECT_EQ(u16(b, 36), 0);  // cbSize
        EXPECT_EQ(f.tag, 3);
        EXPECT_EQ(f.channels, 2);
        EXPECT_EQ(f.byte_rate, 384000u);
        EXPECT_EQ(f.block_align, 8);
        EXPECT_EQ(f.bits, 32);
        EXPECT_TRUE(f.has_fact);
        EXPECT_EQ(f.fact_frames, 4800u);
        EXPECT_EQ(f.data_offset, 58u);
        const auto got = read_all(*open_recording(wav_spec(d.file("float32.wav")), hb::Setup{})).samples;
        const std::string raw = test::read_file(d.file("float32.bin"));
        ASSERT_EQ(got.size(), 4800u);
        for (std::size_t i = 0; i < got.size(); ++i) {
            float iq[2];
            std::memcpy(iq, raw.data() + 8 * i, 8);
            ASSERT_EQ(got[i], cf32(iq[0], iq[1])) << i;
        }
    }
    {  // Mono: a real signal, Q = 0.
        const auto got = read_all(*open_recording(wav_spec(d.file("mono.wav")), hb::Setup{})).samples;
        const std::string raw = test::read_file(d.file("mono.bin"));
        ASSERT_EQ(got.size(), 4800u);
        for (std::size_t i = 0; i < got.size(); ++i) {
            std::int16_t v;
            std::memcpy(&v, raw.data() + 2 * i, 2);
            ASSERT_EQ(got[i], cf32(v / 32768.0f, 0.0f)) << i;
        }
        // A real cosine of amplitude 0.25 splits into +-440 Hz lines of 0.125 each (reference-values D3).
        EXPECT_NEAR(amplitude_at(got, 440, 48000), 0.125, 1e-4);
        EXPECT_NEAR(amplitude_at(got, -440, 48000), 0.125, 1e-4);
    }
    const std::string msg = error_of([&] { open_recording(wav_spec(d.file("three.wav")), hb::Setup{}); });
    EXPECT_NE(msg.find("three.wav"), std::string::npos) << msg;
    EXPECT_NE(msg.find("3 channels"), std::string::npos) << msg;
}

// hetbench's libsndfile writer at each encoding: header fields by hand, then read back by scipy (an
// independent reader) and by hetbench, each within the encoding's quantisation step.
TEST(WavWrite, LibsndfileFilesReadBackEverywhere) {
    TempDir d;
    const auto x = tone(0.7, 3000, 96000, 9600);
    struct Enc {
        WavEncoding e;
        const char* name;
        int bits;
        int tag;
    };
    const auto py = test::python_with_scipy();
    struct Written {
        std::string path;
        int channels;
        double tolerance;
    };
    std::vector<Written> written;
    for (const Enc& enc : {Enc{WavEncoding::pcm16, "pcm16", 16, 1}, Enc{WavEncoding::pcm24, "pcm24", 24, 1},
                           Enc{WavEncoding::pcm32, "pcm32", 32, 1}, Enc{WavEncoding::float32, "float32", 32, 3}}) {
        for (int channels : {1, 2}) {
            const auto path = d.file(std::string(enc.name) + "_" + std::to_string(channels) + ".wav");
            write_wav(path.string(), x, 96000, channels, enc.e);
            const std::string b = test::read_file(path);
            const WavFmt f = parse_wav(b);
            EXPECT_EQ(f.tag, enc.tag) << path;
            EXPECT_EQ(f.channels, channels) << path;
            EXPECT_EQ(f.rate, 96000u);
            EXPECT_EQ(f.bits, enc.bits) << path;
            EXPECT_EQ(f.block_align, channels * enc.bits / 8) << path;
            EXPECT_EQ(f.byte_rate, 96000u * f.block_align) << path;
            EXPECT_EQ(f.data_size, 9600u * f.block_align) << path;
            if (enc.tag == 3) {
                EXPECT_TRUE(f.has_fact) << "a non-PCM WAV carries a fact chunk (V2)";
            }

            // Quantisation step of the encoding (float32: its own rounding).
            const double step = enc.tag == 3 ? 1e-7 : std::ldexp(1.0, -(enc.bits - 1));
            const auto got = read_all(*open_recording(wav_spec(path), hb::Setup{})).samples;
            ASSERT_EQ(got.size(), x.size());
            for (std::size_t i = 0; i < x.size(); ++i) {
                ASSERT_NEAR(got[i].real(), x[i].real(), step) << path << " " << i;
                ASSERT_NEAR(got[i].imag(), channels == 2 ? x[i].imag() : 0.0f, step) << path << " " << i;
            }
            written.push_back({path.string(), channels, std::max(step, 1e-7)});
        }
    }
    if (!py) GTEST_SKIP() << "/usr/bin/python3 with scipy is not available: the scipy read-back is skipped";
    // One scipy run reads every file; scipy's reference is the double-precision tone, ours was float32
    // before encoding (~6e-8), hence a floor of 1e-7 on the tolerance.
    const char* code = R"PY(
import sys
import numpy as np
from scipy.io import wavfile
for path in sys.argv[1:]:
    fs, v = wavfile.read(path)
    scale = {np.dtype('int16'): 2.0**15, np.dtype('int32'): 2.0**31, np.dtype('float32'): 1.0}[v.dtype]
    v = v.astype(np.float64) / scale
    if v.ndim == 1: v = v[:, None]
    n = np.arange(v.shape[0])
    ref = 0.7 * np.stack([np.cos(2*np.pi*3000*n/96000), np.sin(2*np.pi*3000*n/96000)], axis=1)[:, :v.shape[1]]
    print(fs, v.shape[1], float(np.max(np.abs(v - ref))))
)PY";
    std::vector<std::string> argv{*py, "-c", code};
    for (const auto& w : written) argv.push_back(w.path);
    const auto r = test::run(argv);
    ASSERT_EQ(r.exit_code, 0) << r.err;
    std::istringstream lines(r.out);
    for (const auto& w : written) {
        int fs = 0, ch = 0;
        double err = 1;
        ASSERT_TRUE(lines >> fs >> ch >> err) << r.out;
        EXPECT_EQ(fs, 96000) << w.path;
        EXPECT_EQ(ch, w.channels) << w.path;
        EXPECT_LE(err, w.tolerance) << w.path << " read by scipy.io.wavfile";
    }
}

// Swapping the channels conjugates the signal: a tone at +f moves to -f (reference-values §10 V5).
TEST(WavRead, SwapIqMirrorsATone) {
    TempDir d;
    const auto path = d.file("tone.wav");
    write_wav(path.string(), tone(0.5, 3000, 48000, 4800), 48000, 2, WavEncoding::float32);
    auto spec = wav_spec(path);
    const auto straight = read_all(*open_recording(spec, hb::Setup{})).samples;
    spec.swap_iq = true;
    const auto swapped = read_all(*open_recording(spec, hb::Setup{})).samples;
    EXPECT_NEAR(amplitude_at(straight, 3000, 48000), 0.5, 1e-6);
    EXPECT_LT(amplitude_at(straight, -3000, 48000), 1e-6);
    EXPECT_NEAR(amplitude_at(swapped, -3000, 48000), 0.5, 1e-6);
    EXPECT_LT(amplitude_at(swapped, 3000, 48000), 1e-6);
}

TEST(WavRead, CentreFromTheSourceAndRateMustAgree) {
    TempDir d;
    const auto path = d.file("UPPER.WAV");  // the extension is matched without regard to case
    write_wav(path.string(), tone(0.5, 100, 8000, 800), 8000, 2, WavEncoding::pcm16);
    auto spec = wav_spec(path);
    spec.frequency_hz = 14.2e6;
    spec.level_offset_db = -30;
    auto s = open_recording(spec, hb::Setup{});
    EXPECT_EQ(s->info().center_hz, 14.2e6);
    EXPECT_EQ(s->info().level_offset_db, -30.0);
    EXPECT_EQ(recording_details(*s)->kind, "WAV");
    spec.sample_rate_hz = 48000;
    const std::string msg = error_of([&] { open_recording(spec, hb::Setup{}); });
    EXPECT_NE(msg.find("UPPER.WAV"), std::string::npos) << msg;
    EXPECT_NE(msg.find("8000"), std::string::npos) << msg;
}

TEST(WavRead, BrokenFilesAreRefusedByName) {
    TempDir d;
    // A PCM16 header that claims 0 channels.
    std::string b = "RIFF____WAVEfmt ";
    const std::uint32_t fmt_size = 16, rate = 8000, byte_rate = 0, data_size = 8;
    const std::uint16_t tag = 1, channels = 0, align = 0, bits = 16;
    auto put = [&](const void* p, std::size_t n) { b.append(static_cast<const char*>(p), n); };
    put(&fmt_size, 4), put(&tag, 2), put(&channels, 2), put(&rate, 4), put(&byte_rate, 4), put(&align, 2), put(&bits, 2);
    b += "data";
    put(&data_size, 4);
    b.append(8, '\0');
    const std::uint32_t riff = static_cast<std::uint32_t>(b.size() - 8);
    std::memcpy(b.data() + 4, &riff, 4);
    test::write_file(d.file("zero.wav"), b);
    std::string msg = error_of([&] { open_recording(wav_spec(d.file("zero.wav")), hb::Setup{}); });
    EXPECT_NE(msg.find("zero.wav"), std::string::npos) << msg;

    test::write_file(d.file("text.wav"), "this is not a sound file");
    msg = error_of([&] { open_recording(wav_spec(d.file("text.wav")), hb::Setup{}); });
    EXPECT_NE(msg.find("text.wav"), std::string::npos) << msg;

    msg = error_of([&] { write_wav(d.file("x.wav").string(), tone(0.1, 1, 8, 8), 8000.5, 2, WavEncoding::pcm16); });
    EXPECT_NE(msg.find("whole number"), std::string::npos) << msg;
}

}  // namespace
}  // namespace hb
