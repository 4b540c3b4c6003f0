// One complex single-precision FFT of a fixed size (FFTW), with its aligned buffers: plan once, execute per
// frame without allocating. FFTW's planner is not thread-safe, so creating and destroying plans is serialised
// here; executing different plans from different threads is safe (FFTW manual, "Thread safety").
#pragma once

#include <complex>
#include <cstddef>

#include <mutex>

namespace hb {

// The one lock for FFTW's planner, for every plan made anywhere in the process (single and double precision).
// FFTW's planner is global and not thread-safe: separate locks per module would not protect it. On first use
// it also turns on FFTW's own planner locking (fftw_make_planner_thread_safe, FFTW 3.3.5+), which covers
// copies of this library linked into other modules of the same process (the generator device module).
std::mutex& fftw_planner_mutex();

class Fft {
  public:
    enum class Effort { estimate, measure };
    enum class Direction { forward, inverse };

    Fft() = default;  // empty: no plan, no buffers (assign a real one before execute)
    // Forward (e^{−j2πkn/N}) or inverse (unnormalised) transform of n points, out of place.
    // `measure` times candidate algorithms once per size and process (FFTW_MEASURE, 1.4–1.6× faster here,
    // platform-notes); `estimate` plans at once.
    Fft(std::size_t n, Effort effort, Direction direction = Direction::forward);
    ~Fft();
    Fft(const Fft&) = delete;
    Fft& operator=(const Fft&) = delete;
    Fft(Fft&& other) noexcept;
    Fft& operator=(Fft&& other) noexcept;

    std::size_t size() const { return n_; }
    std::complex<float>* in() { return in_; }
    std::complex<float>* out() { return out_; }
    const std::complex<float>* out() const { return out_; }
    void execute();  // out = DFT(in)

  private:
    void release();
    std::size_t n_ = 0;
    std::complex<float>* in_ = nullptr;
    std::complex<float>* out_ = nullptr;
    void* plan_ = nullptr;
};

}  // namespace hb
