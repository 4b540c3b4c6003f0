#include "dsp/spectrum.hpp"

#include <algorithm>
#include <cmath>
#include <string>

#include "dsp/errors.hpp"
#include "dsp/units.hpp"
#include "dsp/window.hpp"

namespace hb {

double Spectrum::level_db(double p) const {
    return db_from_power(p) + unit_offset_db();
}

double Spectrum::density_db_per_hz(double power_per_bin) const {
    return db_from_power(power_per_bin / rbw_hz) + unit_offset_db();
}

Welch Welch::make(const AnalyzerSpec& spec, double center_hz, double sample_rate_hz) {
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
    wl.window_.assign(w.begin(), w.end());
    double s1 = 0.0, s2 = 0.0;
    for (float v : wl.window_) {
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
    wl.fft_ = Fft(un, n <= 65536 ? Fft::Effort::measure : Fft::Effort::estimate);
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
    for (std::size_t i = 0; i < first; ++i) in[i] = ring_[pos_ + i] * window_[i];
    for (std::size_t i = 0; i < pos_; ++i) in[first + i] = ring_[i] * window_[first + i];
    fft_.execute();

    // FFT order k → centred index (k + N/2) mod N.
    const std::complex<float>* out = fft_.out();
    double* acc = acc_.data();
    const double scale = scale_;
    const bool first_frame = acc_frames_ == 0;
    auto each_bin = [&](auto&& update) {
        for (std::size_t k = 0; k < half; ++k) update(acc[half + k], std::norm(out[k]) * scale);
        for (std::size_t k = half; k < n; ++k) update(acc[k - half], std::norm(out[k]) * scale);
    };
    switch (spec_.averaging) {
        case Averaging::rms:
            each_bin([](double& a, double p) { a += p; });
            break;
        case Averaging::exponential: {
            const double alpha = 1.0 / spec_.averages;
            if (first_frame)
                each_bin([](double& a, double p) { a = p; });
            else
                each_bin([alpha](double& a, double p) { a += alpha * (p - a); });
            break;
        }
        case Averaging::max_hold:
            if (first_frame)
                each_bin([](double& a, double p) { a = p; });
            else
                each_bin([](double& a, double p) { a = std::max(a, p); });
            break;
        case Averaging::min_hold:
            if (first_frame)
                each_bin([](double& a, double p) { a = p; });
            else
                each_bin([](double& a, double p) { a = std::min(a, p); });
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
