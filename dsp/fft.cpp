#include "dsp/fft.hpp"

#include <fftw3.h>

#include <cstdlib>
#include <mutex>
#include <new>
#include <utility>

namespace hb {
std::mutex& fftw_planner_mutex() {
    static std::mutex m;
    static std::once_flag once;
    std::call_once(once, [] {
        fftwf_make_planner_thread_safe();
        fftw_make_planner_thread_safe();
    });
    return m;
}

std::string fft_export_wisdom() {
    std::lock_guard lock(fftw_planner_mutex());
    char* text = fftwf_export_wisdom_to_string();
    if (!text) return {};
    std::string s(text);
    std::free(text);  // allocated by FFTW with malloc (FFTW manual, "Wisdom Export")
    return s;
}

bool fft_import_wisdom(const std::string& text) {
    std::lock_guard lock(fftw_planner_mutex());
    return fftwf_import_wisdom_from_string(text.c_str()) != 0;
}

bool fft_plan_in_wisdom(std::size_t n) {
    std::lock_guard lock(fftw_planner_mutex());
    fftwf_complex* in = fftwf_alloc_complex(n);
    fftwf_complex* out = fftwf_alloc_complex(n);
    fftwf_plan p = in && out
                       ? fftwf_plan_dft_1d(static_cast<int>(n), in, out, FFTW_FORWARD, FFTW_MEASURE | FFTW_WISDOM_ONLY)
                       : nullptr;
    const bool found = p != nullptr;
    if (p) fftwf_destroy_plan(p);
    fftwf_free(in);
    fftwf_free(out);
    return found;
}

void fft_forget_wisdom() {
    std::lock_guard lock(fftw_planner_mutex());
    fftwf_forget_wisdom();
}

Fft::Fft(std::size_t n, Effort effort, Direction direction) : n_(n) {
    std::lock_guard lock(fftw_planner_mutex());
    in_ = reinterpret_cast<std::complex<float>*>(fftwf_alloc_complex(n));
    out_ = reinterpret_cast<std::complex<float>*>(fftwf_alloc_complex(n));
    if (!in_ || !out_) {
        fftwf_free(in_);
        fftwf_free(out_);
        throw std::bad_alloc();
    }
    const unsigned flags = effort == Effort::measure ? FFTW_MEASURE : FFTW_ESTIMATE;
    plan_ = fftwf_plan_dft_1d(static_cast<int>(n), reinterpret_cast<fftwf_complex*>(in_),
                              reinterpret_cast<fftwf_complex*>(out_),
                              direction == Direction::forward ? FFTW_FORWARD : FFTW_BACKWARD, flags);
    if (!plan_) {
        fftwf_free(in_);
        fftwf_free(out_);
        throw std::bad_alloc();
    }
    // FFTW_MEASURE scribbles on the buffers while planning: leave them clean.
    for (std::size_t i = 0; i < n; ++i) in_[i] = out_[i] = {};
}

void Fft::release() {
    if (!plan_ && !in_ && !out_) return;
    std::lock_guard lock(fftw_planner_mutex());
    if (plan_) fftwf_destroy_plan(static_cast<fftwf_plan>(plan_));
    fftwf_free(in_);
    fftwf_free(out_);
    plan_ = nullptr;
    in_ = out_ = nullptr;
}

Fft::~Fft() {
    release();
}

Fft::Fft(Fft&& o) noexcept
    : n_(std::exchange(o.n_, 0)),
      in_(std::exchange(o.in_, nullptr)),
      out_(std::exchange(o.out_, nullptr)),
      plan_(std::exchange(o.plan_, nullptr)) {}

Fft& Fft::operator=(Fft&& o) noexcept {
    if (this != &o) {
        release();
        n_ = std::exchange(o.n_, 0);
        in_ = std::exchange(o.in_, nullptr);
        out_ = std::exchange(o.out_, nullptr);
        plan_ = std::exchange(o.plan_, nullptr);
    }
    return *this;
}

void Fft::execute() {
    fftwf_execute(static_cast<fftwf_plan>(plan_));
}

}  // namespace hb
