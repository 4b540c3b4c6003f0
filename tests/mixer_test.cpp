// The mixer model: presets and resolution, closed-form checks measured on the emulator's output (ideal
// multiplier, switching conversion gain, LO harmonics, image rejection, two-tone intermodulation, port
// isolation, noise), and the predicted levels / spur table for the plan engine.
// Check values: ../shared/reference-values.md §2–§6, each with its source beside the check. Tone levels are
// read from exact FFT bins (tests/support/mixer_probe.hpp).
#include <gtest/gtest.h>

#include <cmath>
#include <string>

#include "dsp/errors.hpp"
#include "dsp/mixer.hpp"
#include "dsp/mixer_emulator.hpp"
#include "dsp/units.hpp"
#include "support/mixer_probe.hpp"

namespace hb {
namespace {

using test::cf32;
using test::emulate;
using test::emulate_settled;
using test::make_tones;
using test::Spectrum;
using test::Tone;

double db20(double a) { return 20.0 * std::log10(a); }

EmulatorConfig config(double rf_center, double fs, double out_center, double occupied) {
    return test::emulator_config(rf_center, fs, out_center, occupied);
}

MixerSpec spec_of(MixerModel model) {
    MixerSpec s;
    s.model = model;
    return s;
}

// ---------------------------------------------------------------------------------------------
// Presets and resolution

TEST(MixerPresets, AllResolveWithTypicalFigures) {
    ASSERT_EQ(mixer_presets().size(), 5u);
    EXPECT_EQ(mixer_preset_names(), "single-diode|single-transistor|diode-ring|gilbert-cell|image-reject");
    for (const MixerPreset& pre : mixer_presets()) {
        MixerSpec s;
        s.preset = std::string(pre.name);
        s.lo.level_dbm = (pre.lo_drive_min_dbm + pre.lo_drive_max_dbm) / 2;
        const MixerParams p = resolve_mixer(s, 110.7e6);
        EXPECT_EQ(p.model, pre.values.model) << pre.name;
        EXPECT_TRUE(p.warnings.empty()) << pre.name << ": " << (p.warnings.empty() ? "" : p.warnings.front());
        EXPECT_TRUE(p.iip3_dbm && p.iip2_dbm && p.lo_if_isolation_db && p.rf_if_isolation_db) << pre.name;
        EXPECT_GT(*p.iip2_dbm, *p.iip3_dbm) << pre.name;
    }
    // Common practice (issue 4): a passive diode ring loses about 5–7 dB and wants +4…+10 dBm of LO; an active
    // cell has conversion gain and a much lower drive; single-ended types have strong LO and RF feedthrough.
    const MixerPreset* ring = find_mixer_preset("diode-ring");
    const MixerPreset* cell = find_mixer_preset("gilbert-cell");
    ASSERT_TRUE(ring && cell);
    EXPECT_GE(*ring->values.conversion_gain_db, -7.0);
    EXPECT_LE(*ring->values.conversion_gain_db, -5.0);
    EXPECT_EQ(ring->lo_drive_min_dbm, 4.0);
    EXPECT_EQ(ring->lo_drive_max_dbm, 10.0);
    EXPECT_GT(*cell->values.conversion_gain_db, 0.0);
    EXPECT_LT(cell->lo_drive_max_dbm, ring->lo_drive_min_dbm);
    for (const char* single : {"single-diode", "single-transistor"}) {
        const MixerPreset* p = find_mixer_preset(single);
        EXPECT_LT(*p->values.lo_if_isolation_db, *ring->values.lo_if_isolation_db - 15.0) << single;
        EXPECT_LT(*p->values.rf_if_isolation_db, *ring->values.rf_if_isolation_db - 15.0) << single;
        EXPECT_EQ(p->values.model, MixerModel::unipolar);
    }
    EXPECT_EQ(find_mixer_preset("image-reject")->values.model, MixerModel::quadrature);
    EXPECT_EQ(find_mixer_preset("nonesuch"), nullptr);
}

TEST(MixerResolve, ExplicitKeysOverrideThePreset) {
    MixerSpec s;
    s.preset = "diode-ring";
    s.conversion_gain_db = -8.5;
    s.iip3_dbm = 20.0;
    const MixerParams p = resolve_mixer(s, 100e6);
    EXPECT_EQ(p.model, MixerModel::bipolar);
    EXPECT_DOUBLE_EQ(p.conversion_gain_db, -8.5);
    EXPECT_DOUBLE_EQ(*p.iip3_dbm, 20.0);
    EXPECT_DOUBLE_EQ(*p.rf_if_isolation_db, *find_mixer_preset("diode-ring")->values.rf_if_isolation_db);
    s.model = MixerModel::unipolar;  // a model other than the default overrides the preset's
    EXPECT_EQ(resolve_mixer(s, 100e6).model, MixerModel::unipolar);
    EXPECT_EQ(resolve_mixer(s, 100e6).lo.shape, LoShape::unipolar);
}

TEST(MixerResolve, BadValuesNameTheirKey) {
    auto expect_key = [](const MixerSpec& s, const std::string& key) {
        try {
            resolve_mixer(s, 100e6);
            ADD_FAILURE() << "no error for " << key;
        } catch (const InputError& e) {
            EXPECT_NE(std::string(e.what()).find(key), std::string::npos) << e.what();
        }
    };
    MixerSpec s;
    s.preset = "ring";
    expect_key(s, "mixer.preset");
    try {
        resolve_mixer(s, 100e6);
    } catch (const InputError& e) {
        EXPECT_NE(std::string(e.what()).find("diode-ring|gilbert-cell"), std::string::npos) << e.what();
    }
    // The preset's duty 0.503 leaves room for an edge of 0.497 at most; the gilbert-cell's 0.15 edge cannot
    // go with an explicit duty of 0.1.
    s = MixerSpec{};
    s.preset = "gilbert-cell";
    s.duty_cycle = 0.1;
    expect_key(s, "mixer.edge_time");
    s = spec_of(MixerModel::bipolar);
    s.harmonics = 0;
    expect_key(s, "mixer.harmonics");
    s = spec_of(MixerModel::bipolar);
    s.conversion_gain_db = std::nan("");
    expect_key(s, "mixer.conversion_gain_db");
    s = spec_of(MixerModel::quadrature);
    s.iq_phase_error_deg = 95;
    expect_key(s, "mixer.iq_phase_error_deg");
    s = spec_of(MixerModel::bipolar);
    s.lo.phase_noise = {{1e4, -90}, {1e3, -80}};
    expect_key(s, "mixer.lo.phase_noise[1]");
    s = spec_of(MixerModel::bipolar);
    s.lo_if_isolation_db = -3;
    expect_key(s, "mixer.lo_if_isolation_db");
    EXPECT_THROW(resolve_mixer(spec_of(MixerModel::ideal), -1.0), InputError);
    EXPECT_THROW(resolve_mixer(spec_of(MixerModel::ideal), std::nan("")), InputError);
}

TEST(MixerResolve, ValidateRejectsUnknownPreset) {
    hb::Setup s;
    s.plan.wanted_hz = 100e6;
    s.plan.if_hz = 10.7e6;
    s.plan.if_bandwidth_hz = 200e3;
    s.plan.rf_low_hz = s.plan.rf_high_hz = 100e6;
    EXPECT_TRUE(validate(s).empty());
    s.mixer.preset = "diode-rng";
    const auto problems = validate(s);
    ASSERT_EQ(problems.size(), 1u);
    EXPECT_EQ(problems[0].key, "mixer.preset");
    EXPECT_NE(problems[0].message.find("diode-ring"), std::string::npos);
}

TEST(MixerResolve, WarningsForSettingsWithoutEffect) {
    MixerSpec s = spec_of(MixerModel::ideal);
    s.duty_cycle = 0.4;
    s.iq_gain_error_db = 0.5;
    const MixerParams p = resolve_mixer(s, 1e6);
    ASSERT_EQ(p.warnings.size(), 2u);
    EXPECT_NE(p.warnings[0].find("mixer.duty_cycle"), std::string::npos);
    EXPECT_EQ(p.lo.harmonics, 1);
    MixerSpec cell;
    cell.preset = "gilbert-cell";
    cell.lo.level_dbm = 7;  // an active cell wants much less
    const MixerParams q = resolve_mixer(cell, 1e6);
    ASSERT_EQ(q.warnings.size(), 1u);
    EXPECT_NE(q.warnings[0].find("drive range"), std::string::npos);
}

// M2: switching-mixer conversion gain 2/π (−3.92 dB) for a ±1 square LO and 1/π (−9.94 dB) for a 0/1 switch;
// a sine multiplier ½ (−6.02 dB). Razavi, RF Microelectronics, 2nd ed. 2012, ch. 6 (from memory); follows from
// reference-values F1/F2.
TEST(MixerResolve, NaturalConversionGains) {
    EXPECT_NEAR(resolve_mixer(spec_of(MixerModel::ideal), 1e6).natural_gain_db, -6.0206, 0.0005);
    EXPECT_NEAR(resolve_mixer(spec_of(MixerModel::bipolar), 1e6).natural_gain_db, db20(2 / kPi), 1e-9);
    EXPECT_NEAR(resolve_mixer(spec_of(MixerModel::bipolar), 1e6).natural_gain_db, -3.92, 0.005);
    EXPECT_NEAR(resolve_mixer(spec_of(MixerModel::unipolar), 1e6).natural_gain_db, -9.94, 0.005);
    EXPECT_NEAR(resolve_mixer(spec_of(MixerModel::quadrature), 1e6).natural_gain_db, -3.92, 0.005);
    // Unset conversion gain = the natural one.
    EXPECT_EQ(resolve_mixer(spec_of(MixerModel::unipolar), 1e6).conversion_gain_db,
              resolve_mixer(spec_of(MixerModel::unipolar), 1e6).natural_gain_db);
}

// I2/I3: A_IIP3 = sqrt(4/3·|a1/a3|) = 3.6515 and A_IIP2 = |a1/a2| = 10 for a1 = 10, a2 = 1, a3 = −1
// (reference-values I2, I3; Razavi 2012 §2.2). With the polynomial normalised to a1 = 1: a2 = 0.1, a3 = −0.1.
TEST(MixerResolve, InterceptsToPolynomial) {
    MixerSpec s = spec_of(MixerModel::bipolar);
    s.iip3_dbm = db20(3.6515);
    s.iip2_dbm = 20.0;
    const MixerParams p = resolve_mixer(s, 1e6);
    EXPECT_NEAR(p.a3, -0.1, 1e-5);
    EXPECT_NEAR(p.a2, 0.1, 1e-12);
    // The calibration shifts the dBm figures onto the dBFS scale: IIP3 +10 dBm with 0 dBFS = −20 dBm is
    // +30 dBFS, A = 31.62.
    s.iip3_dbm = 10.0;
    const MixerParams q = resolve_mixer(s, 1e6, -20.0);
    EXPECT_NEAR(q.a3, -4.0 / (3.0 * 1000.0), 1e-12);
}

TEST(MixerResolve, LoOffsetNoiseAndSetup) {
    MixerSpec s = spec_of(MixerModel::bipolar);
    s.lo.offset_ppm = 10;
    s.noise_figure_db = 10;
    const MixerParams p = resolve_mixer(s, 100e6, -30.0);
    EXPECT_DOUBLE_EQ(p.lo_nominal_hz, 100e6);
    EXPECT_NEAR(p.lo_hz, 100.001e6, 1e-6);
    // Added noise (F − 1)·kT0 referred to the input: −173.975 dBm/Hz (reference-values N1) + 10·log10(9),
    // on the dBFS scale with 0 dBFS = −30 dBm.
    ASSERT_TRUE(p.noise_dbfs_per_hz);
    EXPECT_NEAR(*p.noise_dbfs_per_hz, -173.975 + 10 * std::log10(9.0) + 30.0, 0.005);
    s.noise_dbfs_per_hz = -120;  // explicit level wins
    EXPECT_DOUBLE_EQ(*resolve_mixer(s, 100e6, -30.0).noise_dbfs_per_hz, -120);

    hb::Setup setup;
    setup.plan.wanted_hz = 100e6;
    setup.plan.if_hz = 10.7e6;
    setup.plan.injection = Injection::low;
    setup.sources.push_back({});
    setup.sources[0].level_offset_db = -12;
    setup.mixer = spec_of(MixerModel::bipolar);
    const MixerParams q = resolve_mixer(setup);
    EXPECT_DOUBLE_EQ(q.lo_hz, 89.3e6);
    EXPECT_DOUBLE_EQ(q.dbm_at_0dbfs, -12);
}

// ---------------------------------------------------------------------------------------------
// Closed forms measured on the emulator's output

// M1: cos(2π·100k t)·cos(2π·30k t) = ½cos(2π·70k t) + ½cos(2π·130k t): two tones at 0.5000 (−6.02 dB) each
// (reference-values M1; the product identity cos a·cos b).
TEST(MixerEmulator, IdealMultiplierSumAndDifference) {
    const MixerParams p = resolve_mixer(spec_of(MixerModel::ideal), 100e3);
    const double fs = 256e3;
    const auto x = make_tones(2560, fs, {{5e3, 1.0}});  // RF window at 25 kHz: the tone at 30 kHz, 0 dBFS
    const auto y = test::emulate_settled(p, config(25e3, fs, 100e3, 20e3), x);
    const Spectrum s = Spectrum::of(y, fs);
    EXPECT_NEAR(s.dbfs(70e3 - 100e3), -6.0206, 0.001);
    EXPECT_NEAR(s.dbfs(130e3 - 100e3), -6.0206, 0.001);
    EXPECT_NEAR(std::abs(s.at(70e3 - 100e3)), 0.5, 1e-5);
}

// M2 and F1 measured: a ±1 switch converts with 2/π (−3.92 dB) and its harmonics m = 3, 5, 7 give the
// (m, −1) products at −9.54, −13.98, −16.90 dB re the wanted (4/(πm), reference-values F1); a 0/1 switch with
// 1/π (−9.94 dB) and passes RF through its DC term d = 0.5: the (0, 1) product at 0.5/(1/π) = +3.92 dBc
// (reference-values F2).
TEST(MixerEmulator, SwitchingConversionGainAndLoHarmonics) {
    const double fs = 1.28e6, f_lo = 100e3, f_rf = 130e3;
    const auto x = make_tones(1280, fs, {{5e3, 0.25}});  // −12.04 dBFS at 130 kHz (RF window at 125 kHz)
    const double in_db = db20(0.25);

    const MixerParams bip = resolve_mixer(spec_of(MixerModel::bipolar), f_lo);
    const Spectrum b = Spectrum::of(emulate_settled(bip, config(125e3, fs, 300e3, 20e3), x), fs);
    const double wanted = b.dbfs(f_rf - f_lo - 300e3);
    EXPECT_NEAR(wanted - in_db, -3.92, 0.005);
    EXPECT_NEAR(b.dbfs(3 * f_lo - f_rf - 300e3) - wanted, -9.542, 0.005);
    EXPECT_NEAR(b.dbfs(5 * f_lo - f_rf - 300e3) - wanted, -13.979, 0.005);
    EXPECT_NEAR(b.dbfs(7 * f_lo - f_rf - 300e3) - wanted, -16.902, 0.005);
    EXPECT_LT(b.dbfs(2 * f_lo - f_rf - 300e3), -150);  // even harmonic of a balanced switch: none
    EXPECT_LT(b.dbfs(f_rf - 300e3), -150);             // (0, 1): a ±1 switch has no DC term

    const MixerParams uni = resolve_mixer(spec_of(MixerModel::unipolar), f_lo);
    const Spectrum u = Spectrum::of(emulate_settled(uni, config(125e3, fs, 300e3, 20e3), x), fs);
    const double uw = u.dbfs(f_rf - f_lo - 300e3);
    EXPECT_NEAR(uw - in_db, -9.94, 0.005);
    EXPECT_NEAR(u.dbfs(f_rf - 300e3) - uw, 3.92, 0.005);
    EXPECT_NEAR(u.dbfs(3 * f_lo - f_rf - 300e3) - uw, -9.542, 0.005);

    // An explicit conversion gain sets the wanted; the harmonics keep their relative levels.
    MixerSpec g = spec_of(MixerModel::bipolar);
    g.conversion_gain_db = 7.5;
    const Spectrum gs = Spectrum::of(emulate_settled(resolve_mixer(g, f_lo), config(125e3, fs, 300e3, 20e3), x), fs);
    EXPECT_NEAR(gs.dbfs(f_rf - f_lo - 300e3) - in_db, 7.5, 0.005);
    EXPECT_NEAR(gs.dbfs(3 * f_lo - f_rf - 300e3) - gs.dbfs(f_rf - f_lo - 300e3), -9.542, 0.005);
}

// Image rejection of the quadrature model, measured on its output as the ratio of the bins +IF and −IF for one
// tone (the reference method), against IRR = (1 + 2g·cosθ + g²)/(1 − 2g·cosθ + g²): 39.61 dB at 0.1 dB / 1°,
// 22.83 dB at 1 dB / 5°, 28.20 at 0.5/3°, 33.59 at 0.2/2°, 41.18 at 0/1°, 24.81 at 1/0° (reference-values
// R1–R4; Razavi, RF Microelectronics, image-reject receivers). Within 0.1 dB.
TEST(MixerEmulator, QuadratureImageRejection) {
    struct Case {
        double gain_db, phase_deg, irr_db;
    };
    const Case cases[] = {{0.1, 1, 39.61}, {1, 5, 22.83}, {0.5, 3, 28.20}, {0.2, 2, 33.59}, {0, 1, 41.18}, {1, 0, 24.81}};
    const double fs = 1.024e6;
    const auto x = make_tones(1024, fs, {{2e3, 0.1, 0.7}});  // RF at 1.102 MHz (window at 1.1 MHz)
    for (const Case& c : cases) {
        MixerSpec s = spec_of(MixerModel::quadrature);
        s.iq_gain_error_db = c.gain_db;
        s.iq_phase_error_deg = c.phase_deg;
        for (Injection inj : {Injection::low, Injection::high}) {
            const double f_lo = inj == Injection::low ? 1.0e6 : 1.204e6;  // IF 102 kHz either side
            const MixerParams p = resolve_mixer(s, f_lo);
            EXPECT_NEAR(image_rejection_db(p), c.irr_db, 0.01);
            const double centre = if_window_center_hz(p, 102e3, inj);
            EXPECT_EQ(centre, inj == Injection::low ? 102e3 : -102e3);  // the wanted sits at f_RF − f_LO
            const Spectrum sp = Spectrum::of(emulate_settled(p, config(1.1e6, fs, centre, 10e3), x), fs);
            const double wanted = sp.dbfs(0.0), image = sp.dbfs(-2 * centre);
            EXPECT_NEAR(wanted - image, c.irr_db, 0.1) << c.gain_db << " dB, " << c.phase_deg << " deg";
            EXPECT_NEAR(wanted - db20(0.1), p.conversion_gain_db, 0.005);  // |μ| = 1: the gain stays as set
        }
    }
}

// I1: y = a1·x + a2·x² + a3·x³, x = A·cos ω1t + A·cos ω2t, a1 = 10, a2 = 1, a3 = −1, A = 0.1: fundamental
// a1A + (9/4)a3A³ = 0.997750; IM3 ¾|a3|A³ = 7.5e-4; IM2 (ω1 ± ω2) a2A² = 1e-2; HD2 a2A²/2 = 5e-3; HD3 |a3|A³/4 =
// 2.5e-4; DC a2A² = 1e-2 (reference-values I1; Razavi 2012 §2.2). Here the polynomial sits before an ideal
// multiplier whose gain makes a1 = 10 (20 dB); every RF product f_p appears at f_LO − f_p with the same
// amplitude, and the DC at f_LO with twice it (DC·cos θ has no ½).
TEST(MixerEmulator, TwoTonePolynomialProducts) {
    MixerSpec s = spec_of(MixerModel::ideal);
    s.conversion_gain_db = 20;
    s.iip3_dbm = db20(std::sqrt(4.0 / 3.0 * 10.0));
    s.iip2_dbm = 20;
    const double f_lo = 32000, f1 = 10000, f2 = 10100, fc = 10050, fs = 40960;
    const MixerParams p = resolve_mixer(s, f_lo);
    const auto x = make_tones(4096, fs, {{f1 - fc, 0.1, 0.2}, {f2 - fc, 0.1, 1.1}});
    const double centre = 17000;
    const Spectrum sp = Spectrum::of(emulate_settled(p, config(fc, fs, centre, 200), x), fs);
    auto amp = [&](double f_out) { return std::abs(sp.at(f_out - centre)); };
    // Relative 1e-3 (0.009 dB): the envelopes are float.
    auto near = [&](double f_out, double expect) { EXPECT_NEAR(amp(f_out) / expect, 1.0, 1e-3) << f_out << " Hz"; };
    near(f_lo - f1, 0.997750);
    near(f_lo - f2, 0.997750);
    near(f_lo - (2 * f1 - f2), 7.5e-4);
    near(f_lo - (2 * f2 - f1), 7.5e-4);
    near(f_lo - (f1 + f2), 1e-2);
    near(f_lo - (f2 - f1), 1e-2);
    near(f_lo + (f2 - f1), 1e-2);
    near(f_lo - 2 * f1, 5e-3);
    near(f_lo - 3 * f1, 2.5e-4);
    near(f_lo, 2e-2);
    // The fundamental's compression is visible: 0.997750, not 1.
    EXPECT_LT(amp(f_lo - f1), 0.99785);
}

// I4: P_IM3,out = 3·Pin − 2·IIP3 + G = −90 dBm for Pin −30 dBm, IIP3 +10 dBm, G 20 dB; IM2 2·Pin − IIP2 + G =
// −80 dBm for IIP2 +40 dBm; IIP3 = Pin + ΔP/2 from the measured tones (reference-values I4). Measured on a ±1
// switching mixer with the RF port calibrated at 0 dBFS = −20 dBm, within 0.2 dB (drive A_IIP3/100).
TEST(MixerEmulator, TwoToneInterceptsInDbm) {
    MixerSpec s = spec_of(MixerModel::bipolar);
    s.conversion_gain_db = 20;
    s.iip3_dbm = 10;
    s.iip2_dbm = 40;
    const double cal = -20, f_lo = 32000, f1 = 10000, f2 = 10100, fc = 10050, fs = 40960;
    const MixerParams p = resolve_mixer(s, f_lo, cal);
    const double a = amplitude_from_db(-30 - cal);
    const auto x = make_tones(4096, fs, {{f1 - fc, a, 0.0}, {f2 - fc, a, 2.0}});
    const Spectrum sp = Spectrum::of(emulate_settled(p, config(fc, fs, 17000, 200), x), fs);
    auto dbm = [&](double f_out) { return sp.dbfs(f_out - 17000) + cal; };
    const double fund = dbm(f_lo - f1);
    EXPECT_NEAR(fund, -10.0, 0.2);
    EXPECT_NEAR(dbm(f_lo - (2 * f1 - f2)), -90.0, 0.2);
    EXPECT_NEAR(dbm(f_lo - (2 * f2 - f1)), -90.0, 0.2);
    EXPECT_NEAR(dbm(f_lo - (f1 + f2)), -80.0, 0.2);
    EXPECT_NEAR(dbm(f_lo - (f2 - f1)), -80.0, 0.2);
    const double delta = fund - dbm(f_lo - (2 * f1 - f2));
    EXPECT_NEAR(-30.0 + delta / 2, 10.0, 0.2);
    EXPECT_NEAR(-30.0 + (fund - dbm(f_lo - (f1 + f2))), 40.0, 0.2);  // IIP2 = Pin + ΔP2
}

// Port isolation by definition: the LO at the IF port sits at P_LO − isolation (and the LO waveform's harmonics
// below it, −9.54 dB for the 3rd of a ±1 square, F1); RF at the IF port at P_RF − isolation, whatever the
// conversion gain (derivable from the definitions).
TEST(MixerEmulator, PortIsolation) {
    MixerSpec s = spec_of(MixerModel::bipolar);
    s.lo.level_dbm = 7;
    s.lo_if_isolation_db = 40;
    s.rf_if_isolation_db = 30;
    s.conversion_gain_db = 10;
    const double cal = -10, f_lo = 100e3, fs = 1.28e6;
    const MixerParams p = resolve_mixer(s, f_lo, cal);
    const auto x = make_tones(1280, fs, {{5e3, amplitude_from_db(-10), 0.0}});  // −20 dBm at 130 kHz
    const Spectrum sp = Spectrum::of(emulate_settled(p, config(125e3, fs, 300e3, 20e3), x), fs);
    EXPECT_NEAR(sp.dbfs(f_lo - 300e3) + cal, 7 - 40, 0.01);
    EXPECT_NEAR(sp.dbfs(3 * f_lo - 300e3) - sp.dbfs(f_lo - 300e3), -9.542, 0.01);
    EXPECT_NEAR(sp.dbfs(130e3 - 300e3) + cal, -20 - 30, 0.01);
    EXPECT_NEAR(sp.dbfs(30e3 - 300e3) + cal, -20 + 10, 0.01);
}

// The DC offset lands at 0 Hz of the output (here the complex IF of a quadrature mixer, where 0 Hz is inside
// the window), at its set level.
TEST(MixerEmulator, DcOffset) {
    MixerSpec s = spec_of(MixerModel::quadrature);
    s.dc_offset_dbfs = -40;
    const double fs = 1.024e6;
    const Spectrum sp = Spectrum::of(emulate_settled(resolve_mixer(s, 1e6), config(1.1e6, fs, 100e3, 0), std::vector<cf32>(1024)), fs);
    EXPECT_NEAR(sp.dbfs(-100e3), -40, 0.001);
}

// Noise at the set noise figure: the mixer adds (F − 1)·kT0 referred to its input (Friis 1944: an input
// already at kT0 leaves at F·kT0), kT0 = −173.975 dBm/Hz (reference-values N1). NF 10 dB, 0 dBFS = −30 dBm,
// gain 10 dB: −173.975 + 9.542 + 30 + 10 = −124.433 dBFS/Hz at the output, measured as mean |z|²/fs.
TEST(MixerEmulator, NoiseAtNoiseFigure) {
    MixerSpec s = spec_of(MixerModel::bipolar);
    s.noise_figure_db = 10;
    s.conversion_gain_db = 10;
    const double fs = 2.4e6;
    const std::size_t n = 1 << 20;
    const auto y = emulate(resolve_mixer(s, 100e6, -30), config(90e6, fs, 10e6, 0), std::vector<cf32>(n));
    double pw = 0;
    for (const cf32& v : y) pw += std::norm(std::complex<double>(v));
    EXPECT_NEAR(10 * std::log10(pw / n / fs), -173.975 + 10 * std::log10(9.0) + 30 + 10, 0.05);
    // Circular complex noise: I and Q carry half each.
    double pi = 0;
    for (const cf32& v : y) pi += double(v.real()) * v.real();
    EXPECT_NEAR(pi / pw, 0.5, 0.01);
}

// LO frequency error: +100 ppm on a 1 MHz LO is +100 Hz, so a low-side conversion of 1.1 MHz lands 100 Hz
// below the nominal 100 kHz IF (f_IF = f_RF − f_LO).
TEST(MixerEmulator, LoFrequencyOffset) {
    MixerSpec s = spec_of(MixerModel::bipolar);
    s.lo.offset_ppm = 100;
    const double fs = 102400;  // 100 Hz bins
    const auto x = make_tones(1024, fs, {{0.0, 0.5}});
    const Spectrum sp = Spectrum::of(emulate_settled(resolve_mixer(s, 1e6), config(1.1e6, fs, 100e3, 0), x), fs);
    EXPECT_NEAR(std::abs(sp.at(-100.0)), 0.5 * 2 / kPi, 1e-5);
    EXPECT_LT(std::abs(sp.at(0.0)), 1e-6);
}

// ---------------------------------------------------------------------------------------------
// Predicted levels and the spur table

// Closed forms of the predictions: a ±1 switch at 50 % duty has (3, 1) at −9.54 dBc and no even m; a 0/1
// switch at d = 0.25 with IIP2 +20 dBFS at −20 dBFS drive has the half-IF (2, 2) response at
// 20·log10(a2·A/2) + 20·log10(c2/c1) = −46.02 − 3.01 = −49.03 dBc (U2/U1 = a2A/2 from §5 I1, c2/c1 from F3).
TEST(MixerPrediction, ClosedForms) {
    const MixerParams bip = resolve_mixer(spec_of(MixerModel::bipolar), 1e6);
    EXPECT_NEAR(predict_product(bip, 1, -1, -10).dbc, 0.0, 1e-12);
    EXPECT_NEAR(predict_product(bip, 1, -1, -10).dbfs, -10 - 3.92, 0.005);
    EXPECT_NEAR(predict_product(bip, 3, -1, -10).dbc, -9.542, 0.001);
    EXPECT_NEAR(predict_product(bip, 3, 1, -10).dbc, -9.542, 0.001);
    EXPECT_EQ(predict_product(bip, 2, -1, -10).dbfs, -std::numeric_limits<double>::infinity());
    EXPECT_EQ(predict_product(bip, 1, -2, -10).dbfs, -std::numeric_limits<double>::infinity());  // linear

    MixerSpec u = spec_of(MixerModel::unipolar);
    u.duty_cycle = 0.25;
    u.iip2_dbm = 20;
    const MixerParams uni = resolve_mixer(u, 1e6);
    EXPECT_NEAR(predict_product(uni, 2, -2, -20).dbc, -49.03, 0.01);
    EXPECT_NEAR(predict_wanted_dbfs(uni, -20), -20 + db20(0.45016 / 2), 0.001);
    EXPECT_NEAR(image_rejection_db(uni), 0.0, 0.0);  // a real mixer converts the image like the wanted
}

TEST(MixerPrediction, SpurTable) {
    MixerSpec s;
    s.preset = "diode-ring";
    const MixerParams p = resolve_mixer(s, 110.7e6);
    const SpurTable t = predict_spur_table(p, -30.0, 7, 5);
    EXPECT_EQ(t.max_m, 7);
    EXPECT_EQ(t.max_n, 5);
    EXPECT_DOUBLE_EQ(t.ref_level_dbfs, -30.0);
    EXPECT_TRUE(std::isnan(t.entry(0, 0)));
    EXPECT_NEAR(t.entry(1, 1), 0.0, 1e-12);
    EXPECT_TRUE(std::isnan(t.entry(1, 4)));  // beyond the 3rd-order polynomial
    EXPECT_TRUE(std::isnan(t.entry(3, 5)));
    for (int m = 0; m <= 7; ++m)
        for (int n = 0; n <= 3; ++n) {
            if (m == 0 && n == 0) continue;
            const double v = t.entry(m, n);
            EXPECT_DOUBLE_EQ(v, predict_product(p, m, n, -30.0).dbc) << m << "x" << n;
            // SpurTable::at scales (|n| − 1) dB per dB of drive: exact for the model at low drive.
            EXPECT_NEAR(t.at(m, n, -40.0), predict_product(p, m, n, -40.0).dbc, 0.02) << m << "x" << n;
        }
    // The LO feedthrough (m, 0) falls 1 dB per dB of drive relative to the wanted: +7 dBm LO − 35 dB isolation =
    // −28 dBFS against a wanted of −30 − 6 dB.
    EXPECT_NEAR(t.entry(1, 0), -28.0 - (-36.0), 0.01);

    // A bypass without preset predicts nothing; with a preset it predicts that preset's mixer.
    MixerSpec b = spec_of(MixerModel::bypass);
    const MixerParams pb = resolve_mixer(b, 110.7e6);
    EXPECT_FALSE(pb.predicts);
    const SpurTable tb = predict_spur_table(pb, -30.0, 3, 3);
    for (double v : tb.dbc) EXPECT_TRUE(std::isnan(v));
    b.preset = "diode-ring";
    const MixerParams pr = resolve_mixer(b, 110.7e6);
    EXPECT_EQ(pr.model, MixerModel::bypass);
    EXPECT_EQ(pr.predict_model, MixerModel::bipolar);
    EXPECT_EQ(predict_spur_table(pr, -30.0, 7, 5).dbc.size(), t.dbc.size());
    EXPECT_DOUBLE_EQ(predict_spur_table(pr, -30.0, 7, 5).entry(3, 1), t.entry(3, 1));
}

// Quadrature: the wanted on the fundamental's side, the image-path copy (mirror) at the IRR below it.
TEST(MixerPrediction, QuadraturePlacement) {
    MixerSpec s = spec_of(MixerModel::quadrature);
    s.iq_gain_error_db = 0.1;
    s.iq_phase_error_deg = 1;
    const MixerParams p = resolve_mixer(s, 1e6);
    const ProductLevel w = predict_product(p, 1, -1, -20);
    EXPECT_EQ(w.sign, -1);  // at −(f_LO − f_RF) = f_RF − f_LO
    EXPECT_NEAR(w.dbfs - w.mirror_dbfs, 39.61, 0.01);
    const ProductLevel h3 = predict_product(p, 3, -1, -20);  // the 3rd LO harmonic turns the other way
    EXPECT_EQ(h3.sign, 1);
    EXPECT_NEAR(h3.dbc, -9.542, 0.01);
}

}  // namespace
}  // namespace hb
