#include "dsp/filter_summary.hpp"

#include <algorithm>
#include <cmath>
#include <limits>

#include "dsp/units.hpp"

namespace hb {
namespace {

constexpr double kNaN = std::numeric_limits<double>::quiet_NaN();

double level_db(const ResponseFn& h, double f) {
    return 20.0 * std::log10(std::max(std::abs(h(f)), 1e-20));
}

// Walks from `from` in direction `dir` (+1/-1) in growing steps (2 % of the distance, at least `first`) until the
// level drops below `target`; bisects the crossing. NaN when `limit` comes first.
double find_crossing(const ResponseFn& h, double from, int dir, double target, double first, double limit) {
    double d = 0.0, prev = from;
    for (int i = 0; i < 20000; ++i) {
        d = std::max(first * (i + 1), d * 1.02);
        double f = from + dir * d;
        bool last = false;
        if ((dir > 0 && f >= limit) || (dir < 0 && f <= limit)) f = limit, last = true;
        if (level_db(h, f) < target) {
            double a = prev, b = f;  // level(a) >= target > level(b)
            for (int k = 0; k < 60; ++k) {
                const double mid = 0.5 * (a + b);
                (level_db(h, mid) >= target ? a : b) = mid;
            }
            return 0.5 * (a + b);
        }
        if (last) return kNaN;
        prev = f;
    }
    return kNaN;
}

// Like find_crossing, but returns the outermost fall below `target` before `limit`: the response stays below the
// target from there to the limit. NaN when the response is still at or above the target at the limit.
double find_outer_crossing(const ResponseFn& h, double from, int dir, double target, double first, double limit) {
    double d = 0.0, prev = from, above = from, below = kNaN;
    bool prev_above = level_db(h, from) >= target;
    for (int i = 0; i < 20000; ++i) {
        d = std::max(first * (i + 1), d * 1.02);
        double f = from + dir * d;
        bool last = false;
        if ((dir > 0 && f >= limit) || (dir < 0 && f <= limit)) f = limit, last = true;
        const bool is_above = level_db(h, f) >= target;
        if (prev_above && !is_above) above = prev, below = f;
        if (!prev_above && is_above) below = kNaN;
        prev_above = is_above;
        prev = f;
        if (last) break;
    }
    if (std::isnan(below)) return kNaN;
    double a = above, b = below;
    for (int k = 0; k < 60; ++k) {
        const double mid = 0.5 * (a + b);
        (level_db(h, mid) >= target ? a : b) = mid;
    }
    return 0.5 * (a + b);
}

}  // namespace

std::vector<ResponsePoint> response_curve(const ResponseFn& h, const DelayFn& gd, const std::vector<double>& grid) {
    std::vector<ResponsePoint> out;
    out.reserve(grid.size());
    for (double f : grid) {
        const std::complex<double> v = h(f);
        ResponsePoint p;
        p.f_hz = f;
        p.mag_db = 20.0 * std::log10(std::max(std::abs(v), 1e-20));
        p.phase_deg = std::arg(v) * 180.0 / kPi;
        p.group_delay_s = gd ? gd(f) : 0.0;
        out.push_back(p);
    }
    return out;
}

FilterSummary summarise_response(const ResponseFn& h, const SummaryHints& k) {
    FilterSummary s;
    s.lowpass = k.lowpass;
    const double w = k.width_hz > 0 ? k.width_hz : 1.0;
    // Bounds of the search: the data's range, and never through 0 Hz for a band-pass.
    const double lo_bound = k.lowpass ? std::max(0.0, k.valid_lo_hz) : std::max(k.valid_lo_hz, 1e-9 * k.center_hz);
    const double hi_bound = std::min(k.valid_hi_hz, (k.lowpass ? 0.0 : k.center_hz) + 1000.0 * w);

    // Peak: a fine scan of the nominal pass-band and its surroundings, then a golden-section refinement.
    const double a0 = std::max(lo_bound, k.lowpass ? 0.0 : k.center_hz - 1.5 * w);
    const double b0 = std::min(hi_bound, k.lowpass ? 1.5 * w : k.center_hz + 1.5 * w);
    const int n = 6000;
    double best_f = a0, best = -1e300;
    for (int i = 0; i <= n; ++i) {
        const double f = a0 + (b0 - a0) * i / n;
        const double v = level_db(h, f);
        if (v > best) best = v, best_f = f;
    }
    {
        const double step = (b0 - a0) / n;
        double a = std::max(a0, best_f - step), b = std::min(b0, best_f + step);
        const double g = 0.5 * (std::sqrt(5.0) - 1.0);
        double c = b - g * (b - a), d = a + g * (b - a);
        double fc = level_db(h, c), fd = level_db(h, d);
        for (int i = 0; i < 60; ++i) {
            if (fc > fd)
                b = d, d = c, fd = fc, c = b - g * (b - a), fc = level_db(h, c);
            else
                a = c, c = d, fc = fd, d = a + g * (b - a), fd = level_db(h, d);
        }
        if (std::max(fc, fd) > best) best = std::max(fc, fd), best_f = fc > fd ? c : d;
    }
    s.peak_hz = best_f;
    s.insertion_loss_db = -best;

    const double first = 1e-4 * w;
    // -3 dB: where the pass-band first ends. -60 dB: beyond which the response stays 60 dB down (a stop-band whose
    // nulls dip below -60 dB between higher lobes does not count as reaching it).
    s.hi3_hz = find_crossing(h, best_f, +1, best - 3.0, first, hi_bound);
    s.lo3_hz = k.lowpass ? 0.0 : find_crossing(h, best_f, -1, best - 3.0, first, lo_bound);
    s.hi60_hz = find_outer_crossing(h, best_f, +1, best - 60.0, first, hi_bound);
    s.lo60_hz = k.lowpass ? 0.0 : find_outer_crossing(h, best_f, -1, best - 60.0, first, lo_bound);
    s.bw3_hz = s.hi3_hz - s.lo3_hz;
    s.bw60_hz = s.hi60_hz - s.lo60_hz;
    s.shape_factor = s.bw60_hz / s.bw3_hz;

    // Ripple between the outermost local maxima inside the -3 dB band.
    s.ripple_db = kNaN;
    if (std::isfinite(s.bw3_hz) && s.bw3_hz > 0) {
        const int m = 8000;
        std::vector<double> v(m + 1);
        for (int i = 0; i <= m; ++i) v[i] = level_db(h, s.lo3_hz + s.bw3_hz * i / m);
        int first_max = -1, last_max = -1;
        for (int i = 1; i < m; ++i)
            if (v[i] >= v[i - 1] && v[i] > v[i + 1]) {
                if (first_max < 0) first_max = i;
                last_max = i;
            }
        if (k.lowpass && v[0] > v[1]) first_max = 0;  // a low-pass may peak at 0 Hz itself
        s.ripple_db = 0.0;
        if (first_max >= 0 && last_max > first_max) {
            double lowest = 1e300;
            for (int i = first_max; i <= last_max; ++i) lowest = std::min(lowest, v[i]);
            s.ripple_db = best - lowest;
        }
    }

    // Stop-band rejection.
    s.stop_rejection_db = kNaN;
    s.stop_worst_hz = kNaN;
    if (std::isfinite(s.bw3_hz) && s.bw3_hz > 0) {
        // A design's own stop-band edge is measured from its nominal centre; the default from the -3 dB centre.
        const double center = k.lowpass ? 0.0 : k.stop_offset_hz ? k.center_hz : 0.5 * (s.lo3_hz + s.hi3_hz);
        s.stop_offset_hz = k.stop_offset_hz ? *k.stop_offset_hz : 2.0 * s.bw3_hz;
        const double reach = std::max(50.0 * s.bw3_hz, 2.0 * s.stop_offset_hz);
        double worst = 1e300;
        auto scan = [&](double from, double to) {
            if (!(to > from)) return;
            // Geometric steps (0.05 % of the distance from the centre) keep equiripple lobes resolved far out.
            for (double f = from; f <= to;) {
                const double att = best - level_db(h, f);
                if (att < worst) worst = att, s.stop_worst_hz = f;
                f += std::max(5e-4 * std::abs(f - center), 1e-4 * s.bw3_hz);
            }
        };
        scan(std::max(center + s.stop_offset_hz, lo_bound), std::min(center + reach, k.valid_hi_hz));
        if (!k.lowpass) scan(std::max(center - reach, lo_bound), center - s.stop_offset_hz);
        if (worst < 1e300) s.stop_rejection_db = worst;
    }
    return s;
}

FilterSummary summarise(const FilterModel& m) {
    SummaryHints k;
    k.lowpass = m.spec.response == FilterResponse::lowpass && m.kind != ModelKind::measured;
    k.center_hz = m.nominal_center_hz();
    k.width_hz = m.kind == ModelKind::measured ? 0.0 : m.spec.bandwidth_hz;
    if (m.kind == ModelKind::measured) {
        // Measured data: the widest stretch around the strongest point that stays within 20 dB guides the scan.
        const auto& t = m.measured;
        std::size_t pk = 0;
        for (std::size_t i = 0; i < t.mag_db.size(); ++i)
            if (t.mag_db[i] > t.mag_db[pk]) pk = i;
        std::size_t a = pk, b = pk;
        while (a > 0 && t.mag_db[a - 1] > t.mag_db[pk] - 20) --a;
        while (b + 1 < t.mag_db.size() && t.mag_db[b + 1] > t.mag_db[pk] - 20) ++b;
        k.width_hz = std::max(t.freq_hz[b] - t.freq_hz[a], 1e-6 * t.freq_hz[pk] + 1.0);
    }
    k.valid_lo_hz = m.valid_lo_hz();
    k.valid_hi_hz = m.valid_hi_hz();
    k.stop_offset_hz = m.stop_edge_offset_hz();
    return summarise_response([&](double f) { return m.response(f); }, k);
}

FilterSummary summarise(const std::vector<FilterModel>& ms) {
    SummaryHints k;
    const FilterModel* guide = nullptr;
    for (const auto& m : ms) {
        if (m.kind == ModelKind::none) continue;
        k.valid_lo_hz = std::max(k.valid_lo_hz, m.valid_lo_hz());
        k.valid_hi_hz = std::min(k.valid_hi_hz, m.valid_hi_hz());
        if (const auto e = m.stop_edge_offset_hz())
            k.stop_offset_hz = k.stop_offset_hz ? std::min(*k.stop_offset_hz, *e) : *e;
        if (!guide || (m.kind != ModelKind::measured && m.spec.bandwidth_hz < guide->spec.bandwidth_hz)) guide = &m;
    }
    if (!guide) return summarise_response([](double) { return std::complex<double>(1.0); }, {true, 0, 1, 0, 1, {}});
    const FilterSummary one = summarise(*guide);
    k.lowpass = one.lowpass;
    k.center_hz = guide->nominal_center_hz();
    k.width_hz = guide->kind == ModelKind::measured ? std::max(one.bw3_hz, 1.0) : guide->spec.bandwidth_hz;
    return summarise_response([&](double f) { return cascade_response(ms, f); }, k);
}

}  // namespace hb
