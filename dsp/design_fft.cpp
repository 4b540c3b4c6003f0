#include "dsp/design_fft.hpp"
#include "dsp/fft.hpp"

#include <fftw3.h>

#include <cstring>
#include <mutex>

namespace hb {

void design_fft(std::vector<std::complex<double>>& x, bool inverse) {
    if (x.size() < 2) return;
    const int n = static_cast<int>(x.size());
    fftw_complex* buf = fftw_alloc_complex(static_cast<std::size_t>(n));
    fftw_plan plan;
    {
        std::lock_guard<std::mutex> lock(fftw_planner_mutex());
        plan = fftw_plan_dft_1d(n, buf, buf, inverse ? FFTW_BACKWARD : FFTW_FORWARD, FFTW_ESTIMATE);
    }
    std::memcpy(buf, x.data(), sizeof(fftw_complex) * static_cast<std::size_t>(n));
    fftw_execute(plan);
    std::memcpy(static_cast<void*>(x.data()), buf, sizeof(fftw_complex) * static_cast<std::size_t>(n));
    {
        std::lock_guard<std::mutex> lock(fftw_planner_mutex());
        fftw_destroy_plan(plan);
    }
    fftw_free(buf);
}

}  // namespace hb
