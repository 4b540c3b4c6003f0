// Raw sample files: explicit format, rate and centre; decoding, truncation, loop, pacing, swap I/Q.
#include <gtest/gtest.h>

#include <chrono>
#include <cmath>
#include <cstring>

#include "devices/recording.hpp"
#include "recording_support.hpp"

namespace hb {
namespace {

using test::error_of;
using test::read_all;
using test::TempDir;

std::string bytes_of(const void* p, std::size_t n) { return std::string(static_cast<const char*>(p), n); }

SourceSpec raw_spec(const std::filesystem::path& p, const char* format, double rate = 1e6, double freq = 0) {
    SourceSpec s;
    s.kind = SourceKind::recording;
    s.path = p.string();
    s.format = format;
    s.sample_rate_hz = rate;
    s.frequency_hz = freq;
    return s;
}

// n cf32 samples, real part = index, imaginary part = -index.
std::filesystem::path ramp_file(const TempDir& d, std::size_t n) {
    std::vector<float> v(2 * n);
    for (std::size_t i = 0; i < n; ++i) v[2 * i] = static_cast<float>(i), v[2 * i + 1] = -static_cast<float>(i);
    const auto p = d.file("ramp.cf32");
    test::write_file(p, bytes_of(v.data(), v.size() * 4));
    return p;
}

TEST(RawRecording, FormatRateAndCentreAreRequired) {
    TempDir d;
    const auto p = ramp_file(d, 16);
    SourceSpec s = raw_spec(p, "cf32_le");
    s.format.clear();
    std::string msg = error_of([&] { open_recording(s, hb::Setup{}); });
    EXPECT_NE(msg.find("ramp.cf32"), std::string::npos) << msg;
    EXPECT_NE(msg.find("format"), std::string::npos) << msg;

    s = raw_spec(p, "cf32_le");
    s.sample_rate_hz.reset();
    msg = error_of([&] { open_recording(s, hb::Setup{}); });
    EXPECT_NE(msg.find("sample rate"), std::string::npos) << msg;

    s = raw_spec(p, "cf32_le");
    s.frequency_hz.reset();
    msg = error_of([&] { open_recording(s, hb::Setup{}); });
    EXPECT_NE(msg.find("centre frequency"), std::string::npos) << msg;

    s = raw_spec(p, "cf32_le", 0.0);
    msg = error_of([&] { open_recording(s, hb::Setup{}); });
    EXPECT_NE(msg.find("sample rate: got 0"), std::string::npos) << msg;

    s = raw_spec(p, "complex-float");
    msg = error_of([&] { open_recording(s, hb::Setup{}); });
    EXPECT_NE(msg.find("complex-float"), std::string::npos) << msg;
    EXPECT_NE(msg.find("cf32_le"), std::string::npos) << msg;  // says what is expected

    s = raw_spec(d.file("absent.cf32"), "cf32_le");
    msg = error_of([&] { open_recording(s, hb::Setup{}); });
    EXPECT_NE(msg.find("absent.cf32"), std::string::npos) << msg;
}

// Integer scaling (reference-values §10 V4: 8-bit unsigned has 128 = zero; signed 16-bit little-endian):
// ci16 code / 32768, cu8 (code - 128) / 128. Values worked by hand.
TEST(RawRecording, IntegerCodesScaleToFullScale) {
    TempDir d;
    const std::int16_t i16[8] = {0, 16384, -32768, 32767, 1, -1, 8192, -8192};
    test::write_file(d.file("a.ci16"), bytes_of(i16, sizeof i16));
    auto s = open_recording(raw_spec(d.file("a.ci16"), "ci16_le", 2.4e6, 433.92e6), hb::Setup{});
    EXPECT_EQ(s->info().center_hz, 433.92e6);
    auto got = read_all(*s).samples;
    ASSERT_EQ(got.size(), 4u);
    EXPECT_EQ(got[0], cf32(0.0f, 0.5f));
    EXPECT_EQ(got[1], cf32(-1.0f, 32767.0f / 32768.0f));
    EXPECT_EQ(got[2], cf32(1.0f / 32768.0f, -1.0f / 32768.0f));
    EXPECT_EQ(got[3], cf32(0.25f, -0.25f));

    const std::uint8_t u8[6] = {128, 128, 0, 255, 192, 64};
    test::write_file(d.file("b.cu8"), bytes_of(u8, sizeof u8));
    got = read_all(*open_recording(raw_spec(d.file("b.cu8"), "cu8"), hb::Setup{})).samples;
    ASSERT_EQ(got.size(), 3u);
    EXPECT_EQ(got[0], cf32(0.0f, 0.0f));
    EXPECT_EQ(got[1], cf32(-1.0f, 127.0f / 128.0f));
    EXPECT_EQ(got[2], cf32(0.5f, -0.5f));

    // A real stream becomes complex with Q = 0.
    got = read_all(*open_recording(raw_spec(d.file("b.cu8"), "ru8"), hb::Setup{})).samples;
    ASSERT_EQ(got.size(), 6u);
    EXPECT_EQ(got[3], cf32(127.0f / 128.0f, 0.0f));
}

TEST(RawRecording, TrailingBytesAreIgnoredWithAWarning) {
    TempDir d;
    const auto p = ramp_file(d, 100);
    test::write_file(p, test::read_file(p) + "xyz");
    auto s = open_recording(raw_spec(p, "cf32_le"), hb::Setup{});
    const auto* det = recording_details(*s);
    ASSERT_TRUE(det);
    EXPECT_EQ(det->kind, "raw");
    ASSERT_EQ(det->warnings.size(), 1u);
    EXPECT_NE(det->warnings[0].find("3 trailing byte(s)"), std::string::npos) << det->warnings[0];
    EXPECT_EQ(read_all(*s).samples.size(), 100u);

    test::write_file(d.file("tiny.cf32"), "1234567");  // less than one sample
    const std::string msg = error_of([&] { open_recording(raw_spec(d.file("tiny.cf32"), "cf32_le"), hb::Setup{}); });
    EXPECT_NE(msg.find("no whole"), std::string::npos) << msg;
}

TEST(RawRecording, LoopRestartsAndCountersCount) {
    TempDir d;
    const auto p = ramp_file(d, 1000);
    SourceSpec spec = raw_spec(p, "cf32_le");
    spec.loop = true;
    spec.level_offset_db = -17.5;
    auto s = open_recording(spec, hb::Setup{});
    EXPECT_EQ(s->info().level_offset_db, -17.5);
    const auto got = read_all(*s, 300, 2500).samples;
    ASSERT_EQ(got.size(), 2500u);
    for (std::size_t i = 0; i < got.size(); ++i) ASSERT_EQ(got[i].real(), static_cast<float>(i % 1000)) << i;
    EXPECT_EQ(s->counters().samples, 2500u);

    spec.loop = false;
    auto once = open_recording(spec, hb::Setup{});
    const auto r1 = read_all(*once, 300);
    EXPECT_EQ(r1.samples.size(), 1000u);
    EXPECT_EQ(r1.last, ReadStatus::end);
    cf32 one;
    EXPECT_EQ(once->read(std::span<cf32>(&one, 1), 0.1).status, ReadStatus::end);  // stays at the end
    ASSERT_TRUE(once->rewind());
    EXPECT_EQ(read_all(*once).samples.size(), 1000u);
}

// Swapping I and Q conjugates and rotates: (a, b) -> (b, a) (reference-values §10 V5, derivable).
TEST(RawRecording, SwapIqExchangesTheComponents) {
    TempDir d;
    const auto p = ramp_file(d, 50);
    SourceSpec spec = raw_spec(p, "cf32_le");
    spec.swap_iq = true;
    const auto got = read_all(*open_recording(spec, hb::Setup{})).samples;
    ASSERT_EQ(got.size(), 50u);
    for (std::size_t i = 0; i < 50; ++i) ASSERT_EQ(got[i], cf32(-static_cast<float>(i), static_cast<float>(i)));
}

TEST(RawRecording, NonFiniteSamplesBecomeZeroAndAreCounted) {
    TempDir d;
    const float v[6] = {1.0f, 0.5f, std::nanf(""), 0.25f, 0.125f, INFINITY};
    test::write_file(d.file("nan.cf32"), bytes_of(v, sizeof v));
    auto s = open_recording(raw_spec(d.file("nan.cf32"), "cf32_le"), hb::Setup{});
    const auto got = read_all(*s).samples;
    ASSERT_EQ(got.size(), 3u);
    EXPECT_EQ(got[0], cf32(1.0f, 0.5f));
    EXPECT_EQ(got[1], cf32(0.0f, 0.0f));
    EXPECT_EQ(got[2], cf32(0.0f, 0.0f));
    EXPECT_EQ(s->counters().non_finite, 2u);
}

// Paced playback delivers no faster than the sample rate (a lower bound on elapsed time: not a speed
// measurement), and a short timeout returns what is due instead of blocking for a whole block.
TEST(RawRecording, PacedPlaybackFollowsTheSampleRate) {
    TempDir d;
    const auto p = ramp_file(d, 20000);
    RecordingOptions paced;
    paced.paced = true;
    auto s = open_recording(raw_spec(p, "cf32_le", 100e3), hb::Setup{}, paced);
    const auto t0 = std::chrono::steady_clock::now();
    std::vector<cf32> buf(100000);
    const auto r = s->read(buf, 0.02);  // asks for 1 s of samples, may wait only 20 ms
    EXPECT_TRUE(r.status == ReadStatus::ok || r.status == ReadStatus::timeout);
    EXPECT_LT(r.count, 20000u);
    const auto rest = read_all(*s, 4096);
    const double elapsed = std::chrono::duration<double>(std::chrono::steady_clock::now() - t0).count();
    EXPECT_EQ(r.count + rest.samples.size(), 20000u);
    EXPECT_GE(elapsed, 0.19);  // 20000 samples at 100 kHz = 0.2 s
    // Order is kept across the short read.
    EXPECT_EQ(rest.samples.front().real(), static_cast<float>(r.count));
}

}  // namespace
}  // namespace hb
