// The local oscillator as the mixer sees it: a switching function with its Fourier series, LO phase noise
// shaped from a profile, and the seeded random numbers both the LO and the mixer noise use.
//
// Waveforms (the switch is "on" for a pulse centred on LO phase 0, so every coefficient is real):
//   sine      s(θ) = cos θ
//   unipolar  0/1 switch (a single diode or transistor): DC term d, every harmonic, set by the duty cycle d
//   bipolar   ±1 switch (a balanced ring or cell): s = 2u − 1; odd harmonics only at d = 0.5, duty error
//             brings the even ones
// A finite edge time t_r (rise = fall, trapezoid; d is the width at 50 %) rolls the harmonics off by
// sinc(m·t_r). Closed forms: unipolar c_m = 2·d·sinc(m·d)·sinc(m·t_r), c_0 = d, bipolar twice that and
// c_0 = 2d − 1, sinc(x) = sin(πx)/(πx) (C. R. Paul, Introduction to EMC, 2nd ed. 2006, ch. 3).
#pragma once

#include <complex>
#include <cstdint>
#include <memory>
#include <span>
#include <string>
#include <vector>

#include "dsp/setup.hpp"

namespace hb {

enum class LoShape { sine, unipolar, bipolar };

struct LoWaveform {
    LoShape shape = LoShape::sine;
    double duty = 0.5;   // fraction of the period the switch is on (width at 50 %); not used by sine
    double edge = 0.0;   // rise = fall time as a fraction of the period; not used by sine
    int harmonics = 1;   // highest harmonic kept in the series (sine: always 1)
    friend bool operator==(const LoWaveform&, const LoWaveform&) = default;
};

// Throws hb::InputError naming `key` (e.g. "mixer") when duty, edge or harmonics are out of range.
void check_lo_waveform(const LoWaveform& w, const std::string& key);

// The real cosine-series coefficient c_m of s(θ) = c_0 + Σ c_m cos(mθ), signed (closed form, all m ≥ 0,
// not limited by `harmonics`). Sine: c_1 = 1, others 0.
double lo_cosine_coefficient(const LoWaveform& w, int m);

// s(θ) as a two-sided series Σ_{m=−K..K} coeff[m + K]·e^{jmθ}, truncated at K = harmonics.
struct LoSeries {
    int harmonics = 0;
    std::vector<std::complex<double>> coeff;  // 2K + 1 values, index m + K

    std::complex<double> at(int m) const {
        return (m < -harmonics || m > harmonics) ? std::complex<double>{} : coeff[static_cast<std::size_t>(m + harmonics)];
    }
    double dc() const { return at(0).real(); }
    // Amplitude and phase of the m-th harmonic as c·cos(mθ + φ), m ≥ 1 (for real waveforms).
    double amplitude(int m) const { return 2.0 * std::abs(at(m)); }
    double phase_rad(int m) const { return std::arg(at(m)); }
};

// The series of the real switching function s(θ).
LoSeries lo_series(const LoWaveform& w);

// The series of the complex LO of a quadrature mixer, I + jQ with I = s(θ) and Q = s(θ + π/2) (Q a quarter
// period ahead, so a sine LO gives cos θ − j sin θ = e^{−jθ}): L_m = S_m·(1 + j^{m+1}). The fundamental sits
// at m = −1 only; harmonic 3 at +3, 5 at −5, ...; even harmonics on both sides.
LoSeries lo_series_quadrature(const LoWaveform& w);

// The waveform itself at LO phase `cycles` (any real number; period 1). For plots and checks.
double lo_waveform_value(const LoWaveform& w, double cycles);

// ---------------------------------------------------------------------------------------------
// Random numbers: xoshiro256** seeded through splitmix64 (Blackman & Vigna, "Scrambled linear pseudorandom
// number generators", ACM TOMS 47(4), 2021), Gaussian pairs by Box–Muller. Small, fast and the same on every
// platform (std::normal_distribution is not).
struct GaussRng {
    std::uint64_t s[4]{};

    static GaussRng make(std::uint64_t seed);
    std::uint64_t next() {
        const std::uint64_t result = rotl(s[1] * 5, 7) * 9;
        const std::uint64_t t = s[1] << 17;
        s[2] ^= s[0];
        s[3] ^= s[1];
        s[1] ^= s[2];
        s[0] ^= s[3];
        s[2] ^= t;
        s[3] = rotl(s[3], 45);
        return result;
    }
    static std::uint64_t rotl(std::uint64_t x, int k) { return (x << k) | (x >> (64 - k)); }
    double uniform() { return static_cast<double>(next() >> 11) * 0x1.0p-53; }  // [0, 1)
    // Two independent N(0, 1) values (double precision, libm).
    void gauss_pair(double& a, double& b);
    // n pairs of independent N(0, 1) floats into a[i], b[i]: the same Box–Muller on 24-bit uniforms with the
    // vectorisable log and sincos of dsp/vector_math.hpp (tails end at 5.9σ). Consumes exactly n draws, so a
    // stream cut into blocks of any size gives the same sequence.
    void fill_pairs(float* a, float* b, std::size_t n);
};

// Derives an independent seed for one random process from the bench seed and a purpose tag.
std::uint64_t derive_seed(std::uint64_t seed, std::uint64_t tag);

// ---------------------------------------------------------------------------------------------
// LO phase noise.
// The profile is a list of (offset Hz, dBc/Hz) points of the single-sideband phase noise L(f); between points
// the level is a straight line on a log-frequency axis (common practice for phase-noise plots), below the
// first point it holds the first level and above the last point the last level (the far-out floor).
double phase_noise_dbc_per_hz(std::span<const PhaseNoisePoint> profile, double offset_hz);

// Integrated phase noise of the profile from f1 to f2 in rad rms: sqrt(2·∫ L(f) df) (small-angle).
double integrated_phase_noise_rad(std::span<const PhaseNoisePoint> profile, double f1_hz, double f2_hz);

// A seeded phase process φ(n) in radians whose one-sided spectrum is S_φ(f) = 2·L(f) (small-angle,
// L(f) ≈ S_φ(f)/2): white Gaussian noise through an FIR designed by frequency sampling (Blackman-windowed),
// applied block-wise by overlap-save FFT convolution. The FIR length is a power of two with a frequency
// resolution of at most an eighth of the lowest profile offset (capped at 2^18 taps); detail closer in than
// that is smoothed.
// Life cycle: make (allocates, plans FFTs) → generate (no allocation) → reset → destroy. Move-only.
class PhaseNoiseSource {
public:
    static PhaseNoiseSource make(std::span<const PhaseNoisePoint> profile, double sample_rate_hz, std::uint64_t seed);
    PhaseNoiseSource();
    ~PhaseNoiseSource();
    PhaseNoiseSource(PhaseNoiseSource&&) noexcept;
    PhaseNoiseSource& operator=(PhaseNoiseSource&&) noexcept;

    bool enabled() const;
    std::size_t filter_length() const;
    // Writes the next n phase samples (radians).
    void generate(float* phi, std::size_t n);
    // Back to the state right after make (same seed: same sequence).
    void reset();

private:
    struct Impl;
    std::unique_ptr<Impl> impl_;
};

}  // namespace hb
