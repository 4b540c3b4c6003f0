#include "dsp/sweep.hpp"

#include <algorithm>
#include <cmath>
#include <complex>
#include <limits>
#include <map>
#include <optional>

#include "dsp/bench_model.hpp"
#include "dsp/errors.hpp"
#include "dsp/filter_chain.hpp"
#include "dsp/mixer.hpp"
#include "dsp/mixer_emulator.hpp"
#include "dsp/plan.hpp"
#include "dsp/spectrum.hpp"
#include "dsp/units.hpp"
#include "dsp/window.hpp"

namespace hb {
namespace {

// Usable part of each RF window, as a fraction of its rate. The zone emulator keeps a term by the band it would
// have if the whole window held signal (dsp/mixer_emulator.hpp: |d| ± p·fs/2 for an envelope of order p): a tone
// at offset δ from the window centre reaches the passband through zone q with the term centred q·δ away, so the
// x² terms (zone 2) are all kept for |δ| < fs/4 and the x³ terms (zone 3, kept by their centre) for |δ| < fs/6.
// A linear mixer uses ±0.4 of the rate (the edges carry the emulator's and the realisations' transitions).
constexpr double kTileLinear = 0.8;
constexpr double kTileSquare = 0.48;
constexpr double kTileCubic = 0.32;
// The IF passband spans about this many FFT bins.
constexpr double kBinsPerPassband = 16.0;
// Transients must have decayed to this fraction of the filters' impulse-response sum before the FFT frame: a
// tone 100 dB down a filter's skirt is then read to well under 0.1 dB.
constexpr double kSettleEpsilon = 1e-7;
// Detection: a single-frame periodogram bin of noise alone exceeds 20× its mean with probability e^−20. The mean
// comes from kNoiseFrames averaged frames of the chain with no input; a line standing kLineOverNoise above that
// average is leakage, not noise.
constexpr double kNoiseFactor = 20.0;
constexpr int kNoiseFrames = 16;
constexpr double kLineOverNoise = 10.0;
// The emulator's output filters hold what would fold into the window 100 dB down (dsp/mixer_emulator.hpp): lines
// further below the strongest line in the window, or below the tone as it reaches the mixer, are not trusted.
constexpr double kEmulatorFloor = 1e-10;
// Float32 rounding of the RF input sits near −178 dB per bin relative to the tone (2^−24 relative amplitude
// spread over the FFT); the threshold stays well above that.
constexpr double kRoundingFloor = 1e-16;
// A tone's fitted power exceeds its peak bin by at most the window's scalloping loss (about 1 dB for these
// windows, Harris 1978); a larger ratio means the peak is a side lobe of a line outside the passband.
constexpr double kMaxFitOverPeak = 2.0;
// Equal-output: stop when the tone's output is within this of the wanted's (dB).
constexpr double kEqualTolDb = 0.005;
constexpr int kEqualMaxRuns = 16;
constexpr double kEqualMaxStepDb = 40.0;
constexpr double kEqualMaxLowerDb = 60.0;  // a response stronger than the wanted: lowered at most this far

double nice_rate_up(double hz) {
    const double p = std::pow(10.0, std::floor(std::log10(hz)));
    for (double m : {1.0, 2.0, 2.5, 5.0, 10.0})
        if (m * p >= hz * (1 - 1e-12)) return m * p;
    return 10.0 * p;
}

std::size_t next_pow2(double v) {
    std::size_t n = 1;
    while (static_cast<double>(n) < v) n <<= 1;
    return n;
}

double tile_fraction(const Setup& s) {
    const MixerParams mp = resolve_mixer(s);
    return mp.a3 != 0.0 ? kTileCubic : mp.a2 != 0.0 ? kTileSquare : kTileLinear;
}

// The rate the session sets: the first source's, else the IF chain's.
std::optional<double> session_rate(const Setup& s) {
    if (!s.sources.empty() && s.sources.front().sample_rate_hz) return *s.sources.front().sample_rate_hz;
    if (s.if_chain.sample_rate_hz) return *s.if_chain.sample_rate_hz;
    return std::nullopt;
}

// The lowest rate that holds the IF passband (20 of its widths) and the IF filters (3 of theirs).
double least_rate(const Setup& s) {
    double need = 20.0 * s.plan.if_bandwidth_hz;
    for (const FilterSpec& f : s.if_filters)
        if (f.type != FilterType::none && f.bandwidth_hz > 0) need = std::max(need, 3.0 * f.bandwidth_hz);
    return nice_rate_up(need * std::max(1, s.if_chain.decimation));
}

// Without a session rate, the rate is a trade: each tile costs a chain (designs, realisations: about as much as
// kTileCostSamples samples through it, measured on the development machine), each run costs the settling time
// (seconds, set by the filters) plus the FFT (16 bins per passband) at the rate. The candidates are the round rates
// from least_rate up; the one with the least estimated cost wins.
constexpr double kTileCostSamples = 1.3e5;

double best_rate(const Setup& s, double least, double fraction, double span_hz, double settle_s, double tones) {
    const double b = s.plan.if_bandwidth_hz;
    const int d = std::max(1, s.if_chain.decimation);
    double best = least, best_cost = std::numeric_limits<double>::infinity();
    for (double fs = least; fs <= least * 1e4; fs = nice_rate_up(fs * 1.0001)) {
        const double fft = static_cast<double>(
            std::max<std::size_t>(static_cast<std::size_t>(kMinFftSize), next_pow2(kBinsPerPassband * fs / d / b)));
        const double tiles = span_hz / (fraction * fs) + 1.0;
        const double cost = tones * (settle_s * fs + fft * d) + tiles * kTileCostSamples;
        if (cost < best_cost) {
            best_cost = cost;
            best = fs;
        }
        if (tiles < 2.0) break;  // wider windows only cost more per run
    }
    return best;
}

// Samples until the impulse response of a cascade of one-pole sections (and its mirror cascade in parallel) has
// left less than eps of its absolute sum; computed in double.
std::size_t pole_tail(const Realisation& r, double eps) {
    double slow = 0.0;
    for (const auto* secs : {&r.sections, &r.mirror_sections})
        for (const PoleSection& p : *secs) slow = std::max(slow, std::abs(p.a1));
    if (!(slow < 1.0)) return std::size_t{1} << 20;  // not decaying: the caller caps it
    const double est = std::log(eps) / std::log(std::max(slow, 1e-300));
    const std::size_t n = std::min<std::size_t>(std::size_t{1} << 20, static_cast<std::size_t>(4.0 * est) + 4096);
    std::vector<double> mag(n, 0.0);
    for (const auto* secs : {&r.sections, &r.mirror_sections}) {
        if (secs->empty()) continue;
        std::vector<std::complex<double>> x_prev(secs->size(), 0.0), y_prev(secs->size(), 0.0);
        for (std::size_t i = 0; i < n; ++i) {
            std::complex<double> v = i == 0 ? 1.0 : 0.0;
            for (std::size_t k = 0; k < secs->size(); ++k) {
                const PoleSection& p = (*secs)[k];
                const std::complex<double> y = p.b0 * v + p.b1 * x_prev[k] + p.a1 * y_prev[k];
                x_prev[k] = v;
                y_prev[k] = y;
                v = y;
            }
            mag[i] += std::abs(v);
        }
    }
    double total = 0.0;
    for (double m : mag) total += m;
    double tail = 0.0;
    for (std::size_t i = n; i-- > 0;) {
        tail += mag[i];
        if (tail > eps * total) return i + 1;
    }
    return 0;
}

// Settling of a filter chain in input samples: the stages in series, each its own tail.
std::size_t chain_tail(const FilterChain& c) {
    std::size_t n = 0;
    for (const ChainStage& st : c.stages) {
        if (st.realisation.form == RealisationForm::pole_sections)
            n += pole_tail(st.realisation, kSettleEpsilon);
        else if (st.realisation.form == RealisationForm::fir)
            n += st.realisation.taps.size();
        n += static_cast<std::size_t>(std::max(0, st.realisation.delay_samples));
    }
    return n;
}

// A CW tone A·e^{j2π·c·i} (c cycles per sample) from a double-precision phase, re-seeded every 256 samples.
void make_tone(std::vector<cf32>& x, double cycles, double amp) {
    const std::size_t n = x.size();
    const std::complex<double> step = std::polar(1.0, kTwoPi * (cycles - std::floor(cycles)));
    for (std::size_t i0 = 0; i0 < n; i0 += 256) {
        double ph = cycles * static_cast<double>(i0);
        ph -= std::floor(ph);
        std::complex<double> p = std::polar(amp, kTwoPi * ph);
        const std::size_t end = std::min(n, i0 + 256);
        for (std::size_t i = i0; i < end; ++i) {
            x[i] = cf32(static_cast<float>(p.real()), static_cast<float>(p.imag()));
            p *= step;
        }
    }
}

// What one run shows in the IF passband.
struct RunResult {
    bool seen = false;
    double if_dbfs = kNaN;
    double if_hz = kNaN;
    double threshold_dbfs = kNaN;
};

struct Tile {
    long index = 0;
    EnvelopeWindow window;
    SignalChain chain;
    std::size_t settle = 0;
    std::size_t length = 0;
};

class Engine {
  public:
    // fs: the RF window rate; fraction: the usable part of each window (tile_fraction).
    Engine(const Setup& s, const FilterModelLoader& loader, double fs, double fraction, SweepResult& out)
        : s_(s), loader_(loader), out_(out) {
        fs_ = fs;
        decim_ = std::max(1, s.if_chain.decimation);
        if_rate_ = fs_ / decim_;
        level_offset_db_ = s.sources.empty() ? 0.0 : s.sources.front().level_offset_db;
        fft_ = static_cast<int>(std::clamp<std::size_t>(next_pow2(kBinsPerPassband * if_rate_ / s.plan.if_bandwidth_hz),
                                                        static_cast<std::size_t>(kMinFftSize), std::size_t{1} << 16));
        // The chain's own analyzer is not read: keep it as small as this measurement.
        cs_ = s;
        cs_.analyzer.fft_size = fft_;
        cs_.analyzer.overlap = 0.0;
        cs_.analyzer.averages = 1;
        cs_.analyzer.averaging = Averaging::rms;
        tile_hz_ = fraction * fs_;
        base_hz_ = s.plan.wanted_hz - tile_hz_ / 2;
    }

    double fs() const { return fs_; }
    double if_rate() const { return if_rate_; }
    double tile_hz() const { return tile_hz_; }
    int fft() const { return fft_; }
    int tiles_made() const { return tiles_made_; }
    std::size_t runs() const { return runs_; }
    std::uint64_t samples() const { return samples_; }
    const Tile& tile() const { return *tile_; }
    const SignalChain& chain() const { return tile_->chain; }
    double rbw_hz() const { return spectrum_.rbw_hz; }

    long tile_of(double f) const { return static_cast<long>(std::floor((f - base_hz_) / tile_hz_)); }

    // Makes (or keeps) the chain of the tile holding f.
    void select(double f) {
        const long k = tile_of(f);
        if (tile_ && tile_->index == k) return;
        tile_.reset();
        tile_.emplace(make_tile(k));
    }

    // The IF passband in the output frame and the noise of the emulated mixer there: from the first tile.
    void calibrate() {
        const SignalChain& c = tile_->chain;
        const EnvelopeWindow w = c.layout().if_output;
        const std::vector<ExpectedLine> lines = expected_lines(s_, c.model(), c.layout().lo_hz, s_.sweep.reference_dbfs,
                                                               Band{w.center_hz, w.sample_rate_hz});
        passband_ = Band{lines.front().freq_hz, s_.plan.if_bandwidth_hz};
        AnalyzerSpec a = cs_.analyzer;
        a.calibration_db = 0.0;
        a.unit = LevelUnit::dbfs;
        welch_.emplace(Welch::make(a, w.center_hz, w.sample_rate_hz));
        response_ = make_window_response(a.window, a.kaiser_beta, static_cast<std::size_t>(fft_));
        // A run with no input, averaged over kNoiseFrames frames: the mixer's own noise (shaped by the IF filters)
        // and any leakage line in the passband.
        AnalyzerSpec avg = a;
        avg.averages = kNoiseFrames;
        Welch quiet = Welch::make(avg, w.center_hz, w.sample_rate_hz);
        Tile& t = *tile_;
        std::fill(buffer_.begin(), buffer_.end(), cf32{});
        t.chain.reset();
        std::size_t skip = t.settle / static_cast<std::size_t>(decim_);
        while (!quiet.ready()) {
            t.chain.process(std::span<const cf32>(buffer_));
            std::span<const cf32> y = t.chain.probe_samples();
            const std::size_t k = std::min(skip, y.size());
            skip -= k;
            quiet.push(y.subspan(k));
        }
        const Spectrum q = quiet.read();
        const auto [k_lo, k_hi] = passband_bins(q);
        double sum = 0.0, peak = 0.0;
        for (long k = k_lo; k <= k_hi; ++k) {
            sum += q.power[static_cast<std::size_t>(k)];
            peak = std::max(peak, q.power[static_cast<std::size_t>(k)]);
        }
        const double mean = k_hi >= k_lo ? sum / static_cast<double>(k_hi - k_lo + 1) : 0.0;
        const Tone bg = measure_tone(q, response_, passband_.low_hz(), passband_.high_hz(), mean);
        if (bg.found && bg.peak_power > kLineOverNoise * mean && bg.power > 0) {
            background_ = bg.power;
            noise_per_bin_ = std::max(0.0, noise_floor(q, passband_.low_hz(), passband_.high_hz()).power_per_bin);
            if (!std::isfinite(noise_per_bin_)) noise_per_bin_ = 0.0;
            out_.notes.push_back("with no input the IF passband already holds a line of " +
                                 format_number(bg.level_dbfs) + " dBFS at " + format_frequency(bg.freq_hz) +
                                 " (the mixer's own leakage): tone outputs are judged above it");
        } else {
            // The noisiest passband bin of the average: an IF filter narrower than the passband shapes the noise.
            noise_per_bin_ = peak;
        }
    }

    // The bins of a spectrum that lie inside the IF passband.
    std::pair<long, long> passband_bins(const Spectrum& s) const {
        return {static_cast<long>(std::ceil(s.bin_of_freq(passband_.low_hz()))),
                static_cast<long>(std::floor(s.bin_of_freq(passband_.high_hz())))};
    }

    const Band& passband() const { return passband_; }

    // One run of a tone at f (in the current tile) at level_dbfs.
    RunResult run(double f, double level_dbfs) {
        run_raw(f, level_dbfs);
        RunResult r;
        const double amp2 = std::isfinite(level_dbfs) ? power_from_db(level_dbfs) : 0.0;
        double max_bin = 0.0;
        for (double p : spectrum_.power) max_bin = std::max(max_bin, p);
        // Leakage of lines outside the passband into it, bounded by the window's response (dsp/window).
        const auto [k_lo, k_hi] = passband_bins(spectrum_);
        double leak = 0.0;
        for (long j = 0; j < static_cast<long>(spectrum_.power.size()); ++j) {
            if (j >= k_lo && j <= k_hi) continue;
            const double d = static_cast<double>(j < k_lo ? k_lo - j : j - k_hi);
            leak = std::max(leak, spectrum_.power[static_cast<std::size_t>(j)] * response_.leakage_bound(d));
        }
        const FilterChain* rf = tile_->chain.rf_filter();
        const double at_mixer = amp2 * (rf ? std::norm(rf->response(f)) : 1.0);
        const double thr = std::max({kNoiseFactor * noise_per_bin_, 4.0 * background_, 2.0 * leak,
                                     kEmulatorFloor * std::max(max_bin, at_mixer), kRoundingFloor * amp2, 1e-300});
        r.threshold_dbfs = db_from_power(thr);
        const Tone t = measure_tone(spectrum_, response_, passband_.low_hz(), passband_.high_hz(), noise_per_bin_);
        if (t.found && t.power > thr && t.peak_power > thr && t.power <= kMaxFitOverPeak * t.peak_power &&
            passband_.contains(t.freq_hz)) {
            r.seen = true;
            r.if_dbfs = t.level_dbfs;
            r.if_hz = t.freq_hz;
        }
        return r;
    }

  private:
    Tile make_tile(long k) {
        Tile t;
        t.index = k;
        t.window = {base_hz_ + (static_cast<double>(k) + 0.5) * tile_hz_, fs_};
        const RfInput in{t.window.center_hz, fs_, level_offset_db_};
        SignalChainOptions o;
        o.probe = Probe::if_output;
        o.rf_spectra = false;
        o.max_block = max_block_;
        for (int attempt = 0; attempt < 2; ++attempt) {
            t.chain = SignalChain::make(cs_, std::span<const RfInput>(&in, 1), o, loader_);
            if (!if_tail_) if_tail_ = chain_tail(t.chain.if_chain());
            std::size_t settle = *if_tail_;
            if (const FilterChain* rf = t.chain.rf_filter()) settle += chain_tail(*rf);
            EmulatorConfig ec;
            ec.rf_center_hz = t.window.center_hz;
            ec.sample_rate_hz = fs_;
            ec.output_center_hz = t.chain.layout().mixer_output.center_hz;
            ec.seed = s_.bench.seed;
            const MixerEmulator em = MixerEmulator::make(t.chain.model().mixer, ec);
            settle += 2 * static_cast<std::size_t>(std::ceil(em.delay_samples())) + 64;
            settle = (settle + decim_ - 1) / decim_ * decim_;
            t.settle = settle;
            t.length = settle + static_cast<std::size_t>(fft_) * static_cast<std::size_t>(decim_) +
                       static_cast<std::size_t>(decim_);
            if (t.length <= o.max_block) break;
            // The whole run must be one internal block (probe_samples() holds the last block's IF output).
            max_block_ = o.max_block = t.length;
        }
        ++tiles_made_;
        buffer_.resize(t.length);
        return t;
    }

    void run_raw(double f, double level_dbfs) {
        Tile& t = *tile_;
        buffer_.resize(t.length);
        if (std::isfinite(level_dbfs))
            make_tone(buffer_, (f - t.window.center_hz) / fs_, amplitude_from_db(level_dbfs));
        else
            std::fill(buffer_.begin(), buffer_.end(), cf32{});
        t.chain.reset();
        t.chain.process(std::span<const cf32>(buffer_));
        const std::span<const cf32> y = t.chain.probe_samples();
        const std::size_t n = static_cast<std::size_t>(fft_);
        if (y.size() < n)
            throw InputError("sweep: the IF chain gave " + std::to_string(y.size()) + " samples for a run of " +
                             std::to_string(t.length) + "; expected at least " + std::to_string(n));
        welch_->reset();
        welch_->push(y.last(n));
        welch_->read(spectrum_);
        ++runs_;
        samples_ += t.length;
    }

    const Setup& s_;
    const FilterModelLoader& loader_;
    SweepResult& out_;
    Setup cs_;
    double fs_ = 0.0, if_rate_ = 0.0, level_offset_db_ = 0.0, tile_hz_ = 0.0, base_hz_ = 0.0;
    int decim_ = 1, fft_ = 0, tiles_made_ = 0;
    std::size_t max_block_ = std::size_t{1} << 16;
    std::optional<std::size_t> if_tail_;
    std::optional<Tile> tile_;
    std::vector<cf32> buffer_;
    std::optional<Welch> welch_;
    WindowResponse response_;
    Spectrum spectrum_;
    Band passband_;
    double noise_per_bin_ = 0.0, background_ = 0.0;
    std::size_t runs_ = 0;
    std::uint64_t samples_ = 0;
};

// The measurement of one tone by the session's method.
struct Measurer {
    Engine& e;
    SweepMethod method;
    double reference_dbfs;
    double tone_dbfs;      // fixed-level
    double max_tone_dbfs;  // equal-output
    double wanted_if_dbfs;

    double rejection(double tone, double out) const { return (wanted_if_dbfs - reference_dbfs) - (out - tone); }

    ToneMeasurement fixed(double f) {
        ToneMeasurement m;
        m.rf_hz = f;
        m.tone_dbfs = tone_dbfs;
        const RunResult r = e.run(f, tone_dbfs);
        m.runs = 1;
        m.threshold_dbfs = r.threshold_dbfs;
        if (r.seen) {
            m.if_dbfs = r.if_dbfs;
            m.if_hz = r.if_hz;
            m.rejection_db = rejection(tone_dbfs, r.if_dbfs);
        } else {
            m.lower_bound = true;
            m.rejection_db = rejection(tone_dbfs, r.threshold_dbfs);
        }
        return m;
    }

    // Raise (or lower) the tone until its IF output equals the wanted's: a secant on the level in dB, started
    // with the response's own growth (n dB per dB), kept inside a bracket once it has one (bisection then).
    ToneMeasurement equal(double f, double slope_guess) {
        ToneMeasurement m;
        m.rf_hz = f;
        const double target = wanted_if_dbfs;
        struct Pt {
            double t, o;
        };
        std::optional<Pt> lo, hi, prev;
        auto finish_bound = [&](const RunResult& r, double t) {
            m.tone_dbfs = t;
            m.threshold_dbfs = r.threshold_dbfs;
            m.lower_bound = true;
            m.rejection_db = t - reference_dbfs;  // the tone reached t without equalling the wanted
            if (r.seen) {
                m.if_dbfs = r.if_dbfs;
                m.if_hz = r.if_hz;
            }
            return m;
        };
        double t = reference_dbfs;
        RunResult r = e.run(f, t);
        ++m.runs;
        if (!r.seen) {
            t = max_tone_dbfs;
            r = e.run(f, t);
            ++m.runs;
            if (!r.seen || r.if_dbfs < target) return finish_bound(r, t);
        }
        Pt cur{t, r.if_dbfs};
        RunResult cur_r = r;
        while (m.runs < kEqualMaxRuns) {
            const double err = cur.o - target;
            if (err < 0)
                lo = cur;
            else
                hi = cur;
            if (std::abs(err) <= kEqualTolDb) break;
            double slope = slope_guess;
            if (prev && std::abs(cur.t - prev->t) > 1e-6) {
                const double s = (cur.o - prev->o) / (cur.t - prev->t);
                if (s >= 0.25 && s <= 8.0) slope = s;
            }
            double next = cur.t - err / slope;
            if (lo && hi) {
                if (!(next > lo->t && next < hi->t)) next = 0.5 * (lo->t + hi->t);
            } else {
                next = std::clamp(next, cur.t - kEqualMaxStepDb, cur.t + kEqualMaxStepDb);
                next = std::clamp(next, reference_dbfs - kEqualMaxLowerDb, max_tone_dbfs);
                if (next == cur.t) {
                    // At the highest level and still below the wanted's output (or at the lowest and above it).
                    if (err < 0) return finish_bound(cur_r, cur.t);
                    break;
                }
            }
            const RunResult nr = e.run(f, next);
            ++m.runs;
            if (!nr.seen) {
                // Raised and lost: the output turned round (a third-order port compresses to nothing at its
                // intercept) before it equalled the wanted's, so no level up to this one gives equal output.
                if (!hi) return finish_bound(nr, next);
                // Lost below the threshold on the way down: the level lies above this one.
                lo = Pt{next, -std::numeric_limits<double>::infinity()};
                prev.reset();
                const double mid = 0.5 * (lo->t + hi->t);
                const RunResult mr = e.run(f, mid);
                ++m.runs;
                if (!mr.seen) {
                    lo = Pt{mid, -std::numeric_limits<double>::infinity()};
                    continue;
                }
                cur = Pt{mid, mr.if_dbfs};
                cur_r = mr;
                continue;
            }
            prev = cur;
            cur = Pt{next, nr.if_dbfs};
            cur_r = nr;
        }
        m.tone_dbfs = cur.t;
        m.if_dbfs = cur.o;
        m.if_hz = cur_r.if_hz;
        m.threshold_dbfs = cur_r.threshold_dbfs;
        // The conversion-gain form: equal to tone − reference once the outputs are equal.
        m.rejection_db = rejection(cur.t, cur.o);
        return m;
    }

    ToneMeasurement measure(double f, int rf_order) {
        return method == SweepMethod::fixed_level ? fixed(f) : equal(f, std::max(1, std::abs(rf_order)));
    }
};

LineStatus judge(const ToneMeasurement& m, double limit) {
    if (!std::isfinite(m.rejection_db)) return LineStatus::not_observable;
    if (m.rejection_db >= limit) return LineStatus::pass;
    return m.lower_bound ? LineStatus::below_floor : LineStatus::fail;
}

}  // namespace

std::string_view SweepResult::verdict() const {
    bool below = false;
    for (const SweepResponse& r : responses) {
        if (r.status == LineStatus::fail) return "fail";
        below = below || r.status == LineStatus::below_floor;
    }
    if (!unlisted.empty()) return "fail";
    return below ? "incomplete" : "pass";
}

SweepGrid sweep_grid(const SweepSpec& w, const PlanSpec& plan, const std::vector<Response>& responses) {
    double lo = plan.rf_low_hz, hi = plan.rf_high_hz;
    if (!(hi > lo)) {
        lo = plan.wanted_hz - plan.if_bandwidth_hz / 2;
        hi = plan.wanted_hz + plan.if_bandwidth_hz / 2;
    }
    for (const Response& r : responses) {
        if (!(r.rf_high_hz > 0)) continue;
        lo = std::min(lo, r.rf_low_hz);
        hi = std::max(hi, r.rf_high_hz);
    }
    const double pad = 0.02 * (hi - lo);
    lo = std::max(lo - pad, std::min(plan.if_bandwidth_hz, lo));
    hi += pad;
    SweepGrid g;
    g.low_hz = w.rf_low_hz.value_or(lo);
    g.high_hz = w.rf_high_hz.value_or(hi);
    if (!(g.high_hz > g.low_hz))
        throw InputError("sweep.rf_high_hz: the range " + format_frequency(g.low_hz) + " to " +
                         format_frequency(g.high_hz) + " is empty; expected rf_high_hz above rf_low_hz");
    const double span = g.high_hz - g.low_hz;
    g.step_hz = w.step_hz.value_or(span / static_cast<double>(kSweepDefaultPoints - 1));
    const double count = std::floor(span / g.step_hz * (1 + 1e-12)) + 1;
    if (!(count <= static_cast<double>(kSweepMaxPoints)))
        throw InputError("sweep.step_hz: " + format_number(g.step_hz) + " Hz over " + format_frequency(span) +
                         " gives " + format_number(count) + " points; expected at most " +
                         std::to_string(kSweepMaxPoints) + " (a larger step or a narrower range)");
    g.points = static_cast<std::size_t>(count);
    return g;
}

SweepResult run_sweep(const Setup& s, const FilterModelLoader& loader_in, const SweepOptions& opt) {
    if (const std::vector<SetupProblem> p = validate(s); !p.empty())
        throw InputError(p.front().key + ": " + p.front().message);
    if (s.mixer.model == MixerModel::bypass)
        throw InputError(
            "mixer.model: \"bypass\" has no mixer to sweep (the input already is an IF); set the model "
            "of the mixer under test (ideal, unipolar, bipolar, quadrature) or a preset");
    const FilterModelLoader loader = loader_in ? loader_in
                                               : FilterModelLoader([](const FilterSpec& spec, const std::string& key,
                                                                      const std::optional<EnvelopeWindow>& w) {
                                                     ModelOptions o;
                                                     o.fir_window = w;
                                                     return make_filter_model(spec, key, o);
                                                 });

    SweepResult out;
    out.method = s.sweep.method;
    out.reference_dbfs = s.sweep.reference_dbfs;
    out.tone_dbfs = s.sweep.tone_dbfs.value_or(s.sweep.reference_dbfs);
    out.wanted_rf_hz = s.plan.wanted_hz;

    // The span the grid will cover, from the plan's nominal LO (the chain's own LO refines the responses below).
    double span_hz = 0.0;
    std::size_t tones = 0;
    {
        ResponseQuery q0;
        q0.lo_hz = lo_frequency_hz(s);
        q0.max_order = s.plan.max_order;
        q0.if_band = {s.plan.if_hz, s.plan.if_bandwidth_hz};
        q0.wanted_rf_hz = s.plan.wanted_hz;
        q0.rf_low_hz = s.plan.rf_low_hz;
        q0.rf_high_hz = s.plan.rf_high_hz;
        const std::vector<Response> r0 = spurious_responses(q0);
        const SweepGrid g0 = sweep_grid(s.sweep, s.plan, r0);
        span_hz = g0.high_hz - g0.low_hz;
        tones = g0.points + r0.size();
    }
    const double fraction = tile_fraction(s);
    std::optional<Engine> engine;
    if (const std::optional<double> fs = session_rate(s)) {
        engine.emplace(s, loader, *fs, fraction, out);
    } else {
        // A first chain at the lowest usable rate tells the settling time; then the cheapest rate for the sweep.
        const double least = least_rate(s);
        engine.emplace(s, loader, least, fraction, out);
        engine->select(s.plan.wanted_hz);
        const double settle_s = static_cast<double>(engine->tile().settle) / least;
        const double rate = best_rate(s, least, fraction, span_hz, settle_s, static_cast<double>(tones));
        if (rate != least) engine.emplace(s, loader, rate, fraction, out);
        out.notes.push_back(
            "the session sets no sample rate ([[source]] or [if_chain] sample_rate_hz): every RF "
            "window is sampled at " +
            format_frequency(rate) + " (the IF passband and filters need " + format_frequency(least) +
            "; this rate balances the chains made against the samples per tone)");
    }
    Engine& e = *engine;
    e.select(s.plan.wanted_hz);
    e.calibrate();
    const SignalChain& c0 = e.chain();
    out.lo_hz = c0.layout().lo_hz;
    out.passband = e.passband();
    out.sample_rate_hz = e.fs();
    out.if_rate_hz = e.if_rate();
    out.tile_hz = e.tile_hz();
    out.fft_size = e.fft();
    out.settle_samples = e.tile().settle;
    out.run_samples = e.tile().length;

    // The wanted at the reference level sets the output every tone is compared with.
    const RunResult w = e.run(s.plan.wanted_hz, out.reference_dbfs);
    out.rbw_hz = e.rbw_hz();
    if (!w.seen)
        throw InputError("sweep: the wanted (" + format_frequency(s.plan.wanted_hz) + " at " +
                         format_number(out.reference_dbfs) + " dBFS) gives no output in the IF passband (" +
                         format_frequency(out.passband.low_hz()) + " to " + format_frequency(out.passband.high_hz()) +
                         "); check plan.if_hz, the [[if_filter]] sections and sweep.reference_dbfs");
    out.wanted.rf_hz = s.plan.wanted_hz;
    out.wanted.tone_dbfs = out.reference_dbfs;
    out.wanted.if_dbfs = w.if_dbfs;
    out.wanted.if_hz = w.if_hz;
    out.wanted.threshold_dbfs = w.threshold_dbfs;
    out.wanted.rejection_db = 0.0;
    out.wanted.runs = 1;
    out.wanted_gain_db = w.if_dbfs - out.reference_dbfs;

    // The equal-output ceiling: the emulated RF port does not clip, but above its third-order intercept the
    // polynomial no longer describes a mixer (its gain turns round).
    const MixerParams& mp = c0.model().mixer;
    out.max_tone_dbfs = out.reference_dbfs + kSweepMaxRaiseDb;
    if (mp.a3 != 0.0) {
        const double ip3_dbfs = db_from_power(4.0 / (3.0 * std::abs(mp.a3)));
        if (ip3_dbfs < out.max_tone_dbfs) {
            out.max_tone_dbfs = std::max(out.reference_dbfs, ip3_dbfs);
            if (out.method == SweepMethod::equal_output)
                out.notes.push_back("equal-output: the tone is raised at most to the mixer's input IP3 (" +
                                    format_number(ip3_dbfs) + " dBFS); rejections beyond that are lower bounds");
        }
    }

    // Every response of the plan's LO into the passband the wanted lands in, plus the image and the half-IF
    // when the max order leaves them out.
    ResponseQuery q;
    q.lo_hz = out.lo_hz;
    q.max_order = s.plan.max_order;
    q.if_band = {std::abs(out.passband.center_hz), s.plan.if_bandwidth_hz};
    q.wanted_rf_hz = s.plan.wanted_hz;
    q.rf_low_hz = s.plan.rf_low_hz;
    q.rf_high_hz = s.plan.rf_high_hz;
    std::vector<Response> all = spurious_responses(q);
    for (const auto& [kind, order] : {std::pair{ProductKind::image, 2}, std::pair{ProductKind::half_if, 4}}) {
        const bool have = std::any_of(all.begin(), all.end(), [&](const Response& r) { return r.kind == kind; });
        if (have || s.plan.max_order >= order) continue;
        ResponseQuery q2 = q;
        q2.max_order = order;
        for (const Response& r : spurious_responses(q2))
            if (r.kind == kind) all.push_back(r);
    }
    {
        // The plan engine's prediction for a tone as strong as the wanted, at the reference drive.
        std::optional<FilterModel> rf_model;
        if (s.rf_filter.type != FilterType::none) rf_model = loader(s.rf_filter, "rf_filter", std::nullopt);
        const BenchModel bm = make_bench_model(s, rf_model ? &*rf_model : nullptr, out.reference_dbfs,
                                               s.sources.empty() ? 0.0 : s.sources.front().level_offset_db);
        predict_responses(all, bm.plan, s.plan.wanted_hz);
    }
    std::vector<Response> responses;
    for (Response& r : all)
        if (r.kind != ProductKind::wanted) responses.push_back(std::move(r));
    out.grid = sweep_grid(s.sweep, s.plan, all);

    Measurer meas{e, out.method, out.reference_dbfs, out.tone_dbfs, out.max_tone_dbfs, w.if_dbfs};

    // Jobs in RF order, so each tile's chain is made once.
    struct Job {
        double f;
        int response;  // index into responses, or −1 for a grid point
        std::size_t point;
    };
    std::vector<Job> jobs;
    out.responses.resize(responses.size());
    for (std::size_t i = 0; i < responses.size(); ++i) {
        out.responses[i].response = responses[i];
        if (responses[i].rf_hz > 0) jobs.push_back({responses[i].rf_hz, static_cast<int>(i), 0});
    }
    out.points.resize(out.grid.points);
    for (std::size_t k = 0; k < out.grid.points; ++k) {
        const double f = out.grid.low_hz + static_cast<double>(k) * out.grid.step_hz;
        out.points[k].rf_hz = f;
        if (f > 0) jobs.push_back({f, -1, k});
    }
    std::stable_sort(jobs.begin(), jobs.end(), [](const Job& a, const Job& b) { return a.f < b.f; });
    const std::size_t total = jobs.size();
    for (std::size_t j = 0; j < total; ++j) {
        const Job& job = jobs[j];
        e.select(job.f);
        if (job.response >= 0) {
            SweepResponse& r = out.responses[static_cast<std::size_t>(job.response)];
            r.measured = meas.measure(job.f, r.response.n);
        } else {
            out.points[job.point] = meas.measure(job.f, 1);
        }
        if (opt.progress && (j % 16 == 15 || j + 1 == total)) opt.progress(j + 1, total);
    }

    const PlanLimits& lim = s.plan.limits;
    bool beyond_model = false;
    for (SweepResponse& r : out.responses) {
        r.limit_db = r.response.kind == ProductKind::image ? lim.image_rejection_db : lim.spur_rejection_db;
        if (std::isfinite(r.response.predicted_dbc)) r.predicted_rejection_db = -r.response.predicted_dbc;
        if (!(r.response.rf_hz > 0)) {
            r.measured.rf_hz = r.response.rf_hz;
            r.status = LineStatus::not_observable;
            continue;
        }
        r.margin_db = r.measured.rejection_db - r.limit_db;
        r.status = judge(r.measured, r.limit_db);
        beyond_model = beyond_model || std::abs(r.response.n) > kMixerMaxRfOrder;
    }
    if (beyond_model)
        out.notes.push_back("the mixer model has RF orders up to " + std::to_string(kMixerMaxRfOrder) +
                            " (dsp/mixer.hpp): responses with |n| > " + std::to_string(kMixerMaxRfOrder) +
                            " produce no output in emulation and read as the detection floor's lower bound");
    if (s.rf_filter.type != FilterType::none)
        out.notes.push_back(
            "the RF filter's realisation on each window follows its own response within 0.05 dB + "
            "-80 dB of its peak (dsp/filter_realise.hpp): rejections that rest on more than about "
            "70 dB of RF filter attenuation carry that uncertainty");
    // Worst margin first; responses that could not be tested last.
    std::stable_sort(out.responses.begin(), out.responses.end(), [](const SweepResponse& a, const SweepResponse& b) {
        const bool fa = std::isfinite(a.margin_db), fb = std::isfinite(b.margin_db);
        if (fa != fb) return fa;
        if (fa && a.margin_db != b.margin_db) return a.margin_db < b.margin_db;
        return a.response.order < b.response.order;
    });
    for (std::size_t i = 0; i < out.responses.size(); ++i) {
        const ProductKind k = out.responses[i].response.kind;
        int* slot = k == ProductKind::image            ? &out.image
                    : k == ProductKind::half_if        ? &out.half_if
                    : k == ProductKind::if_feedthrough ? &out.if_feedthrough
                                                       : nullptr;
        if (slot && *slot < 0) *slot = static_cast<int>(i);
    }

    // Grid responses that no listed band explains (nor the wanted channel): each run of neighbouring points once.
    auto explained = [&](double f) {
        const double tol = out.grid.step_hz / 2;
        if (std::abs(f - s.plan.wanted_hz) <= s.plan.if_bandwidth_hz / 2 + tol) return true;
        for (const Response& r : all)
            if (f >= r.rf_low_hz - tol && f <= r.rf_high_hz + tol) return true;
        return false;
    };
    std::optional<SweepUnlisted> open;
    for (const ToneMeasurement& p : out.points) {
        const bool bad = !p.lower_bound && std::isfinite(p.rejection_db) && p.rejection_db < lim.spur_rejection_db &&
                         !explained(p.rf_hz);
        if (bad) {
            if (!open) open = SweepUnlisted{p.rf_hz, p.rf_hz, p.rf_hz, p.rejection_db, lim.spur_rejection_db};
            open->rf_high_hz = p.rf_hz;
            if (p.rejection_db < open->rejection_db) {
                open->rejection_db = p.rejection_db;
                open->rf_hz = p.rf_hz;
            }
        } else if (open) {
            out.unlisted.push_back(*open);
            open.reset();
        }
    }
    if (open) out.unlisted.push_back(*open);

    out.tiles = e.tiles_made();
    out.runs = e.runs();
    out.samples = e.samples();
    return out;
}

}  // namespace hb
