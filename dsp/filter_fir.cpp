#include "dsp/filter_fir.hpp"

#include <liquid/liquid.h>

#include <algorithm>
#include <cmath>
#include <complex>

#include "dsp/design_fft.hpp"
#include "dsp/errors.hpp"
#include "dsp/units.hpp"

namespace hb {
namespace {

// |H|^2 of real taps on a zero-padded FFT grid of at least 16 points per 1/taps (and 4096 points).
std::vector<double> power_grid(const std::vector<double>& h, std::size_t& size) {
    std::size_t p = 4096;
    while (p < 16 * h.size()) p *= 2;
    std::vector<std::complex<double>> x(p);
    for (std::size_t i = 0; i < h.size(); ++i) x[i] = h[i];
    design_fft(x);
    std::vector<double> out(p / 2 + 1);
    for (std::size_t k = 0; k <= p / 2; ++k) out[k] = std::norm(x[k]);
    size = p;
    return out;
}

double power_at(const std::vector<double>& h, double f) {
    std::complex<double> s = 0.0;
    const std::complex<double> step = std::polar(1.0, -kTwoPi * f);
    std::complex<double> ph = 1.0;
    for (double v : h) {
        s += v * ph;
        ph *= step;
    }
    return std::norm(s);
}

}  // namespace

double kaiser_beta(double a) {
    if (a > 50.0) return 0.1102 * (a - 8.7);
    if (a >= 21.0) return 0.5842 * std::pow(a - 21.0, 0.4) + 0.07886 * (a - 21.0);
    return 0.0;
}

int kaiser_length(double a, double df) {
    return static_cast<int>(std::ceil((a - 7.95) / (14.36 * df))) + 1;
}

std::vector<double> kaiser_lowpass(int taps, double fc, double beta) {
    std::vector<double> h(static_cast<std::size_t>(taps));
    const double m = taps - 1;
    const double i0b = std::cyl_bessel_i(0.0, beta);
    double sum = 0.0;
    for (int n = 0; n < taps; ++n) {
        const double t = n - m / 2.0;
        const double x = 2.0 * fc * t;
        const double sinc = (x == 0.0) ? 1.0 : std::sin(kPi * x) / (kPi * x);
        const double r = taps > 1 ? 2.0 * n / m - 1.0 : 0.0;
        const double w = std::cyl_bessel_i(0.0, beta * std::sqrt(std::max(0.0, 1.0 - r * r))) / i0b;
        h[n] = 2.0 * fc * sinc * w;
        sum += h[n];
    }
    for (double& v : h) v /= sum;
    return h;
}

std::vector<double> remez_lowpass(int taps, double fp, double fs, double ripple_db, double atten_db) {
    const double g = std::pow(10.0, ripple_db / 20.0);
    const double dp = (g - 1.0) / (g + 1.0);
    const double ds = std::pow(10.0, -atten_db / 20.0);
    float bands[4] = {0.0f, float(fp), float(fs), 0.5f};
    float des[2] = {1.0f, 0.0f};
    float w[2] = {1.0f, float(dp / ds)};
    liquid_firdespm_wtype wt[2] = {LIQUID_FIRDESPM_FLATWEIGHT, LIQUID_FIRDESPM_FLATWEIGHT};
    std::vector<float> hf(static_cast<std::size_t>(taps));
    if (firdespm_run(static_cast<unsigned>(taps), 2, bands, des, w, wt, LIQUID_FIRDESPM_BANDPASS, hf.data()) != 0)
        return {};
    std::vector<double> h(hf.begin(), hf.end());
    for (double v : h)
        if (!std::isfinite(v)) return {};
    return h;
}

double fir_peak_db(const std::vector<double>& h, double f_lo, double f_hi) {
    std::size_t p = 0;
    const auto pw = power_grid(h, p);
    double best = 0.0;
    std::size_t kb = 0;
    bool any = false;
    for (std::size_t k = 0; k < pw.size(); ++k) {
        const double f = double(k) / double(p);
        if (f < f_lo || f > f_hi) continue;
        if (!any || pw[k] > best) best = pw[k], kb = k, any = true;
    }
    // The grid edges themselves, then a golden-section refinement around the best bin.
    for (double f : {f_lo, f_hi}) {
        const double v = power_at(h, f);
        if (!any || v > best) best = v, kb = static_cast<std::size_t>(std::lround(f * double(p))), any = true;
    }
    double a = std::max(f_lo, (double(kb) - 1.0) / double(p)), b = std::min(f_hi, (double(kb) + 1.0) / double(p));
    const double gr = 0.5 * (std::sqrt(5.0) - 1.0);
    double c = b - gr * (b - a), d = a + gr * (b - a);
    double fc = power_at(h, c), fd = power_at(h, d);
    for (int i = 0; i < 40; ++i) {
        if (fc > fd) {
            b = d, d = c, fd = fc, c = b - gr * (b - a), fc = power_at(h, c);
        } else {
            a = c, c = d, fc = fd, d = a + gr * (b - a), fd = power_at(h, d);
        }
    }
    best = std::max({best, fc, fd});
    return 10.0 * std::log10(std::max(best, 1e-300));
}

double fir_passband_deviation_db(const std::vector<double>& h, double f_hi) {
    std::size_t p = 0;
    const auto pw = power_grid(h, p);
    double lo = 0.0, hi = 0.0;
    for (std::size_t k = 0; k < pw.size() && double(k) / double(p) <= f_hi; ++k) {
        const double db = 10.0 * std::log10(std::max(pw[k], 1e-300));
        lo = std::min(lo, db);
        hi = std::max(hi, db);
    }
    const double e = 10.0 * std::log10(std::max(power_at(h, f_hi), 1e-300));
    return std::max({hi, -lo, -e, e});
}

FirLowpass design_fir_lowpass(FirDesignMethod method, double fp, double fs, double atten_db, double ripple_db,
                              const std::string& what, int max_taps) {
    if (!(fp > 0.0 && fs > fp && fs < 0.5))
        throw InputError(what + ": the FIR pass-band edge (" + format_number(fp) + ") and stop-band edge (" +
                         format_number(fs) + ") as fractions of the sample rate must satisfy 0 < pass < stop < 0.5;" +
                         " widen the sample rate or narrow bandwidth_hz/transition_hz");
    const double df = fs - fp;
    FirLowpass out;
    out.pass_edge = fp;
    out.stop_edge = fs;
    int n = 0;
    if (method == FirDesignMethod::kaiser) {
        out.beta = kaiser_beta(atten_db);
        n = kaiser_length(atten_db, df);
    } else {
        const double g = std::pow(10.0, ripple_db / 20.0);
        const double dp = (g - 1.0) / (g + 1.0), ds = std::pow(10.0, -atten_db / 20.0);
        // Kaiser's estimate for equiripple filters (Oppenheim & Schafer 1989, eq. 7.104, from memory).
        n = static_cast<int>(std::ceil((-20.0 * std::log10(std::sqrt(dp * ds)) - 13.0) / (14.6 * df))) + 1;
        n = std::max(n, 5);
    }
    const int pm_limit = 2000;  // the exchange algorithm gets slow and fragile beyond this
    while (true) {
        if (n > max_taps || (method == FirDesignMethod::parks_mcclellan && n > pm_limit))
            throw InputError(what + ": needs more than " +
                             std::to_string(method == FirDesignMethod::parks_mcclellan ? pm_limit : max_taps) +
                             " taps for " + format_number(atten_db) + " dB over a transition of " + format_number(df) +
                             " of the sample rate" +
                             (method == FirDesignMethod::parks_mcclellan ? "; use fir_method = \"kaiser\"" : "") +
                             ", or widen transition_hz");
        if (method == FirDesignMethod::kaiser) {
            out.taps = kaiser_lowpass(n, 0.5 * (fp + fs), out.beta);
        } else {
            out.taps = remez_lowpass(n, fp, fs, ripple_db, atten_db);
            if (out.taps.empty()) {
                n += 2;
                continue;
            }
        }
        out.achieved_atten_db = -fir_peak_db(out.taps, fs, 0.5);
        bool ok = out.achieved_atten_db >= atten_db - 1e-9;
        if (ok && method == FirDesignMethod::parks_mcclellan) {
            // Equiripple: also hold the pass-band ripple (peak to peak) to the request.
            std::size_t p = 0;
            const auto pw = power_grid(out.taps, p);
            double lo = 1e300, hi = -1e300;
            for (std::size_t k = 0; k < pw.size() && double(k) / double(p) <= fp; ++k) {
                const double db = 10.0 * std::log10(std::max(pw[k], 1e-300));
                lo = std::min(lo, db), hi = std::max(hi, db);
            }
            ok = hi - lo <= ripple_db * (1.0 + 1e-3);
        }
        if (ok) break;
        n += std::max(1, n / 64);
    }
    return out;
}

}  // namespace hb
