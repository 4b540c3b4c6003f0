#include "dsp/lo.hpp"

#include "dsp/fft.hpp"

#include <fftw3.h>

#include <algorithm>
#include <cmath>
#include <limits>
#include <mutex>

#include "dsp/errors.hpp"
#include "dsp/units.hpp"
#include "dsp/vector_math.hpp"

namespace hb {
namespace {

double sinc(double x) { return x == 0.0 ? 1.0 : std::sin(kPi * x) / (kPi * x); }

}  // namespace

void check_lo_waveform(const LoWaveform& w, const std::string& key) {
    if (w.shape == LoShape::sine) return;
    if (!(w.duty > 0.0 && w.duty < 1.0))
        throw InputError(key + ".duty_cycle: got " + format_number(w.duty) +
                         ", expected a fraction of the LO period above 0 and below 1");
    const double room = std::min(w.duty, 1.0 - w.duty);
    if (!(w.edge >= 0.0 && w.edge <= room))
        throw InputError(key + ".edge_time: got " + format_number(w.edge) + ", expected 0 to " + format_number(room) +
                         " of the LO period (an edge cannot be longer than the shorter part of the duty cycle " +
                         format_number(w.duty) + ")");
    if (w.harmonics < 1 || w.harmonics > 63)
        throw InputError(key + ".harmonics: got " + std::to_string(w.harmonics) + ", expected an integer from 1 to 63");
}

double lo_cosine_coefficient(const LoWaveform& w, int m) {
    if (m < 0) m = -m;
    switch (w.shape) {
        case LoShape::sine:
            return m == 1 ? 1.0 : 0.0;
        case LoShape::unipolar:
            if (m == 0) return w.duty;
            return 2.0 * w.duty * sinc(m * w.duty) * sinc(m * w.edge);
        case LoShape::bipolar:
            if (m == 0) return 2.0 * w.duty - 1.0;
            return 4.0 * w.duty * sinc(m * w.duty) * sinc(m * w.edge);
    }
    return 0.0;
}

LoSeries lo_series(const LoWaveform& w) {
    LoSeries s;
    s.harmonics = w.shape == LoShape::sine ? 1 : w.harmonics;
    s.coeff.assign(static_cast<std::size_t>(2 * s.harmonics + 1), {});
    for (int m = -s.harmonics; m <= s.harmonics; ++m) {
        double c = lo_cosine_coefficient(w, m);
        // sin(π·m·d) of an exact zero (an even harmonic at d = 0.5) leaves ~1e-17: keep zeros zero, so the
        // emulator skips those terms (a real coefficient this small would be 240 dB down).
        if (std::abs(c) < 1e-12) c = 0.0;
        s.coeff[static_cast<std::size_t>(m + s.harmonics)] = m == 0 ? c : c / 2.0;
    }
    return s;
}

LoSeries lo_series_quadrature(const LoWaveform& w) {
    LoSeries s = lo_series(w);
    // Q(θ) = s(θ + π/2) = Σ S_m·j^m·e^{jmθ}, so I + jQ has L_m = S_m·(1 + j^{m+1}).
    static constexpr std::complex<double> kJPow[4] = {{1, 0}, {0, 1}, {-1, 0}, {0, -1}};
    for (int m = -s.harmonics; m <= s.harmonics; ++m) {
        const int k = (((m + 1) % 4) + 4) % 4;
        auto& c = s.coeff[static_cast<std::size_t>(m + s.harmonics)];
        c *= 1.0 + kJPow[k];
    }
    return s;
}

double lo_waveform_value(const LoWaveform& w, double cycles) {
    if (w.shape == LoShape::sine) return std::cos(kTwoPi * cycles);
    double t = cycles - std::floor(cycles);  // [0, 1)
    if (t > 0.5) t -= 1.0;                   // [-0.5, 0.5]: the pulse is centred on 0
    const double a = std::abs(t);
    const double half = w.duty / 2.0;
    double u;
    if (w.edge <= 0.0) {
        u = a < half ? 1.0 : (a == half ? 0.5 : 0.0);
    } else {
        // Trapezoid: 1 inside half − edge/2, 0 beyond half + edge/2, a straight line between (50 % at `half`).
        u = std::clamp(0.5 - (a - half) / w.edge, 0.0, 1.0);
    }
    return w.shape == LoShape::unipolar ? u : 2.0 * u - 1.0;
}

// ---------------------------------------------------------------------------------------------

namespace {
std::uint64_t splitmix64(std::uint64_t& x) {
    std::uint64_t z = (x += 0x9e3779b97f4a7c15ULL);
    z = (z ^ (z >> 30)) * 0xbf58476d1ce4e5b9ULL;
    z = (z ^ (z >> 27)) * 0x94d049bb133111ebULL;
    return z ^ (z >> 31);
}
}  // namespace

GaussRng GaussRng::make(std::uint64_t seed) {
    GaussRng r;
    std::uint64_t x = seed;
    for (auto& v : r.s) v = splitmix64(x);
    return r;
}

void GaussRng::gauss_pair(double& a, double& b) {
    const double u1 = 1.0 - uniform();  // (0, 1]: log stays finite
    const double u2 = uniform();
    const double r = std::sqrt(-2.0 * std::log(u1));
    a = r * std::cos(kTwoPi * u2);
    b = r * std::sin(kTwoPi * u2);
}

void GaussRng::fill_pairs(float* a, float* b, std::size_t n) {
    constexpr std::size_t kBatch = 64;
    // The transform runs over whole batches into local arrays (a fixed count the vectoriser takes without an
    // epilogue or an alias check; over m it had stayed scalar, a tenth of a 10 MS/s soak's CPU); a short last
    // batch computes harmless values past m and copies m.
    alignas(64) float u1[kBatch], u2[kBatch], ra[kBatch], rb[kBatch];
    std::fill(u1, u1 + kBatch, 0.5f);
    std::fill(u2, u2 + kBatch, 0.0f);
    while (n > 0) {
        const std::size_t m = std::min(n, kBatch);
        for (std::size_t i = 0; i < m; ++i) {
            const std::uint64_t r = next();
            u1[i] = (static_cast<float>(r >> 40) + 0.5f) * 0x1.0p-24f;              // (0, 1)
            u2[i] = static_cast<float>((r >> 16) & 0xffffffu) * 0x1.0p-24f;        // [0, 1)
        }
        for (std::size_t i = 0; i < kBatch; ++i) {
            const float rad = vmath::sqrt_nonneg(-2.0f * vmath::log_pos(u1[i]));
            float s, c;
            vmath::sincos_turns(u2[i], s, c);
            ra[i] = rad * c;
            rb[i] = rad * s;
        }
        std::copy(ra, ra + m, a);
        std::copy(rb, rb + m, b);
        a += m;
        b += m;
        n -= m;
    }
}

std::uint64_t derive_seed(std::uint64_t seed, std::uint64_t tag) {
    std::uint64_t x = seed ^ (tag * 0xd1b54a32d192ed03ULL);
    splitmix64(x);
    return splitmix64(x);
}

// ---------------------------------------------------------------------------------------------

double phase_noise_dbc_per_hz(std::span<const PhaseNoisePoint> p, double f) {
    if (p.empty()) return -std::numeric_limits<double>::infinity();
    f = std::abs(f);
    if (f <= p.front().offset_hz) return p.front().dbc_per_hz;
    if (f >= p.back().offset_hz) return p.back().dbc_per_hz;
    for (std::size_t i = 1; i < p.size(); ++i) {
        if (f <= p[i].offset_hz) {
            const double x = std::log10(f / p[i - 1].offset_hz) / std::log10(p[i].offset_hz / p[i - 1].offset_hz);
            return p[i - 1].dbc_per_hz + x * (p[i].dbc_per_hz - p[i - 1].dbc_per_hz);
        }
    }
    return p.back().dbc_per_hz;
}

double integrated_phase_noise_rad(std::span<const PhaseNoisePoint> p, double f1, double f2) {
    if (p.empty() || !(f2 > f1) || !(f1 >= 0)) return 0.0;
    // Breakpoints inside [f1, f2]; between them L(f) is a power law P(f) = P_a·(f/f_a)^k, integrated exactly.
    std::vector<double> edges{f1};
    for (const auto& q : p)
        if (q.offset_hz > f1 && q.offset_hz < f2) edges.push_back(q.offset_hz);
    edges.push_back(f2);
    double sum = 0.0;
    for (std::size_t i = 1; i < edges.size(); ++i) {
        const double a = edges[i - 1], b = edges[i];
        const double pa = power_from_db(phase_noise_dbc_per_hz(p, a));
        const double pb = power_from_db(phase_noise_dbc_per_hz(p, b));
        const bool flat = b <= p.front().offset_hz || a >= p.back().offset_hz || pa == pb;
        if (flat) {
            sum += pa * (b - a);  // outside the profile the level is held
            continue;
        }
        const double k = std::log(pb / pa) / std::log(b / a);
        if (std::abs(k + 1.0) < 1e-12)
            sum += pa * a * std::log(b / a);
        else
            sum += pa * a / (k + 1.0) * (std::pow(b / a, k + 1.0) - 1.0);
    }
    return std::sqrt(2.0 * sum);
}

// ---------------------------------------------------------------------------------------------

namespace {
constexpr std::uint64_t kPhaseNoiseSeedTag = 0x70686e; // "phn"
}  // namespace

struct PhaseNoiseSource::Impl {
    std::size_t len = 0;  // FIR length = hop; FFT size 2·len
    std::uint64_t seed = 0;
    GaussRng rng;
    float* time = nullptr;              // 2·len: [previous len inputs | new len inputs], then the filtered block
    fftwf_complex* freq = nullptr;      // len + 1 bins
    std::vector<std::complex<float>> response;  // FFT of the FIR (scaled by 1/(2·len))
    std::vector<float> history;         // the last len white inputs
    std::vector<float> out;             // the valid len outputs of the last block
    std::size_t out_pos = 0;            // next unread output
    fftwf_plan fwd = nullptr, inv = nullptr;

    ~Impl() {
        std::lock_guard lock(fftw_planner_mutex());
        if (fwd) fftwf_destroy_plan(fwd);
        if (inv) fftwf_destroy_plan(inv);
        if (time) fftwf_free(time);
        if (freq) fftwf_free(freq);
    }

    void next_block() {
        const std::size_t n2 = 2 * len;
        std::copy(history.begin(), history.end(), time);
        rng.fill_pairs(time + len, time + len + len / 2, len / 2);
        std::copy(time + len, time + n2, history.begin());
        fftwf_execute(fwd);
        auto* f = reinterpret_cast<std::complex<float>*>(freq);
        for (std::size_t k = 0; k <= len; ++k) f[k] *= response[k];
        fftwf_execute(inv);
        std::copy(time + len, time + n2, out.begin());  // overlap-save: the last len outputs are valid
        out_pos = 0;
    }
};

PhaseNoiseSource::PhaseNoiseSource() = default;
PhaseNoiseSource::~PhaseNoiseSource() = default;
PhaseNoiseSource::PhaseNoiseSource(PhaseNoiseSource&&) noexcept = default;
PhaseNoiseSource& PhaseNoiseSource::operator=(PhaseNoiseSource&&) noexcept = default;

bool PhaseNoiseSource::enabled() const { return impl_ != nullptr; }
std::size_t PhaseNoiseSource::filter_length() const { return impl_ ? impl_->len : 0; }

PhaseNoiseSource PhaseNoiseSource::make(std::span<const PhaseNoisePoint> profile, double fs, std::uint64_t seed) {
    PhaseNoiseSource src;
    if (profile.empty()) return src;
    if (!(fs > 0) || !std::isfinite(fs))
        throw InputError("phase noise: sample rate " + format_number(fs) + " Hz, expected a positive number");
    for (std::size_t i = 0; i < profile.size(); ++i)
        if (!(profile[i].offset_hz > 0) || !std::isfinite(profile[i].dbc_per_hz) ||
            (i > 0 && !(profile[i].offset_hz > profile[i - 1].offset_hz)))
            throw InputError("mixer.lo.phase_noise[" + std::to_string(i) +
                             "]: expected positive offsets in increasing order and finite dBc/Hz levels");

    auto impl = std::make_unique<Impl>();
    const double want = 8.0 * fs / profile.front().offset_hz;
    std::size_t len = 256;
    while (len < want && len < (std::size_t{1} << 18)) len *= 2;
    impl->len = len;
    impl->seed = seed;
    const std::size_t n2 = 2 * len;

    // Zero-phase design on a len-point grid: |H(f)| = sqrt(fs·L(f)) gives S_φ = 2|H|²/fs = 2·L(f) for unit
    // white input. Inverse DFT of the real, even spectrum, centred, Blackman window.
    {
        std::lock_guard lock(fftw_planner_mutex());
        impl->time = fftwf_alloc_real(n2);
        impl->freq = fftwf_alloc_complex(len + 1);
        impl->fwd = fftwf_plan_dft_r2c_1d(static_cast<int>(n2), impl->time, impl->freq, FFTW_ESTIMATE);
        impl->inv = fftwf_plan_dft_c2r_1d(static_cast<int>(n2), impl->freq, impl->time, FFTW_ESTIMATE);
    }
    std::vector<float> h(len, 0.0f);
    {
        std::vector<float> design(len);
        std::vector<std::complex<float>> spec(len / 2 + 1);
        fftwf_plan p;
        {
            std::lock_guard lock(fftw_planner_mutex());
            p = fftwf_plan_dft_c2r_1d(static_cast<int>(len), reinterpret_cast<fftwf_complex*>(spec.data()),
                                      design.data(), FFTW_ESTIMATE);
        }
        for (std::size_t k = 0; k <= len / 2; ++k) {
            const double f = static_cast<double>(k) * fs / static_cast<double>(len);
            spec[k] = static_cast<float>(std::sqrt(fs * power_from_db(phase_noise_dbc_per_hz(profile, f))));
        }
        fftwf_execute(p);
        {
            std::lock_guard lock(fftw_planner_mutex());
            fftwf_destroy_plan(p);
        }
        for (std::size_t n = 0; n < len; ++n) {
            const std::size_t shifted = (n + len / 2) % len;
            const double x = kTwoPi * static_cast<double>(shifted) / static_cast<double>(len);
            const double w = 0.42 - 0.5 * std::cos(x) + 0.08 * std::cos(2.0 * x);
            h[shifted] = static_cast<float>(design[n] / static_cast<double>(len) * w);
        }
    }
    // Response of the FIR zero-padded to 2·len, with the 1/(2·len) of the unnormalised inverse folded in.
    std::fill(impl->time, impl->time + n2, 0.0f);
    std::copy(h.begin(), h.end(), impl->time);
    fftwf_execute(impl->fwd);
    impl->response.resize(len + 1);
    const auto* f = reinterpret_cast<const std::complex<float>*>(impl->freq);
    for (std::size_t k = 0; k <= len; ++k) impl->response[k] = f[k] / static_cast<float>(n2);
    impl->history.assign(len, 0.0f);
    impl->out.assign(len, 0.0f);
    src.impl_ = std::move(impl);
    src.reset();
    return src;
}

void PhaseNoiseSource::reset() {
    if (!impl_) return;
    impl_->rng = GaussRng::make(derive_seed(impl_->seed, kPhaseNoiseSeedTag));
    // Prime the history with white noise so the output is stationary from the first sample.
    impl_->rng.fill_pairs(impl_->history.data(), impl_->history.data() + impl_->len / 2, impl_->len / 2);
    impl_->next_block();
}

void PhaseNoiseSource::generate(float* phi, std::size_t n) {
    if (!impl_) {
        std::fill(phi, phi + n, 0.0f);
        return;
    }
    Impl& s = *impl_;
    while (n > 0) {
        if (s.out_pos == s.len) s.next_block();
        const std::size_t take = std::min(n, s.len - s.out_pos);
        std::copy_n(s.out.begin() + static_cast<std::ptrdiff_t>(s.out_pos), take, phi);
        s.out_pos += take;
        phi += take;
        n -= take;
    }
}

}  // namespace hb
