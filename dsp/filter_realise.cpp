#include "dsp/filter_realise.hpp"

#include <algorithm>
#include <cmath>
#include <limits>

#include "dsp/design_fft.hpp"
#include "dsp/errors.hpp"
#include "dsp/units.hpp"

namespace hb {
namespace {

using cd = std::complex<double>;

constexpr std::size_t kUniformCheck = 8192;
constexpr double kInfinity = std::numeric_limits<double>::infinity();

// Even grid over the window: offsets -fs/2 + k fs/n, k = 0..n-1 (n a power of two).
std::vector<double> uniform_grid(double fs, std::size_t n) {
    std::vector<double> g(n);
    for (std::size_t k = 0; k < n; ++k) g[k] = -0.5 * fs + fs * double(k) / double(n);
    return g;
}

// Dense stretches over the pass-band and skirts (and the mirror band of an analog band-pass), as window offsets.
void add_dense(std::vector<double>& g, const FilterModel& m, const EnvelopeWindow& w) {
    const double fs = w.sample_rate_hz;
    const double lo = m.nominal_lo_hz(), hi = m.nominal_hi_hz();
    const double width = std::max(hi - lo, 1e-6 * fs);
    auto dense = [&](double a, double b, int n) {
        a = std::max(a - w.center_hz, -0.5 * fs);
        b = std::min(b - w.center_hz, 0.5 * fs);
        if (b <= a) return;
        for (int i = 0; i <= n; ++i) g.push_back(a + (b - a) * i / n);
    };
    dense(lo - 0.5 * width, hi + 0.5 * width, 1024);
    dense(lo - 4.0 * width, hi + 4.0 * width, 2048);
    if (m.spec.response == FilterResponse::bandpass && m.kind == ModelKind::analog) {
        dense(-hi - 0.5 * width, -lo + 0.5 * width, 1024);
        dense(-hi - 4.0 * width, -lo + 4.0 * width, 2048);
    }
}

}  // namespace

double realise_edge_guard(const FilterModel& m, const EnvelopeWindow& w) {
    const double floor = amplitude_from_db(kRealiseFloorDb) * m.section_peak();
    const double fs = w.sample_rate_hz;
    for (double nu : {-0.5 * fs, 0.5 * fs})
        if (std::abs(m.section_response(w.center_hz + nu)) > floor) return kRealiseWideEdgeGuard;
    return kRealiseEdgeGuard;
}

namespace {

// Compares the realised response with the own response on the grid (see the tolerance in the header).
void score(Realisation& r, const FilterModel& m, const EnvelopeWindow& w, const std::vector<double>& grid,
           const std::vector<cd>& realised) {
    const double fs = w.sample_rate_hz;
    const double peak = m.section_peak();
    const double rel = amplitude_from_db(kRealiseRelativeDb) - 1.0;
    const double floor = amplitude_from_db(kRealiseFloorDb) * peak;
    const double fit_level = amplitude_from_db(-60.0) * peak;
    r.edge_guard = realise_edge_guard(m, w);
    double worst_ratio = 0.0, worst_db = 0.0;
    for (std::size_t i = 0; i < grid.size(); ++i) {
        if (std::abs(grid[i]) > (0.5 - r.edge_guard) * fs) continue;
        const double o = std::abs(m.section_response(w.center_hz + grid[i]));
        const double q = std::abs(realised[i]);
        worst_ratio = std::max(worst_ratio, std::abs(q - o) / (rel * o + floor));
        if (o >= fit_level) worst_db = std::max(worst_db, q > 0 ? std::abs(db_from_amplitude(q / o)) : 300.0);
    }
    r.fit_error_db = worst_db;
    r.tolerance_ratio = worst_ratio;
}

cd fir_response_at(const std::vector<cd>& taps, double theta) {
    cd s = 0.0, ph = 1.0;
    const cd step = std::polar(1.0, -theta);
    for (std::size_t n = 0; n < taps.size(); ++n) {
        s += taps[n] * ph;
        // Re-anchor the phasor every 256 taps so rounding cannot accumulate over long filters.
        ph = (n % 256 == 255) ? std::polar(1.0, -theta * double(n + 1)) : ph * step;
    }
    return s;
}

cd cascade_at(const std::vector<PoleSection>& secs, cd zi) {
    cd h = 1.0;
    for (const auto& s : secs) h *= (s.b0 + s.b1 * zi) / (1.0 - s.a1 * zi);
    return h;
}

// The sections of one band: prototype roots moved onto the window by the Moebius map that sends the window
// frequencies (fa, fb, fc) to prototype frequencies (-1, 0, +1), gain matched to the own response at fb.
std::vector<PoleSection> map_band(const FilterModel& m, const EnvelopeWindow& w, double fa, double fb, double fc) {
    const double fs = w.sample_rate_hz;
    auto on_circle = [&](double f) { return std::polar(1.0, kTwoPi * (f - w.center_hz) / fs); };
    const cd z1 = on_circle(fa), z0 = on_circle(fb), z2 = on_circle(fc);
    // z -> A(z) = alpha (z - z1)/(z - z2) sends (z1, z0, z2) to (0, 1, inf); s -> B(s) = -(s + j)/(s - j) sends
    // (-j, 0, j) to (0, 1, inf). A digital root is A^-1(B(s_r)) of a prototype root s_r. Both maps keep the
    // orientation (frequency increasing along the circle and up the j axis), so the left half-plane lands inside
    // the unit circle: stable poles stay stable.
    const cd j(0.0, 1.0);
    const cd alpha = (z0 - z2) / (z0 - z1);
    auto to_z = [&](cd s) {
        const cd wv = -(s + j) / (s - j);
        return (wv * z2 - alpha * z1) / (wv - alpha);
    };
    const cd z_inf = (z2 + alpha * z1) / (1.0 + alpha);  // where the prototype's zeros at infinity land
    std::vector<cd> poles, zeros;
    for (const cd& p : m.proto.poles) poles.push_back(to_z(p));
    for (const cd& z : m.proto.zeros) zeros.push_back(to_z(z));
    while (zeros.size() < poles.size()) zeros.push_back(z_inf);
    // Pair each pole, sharpest first, with the nearest unused zero (keeps each section's gain moderate); run the
    // sections from the least to the most resonant, a common choice for low round-off noise.
    std::vector<std::size_t> order(poles.size());
    for (std::size_t i = 0; i < order.size(); ++i) order[i] = i;
    std::sort(order.begin(), order.end(),
              [&](std::size_t a, std::size_t b) { return std::abs(poles[a]) > std::abs(poles[b]); });
    std::vector<bool> used(zeros.size(), false);
    const cd e0 = std::conj(z0);  // z^-1 at the centre match point
    std::vector<PoleSection> secs;
    for (std::size_t i : order) {
        std::size_t best = 0;
        double bd = 1e300;
        for (std::size_t k = 0; k < zeros.size(); ++k)
            if (!used[k] && std::abs(zeros[k] - poles[i]) < bd) bd = std::abs(zeros[k] - poles[i]), best = k;
        used[best] = true;
        // Unit gain at the centre for each section keeps intermediate levels near the input's.
        const double g = std::abs(1.0 - poles[i] * e0) / std::max(std::abs(1.0 - zeros[best] * e0), 1e-300);
        secs.push_back({cd(g), -g * zeros[best], poles[i]});
    }
    std::reverse(secs.begin(), secs.end());
    // H_digital(z) = C * H_prototype(T(z)) exactly; C matches magnitude and phase at the centre.
    const cd target = m.section_response(fb);
    const cd now = cascade_at(secs, e0);
    const cd c = (std::abs(now) > 0) ? target / now : cd(0.0);
    secs.front().b0 *= c;
    secs.front().b1 *= c;
    return secs;
}

bool inside(double f, const EnvelopeWindow& w) {
    return std::abs(f - w.center_hz) < 0.49 * w.sample_rate_hz;
}

}  // namespace

cd Realisation::response(double nu, double fs) const {
    const double th = kTwoPi * nu / fs;
    const cd zi = std::polar(1.0, -th);  // z^-1
    switch (form) {
        case RealisationForm::identity:
            return 1.0;
        case RealisationForm::pole_sections:
            return cascade_at(sections, zi) +
                   (mirror_sections.empty() ? cd(0.0) : cascade_at(mirror_sections, zi) + direct);
        case RealisationForm::fir:
            return fir_response_at(taps, th) * std::polar(1.0, th * delay_samples);
    }
    return 1.0;
}

Realisation realise_pole_sections(const FilterModel& m, const EnvelopeWindow& w) {
    Realisation r;
    r.form = RealisationForm::pole_sections;
    if (m.kind != ModelKind::analog) return r;
    double f1 = 0, f2 = 0;
    m.map.edges(1.0, f1, f2);
    const double f0 = m.map.bandpass ? m.map.f0_hz : 0.0;
    const bool main_in = inside(f1, w) && inside(f0, w) && inside(f2, w);
    const bool mirror_in = m.map.bandpass && inside(-f2, w) && inside(-f0, w) && inside(-f1, w);
    if (!main_in && !mirror_in) return r;
    // On the negative-frequency side the band-pass map gives Omega = -1, 0, +1 at -f2, -f0, -f1.
    if (main_in) r.sections = map_band(m, w, f1, f0, f2);
    if (mirror_in) (main_in ? r.mirror_sections : r.sections) = map_band(m, w, -f2, -f0, -f1);
    if (!r.mirror_sections.empty()) r.direct = -m.loss * prototype_response(m.proto, kInfinity);
    std::vector<double> grid = uniform_grid(w.sample_rate_hz, kUniformCheck);
    add_dense(grid, m, w);
    std::vector<cd> realised(grid.size());
    for (std::size_t i = 0; i < grid.size(); ++i) realised[i] = r.response(grid[i], w.sample_rate_hz);
    score(r, m, w, grid, realised);
    return r;
}

Realisation realise_sampled_fir(const FilterModel& m, const EnvelopeWindow& w, int taps, bool linear_phase) {
    Realisation r;
    r.form = RealisationForm::fir;
    const double fs = w.sample_rate_hz;
    if (linear_phase && taps % 2 == 0) ++taps;  // a centre tap keeps the delay an integer
    const auto L = static_cast<std::size_t>(taps);
    std::size_t msize = 4096;
    while (msize < 16 * L) msize *= 2;
    // Own response sampled around the circle (bin k <-> offset k fs/M, wrapped), then back to time. Across the
    // +-fs/2 seam (the edge guard, which the check leaves out) the target is blended smoothly from one edge's value
    // to the other's: a response that has not died away at the window edges would otherwise jump there, and an FIR
    // needs a transition several fs/taps wide to follow a jump.
    auto target = [&](double nu) {
        const cd h = m.section_response(w.center_hz + nu);
        return linear_phase ? cd(std::abs(h)) : h;
    };
    const double guard = realise_edge_guard(m, w);
    const double edge = (0.5 - guard) * fs;
    const cd right = target(edge), left = target(-edge);
    // The phase across the seam follows the slope it has at the edges (its group delay), taking the turn count
    // closest to that: a blend that turned against the group delay would ask for a response before t = 0.
    const double dnu = 1e-3 * guard * fs;
    const double slope =
        0.5 * (std::arg(target(edge) / target(edge - dnu)) + std::arg(target(-edge + dnu) / target(-edge))) / dnu;
    const double turn_expected = slope * 2.0 * guard * fs;
    double turn = std::remainder(std::arg(left) - std::arg(right), kTwoPi);
    turn += kTwoPi * std::round((turn_expected - turn) / kTwoPi);
    std::vector<cd> spec(msize);
    for (std::size_t k = 0; k < msize; ++k) {
        const double nu = (k < msize / 2 ? double(k) : double(k) - double(msize)) * fs / double(msize);
        if (std::abs(nu) <= edge) {
            spec[k] = target(nu);
        } else {
            const double u = (nu > 0 ? nu - edge : nu + fs - edge) / (2.0 * guard * fs);  // 0 .. 1
            const double c = 0.5 - 0.5 * std::cos(kPi * u);
            // In magnitude and phase: a straight complex blend of two values with different phases would dip
            // through a notch, itself a sharp feature.
            const double mag = (1.0 - c) * std::abs(right) + c * std::abs(left);
            const double ph = std::arg(right) + c * turn;
            spec[k] = std::polar(mag, ph);
        }
    }
    design_fft(spec, true);
    for (cd& v : spec) v /= double(msize);
    auto wrap = [&](int idx) {
        const int ms = static_cast<int>(msize);
        return static_cast<std::size_t>((idx % ms + ms) % ms);
    };
    r.taps.assign(L, 0.0);
    if (linear_phase) {
        // Centre the (Hermitian) impulse response; Kaiser window, beta 8: side lobes near -80 dB, the tolerance floor.
        const int mid = (taps - 1) / 2;
        const double beta = 8.0, i0b = std::cyl_bessel_i(0.0, beta);
        for (int n = 0; n < taps; ++n) {
            const double x = mid > 0 ? double(n - mid) / double(mid) : 0.0;
            const double wv = std::cyl_bessel_i(0.0, beta * std::sqrt(std::max(0.0, 1.0 - x * x))) / i0b;
            r.taps[static_cast<std::size_t>(n)] = spec[wrap(n - mid)] * wv;
        }
        r.delay_samples = mid;
    } else {
        // Causal response, started early enough to keep the ringing that the window's band limit puts before t = 0
        // (long for responses that fall slowly, e.g. a single resonator: everything earlier is below 1e-6 of the
        // peak, or a quarter of the length at most); half-Hann tapers over the first quarter of that pre-delay and
        // over the last quarter of the taps.
        double hpk = 0.0;
        for (const cd& v : spec) hpk = std::max(hpk, std::abs(v));
        int pre = 2;
        for (int n = taps / 4; n > 2; --n)
            if (std::abs(spec[wrap(-n)]) > 1e-6 * hpk) {
                pre = n + 1;
                break;
            }
        const int rise = std::max(1, pre / 4);
        const int fall = std::max(2, taps / 4);
        for (int n = 0; n < taps; ++n) {
            double wv = 1.0;
            if (n < rise) wv = 0.5 - 0.5 * std::cos(kPi * (n + 0.5) / rise);
            if (n >= taps - fall) wv = 0.5 + 0.5 * std::cos(kPi * (n - (taps - fall) + 0.5) / fall);
            r.taps[static_cast<std::size_t>(n)] = spec[wrap(n - pre)] * wv;
        }
        r.delay_samples = pre;
    }
    // Check on an even grid of at least 8 points per 1/L (the finest detail L taps can hold), by FFT.
    std::size_t p = kUniformCheck;
    while (p < 8 * L) p *= 2;
    std::vector<cd> x(p);
    for (std::size_t n = 0; n < L; ++n) x[n] = r.taps[n];
    design_fft(x);
    const auto grid = uniform_grid(fs, p);
    std::vector<cd> realised(p);
    for (std::size_t k = 0; k < p; ++k) realised[k] = x[(k + p / 2) % p];  // grid[k] is FFT bin k - p/2
    score(r, m, w, grid, realised);
    return r;
}

Realisation realise_filter(const FilterModel& m, const EnvelopeWindow& w) {
    const double fs = w.sample_rate_hz;
    if (!(std::isfinite(fs) && fs > 0)) throw InputError(m.name + ": cannot realise on a window without a sample rate");
    Realisation r;
    if (m.kind == ModelKind::none) {
        r.why = "no filter";
        return r;
    }
    if (m.kind == ModelKind::fir) {
        if (std::abs(m.fir_window.sample_rate_hz - fs) > 1e-9 * fs ||
            std::abs(m.fir_window.center_hz - w.center_hz) > 1e-9 * fs)
            throw InputError(m.name + ": FIR designed for a window at " + format_frequency(m.fir_window.center_hz) +
                             ", " + format_frequency(m.fir_window.sample_rate_hz) + " sample rate, but runs on " +
                             format_frequency(w.center_hz) + ", " + format_frequency(fs));
        r.form = RealisationForm::fir;
        const double shift = (m.fir_shift_hz - w.center_hz) / fs;
        r.taps.resize(m.fir.taps.size());
        for (std::size_t n = 0; n < r.taps.size(); ++n)
            r.taps[n] = m.loss * m.fir.taps[n] * std::polar(1.0, kTwoPi * shift * double(n));
        r.why = "FIR, " + std::to_string(r.taps.size()) + " taps designed at the window rate";
        return r;
    }
    Realisation best;
    best.tolerance_ratio = 1e300;
    if (m.kind == ModelKind::analog) {
        best = realise_pole_sections(m, w);
        if (best.sections.empty()) best.tolerance_ratio = 1e300;
        if (best.within_tolerance()) {
            best.why = std::to_string(best.sections.size() + best.mirror_sections.size()) +
                       " complex one-pole sections" + (best.mirror_sections.empty() ? "" : " (two bands in parallel)");
            return best;
        }
    }
    // Frequency sampling, doubling the length until the fit holds (analog: when the sections' warping does not).
    const bool linear = m.kind == ModelKind::measured && m.spec.linear_phase;
    for (int taps = 32; taps <= kMaxRealisedTaps; taps *= 2) {
        Realisation f = realise_sampled_fir(m, w, taps, linear);
        const bool done = f.within_tolerance();
        if (f.tolerance_ratio < best.tolerance_ratio) best = std::move(f);
        if (done) break;
    }
    if (best.form == RealisationForm::fir)
        best.why = "frequency-sampled FIR, " + std::to_string(best.taps.size()) + " taps" +
                   (m.kind == ModelKind::measured ? (linear ? ", linear phase" : ", measured phase")
                                                  : " (sections would warp too much on this window)");
    else
        best.why = std::to_string(best.sections.size() + best.mirror_sections.size()) + " complex one-pole sections";
    if (!best.within_tolerance()) best.why += "; OUTSIDE the tolerance, see the fit error";
    return best;
}

}  // namespace hb
