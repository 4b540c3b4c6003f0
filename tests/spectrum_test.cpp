// Welch spectrum: calibration (reference-values W11), averaging modes, framing, bin-for-bin agreement with
// scipy.signal.welch, and no allocation per block.
#include "dsp/spectrum.hpp"

#include <gtest/gtest.h>

#include <atomic>
#include <cmath>
#include <complex>
#include <cstdlib>
#include <fstream>
#include <new>
#include <numeric>
#include <random>
#include <sstream>

#include "dsp/errors.hpp"
#include "dsp/units.hpp"
#include "support/test_support.hpp"

// Counts heap allocations so the test can prove push() allocates nothing. (GCC cannot see that the
// replaced new and delete pair malloc with free.)
#pragma GCC diagnostic ignored "-Wmismatched-new-delete"
namespace {
std::atomic<long> g_allocations{0};
}
void* operator new(std::size_t n) {
    g_allocations.fetch_add(1, std::memory_order_relaxed);
    if (void* p = std::malloc(n ? n : 1)) return p;
    throw std::bad_alloc();
}
void operator delete(void* p) noexcept {
    std::free(p);
}
void operator delete(void* p, std::size_t) noexcept {
    std::free(p);
}

namespace hb {
namespace {

using cf = std::complex<float>;

AnalyzerSpec spec_of(int n, WindowType w, double overlap = 0.5, int averages = 8, Averaging avg = Averaging::rms) {
    AnalyzerSpec a;
    a.fft_size = n;
    a.window = w;
    a.kaiser_beta = 9.0;
    a.overlap = overlap;
    a.averages = averages;
    a.averaging = avg;
    return a;
}

// A complex tone A·e^{j2πft} plus complex white Gaussian noise of variance sigma2 (E|z|² = sigma2).
std::vector<cf> tone_and_noise(std::size_t len, double fs, double f, double amp, double sigma2, unsigned seed) {
    std::mt19937_64 rng(seed);
    std::normal_distribution<double> g(0.0, std::sqrt(sigma2 / 2));
    std::vector<cf> x(len);
    for (std::size_t i = 0; i < len; ++i) {
        const double ph = kTwoPi * std::fmod(f * static_cast<double>(i) / fs, 1.0);
        x[i] = cf(static_cast<float>(amp * std::cos(ph) + g(rng)), static_cast<float>(amp * std::sin(ph) + g(rng)));
    }
    return x;
}

std::size_t samples_for(const AnalyzerSpec& a, int frames) {
    const int hop = std::max(1, static_cast<int>(std::lround(a.fft_size * (1.0 - a.overlap))));
    return static_cast<std::size_t>(a.fft_size + (frames - 1) * hop);
}

const std::vector<WindowType> kAllWindows{WindowType::rectangular, WindowType::hann, WindowType::blackman_harris,
                                          WindowType::flat_top, WindowType::kaiser};

TEST(Spectrum, ToneLevelAndNoiseDensityScaling) {
    // reference-values W11, in the complex form of design.md §4: a tone A·e^{j2πft} on a bin centre reads A²
    // (20·log10 A dBFS) for every window, and complex white noise of variance σ² reads a density σ²/fs
    // (derivable: E|X[k]|² = σ²·Σw², divided by (Σw)² and by RBW = ENBW·fs/N).
    const double fs = 1.024e6, amp = 2.0;
    for (int n : {256, 1024, 8192}) {
        for (WindowType w : kAllWindows) {
            SCOPED_TRACE(std::string(to_string(w)) + " N=" + std::to_string(n));
            const AnalyzerSpec a = spec_of(n, w, 0.5, 32);
            // Tone alone (centred on bin +n/8): 0.1 dB.
            Welch tone = Welch::make(a, 0.0, fs);
            tone.push(tone_and_noise(samples_for(a, 4), fs, fs / 8, amp, 0.0, 1));
            const Spectrum st = tone.read();
            const auto peak = static_cast<std::size_t>(n / 2 + n / 8);
            EXPECT_NEAR(st.level_db(st.power[peak]), db_from_amplitude(amp), 0.1);
            EXPECT_NEAR(st.freq_of_bin(static_cast<double>(peak)), fs / 8, 1e-6);
            // Noise alone, σ² = 0.01: mean density within 0.2 dB.
            const double sigma2 = 0.01;
            Welch noise = Welch::make(a, 0.0, fs);
            noise.push(tone_and_noise(samples_for(a, 32), fs, 0.0, 0.0, sigma2, 2));
            const Spectrum sn = noise.read();
            const double mean = std::accumulate(sn.power.begin(), sn.power.end(), 0.0) / n;
            EXPECT_NEAR(sn.density_db_per_hz(mean), db_from_power(sigma2 / fs), 0.2);
            EXPECT_NEAR(sn.rbw_hz, sn.enbw_bins * fs / n, 1e-9);
        }
    }
}

TEST(Spectrum, CalibrationAddsToEveryLevelInDbm) {
    AnalyzerSpec a = spec_of(1024, WindowType::hann);
    a.unit = LevelUnit::dbm;
    a.calibration_db = -37.5;  // an invented bench: 0 dBFS at the ADC is −37.5 dBm at the IF port
    Welch wl = Welch::make(a, 10.7e6, 1e6);
    wl.push(tone_and_noise(samples_for(a, 8), 1e6, 0.0, 0.1, 0.0, 3));
    const Spectrum s = wl.read();
    EXPECT_NEAR(s.level_db(s.power[512]), -20.0 - 37.5, 0.01);
    std::vector<float> db(1024);
    spectrum_to_db(s, db);
    EXPECT_NEAR(db[512], -57.5, 0.01);
    EXPECT_NEAR(s.freq_of_bin(512), 10.7e6, 1e-6);  // absolute frequencies: the stream's centre at bin N/2
    EXPECT_NEAR(s.low_hz(), 10.7e6 - 0.5e6, 1e-6);
}

TEST(Spectrum, MatchesScipyWelchBinForBin) {
    // scipy.signal.welch(x, fs, window, nperseg, noverlap, detrend=False, return_onesided=False,
    // scaling='spectrum') computes |X|²/(Σw)² averaged over the same frames: our power[] before fftshift.
    const auto py = test::python_with_scipy();
    if (!py) GTEST_SKIP() << "python3 with numpy and scipy not found (Debian: python3-scipy)";
    test::TempDir tmp;
    const double fs = 48000.0;
    struct Case {
        WindowType w;
        const char* scipy;
        double overlap;
    };
    const std::vector<Case> cases{{WindowType::hann, "'hann'", 0.5},
                                  {WindowType::blackman_harris, "'blackmanharris'", 0.75},
                                  {WindowType::flat_top, "'flattop'", 0.0},
                                  {WindowType::kaiser, "('kaiser', 9.0)", 0.5}};
    const int n = 1024;
    std::vector<cf> x = tone_and_noise(20000, fs, 3210.5, 0.3, 1e-3, 4);
    const auto y = tone_and_noise(20000, fs, -7777.0, 0.01, 0.0, 5);
    for (std::size_t i = 0; i < x.size(); ++i) x[i] += y[i];
    {
        std::ofstream f(tmp.file("x.cf32"), std::ios::binary);
        f.write(reinterpret_cast<const char*>(x.data()), static_cast<std::streamsize>(x.size() * sizeof(cf)));
    }
    std::string script = "import numpy as np, scipy.signal as s\nx = np.fromfile('" + tmp.file("x.cf32").string() +
                         "', dtype=np.complex64).astype(np.complex128)\n";
    for (const Case& c : cases) {
        const int noverlap = n - static_cast<int>(std::lround(n * (1.0 - c.overlap)));
        script += "f, p = s.welch(x, fs=" + std::to_string(fs) + ", window=" + c.scipy +
                  ", nperseg=" + std::to_string(n) + ", noverlap=" + std::to_string(noverlap) +
                  ", detrend=False, return_onesided=False, scaling='spectrum')\n"
                  "print(' '.join(repr(float(v)) for v in np.fft.fftshift(p)))\n";
    }
    const auto r = test::run({*py, "-c", script});
    ASSERT_EQ(r.exit_code, 0) << r.err;
    std::istringstream lines(r.out);
    for (const Case& c : cases) {
        SCOPED_TRACE(c.scipy);
        AnalyzerSpec a = spec_of(n, c.w, c.overlap, 100000);  // one long average over every frame
        Welch wl = Welch::make(a, 0.0, fs);
        for (std::size_t i = 0; i < x.size(); i += 333)  // odd block sizes on purpose
            wl.push(std::span<const cf>(x).subspan(i, std::min<std::size_t>(333, x.size() - i)));
        const Spectrum s = wl.read();
        std::string line;
        ASSERT_TRUE(std::getline(lines, line));
        std::istringstream in(line);
        double v = 0.0, worst = 0.0;
        int k = 0;
        while (in >> v) {
            ASSERT_LT(k, n);
            // float input and FFT: relative 1e-4 on the strong bins, absolute 1e-9 near the noise
            worst = std::max(worst, std::abs(s.power[static_cast<std::size_t>(k)] - v) / (std::abs(v) + 1e-5));
            ++k;
        }
        EXPECT_EQ(k, n);
        EXPECT_LT(worst, 1e-3);
    }
}

TEST(Spectrum, AveragingModesFollowTheirStatistics) {
    // Unit-variance complex white noise, rectangular window, no overlap: every bin of every frame is an
    // independent exponential variable of mean σ²·ENBW/N = 1/N, scaled by N below to mean 1.
    // Derivable order statistics: the mean of the maximum of K such variables is H_K = Σ 1/i, of the
    // minimum 1/K; the linear average of K has variance 1/K; the exponential average with α has variance
    // α/(2 − α) in the steady state.
    const int n = 4096, k = 16;
    const double fs = 1e6;
    const auto x = tone_and_noise(static_cast<std::size_t>(n) * 400, fs, 0.0, 0.0, 1.0, 6);
    auto run = [&](Averaging mode, int frames) {
        Welch wl = Welch::make(spec_of(n, WindowType::rectangular, 0.0, k, mode), 0.0, fs);
        wl.push(std::span<const cf>(x).first(static_cast<std::size_t>(n) * static_cast<std::size_t>(frames)));
        Spectrum s = wl.read();
        for (double& p : s.power) p *= n;  // σ²·ENBW/N per bin → mean 1
        double m = 0.0, v = 0.0;
        for (double p : s.power) m += p;
        m /= n;
        for (double p : s.power) v += (p - m) * (p - m);
        return std::pair{m, v / n};
    };
    double harmonic = 0.0;
    for (int i = 1; i <= k; ++i) harmonic += 1.0 / i;
    const auto [m_max, v_max] = run(Averaging::max_hold, k);
    EXPECT_NEAR(m_max / harmonic, 1.0, 0.03);
    const auto [m_min, v_min] = run(Averaging::min_hold, k);
    EXPECT_NEAR(m_min * k, 1.0, 0.05);
    const auto [m_rms, v_rms] = run(Averaging::rms, k);
    EXPECT_NEAR(m_rms, 1.0, 0.02);
    EXPECT_NEAR(v_rms * k, 1.0, 0.08);
    const auto [m_exp, v_exp] = run(Averaging::exponential, 400);  // long past the start-up
    const double alpha = 1.0 / k;
    EXPECT_NEAR(m_exp, 1.0, 0.03);
    EXPECT_NEAR(v_exp / (alpha / (2 - alpha)), 1.0, 0.1);
    (void)v_max;
    (void)v_min;
}

TEST(Spectrum, FramingIsIndependentOfBlockSizes) {
    const AnalyzerSpec a = spec_of(1024, WindowType::blackman_harris, 0.75, 5);
    const auto x = tone_and_noise(20000, 1e6, 12345.0, 0.5, 1e-4, 7);
    Welch whole = Welch::make(a, 0.0, 1e6);
    whole.push(x);
    const Spectrum ref = whole.read();
    for (std::size_t block : {1u, 7u, 256u, 1023u, 1024u, 5000u}) {
        Welch wl = Welch::make(a, 0.0, 1e6);
        for (std::size_t i = 0; i < x.size(); i += block)
            wl.push(std::span<const cf>(x).subspan(i, std::min(block, x.size() - i)));
        const Spectrum s = wl.read();
        EXPECT_EQ(s.frames, ref.frames);
        EXPECT_EQ(s.power, ref.power) << "block " << block;
    }
    // Frames: floor((M − N)/hop) + 1 = (20000 − 1024)/256 + 1 = 75 frames → 15 complete sets of 5.
    EXPECT_EQ(whole.hop(), 256);
    EXPECT_EQ(whole.completed_sets(), 75 / 5);
    EXPECT_EQ(ref.frames, 5);
    EXPECT_TRUE(whole.ready());
    whole.reset();
    EXPECT_EQ(whole.frames(), 0);
    EXPECT_FALSE(whole.ready());
}

TEST(Spectrum, RmsPublishesCompleteSetsOnly) {
    // Before the first set completes, read() gives the partial average; afterwards the last complete set,
    // even while the next set is accumulating.
    const AnalyzerSpec a = spec_of(256, WindowType::hann, 0.0, 4);
    Welch wl = Welch::make(a, 0.0, 1e3);
    const auto quiet = tone_and_noise(256 * 4, 1e3, 0.0, 0.1, 0.0, 8);
    const auto loud = tone_and_noise(256 * 2, 1e3, 0.0, 1.0, 0.0, 9);
    wl.push(std::span<const cf>(quiet).first(512));
    EXPECT_EQ(wl.read().frames, 2);
    EXPECT_NEAR(wl.read().level_db(wl.read().power[128]), -20.0, 0.01);
    wl.push(std::span<const cf>(quiet).subspan(512));
    wl.push(loud);  // two frames of the next set
    const Spectrum s = wl.read();
    EXPECT_EQ(s.frames, 4);
    EXPECT_NEAR(s.level_db(s.power[128]), -20.0, 0.01);
}

TEST(Spectrum, PushDoesNotAllocate) {
    const AnalyzerSpec a = spec_of(4096, WindowType::blackman_harris, 0.5, 4);
    Welch wl = Welch::make(a, 0.0, 1e6);
    const auto x = tone_and_noise(50000, 1e6, 1000.0, 0.5, 1e-3, 10);
    Spectrum s;
    wl.read(s);  // sizes the output once
    const long probe = g_allocations.load();
    delete new std::vector<int>(3);  // the counter itself works
    ASSERT_GE(g_allocations.load() - probe, 1);
    const long before = g_allocations.load();
    for (std::size_t i = 0; i < x.size(); i += 1000) wl.push(std::span<const cf>(x).subspan(i, 1000));
    wl.read(s);
    EXPECT_EQ(g_allocations.load() - before, 0);
    EXPECT_GT(wl.completed_sets(), 0);
}

TEST(Spectrum, BadSettingsNameTheirKey) {
    auto expect_error = [](AnalyzerSpec a, double fs, const std::string& key) {
        try {
            (void)Welch::make(a, 0.0, fs);
            ADD_FAILURE() << "no error for " << key;
        } catch (const InputError& e) {
            EXPECT_NE(std::string(e.what()).find(key), std::string::npos) << e.what();
        }
    };
    AnalyzerSpec a = spec_of(1000, WindowType::hann);
    expect_error(a, 1e6, "analyzer.fft_size");
    a = spec_of(128, WindowType::hann);
    expect_error(a, 1e6, "analyzer.fft_size");
    a = spec_of(1024, WindowType::hann, 0.99);
    expect_error(a, 1e6, "analyzer.overlap");
    a = spec_of(1024, WindowType::hann, std::nan(""));
    expect_error(a, 1e6, "analyzer.overlap");
    a = spec_of(1024, WindowType::hann, 0.5, 0);
    expect_error(a, 1e6, "analyzer.averages");
    a = spec_of(1024, WindowType::kaiser);
    a.kaiser_beta = -1;
    expect_error(a, 1e6, "analyzer.kaiser_beta");
    expect_error(spec_of(1024, WindowType::hann), 0.0, "sample rate");
    expect_error(spec_of(1024, WindowType::hann), std::nan(""), "sample rate");
}

}  // namespace
}  // namespace hb
