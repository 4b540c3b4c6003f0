// The zone emulator: turns an RF IQ stream (centre f_c, rate fs) into the IF output window (centre f_w,
// same rate fs) that the resolved mixer model (dsp/mixer) would give, without going up to RF.
//
// Every output term (q, m) of the model sits at q·f_c + m·f_LO with envelope g·S_m·U_q(x) (dsp/mixer.hpp).
// The terms whose band overlaps the window are synthesised, each shifted by its own NCO, and summed with the
// LO leakage, the DC offset, LO phase noise (harmonic m carries m·φ(t)) and white noise at the set density; the
// others are skipped. The quadrature model adds the image path ν·z* of every term (at the mirrored frequency).
//
// Band of a term: centre ± p·B/2 with p the polynomial order of its envelope and B = rf_occupied_hz, the part
// of the RF window that holds signal (0: unknown, taken as the whole window).
//
// No wrap-round. The output has the input's rate, so a term whose band reaches beyond the window would fold that
// part back into the window (a phantom line at a wrong frequency: a station 500 kHz below the LO of a 455 kHz IF,
// say). When any kept term reaches beyond the window, synthesis runs at twice the rate: the input is interpolated
// ×2 (Kaiser, 100 dB), every term is synthesised there, and a window filter (−6 dB on the window edges, transition
// 10 % of the rate, 100 dB) keeps the window and decimates back. Terms of order p ≤ 2 are then exact wherever their
// band stays within ±1.5·fs of the window centre (they are kept only then); x³ terms are kept by their centre and
// alias where 3·B exceeds the doubled rate (the design notes' "exact for band-limited inputs"). When every kept
// term lies inside the window (a known narrow occupancy) the direct path at the input rate is exact and cheaper.
//
// Real models give the analytic representation of a real IF, which has no negative frequencies. Every term and its
// conjugate are synthesised (a term straddling 0 Hz has content on both sides: with the LO inside the RF window
// the wanted and the image land on opposite sides of 0 Hz in one term), and where the window holds 0 Hz a complex
// FIR keeps the positive frequencies (−6 dB at 0 Hz, transition 4 % of the rate, 100 dB). DC (the mixer's offset)
// is added after the filters. The output is exact in [exact_low_hz(), exact_high_hz()] and lags the input by
// delay_samples() (fractional: a pure delay of every term).
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
    bool conjugate = false;                          // the envelope is U_q* (q < 0, or the quadrature image path)
    int lo_harmonic = 0;                             // m: the term carries m·φ(t) of LO phase noise
    double frequency_hz = 0.0;                       // absolute output frequency of the term's centre
    std::complex<double> coeff;                      // amplitude factor on the envelope
    bool straddles_edge = false;  // part of its band lies outside the window (filtered away at the doubled rate)
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
    // The output filters (see above): the positive-frequency filter on, the synthesis rate over the input rate
    // (1 or 2), the delay of the terms in output samples, and the absolute band the output is exact in.
    bool analytic_filter() const;
    int oversampling() const;
    double delay_samples() const;
    double exact_low_hz() const;
    double exact_high_hz() const;
    std::span<const ZoneTerm> terms() const;  // empty for bypass

  private:
    struct Impl;
    std::unique_ptr<Impl> impl_;
};

}  // namespace hb
