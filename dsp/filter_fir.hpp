// FIR low-pass designs: Kaiser window (length and beta from Kaiser's formulas) and Parks-McClellan (liquid-dsp's
// firdespm), each checked after design so that the requested stop-band attenuation is actually met.
// Frequencies here are fractions of the sample rate (0 .. 0.5).
#pragma once

#include <string>
#include <vector>

namespace hb {

// Kaiser's window parameter for a stop-band attenuation A in dB (J. F. Kaiser, "Nonrecursive digital filter
// design using the I0-sinh window function", Proc. IEEE ISCAS 1974; as given in A. V. Oppenheim & R. W. Schafer,
// "Discrete-Time Signal Processing", 1989, eq. 7.92): 0.1102(A-8.7) above 50 dB, 0.5842(A-21)^0.4 + 0.07886(A-21)
// from 21 to 50 dB, 0 below.
double kaiser_beta(double atten_db);

// Kaiser's length estimate: taps = ceil((A - 7.95) / (14.36 df)) + 1, df = transition width / sample rate
// (Kaiser 1974; Oppenheim & Schafer eq. 7.93 writes it with 8 and 2.285 * 2 pi).
int kaiser_length(double atten_db, double transition_fraction);

// Windowed-sinc low-pass, cutoff (-6 dB point) at cutoff_fraction of the rate, Kaiser window of parameter beta,
// scaled to unit gain at 0 Hz. Taps are symmetric, delay (taps-1)/2.
std::vector<double> kaiser_lowpass(int taps, double cutoff_fraction, double beta);

// Parks-McClellan equiripple low-pass (liquid-dsp firdespm_run), pass-band 0..pass_edge, stop-band
// stop_edge..0.5, weights set so the ripples stand in the ratio of the requested pass-band ripple (dB, peak to
// peak) and stop-band attenuation. Returns an empty vector if the exchange algorithm fails.
std::vector<double> remez_lowpass(int taps, double pass_edge, double stop_edge, double ripple_db, double atten_db);

// Largest |H| (dB) of a real symmetric FIR over [f_lo, f_hi] (fractions of the rate), on a grid fine enough for
// its length (16 points per 1/taps), refined around the largest sample.
double fir_peak_db(const std::vector<double>& h, double f_lo, double f_hi);
// Largest deviation from unit gain (dB, the larger of the over- and undershoot) over [0, f_hi].
double fir_passband_deviation_db(const std::vector<double>& h, double f_hi);

enum class FirDesignMethod { kaiser, parks_mcclellan };

struct FirLowpass {
    std::vector<double> taps;
    double beta = 0.0;                        // Kaiser only
    double achieved_atten_db = 0.0;           // measured: -(largest stop-band level)
    double pass_edge = 0.0, stop_edge = 0.0;  // fractions of the rate
};

// Designs a low-pass meeting the attenuation: starts at the formula's length and adds taps until the measured
// stop-band is at least atten_db down (Kaiser's and the equiripple estimates are approximate). `what` names the
// filter in errors; throws InputError when more than max_taps would be needed.
FirLowpass design_fir_lowpass(FirDesignMethod method, double pass_edge, double stop_edge, double atten_db,
                              double ripple_db, const std::string& what, int max_taps = 1 << 16);

}  // namespace hb
