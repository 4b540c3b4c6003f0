// One complex single-precision FFT of a fixed size (FFTW), with its aligned buffers: plan once, execute per
// frame without allocating. FFTW's planner is not thread-safe, so creating and destroying plans is serialised
// here; executing different plans from different threads is safe (FFTW manual, "Thread safety").
#pragma once

#include <complex>
#include <cstddef>
#include <mutex>
#include <string>

namespace hb {

// The one lock for FFTW's planner, for every plan made anywhere in the process (single and double precision).
// FFTW's planner is global and not thread-safe: separate locks per module would not protect it. On first use
// it also turns on FFTW's own planner locking (fftw_make_planner_thread_safe, FFTW 3.3.5+), which covers
// copies of this library linked into other modules of the same process (the generator device module).
std::mutex& fftw_planner_mutex();

// FFTW's wisdom (what FFTW_MEASURE found for each transform planned so far in this process, single precision),
// as text, so that a later process plans the same sizes at once and with the same algorithm. The text is
// machine-specific; the command line keeps it in a cache file (app/cli/fft_wisdom.hpp): dsp does no I/O.
// Wisdom also steers FFTW_ESTIMATE plans of the same sizes, so a process that must give bit-identical reports
// (verify, sweep) does not import it.
std::string fft_export_wisdom();
// Adds the wisdom in `text` to this process's; false (and nothing added) when it is not FFTW wisdom.
bool fft_import_wisdom(const std::string& text);
// Whether the wisdom holds a measured plan for a forward transform of n points (FFTW_WISDOM_ONLY).
bool fft_plan_in_wisdom(std::size_t n);
// Forgets all single-precision wisdom (for tests).
void fft_forget_wisdom();

class Fft {
  public:
    enum class Effort { estimate, measure };
    enum class Direction { forward, inverse };

    Fft() = default;  // empty: no plan, no buffers (assign a real one before execute)
    // Forward (e^{−j2πkn/N}) or inverse (unnormalised) transform of n points, out of place.
    // `measure` times candidate algorithms once per size and process, or takes the choice from imported wisdom
    // (FFTW_MEASURE, 1.4–1.6× faster here, platform-notes); `estimate` plans at once.
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
