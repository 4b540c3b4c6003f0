// Double-precision FFT for filter design and response checks (not for streaming: the per-block spectrum has its
// own single-precision plans). A thin wrapper over FFTW that serialises plan creation, which FFTW requires.
#pragma once

#include <complex>
#include <vector>

namespace hb {

// In-place DFT of any length: X[k] = sum x[n] e^{-j 2 pi k n / N} (forward) or the same with +j and no 1/N
// scaling (inverse).
void design_fft(std::vector<std::complex<double>>& x, bool inverse = false);

}  // namespace hb
