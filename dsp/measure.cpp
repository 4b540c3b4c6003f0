#include "dsp/measure.hpp"

#include <algorithm>
#include <cmath>
#include <numeric>
#include <tuple>

#include "dsp/errors.hpp"
#include "dsp/units.hpp"

namespace hb {
namespace {

std::size_t wrap(long long k, std::size_t n) {
    const auto nn = static_cast<long long>(n);
    return static_cast<std::size_t>(((k % nn) + nn) % nn);
}

double median_of(std::vector<double>& v) {
    const auto mid = v.begin() + static_cast<std::ptrdiff_t>(v.size() / 2);
    std::nth_element(v.begin(), mid, v.end());
    return *mid;
}

// Noise quantile that splits noise from tones and skirts in the two-pass median.
constexpr double kCutQuantile = 0.999;

// μ from a set of bins: median / median-of-distribution, then again without the bins above the first
// pass's 99.9 % noise quantile. `v` is reordered.
double robust_mu(std::vector<double>& v, const BinStatistics& st) {
    v.erase(std::remove_if(v.begin(), v.end(), [](double p) { return !std::isfinite(p); }), v.end());
    if (v.empty()) return kNaN;
    const double mu1 = median_of(v) / st.median();
    if (!(mu1 > 0.0)) return mu1;
    const double cut = st.quantile(kCutQuantile) * mu1;
    const auto end = std::partition(v.begin(), v.end(), [cut](double p) { return p <= cut; });
    v.erase(end, v.end());
    if (v.empty()) return mu1;
    return median_of(v) / st.quantile(0.5 * kCutQuantile);
}

// The bins [lo, hi] (inclusive, clipped) covering a frequency range.
std::pair<long long, long long> bin_range(const Spectrum& s, double low_hz, double high_hz) {
    const long long n = s.size();
    long long lo = std::isfinite(low_hz) ? std::llround(s.bin_of_freq(low_hz)) : 0;
    long long hi = std::isfinite(high_hz) ? std::llround(s.bin_of_freq(high_hz)) : n - 1;
    return {std::max(lo, 0LL), std::min(hi, n - 1)};
}

int lobe_bins(const WindowResponse& r) {
    return static_cast<int>(std::ceil(r.mainlobe_halfwidth_bins)) + 1;
}

bool is_local_max(const Spectrum& s, long long k) {
    const std::size_t n = s.power.size();
    const double p = s.power[wrap(k, n)];
    return p >= s.power[wrap(k - 1, n)] && p >= s.power[wrap(k + 1, n)];
}

// Fits a tone whose peak is bin k0 (see measure.hpp): offset from the neighbour ratio, power from the lobe sum.
Tone fit_tone(const Spectrum& s, const WindowResponse& r, long long k0, double noise) {
    const std::size_t n = s.power.size();
    auto pc = [&](long long k) { return s.power[wrap(k, n)] - noise; };
    const double c = pc(k0), left = pc(k0 - 1), right = pc(k0 + 1);
    const int side = right > left ? 1 : -1;
    double delta = 0.0;
    if (c > 0.0) {
        const double ratio = std::clamp(std::max(left, right) / c, 0.0, 1.0);
        // R(1 − d)/R(d) rises from R(1) at d = 0 to 1 at d = ½ across the main lobe.
        double lo = 0.0, hi = 0.5;
        if (r.power_at(1.0) / r.power_at(0.0) >= ratio) hi = 0.0;
        for (int i = 0; i < 50 && hi > lo; ++i) {
            const double mid = 0.5 * (lo + hi);
            (r.power_at(1.0 - mid) / r.power_at(mid) < ratio ? lo : hi) = mid;
        }
        delta = side * 0.5 * (lo + hi);
    }
    const int l = lobe_bins(r);
    double num = 0.0, den = 0.0;
    for (int j = -l; j <= l; ++j) {
        num += pc(k0 + j);
        den += r.power_at(static_cast<double>(j) - delta);
    }
    Tone t;
    t.found = true;
    t.peak_bin = static_cast<int>(k0);
    t.peak_power = s.power[wrap(k0, n)];
    t.freq_hz = s.freq_of_bin(static_cast<double>(k0) + delta);
    t.power = num / den;
    t.level_dbfs = t.power > 0.0 ? db_from_power(t.power) : kNaN;
    return t;
}

// A tone already accepted as real, against which weaker peaks are tested for being its window leakage.
struct StrongPeak {
    double bin;    // fractional position
    double power;  // tone power
};

// True when a peak of `peak_power` at bin k can be window leakage (within 6 dB of the envelope) or main lobe
// of a stronger accepted peak.
bool masked(const std::vector<StrongPeak>& strong, const WindowResponse& r, double k, double peak_power, double n) {
    for (const StrongPeak& sp : strong) {
        if (!(sp.power > peak_power)) continue;
        double d = std::abs(k - sp.bin);
        d = std::min(d, n - d);  // the DFT is circular
        if (d <= lobe_bins(r)) return true;
        if (peak_power < 4.0 * sp.power * r.leakage_bound(d)) return true;
    }
    return false;
}

double profile_at(const std::vector<double>& profile, const Spectrum& s, double hz) {
    const auto k = std::clamp<long long>(std::llround(s.bin_of_freq(hz)), 0, s.size() - 1);
    return profile[static_cast<std::size_t>(k)];
}

}  // namespace

// ---- Noise floor -------------------------------------------------------------------------------------------

NoiseFloor noise_floor(const Spectrum& s, double low_hz, double high_hz) {
    return noise_floor(s, bin_statistics(s), low_hz, high_hz);
}

NoiseFloor noise_floor(const Spectrum& s, const BinStatistics& st, double low_hz, double high_hz) {
    NoiseFloor f;
    if (s.power.empty()) return f;
    const auto [lo, hi] = bin_range(s, low_hz, high_hz);
    if (hi < lo) return f;
    std::vector<double> v(s.power.begin() + lo, s.power.begin() + hi + 1);
    f.bins = static_cast<int>(std::count_if(v.begin(), v.end(), [](double p) { return std::isfinite(p); }));
    f.power_per_bin = robust_mu(v, st);
    f.low_hz = s.freq_of_bin(static_cast<double>(lo));
    f.high_hz = s.freq_of_bin(static_cast<double>(hi));
    f.median_bias_db = -db_from_power(st.median());
    f.effective_averages = st.k;
    if (f.power_per_bin > 0.0) {
        f.dbfs_per_rbw = db_from_power(f.power_per_bin);
        f.dbfs_per_hz = db_from_power(f.power_per_bin / s.rbw_hz);
        f.db_per_hz = f.dbfs_per_hz + s.unit_offset_db();
    }
    return f;
}

std::vector<double> noise_floor_profile(const Spectrum& s) {
    return noise_floor_profile(s, bin_statistics(s));
}

std::vector<double> noise_floor_profile(const Spectrum& s, const BinStatistics& st) {
    const std::size_t n = s.power.size();
    std::vector<double> out(n, kNaN);
    if (n == 0) return out;
    // Blocks as narrow as the bins' scatter allows, so the profile follows a narrow IF filter's noise hump (a 6 kHz
    // filter is about 160 bins of an 8192-point spectrum at 300 kS/s): a median of B bins of relative scatter cv
    // scatters by about 1.44·cv/sqrt(B/ENBW) (the median of an exponential is 1.44/sqrt(n) of itself; adjacent
    // bins are correlated, about ENBW bins to an independent one), aimed at 8 % (0.35 dB). One
    // frame (cv = 1) needs the widest, 256 bins; 16 averaged frames about 40. Blocks overlap by half.
    const double cv = st.mode == Averaging::rms || st.mode == Averaging::exponential
                          ? 1.0 / std::sqrt(std::max(st.k, 1.0))
                      : st.mode == Averaging::max_hold ? 0.5
                                                       : 1.0;
    const double want = std::max(s.enbw_bins, 1.0) * std::pow(1.44 * cv / 0.08, 2.0);
    const std::size_t block = std::min<std::size_t>(std::clamp<std::size_t>(static_cast<std::size_t>(want), 16, 256),
                                                    std::max<std::size_t>(n / 4, 1));
    const std::size_t hop = block / 2;
    const std::size_t blocks = n <= block ? 1 : (n - block + hop - 1) / hop + 1;
    std::vector<double> centre(blocks), level_db(blocks), v;
    for (std::size_t b = 0; b < blocks; ++b) {
        const std::size_t lo = std::min(b * hop, n > block ? n - block : 0), hi = std::min(n, lo + block);
        v.assign(s.power.begin() + static_cast<std::ptrdiff_t>(lo), s.power.begin() + static_cast<std::ptrdiff_t>(hi));
        const double mu = robust_mu(v, st);
        centre[b] = 0.5 * static_cast<double>(lo + hi - 1);
        level_db[b] = db_from_power(std::max(mu, 1e-300));
    }
    for (std::size_t k = 0; k < n; ++k) {
        const double x = static_cast<double>(k);
        double db = level_db.front();
        if (blocks > 1 && x > centre.front()) {
            const auto it = std::upper_bound(centre.begin(), centre.end(), x);
            if (it == centre.end()) {
                db = level_db.back();
            } else {
                const auto b = static_cast<std::size_t>(it - centre.begin());
                const double t = (x - centre[b - 1]) / (centre[b] - centre[b - 1]);
                db = level_db[b - 1] + t * (level_db[b] - level_db[b - 1]);
            }
        }
        out[k] = power_from_db(db);
    }
    return out;
}

// ---- Tones -------------------------------------------------------------------------------------------------

Tone measure_tone(const Spectrum& s, const WindowResponse& r, double low_hz, double high_hz, double noise_per_bin) {
    Tone t;
    if (s.power.empty()) return t;
    auto [lo, hi] = bin_range(s, low_hz, high_hz);
    if (hi < lo) return t;
    long long k0 = lo;
    for (long long k = lo; k <= hi; ++k)
        if (s.power[static_cast<std::size_t>(k)] > s.power[static_cast<std::size_t>(k0)]) k0 = k;
    if (!is_local_max(s, k0)) {
        t.peak_bin = static_cast<int>(k0);
        t.peak_power = s.power[static_cast<std::size_t>(k0)];
        return t;
    }
    return fit_tone(s, r, k0, noise_per_bin);
}

Tone measure_tone(const Spectrum& s, double low_hz, double high_hz, double noise_per_bin) {
    const WindowResponse r = make_window_response(s.spec.window, s.spec.kaiser_beta, s.power.size());
    return measure_tone(s, r, low_hz, high_hz, noise_per_bin);
}

double snr_db(const Spectrum& s, const Tone& t, const NoiseFloor& f, double bandwidth_hz) {
    const double b = std::isfinite(bandwidth_hz) ? bandwidth_hz : s.sample_rate_hz;
    if (!(t.power > 0.0) || !(f.power_per_bin > 0.0)) return kNaN;
    return db_from_power(t.power / (f.power_per_bin / s.rbw_hz * b));
}

Sfdr sfdr(const Spectrum& s, const Tone& carrier, double false_alarm) {
    Sfdr out;
    const std::size_t n = s.power.size();
    if (n == 0 || !carrier.found || !(carrier.power > 0.0)) return out;
    const WindowResponse r = make_window_response(s.spec.window, s.spec.kaiser_beta, n);
    const BinStatistics st = bin_statistics(s);
    const std::vector<double> profile = noise_floor_profile(s, st);
    const double carrier_bin = s.bin_of_freq(carrier.freq_hz);
    const std::vector<StrongPeak> strong{{carrier_bin, carrier.power}};
    long long best = -1;
    for (std::size_t k = 0; k < n; ++k) {
        const auto kk = static_cast<long long>(k);
        if (!is_local_max(s, kk) || masked(strong, r, static_cast<double>(k), s.power[k], static_cast<double>(n)))
            continue;
        if (best < 0 || s.power[k] > s.power[static_cast<std::size_t>(best)]) best = kk;
    }
    if (best < 0) return out;
    const auto kb = static_cast<std::size_t>(best);
    const double threshold = st.quantile(std::pow(1.0 - false_alarm, 1.0 / static_cast<double>(n))) * profile[kb];
    out.spur_above_floor = s.power[kb] > threshold;
    const Tone spur = fit_tone(s, r, best, st.mean() * profile[kb]);
    const double spur_power = out.spur_above_floor && spur.power > 0.0 ? spur.power : s.power[kb];
    out.spur_freq_hz = spur.freq_hz;
    out.spur_dbfs = db_from_power(spur_power);
    out.sfdr_db = db_from_power(carrier.power / spur_power);
    return out;
}

// ---- Plan check --------------------------------------------------------------------------------------------

std::string_view to_string(LineKind k) {
    switch (k) {
        case LineKind::wanted:
            return "wanted";
        case LineKind::image:
            return "image";
        case LineKind::half_if:
            return "half-if";
        case LineKind::if_feedthrough:
            return "if-feedthrough";
        case LineKind::lo_feedthrough:
            return "lo-feedthrough";
        case LineKind::rf_feedthrough:
            return "rf-feedthrough";
        case LineKind::spur:
            return "spur";
    }
    return "?";
}

std::string_view to_string(LineStatus st) {
    switch (st) {
        case LineStatus::pass:
            return "pass";
        case LineStatus::fail:
            return "fail";
        case LineStatus::below_floor:
            return "below-floor";
        case LineStatus::not_observable:
            return "not-observable";
    }
    return "?";
}

double limit_dbc_for(LineKind kind, const PlanLimits& limits) {
    switch (kind) {
        case LineKind::wanted:
            return kNaN;
        case LineKind::lo_feedthrough:
            return limits.lo_feedthrough_dbc;
        case LineKind::image:
            return -limits.image_rejection_db;
        case LineKind::half_if:
        case LineKind::if_feedthrough:
        case LineKind::rf_feedthrough:
        case LineKind::spur:
            return limits.spur_dbc;
    }
    return kNaN;
}

bool PlanCheck::passed() const {
    if (!wanted_observed()) return false;
    return std::none_of(lines.begin(), lines.end(), [](const LineResult& l) { return l.status == LineStatus::fail; });
}

namespace {

// What one expected line shows, before dBc and limits: observed (status pass), below-floor or not-observable.
struct Observation {
    LineResult result;
    Tone tone;
    long long klo = 0, khi = -1;  // search window bins
};

struct CheckContext {
    const Spectrum& s;
    const PlanCheckOptions& opt;
    WindowResponse r;
    BinStatistics st;
    std::vector<double> profile;
    double usable_low_hz = 0.0, usable_high_hz = 0.0;  // absolute
};

Observation observe(const CheckContext& c, const ExpectedLine& line) {
    const Spectrum& s = c.s;
    Observation o;
    LineResult& res = o.result;
    res.line = line;
    if (!std::isfinite(line.freq_hz)) {
        res.note = "no expected frequency";
        return o;
    }
    const double lobe_hz = c.r.mainlobe_halfwidth_bins * s.bin_hz();
    const double lo_edge = c.usable_low_hz + lobe_hz, hi_edge = c.usable_high_hz - lobe_hz;
    if (!(line.freq_hz >= lo_edge && line.freq_hz <= hi_edge)) {
        res.note = "outside the analysed span " + format_frequency(lo_edge, 6) + " to " + format_frequency(hi_edge, 6);
        return o;
    }
    const double half = std::max(s.bin_hz(), c.opt.search_rbw * s.rbw_hz + std::abs(line.m) * c.opt.lo_uncertainty_hz +
                                                 std::abs(line.n) * c.opt.rf_uncertainty_hz);
    res.search_low_hz = std::max(line.freq_hz - half, lo_edge);
    res.search_high_hz = std::min(line.freq_hz + half, hi_edge);
    std::tie(o.klo, o.khi) = bin_range(s, res.search_low_hz, res.search_high_hz);
    const double mu = profile_at(c.profile, s, line.freq_hz);
    res.floor_dbfs_per_hz = db_from_power(mu / s.rbw_hz);

    const double bins = static_cast<double>(o.khi - o.klo + 1);
    const double threshold =
        std::max(c.st.quantile(std::pow(1.0 - c.opt.false_alarm, 1.0 / bins)), power_from_db(c.opt.min_detect_db)) * mu;
    double window_max = 0.0;
    long long k0 = o.klo;
    for (long long k = o.klo; k <= o.khi; ++k) {
        const double p = s.power[static_cast<std::size_t>(k)];
        if (p > window_max) {
            window_max = p;
            k0 = k;
        }
    }
    if (window_max > threshold && is_local_max(s, k0)) {
        o.tone = fit_tone(s, c.r, k0, c.st.mean() * mu);
        if (o.tone.power > 0.0) {
            res.status = LineStatus::pass;
            res.freq_hz = o.tone.freq_hz;
            res.freq_error_hz = o.tone.freq_hz - line.freq_hz;
            res.level_dbfs = o.tone.level_dbfs;
            return o;
        }
    }
    // Not seen: a tone at the worst offset between bins would have read at least R(½)·power in its peak bin,
    // so anything above max(threshold, what the window shows)/R(½) would have been detected.
    res.status = LineStatus::below_floor;
    res.upper_bound_dbfs = db_from_power(std::max(threshold, window_max) / c.r.power_at(0.5));
    if (window_max > threshold) res.note = "the window holds only the skirt of a stronger signal (no peak of its own)";
    return o;
}

void demote_to_masked(Observation& o, const CheckContext& c, const std::string& by) {
    LineResult& res = o.result;
    res.status = LineStatus::below_floor;
    res.upper_bound_dbfs = db_from_power(o.tone.peak_power / c.r.power_at(0.5));
    res.freq_hz = res.freq_error_hz = res.level_dbfs = kNaN;
    res.note = "only window leakage of " + by + " here";
    o.tone = Tone{};
}

void append_note(std::string& note, const std::string& more) {
    note += (note.empty() ? "" : "; ") + more;
}

}  // namespace

PlanCheck check_plan(const Spectrum& s, std::span<const ExpectedLine> lines, const PlanCheckOptions& opt) {
    const auto wanted_count =
        std::count_if(lines.begin(), lines.end(), [](const ExpectedLine& l) { return l.kind == LineKind::wanted; });
    if (wanted_count != 1)
        throw InputError("plan check: expected exactly one line of kind wanted, got " + std::to_string(wanted_count));
    if (s.power.empty() || !(s.rbw_hz > 0.0)) throw InputError("plan check: the spectrum is empty");
    if (!(opt.usable_fraction > 0.0 && opt.usable_fraction <= 1.0))
        throw InputError("plan check: usable_fraction " + format_number(opt.usable_fraction) +
                         ", expected a fraction above 0 and at most 1");

    const std::size_t n = s.power.size();
    const BinStatistics st = bin_statistics(s);
    CheckContext c{s,
                   opt,
                   make_window_response(s.spec.window, s.spec.kaiser_beta, n),
                   st,
                   noise_floor_profile(s, st),
                   std::max(s.center_hz - 0.5 * s.sample_rate_hz * opt.usable_fraction, opt.usable_low_hz),
                   std::min(s.center_hz + 0.5 * s.sample_rate_hz * opt.usable_fraction, opt.usable_high_hz)};
    if (!(c.usable_high_hz > c.usable_low_hz))
        throw InputError("plan check: the usable band " + format_frequency(opt.usable_low_hz) + " to " +
                         format_frequency(opt.usable_high_hz) + " does not overlap the spectrum's span");
    PlanCheck out;
    out.rbw_hz = s.rbw_hz;
    out.unit = s.spec.unit;
    out.calibration_db = s.spec.calibration_db;
    out.floor = noise_floor(s, st, c.usable_low_hz, c.usable_high_hz);

    std::vector<Observation> obs;
    obs.reserve(lines.size());
    const ExpectedLine& wanted_line =
        *std::find_if(lines.begin(), lines.end(), [](const ExpectedLine& l) { return l.kind == LineKind::wanted; });
    // A line whose search window reaches the wanted's main lobe cannot be told apart from it.
    const double apart = opt.search_rbw * s.rbw_hz + c.r.mainlobe_halfwidth_bins * s.bin_hz();
    for (const ExpectedLine& l : lines) {
        if (l.kind != LineKind::wanted && std::isfinite(l.freq_hz) && std::isfinite(wanted_line.freq_hz) &&
            std::abs(l.freq_hz - wanted_line.freq_hz) < apart) {
            Observation o;
            o.result.line = l;
            o.result.note = "lands on the wanted output (" + format_frequency(wanted_line.freq_hz) +
                            "): not measurable apart from it in this input";
            obs.push_back(std::move(o));
            continue;
        }
        obs.push_back(observe(c, l));
    }

    // Peaks that are only leakage of a stronger observed line are not lines of their own: strongest first.
    std::vector<std::size_t> order(obs.size());
    std::iota(order.begin(), order.end(), 0);
    std::sort(order.begin(), order.end(), [&](std::size_t a, std::size_t b) {
        const double pa = obs[a].tone.found ? obs[a].tone.power : -1.0,
                     pb = obs[b].tone.found ? obs[b].tone.power : -1.0;
        return pa > pb;
    });
    std::vector<StrongPeak> strong;
    std::vector<std::string> strong_label;
    for (std::size_t i : order) {
        Observation& o = obs[i];
        if (o.result.status != LineStatus::pass) continue;
        const double k = static_cast<double>(o.tone.peak_bin);
        for (std::size_t j = 0; j < strong.size(); ++j) {
            double d = std::abs(k - strong[j].bin);
            d = std::min(d, static_cast<double>(n) - d);
            if (d > lobe_bins(c.r) && o.tone.peak_power < 4.0 * strong[j].power * c.r.leakage_bound(d)) {
                demote_to_masked(o, c, strong_label[j]);
                break;
            }
        }
        if (o.result.status == LineStatus::pass) {
            strong.push_back({s.bin_of_freq(o.tone.freq_hz), o.tone.power});
            strong_label.push_back(o.result.line.label);
        }
    }
    // Two expected lines whose windows found the same peak both keep it, and say so.
    for (std::size_t i = 0; i < obs.size(); ++i)
        for (std::size_t j = 0; j < obs.size(); ++j)
            if (i != j && obs[i].result.status == LineStatus::pass && obs[j].result.status == LineStatus::pass &&
                std::abs(obs[i].tone.peak_bin - obs[j].tone.peak_bin) <= 1)
                append_note(obs[i].result.note, "same peak as " + obs[j].result.line.label);

    // dBc, limits and statuses.
    const auto wanted_it = std::find_if(obs.begin(), obs.end(),
                                        [](const Observation& o) { return o.result.line.kind == LineKind::wanted; });
    out.wanted = wanted_it->result;
    const bool have_wanted = out.wanted.status == LineStatus::pass;
    const double ref = out.wanted.level_dbfs;
    const double to_dbm = s.spec.unit == LevelUnit::dbm ? s.spec.calibration_db : kNaN;
    out.wanted.level_dbm = out.wanted.level_dbfs + to_dbm;
    if (have_wanted) out.wanted.level_dbc = 0.0;
    for (auto it = obs.begin(); it != obs.end(); ++it) {
        if (it == wanted_it) continue;
        LineResult r = it->result;
        const double limit = r.line.limit_dbc;
        r.level_dbm = r.level_dbfs + to_dbm;
        if (r.status == LineStatus::pass) {
            if (!have_wanted) {
                r.status = LineStatus::not_observable;
                append_note(r.note, "no wanted output to refer dBc to");
            } else {
                r.level_dbc = r.level_dbfs - ref;
                r.margin_db = limit - r.level_dbc;
                if (std::isfinite(limit) && r.level_dbc > limit) r.status = LineStatus::fail;
                if (!std::isfinite(limit)) append_note(r.note, "no limit");
            }
        } else if (r.status == LineStatus::below_floor && have_wanted) {
            r.upper_bound_dbc = r.upper_bound_dbfs - ref;
            r.margin_db = limit - r.upper_bound_dbc;
            if (std::isfinite(limit) && r.upper_bound_dbc > limit)
                append_note(r.note, "the floor is above the limit: this input cannot show whether the line meets it");
        }
        out.lines.push_back(std::move(r));
    }

    // Unexplained peaks: local maxima well above the local floor, outside every search window and main lobe,
    // and not leakage of anything stronger.
    const auto [ulo, uhi] = bin_range(s, c.usable_low_hz, c.usable_high_hz);
    const double span_bins = static_cast<double>(std::max<long long>(1, uhi - ulo + 1));
    const double factor =
        std::max(c.st.quantile(std::pow(1.0 - opt.false_alarm, 1.0 / span_bins)), power_from_db(opt.unexplained_db));
    out.unexplained_threshold_db = db_from_power(factor);
    std::vector<char> excluded(n, 0);
    const int lb = lobe_bins(c.r);
    for (const Observation& o : obs) {
        for (long long k = o.klo; k <= o.khi; ++k) excluded[static_cast<std::size_t>(k)] = 1;
        if (o.tone.found)
            for (long long k = o.tone.peak_bin - lb; k <= o.tone.peak_bin + lb; ++k) excluded[wrap(k, n)] = 1;
    }
    std::vector<long long> cand;
    for (long long k = ulo; k <= uhi; ++k) {
        const auto kk = static_cast<std::size_t>(k);
        if (!excluded[kk] && is_local_max(s, k) && s.power[kk] > factor * c.profile[kk]) cand.push_back(k);
    }
    std::sort(cand.begin(), cand.end(), [&](long long a, long long b) {
        return s.power[static_cast<std::size_t>(a)] > s.power[static_cast<std::size_t>(b)];
    });
    for (long long k : cand) {
        const auto kk = static_cast<std::size_t>(k);
        if (masked(strong, c.r, static_cast<double>(k), s.power[kk], static_cast<double>(n))) continue;
        if (out.unexplained.size() >= opt.max_unexplained) {
            out.unexplained_truncated = true;
            break;
        }
        const Tone t = fit_tone(s, c.r, k, c.st.mean() * c.profile[kk]);
        const double p = t.power > 0.0 ? t.power : s.power[kk];
        UnexplainedPeak u;
        u.freq_hz = t.freq_hz;
        u.level_dbfs = db_from_power(p);
        u.level_dbm = u.level_dbfs + to_dbm;
        u.level_dbc = have_wanted ? u.level_dbfs - ref : kNaN;
        u.above_floor_db = db_from_power(s.power[kk] / c.profile[kk]);
        out.unexplained.push_back(u);
        strong.push_back({s.bin_of_freq(t.freq_hz), p});
    }
    return out;
}

// ---- Image rejection ---------------------------------------------------------------------------------------

ImageRejection image_rejection(double image_rf_hz, double wanted_rf_db, double wanted_if_db, double image_rf_db,
                               double image_if_db, bool image_if_is_upper_bound, double limit_db) {
    ImageRejection r;
    r.rf_hz = image_rf_hz;
    r.limit_db = limit_db;
    if (!std::isfinite(image_rf_db)) {
        r.note = "no signal in the image band at the RF port";
        return r;
    }
    if (!std::isfinite(wanted_rf_db) || !std::isfinite(wanted_if_db)) {
        r.note = "the wanted signal's RF and IF levels are both needed";
        return r;
    }
    if (!std::isfinite(image_if_db)) {
        r.note = "no IF level for the image response";
        return r;
    }
    r.rejection_db = (wanted_if_db - wanted_rf_db) - (image_if_db - image_rf_db);
    r.lower_bound = image_if_is_upper_bound;
    if (r.lower_bound) {
        r.status = !std::isfinite(limit_db) || r.rejection_db >= limit_db ? LineStatus::pass : LineStatus::below_floor;
        r.note = "the image response is below the floor: the rejection is at least this";
    } else {
        r.status = !std::isfinite(limit_db) || r.rejection_db >= limit_db ? LineStatus::pass : LineStatus::fail;
    }
    return r;
}

ImageRejection image_rejection(double image_rf_hz, double wanted_rf_db, const LineResult& wanted_if, double image_rf_db,
                               const LineResult& image_if, double limit_db) {
    const bool bound = image_if.status == LineStatus::below_floor;
    const double image_db = bound ? image_if.upper_bound_dbfs
                                  : (image_if.status == LineStatus::not_observable ? kNaN : image_if.level_dbfs);
    return image_rejection(image_rf_hz, wanted_rf_db, wanted_if.level_dbfs, image_rf_db, image_db, bound, limit_db);
}

}  // namespace hb
