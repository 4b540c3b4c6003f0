// The zone emulator: turns an RF IQ stream (centre f_c, rate fs) into the IF output window (centre f_w,
// same rate fs) that the resolved mixer model (dsp/mixer) would give, without going up to RF.
//
// Every output term (q, m) of the model sits at q·f_c + m·f_LO with envelope g·S_m·U_q(x) (dsp/mixer.hpp).
// The terms whose band overlaps the window are synthesised, each shifted by its own NCO, and summed with the
// LO leakage, the DC offset, LO phase noise (harmonic m carries m·φ(t)) and white noise at the set density; the
// others are skipped. The quadrature model adds the image path ν·z* of every term (at the mirrored frequency).
//
// Band of a term: centre ± p·B/2 with p the polynomial order of its envelope and B = rf_occupied_hz, the part
// of the RF window that holds signal. Default B = 0: a term is kept when its centre lies in the window. Why:
// the output has the input's rate, so content of a kept term that lies beyond the window edge wraps around
// (a term centred 2 MHz away with a 2.4 MHz wide envelope would fold a copy into the middle of the window);
// with B = 0 only content near the window edges is lost, and a later IF filter removes that anyway. Set B to
// the occupied width (tones: twice the largest offset from f_c) to keep every term that reaches the window.
// Nonlinear envelopes (x², x³) of a wideband input occupy p·B and are computed at the input rate: exact when
// p·B fits in fs, aliased otherwise (the design notes' "exact for band-limited inputs").
//
// Phase: every NCO phase comes from a double-precision accumulator, re-seeded every chunk (2048 samples) into
// 16 time lanes that step with a float phasor (a float recurrence alone drifts; platform notes).
// Life cycle: make (allocates) → process (no allocation) → reset → destroy. Move-only.
#pragma once

#include <complex>
#include <cstdint>
#include <memory>
#include <span>
#include <vector>

#include "dsp/lo.hpp"
#include "dsp/mixer.hpp"

namespace hb {

struct EmulatorConfig {
    double rf_center_hz = 0.0;      // centre of the RF window (the input stream's 0 Hz)
    double sample_rate_hz = 0.0;    // input and output rate
    double output_center_hz = 0.0;  // the output window centre: if_window_center_hz(params, if_hz, injection);
                                    // not used by bypass (its output window is the input's, rf_center_hz)
    double rf_occupied_hz = 0.0;    // see above; 0 = keep terms whose centre is in the window
    std::uint64_t seed = 1;         // bench.seed: phase noise and additive noise derive from it
};

// What the RF envelope of a term is.
enum class ZoneEnvelope { zone0, zone1, zone2, zone3, constant };

// One synthesised output term (for reports and tests).
struct ZoneTerm {
    ZoneEnvelope envelope = ZoneEnvelope::constant;  // U_|q| (constant: LO leakage or DC)
    bool conjugate = false;         // the envelope is U_q* (q < 0, or the quadrature image path)
    int lo_harmonic = 0;            // m: the term carries m·φ(t) of LO phase noise
    double frequency_hz = 0.0;      // absolute output frequency of the term's centre
    std::complex<double> coeff;     // amplitude factor on the envelope
    bool straddles_edge = false;    // part of its band lies outside the window (that part wraps)
};

class MixerEmulator {
public:
    // Throws hb::InputError on a bad config (rate not positive, non-finite frequencies).
    static MixerEmulator make(const MixerParams& params, const EmulatorConfig& config);
    MixerEmulator();
    ~MixerEmulator();
    MixerEmulator(MixerEmulator&&) noexcept;
    MixerEmulator& operator=(MixerEmulator&&) noexcept;

    // in and out have the same length and may be the same buffer. No allocation.
    void process(std::span<const std::complex<float>> in, std::span<std::complex<float>> out);
    // Back to t = 0 (NCO phases, phase noise and noise sequences as after make).
    void reset();

    double output_center_hz() const;
    bool bypass() const;
    std::span<const ZoneTerm> terms() const;  // empty for bypass

private:
    struct Impl;
    std::unique_ptr<Impl> impl_;
};

}  // namespace hb
