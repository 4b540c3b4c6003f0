#include "dsp/spectrum.hpp"

#include <algorithm>
#include <cmath>
#include <cstring>
#include <string>

#include "dsp/errors.hpp"
#include "dsp/simd.hpp"
#include "dsp/units.hpp"
#include "dsp/window.hpp"

namespace hb {
namespace {

using simd::vf;
constexpr std::size_t W = static_cast<std::size_t>(simd::kWidth);
typedef float vh __attribute__((vector_size(simd::kWidth * 2)));   // half a vf
typedef double vd __attribute__((vector_size(simd::kWidth * 4)));  // W/2 doubles

// acc[k] = op(acc[k], |out[k]|²·scale) for k < cnt: the power in float (as std::norm), scaled and accumulated in
// double, on whole vectors.
template <class Op>
void update_bins(const std::complex<float>* out, std::size_t cnt, double* acc, double scale, Op op) {
    const float* o = reinterpret_cast<const float*>(out);
    const vd sc = vd{} + scale;
    std::size_t k = 0;
    for (; k + W <= cnt; k += W) {
        vf re, im;
        simd::load_deinterleaved(o + 2 * k, re, im);
        const vf p = re * re + im * im;
        for (std::size_t h = 0; h < 2; ++h) {
            vh ph;
            std::memcpy(&ph, reinterpret_cast<const char*>(&p) + h * sizeof(vh), sizeof ph);
            vd a;
            std::memcpy(&a, acc + k + h * W / 2, sizeof a);
            a = op(a, __builtin_convertvector(ph, vd) * sc);
            std::memcpy(acc + k + h * W / 2, &a, sizeof a);
        }
    }
    for (; k < cnt; ++k) {
        const float p = o[2 * k] * o[2 * k] + o[2 * k + 1] * o[2 * k + 1];
        acc[k] = op(acc[k], static_cast<double>(p) * scale);
    }
}

// dst[i] = src[i]·w2[i] over 2n floats (interleaved complex times a window stored twice per sample).
void window_into(const std::complex<float>* src, const float* w2, std::size_t n, std::complex<float>* dst) {
    const float* a = reinterpret_cast<const float*>(src);
    float* d = reinterpret_cast<float*>(dst);
    const std::size_t m = 2 * n;
    std::size_t i = 0;
    for (; i + W <= m; i += W) simd::store(d + i, simd::load(a + i) * simd::load(w2 + i));
    for (; i < m; ++i) d[i] = a[i] * w2[i];
}

}  // namespace

double Spectrum::level_db(double p) const {
    return db_from_power(p) + unit_offset_db();
}

double Spectrum::density_db_per_hz(double power_per_bin) const {
    return db_from_power(power_per_bin / rbw_hz) + unit_offset_db();
}

Welch Welch::make(const AnalyzerSpec& spec, double center_hz, double sample_rate_hz, Fft::Effort effort) {
    const int n = spec.fft_size;
    if (n < kMinFftSize || n > kMaxFftSize || (n & (n - 1)) != 0)
        throw InputError("analyzer.fft_size: got " + std::to_string(n) + ", expected a power of two from " +
                         std::to_string(kMinFftSize) + " to " + std::to_string(kMaxFftSize));
    if (!(spec.overlap >= 0.0 && spec.overlap <= 0.95))
        throw InputError("analyzer.overlap: got " + format_number(spec.overlap) +
                         ", expected a fraction of a frame from 0 to 0.95");
    if (spec.averages < 1)
        throw InputError("analyzer.averages: got " + std::to_string(spec.averages) + ", expected at least 1");
    if (spec.window == WindowType::kaiser && !(spec.kaiser_beta >= 0.0 && spec.kaiser_beta <= 50.0))
        throw InputError("analyzer.kaiser_beta: got " + format_number(spec.kaiser_beta) +
                         ", expected a finite number from 0 to 50");
    if (!(sample_rate_hz > 0.0 && sample_rate_hz <= kMaxFrequencyHz))
        throw InputError("analyzer: the stream's sample rate is " + format_number(sample_rate_hz) +
                         " Hz, expected a finite rate above 0 Hz");
    if (!std::isfinite(center_hz))
        throw InputError("analyzer: the stream's centre frequency is " + format_number(center_hz) +
                         " Hz, expected a finite frequency");

    Welch wl;
    wl.spec_ = spec;
    wl.center_hz_ = center_hz;
    wl.rate_hz_ = sample_rate_hz;
    wl.n_ = n;
    wl.hop_ = std::max(1, static_cast<int>(std::lround(n * (1.0 - spec.overlap))));
    const std::vector<double> w = make_window(spec.window, static_cast<std::size_t>(n), spec.kaiser_beta);
    // The window as floats, each value twice (re and im of a sample take the same factor).
    wl.window_.resize(2 * w.size());
    double s1 = 0.0, s2 = 0.0;
    for (std::size_t i = 0; i < w.size(); ++i) {
        const float v = static_cast<float>(w[i]);
        wl.window_[2 * i] = wl.window_[2 * i + 1] = v;
        s1 += v;
        s2 += static_cast<double>(v) * v;
    }
    wl.coherent_gain_ = s1 / n;
    wl.enbw_bins_ = n * s2 / (s1 * s1);
    wl.scale_ = 1.0 / (s1 * s1);
    const auto un = static_cast<std::size_t>(n);
    wl.ring_.assign(un, {});
    wl.acc_.assign(un, 0.0);
    wl.published_.assign(un, 0.0);
    // FFTW_MEASURE costs seconds above 64 k points; ESTIMATE there (platform-notes: 1.4–1.6× slower).
    wl.fft_ = Fft(un, n <= 65536 ? effort : Fft::Effort::estimate);
    wl.reset();
    return wl;
}

void Welch::reset() {
    pos_ = 0;
    need_ = static_cast<std::size_t>(n_);
    std::fill(acc_.begin(), acc_.end(), 0.0);
    std::fill(published_.begin(), published_.end(), 0.0);
    acc_frames_ = 0;
    sets_ = 0;
}

void Welch::push(std::span<const std::complex<float>> block) {
    const auto n = static_cast<std::size_t>(n_);
    while (!block.empty()) {
        const std::size_t take = std::min({block.size(), need_, n - pos_});
        std::copy_n(block.begin(), take, ring_.begin() + static_cast<std::ptrdiff_t>(pos_));
        pos_ = (pos_ + take) % n;
        need_ -= take;
        block = block.subspan(take);
        if (need_ == 0) {
            frame();
            need_ = static_cast<std::size_t>(hop_);
        }
    }
}

void Welch::frame() {
    const auto n = static_cast<std::size_t>(n_), half = n / 2;
    // Window the last n samples, oldest first: ring_[pos_..n) then ring_[0..pos_).
    std::complex<float>* in = fft_.in();
    const std::size_t first = n - pos_;
    window_into(ring_.data() + pos_, window_.data(), first, in);
    window_into(ring_.data(), window_.data() + 2 * first, pos_, in + first);
    fft_.execute();

    // FFT order k → centred index (k + N/2) mod N.
    const std::complex<float>* out = fft_.out();
    double* acc = acc_.data();
    const double scale = scale_;
    const bool first_frame = acc_frames_ == 0;
    // Written for scalars and double vectors alike.
    auto each_bin = [&](auto&& update) {
        update_bins(out, half, acc + half, scale, update);
        update_bins(out + half, n - half, acc, scale, update);
    };
    const auto set = [](auto, auto p) { return p; };
    switch (spec_.averaging) {
        case Averaging::rms:
            each_bin([](auto a, auto p) { return a + p; });
            break;
        case Averaging::exponential: {
            const double alpha = 1.0 / spec_.averages;
            if (first_frame)
                each_bin(set);
            else
                each_bin([alpha](auto a, auto p) { return a + alpha * (p - a); });
            break;
        }
        case Averaging::max_hold:
            if (first_frame)
                each_bin(set);
            else
                each_bin([](auto a, auto p) { return a < p ? p : a; });
            break;
        case Averaging::min_hold:
            if (first_frame)
                each_bin(set);
            else
                each_bin([](auto a, auto p) { return p < a ? p : a; });
            break;
    }
    ++acc_frames_;
    if (spec_.averaging == Averaging::rms && acc_frames_ == spec_.averages) {
        const double inv = 1.0 / spec_.averages;
        for (std::size_t i = 0; i < n; ++i) {
            published_[i] = acc_[i] * inv;
            acc_[i] = 0.0;
        }
        acc_frames_ = 0;
        ++sets_;
    }
}

std::int64_t Welch::frames() const {
    if (spec_.averaging == Averaging::rms && sets_ > 0) return spec_.averages;
    return acc_frames_;
}

bool Welch::ready() const {
    return frames() >= spec_.averages;
}

void Welch::read(Spectrum& out) const {
    out.spec = spec_;
    out.center_hz = center_hz_;
    out.sample_rate_hz = rate_hz_;
    out.hop = hop_;
    out.enbw_bins = enbw_bins_;
    out.coherent_gain = coherent_gain_;
    out.rbw_hz = enbw_bins_ * rate_hz_ / n_;
    out.frames = frames();
    out.power.resize(static_cast<std::size_t>(n_));
    if (spec_.averaging == Averaging::rms) {
        if (sets_ > 0) {
            std::copy(published_.begin(), published_.end(), out.power.begin());
        } else {
            const double inv = acc_frames_ > 0 ? 1.0 / static_cast<double>(acc_frames_) : 0.0;
            for (std::size_t i = 0; i < acc_.size(); ++i) out.power[i] = acc_[i] * inv;
        }
    } else {
        std::copy(acc_.begin(), acc_.end(), out.power.begin());
    }
}

Spectrum Welch::read() const {
    Spectrum s;
    read(s);
    return s;
}

void spectrum_to_db(const Spectrum& s, std::span<float> out) {
    const double offset = s.unit_offset_db();
    const std::size_t n = std::min(out.size(), s.power.size());
    for (std::size_t i = 0; i < n; ++i)
        out[i] = static_cast<float>(db_from_power(std::max(s.power[i], 1e-40)) + offset);  // −400 dB stands for 0
}

}  // namespace hb
