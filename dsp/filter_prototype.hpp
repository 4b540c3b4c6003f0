// Analog low-pass prototypes (Butterworth, Chebyshev I and II, elliptic, Bessel) in double precision, and the
// response of a prototype after the standard low-pass -> low-pass and low-pass -> band-pass transformations.
//
// Why not liquid-dsp's butter_azpkf() & co.: they work in float, and probing them against scipy 1.10 showed
// elliptic poles off by about 7e-4 (relative) and a Bessel normalisation that is none of the usual ones
// (phase, delay or -3 dB). Those errors show up as tenths of a dB at the pass-band edge, so the prototypes
// are computed here from their closed forms (Butterworth, Chebyshev) or by the classic numerical methods
// (elliptic: Jacobi functions by the AGM; Bessel: polynomial roots), and checked against scipy in the tests.
//
// Normalisation (prototype frequency Omega = 1 is the "band edge"):
//   Butterworth, Bessel, Chebyshev II : -3 dB at Omega = 1
//   Chebyshev I, elliptic             : edge of the ripple band at Omega = 1 (attenuation = ripple there)
// The peak gain is 1 (0 dB) for every type: even-order Chebyshev I / elliptic filters have 1/sqrt(1+eps^2) at DC.
#pragma once

#include <complex>
#include <limits>
#include <vector>

namespace hb {

using cplx = std::complex<double>;

enum class PrototypeKind { butterworth, chebyshev1, chebyshev2, elliptic, bessel };

// H(s) = gain * prod(s - zeros) / prod(s - poles), s in units of the prototype band edge. Zeros at infinity are
// not listed (zeros.size() <= poles.size()).
struct AnalogPrototype {
    std::vector<cplx> zeros;
    std::vector<cplx> poles;
    double gain = 1.0;
    // First frequency of the equiripple stop-band (Chebyshev II, elliptic); NaN when the type has none.
    double stop_edge = std::numeric_limits<double>::quiet_NaN();
};

// Designs a prototype. order 1..kMaxFilterOrder; ripple_db > 0 for Chebyshev I / elliptic; stop_atten_db > 0 for
// Chebyshev II / elliptic (others ignore them). Throws std::invalid_argument on values outside those ranges.
AnalogPrototype design_prototype(PrototypeKind kind, int order, double ripple_db, double stop_atten_db);

// Prototype response at s = j*omega (omega may be +-infinity).
cplx prototype_response(const AnalogPrototype& p, double omega);

// Group delay -d(arg H)/d(omega) of the prototype at s = j*omega, in units of 1/(band-edge angular frequency).
double prototype_group_delay(const AnalogPrototype& p, double omega);

// Maps of absolute frequency (Hz, may be negative) to prototype frequency Omega.
// Low-pass with band edge fe: Omega = f / fe.
// Band-pass with edges f1 < f2 (Omega = -1 at f1, +1 at f2), geometric centre f0 = sqrt(f1 f2), B = f2 - f1:
//   Omega = (f^2 - f0^2) / (f B)   [the standard s -> (s^2 + w0^2)/(s B) substitution on s = j 2 pi f]
struct FrequencyMap {
    bool bandpass = false;
    double edge_hz = 1.0;   // low-pass
    double f0_hz = 0.0;     // band-pass geometric centre
    double width_hz = 1.0;  // band-pass B = f2 - f1
    double omega(double f_hz) const;
    double domega_df(double f_hz) const;  // dOmega/df, for group delay
    // The two absolute frequencies (> 0 for band-pass; +-f for low-pass) where the prototype frequency is +-Omega.
    void edges(double omega, double& lo_hz, double& hi_hz) const;
};

FrequencyMap lowpass_map(double edge_hz);
// Band-pass with arithmetic centre fc and edge-to-edge width bw: f1 = fc - bw/2, f2 = fc + bw/2.
FrequencyMap bandpass_map(double center_hz, double width_hz);

// Elliptic-function helpers (exposed for tests). m is the parameter (m = k^2), mc = 1 - m given separately so that
// values of m close to 1 keep their precision.
double ellip_k(double mc);             // complete integral K(m), from mc = 1 - m
double ellip_f(double phi, double m);  // incomplete integral F(phi | m), |phi| <= pi/2
void ellip_jacobi(double u, double m, double mc, double& sn, double& cn, double& dn);

}  // namespace hb
