#include "dsp/mixer_emulator.hpp"

#include <algorithm>
#include <cmath>

#include "dsp/errors.hpp"
#include "dsp/filter_fir.hpp"
#include "dsp/filter_kernels.hpp"
#include "dsp/simd.hpp"
#include "dsp/units.hpp"
#include "dsp/vector_math.hpp"

namespace hb {
namespace {

constexpr std::size_t kChunk = 2048;                 // samples per re-seed of the NCO lanes; L1-sized scratch
constexpr std::size_t kLanes = 32;                   // time lanes: two independent phasor chains of 16 floats (AVX-512)
constexpr std::uint64_t kNoiseSeedTag = 0x6e6f6973;  // "nois"
constexpr std::uint64_t kPhaseSeedTag = 0x6c6f706e;  // "lopn"
// Output filters (see the header). Transition widths are fractions of the input rate; every stop-band is 100 dB.
//   interpolation ×2:  pass ±0.45, stop beyond ±0.55 (its images)
//   window (at 2×):    −6 dB at the window edges ±0.5, transition 0.1: exact within ±0.45 of the rate
//   positive (at 1×):  −6 dB at 0 Hz (and at the wrap point), transition 0.04: exact from 0.02 of the rate up
constexpr double kEdgeTransition = 0.1;
constexpr double kZeroTransition = 0.04;
constexpr double kFilterAttenDb = 100.0;

struct Line {
    ZoneEnvelope env = ZoneEnvelope::constant;
    bool conj = false;
    int pn = 0;            // LO phase-noise multiplier
    double freq_hz = 0.0;  // absolute output frequency
    std::complex<double> coeff;
    double delta = 0.0;  // cycles per sample
    double phase = 0.0;  // cycles, [0, 1), at the start of the next chunk
    // Seed offsets of the lanes, e^{j2πΔ·τ}: τ = lane at the input rate; at the doubled rate the chunk is stored as
    // its even-time samples then its odd-time samples (the layout of the ×2 interpolator and the ÷2 window
    // filter), so stream 0 has τ = 2·lane and stream 1 τ = 2·lane + 1. Seeds are independent multiplies.
    double lane_re[2][kLanes] = {}, lane_im[2][kLanes] = {};
    float step_re = 1.0f, step_im = 0.0f;  // e^{j2πΔ·os·kLanes}
    bool straddles = false;
};

// acc += env·p over n samples (a multiple of kLanes); p starts at the seeds and turns by `step` per kLanes.
// Lanes over time: each of the kLanes phasors serves every kLanes-th sample, so the recurrence vectorises.
template <bool Conj>
void acc_complex(const float* __restrict er, const float* __restrict ei, float* __restrict ar, float* __restrict ai,
                 const float* seed_re, const float* seed_im, float sr, float si, std::size_t n) {
    alignas(64) float pr[kLanes], pi[kLanes];
    for (std::size_t l = 0; l < kLanes; ++l) {
        pr[l] = seed_re[l];
        pi[l] = seed_im[l];
    }
    for (std::size_t b = 0; b < n; b += kLanes) {
        for (std::size_t l = 0; l < kLanes; ++l) {
            const float xr = er[b + l];
            const float xi = Conj ? -ei[b + l] : ei[b + l];
            ar[b + l] += xr * pr[l] - xi * pi[l];
            ai[b + l] += xr * pi[l] + xi * pr[l];
            const float t = pr[l] * sr - pi[l] * si;
            pi[l] = pr[l] * si + pi[l] * sr;
            pr[l] = t;
        }
    }
}

void acc_real(const float* __restrict e, float* __restrict ar, float* __restrict ai, const float* seed_re,
              const float* seed_im, float sr, float si, std::size_t n) {
    alignas(64) float pr[kLanes], pi[kLanes];
    for (std::size_t l = 0; l < kLanes; ++l) {
        pr[l] = seed_re[l];
        pi[l] = seed_im[l];
    }
    for (std::size_t b = 0; b < n; b += kLanes) {
        for (std::size_t l = 0; l < kLanes; ++l) {
            const float x = e[b + l];
            ar[b + l] += x * pr[l];
            ai[b + l] += x * pi[l];
            const float t = pr[l] * sr - pi[l] * si;
            pi[l] = pr[l] * si + pi[l] * sr;
            pr[l] = t;
        }
    }
}

void acc_const(float* __restrict ar, float* __restrict ai, const float* seed_re, const float* seed_im, float sr,
               float si, std::size_t n) {
    alignas(64) float pr[kLanes], pi[kLanes];
    for (std::size_t l = 0; l < kLanes; ++l) {
        pr[l] = seed_re[l];
        pi[l] = seed_im[l];
    }
    for (std::size_t b = 0; b < n; b += kLanes) {
        for (std::size_t l = 0; l < kLanes; ++l) {
            ar[b + l] += pr[l];
            ai[b + l] += pi[l];
            const float t = pr[l] * sr - pi[l] * si;
            pi[l] = pr[l] * si + pi[l] * sr;
            pr[l] = t;
        }
    }
}

// A half-band low-pass of the doubled rate: cutoff (−6 dB) at a quarter of its rate, transition `tw` (fraction of
// its rate), Kaiser window for kFilterAttenDb, checked like design_fir_lowpass (measured stop-band). The length is
// 4k + 3: the centre is the only nonzero tap at an even offset from the centre (windowed sinc of cutoff 1/4: the
// sinc's zeros), and the end taps are not zero. Those zeros are set exactly, so one polyphase branch is one tap.
std::vector<double> halfband_lowpass(double tw) {
    const double beta = kaiser_beta(kFilterAttenDb);
    int n = kaiser_length(kFilterAttenDb, tw);
    n += (3 - n % 4 + 4) % 4;  // up to 4k + 3
    for (;; n += 4) {
        std::vector<double> h = kaiser_lowpass(n, 0.25, beta);
        const int c = (n - 1) / 2;
        for (int i = 0; i < n; ++i)
            if (i != c && (i - c) % 2 == 0) h[static_cast<std::size_t>(i)] = 0.0;
        if (-fir_peak_db(h, 0.25 + tw / 2, 0.5) >= kFilterAttenDb - 1e-9) return h;
    }
}

// out[t] += k·(re[t] + j·im[t]), t < cnt.
void add_planar(cf32* out, const float* re, const float* im, std::size_t cnt, float k) {
    constexpr std::size_t V = static_cast<std::size_t>(simd::kWidth);
    float* o = reinterpret_cast<float*>(out);
    const simd::vf kv = simd::splat(k);
    std::size_t t = 0;
    for (; t + V <= cnt; t += V) simd::add_interleaved(o + 2 * t, kv * simd::load(re + t), kv * simd::load(im + t));
    for (; t < cnt; ++t) {
        o[2 * t] += k * re[t];
        o[2 * t + 1] += k * im[t];
    }
}

int envelope_order(ZoneEnvelope e, bool cubic) {
    switch (e) {
        case ZoneEnvelope::zone0:
        case ZoneEnvelope::zone2:
            return 2;
        case ZoneEnvelope::zone1:
            return cubic ? 3 : 1;
        case ZoneEnvelope::zone3:
            return 3;
        default:
            return 0;
    }
}

}  // namespace

struct MixerEmulator::Impl {
    bool bypass = false;
    double out_center = 0.0;
    double fs = 0.0;
    std::uint64_t seed = 1;
    // Synthesis runs at os·fs: 2 when some kept term's band reaches beyond the window (its content there must be
    // filtered away, not wrapped round), else 1.
    int os = 1;
    std::vector<Line> lines;  // sorted by |pn|, then pn
    std::vector<ZoneTerm> terms;
    Interp2Kernel interp;     // os = 2: the ×2 interpolator (half-band: one phase is a copy)
    Decim2Kernel window_fir;  // os = 2: keeps the window, decimates by 2 (half-band)
    bool analytic = false;    // a real IF window that holds 0 Hz: keep the positive frequencies
    ShiftedFirKernel positive;
    double delay = 0.0;                    // output samples the filters delay the terms by
    std::complex<double> dc{0.0, 0.0};     // DC at 0 Hz: added after the filters, as a tone at −centre
    double dc_step = 0.0, dc_phase = 0.0;  // cycles per output sample, and the phase (cycles) of the next sample
    double exact_low = 0.0, exact_high = 0.0;
    float c3 = 0.0f;  // E1 = x·(1 + c3·|x|²), c3 = 3·a3/4
    bool need_e0 = false, need_e1 = false, e1_cubic = false, need_e2 = false, need_e3 = false;
    bool pn_on = false;
    PhaseNoiseSource pn;
    GaussRng rng;
    float noise_sigma = 0.0f;  // per component

    // Scratch (structure of arrays): os·kChunk at the synthesis rate, kChunk for the noise. At os = 2 a chunk of
    // cnt input samples is stored as os streams of nh = cnt rounded up to the lanes: even-time, then odd-time.
    const float* e1re = nullptr;  // this chunk's E1: the input itself, or e1r/e1i with the cubic term
    const float* e1im = nullptr;
    std::vector<float> xr, xi, e0, e1r, e1i, e2r, e2i, e3r, e3i, ar, ai, tr, ti, phi, phi_t, br, bi, cr, ci, nr, ni;

    void run_chunk(const std::complex<float>* in, std::complex<float>* out, std::size_t cnt);
    // Accumulates every line into (ar, ai): os streams of nh samples each, m samples of the synthesis rate in all;
    // phase noise applied per group.
    void accumulate(std::size_t m, std::size_t nh);
};

MixerEmulator::MixerEmulator() = default;
MixerEmulator::~MixerEmulator() = default;
MixerEmulator::MixerEmulator(MixerEmulator&&) noexcept = default;
MixerEmulator& MixerEmulator::operator=(MixerEmulator&&) noexcept = default;

MixerEmulator MixerEmulator::make(const MixerParams& params, const EmulatorConfig& cfg) {
    if (!std::isfinite(cfg.sample_rate_hz) || !(cfg.sample_rate_hz > 0))
        throw InputError("mixer emulator: sample rate " + format_number(cfg.sample_rate_hz) +
                         " Hz, expected a positive number");
    if (!std::isfinite(cfg.rf_center_hz) || !std::isfinite(cfg.output_center_hz))
        throw InputError("mixer emulator: RF centre " + format_number(cfg.rf_center_hz) + " Hz / output centre " +
                         format_number(cfg.output_center_hz) + " Hz, expected finite frequencies");
    if (!std::isfinite(cfg.rf_occupied_hz) || cfg.rf_occupied_hz < 0)
        throw InputError("mixer emulator: occupied bandwidth " + format_number(cfg.rf_occupied_hz) +
                         " Hz, expected 0 or more");

    MixerEmulator em;
    em.impl_ = std::make_unique<Impl>();
    Impl& s = *em.impl_;
    s.fs = cfg.sample_rate_hz;
    s.seed = cfg.seed;
    if (params.model == MixerModel::bypass) {
        s.bypass = true;
        s.out_center = cfg.rf_center_hz;
        return em;
    }
    s.out_center = cfg.output_center_hz;

    const MixerCoeffs c = mixer_coeffs(params);
    const bool cubic = c.a3 != 0.0;
    const double fs = cfg.sample_rate_hz, fc = cfg.rf_center_hz, flo = params.lo_hz, wc = cfg.output_center_hz;
    const double half = fs / 2.0;
    const double kappa[4] = {c.a2 / 2.0, 0.5, c.a2 / 4.0, c.a3 / 8.0};  // U_q = kappa_q · E_q
    const ZoneEnvelope zone[4] = {ZoneEnvelope::zone0, ZoneEnvelope::zone1, ZoneEnvelope::zone2, ZoneEnvelope::zone3};

    // Which terms are kept. A term of envelope order p at d = f − centre spans d ± h, h = p·B/2 with B the occupied
    // RF width (the whole window when unknown). At the doubled rate its content is exact where |d ± h| < 1.5·fs
    // (beyond, it would alias back into the window), so a term is kept when its band reaches the window and does
    // not reach that far. An x³ envelope wider than the doubled rate (3·B > 2·fs) aliases in itself: those terms
    // are kept by their centre.
    const double occupied = cfg.rf_occupied_hz > 0 ? std::min(cfg.rf_occupied_hz, fs) : fs;
    auto add = [&](ZoneEnvelope env, bool conj, double f, std::complex<double> coeff, int pn) {
        if (std::abs(coeff) == 0.0) return;
        if (env == ZoneEnvelope::zone0 || env == ZoneEnvelope::constant) conj = false;  // real envelopes
        const double d = f - wc;
        const int order = envelope_order(env, cubic);
        const double h = order * occupied / 2.0;
        const bool centre_in = d >= -half && d < half;
        const bool aliased = 2.0 * h > 2.0 * fs;
        const bool keep = aliased ? centre_in : (std::abs(d) - h < half && std::abs(d) + h < 3.0 * half);
        if (!keep) return;
        for (Line& l : s.lines)
            if (l.env == env && l.conj == conj && l.pn == pn && l.freq_hz == f) {
                l.coeff += coeff;
                return;
            }
        Line l;
        l.env = env;
        l.conj = conj;
        l.pn = pn;
        l.freq_hz = f;
        l.coeff = coeff;
        l.delta = d;  // Hz for now; cycles per sample once the synthesis rate is known
        l.straddles = std::abs(d) + h > half * (1.0 + 1e-12);
        s.lines.push_back(l);
    };

    // Real models: both members of every conjugate pair, since a term whose band straddles 0 Hz has content on both
    // sides (the image of an LO inside the RF window lands across 0 Hz from the wanted); the positive-frequency
    // filter keeps the analytic half where the window holds 0 Hz. Quadrature: the complex IF μ·v + ν·v*.
    const int k = c.harmonics;
    for (int q = -kMixerMaxRfOrder; q <= kMixerMaxRfOrder; ++q) {
        const int aq = q < 0 ? -q : q;
        for (int m = -k; m <= k; ++m) {
            const std::complex<double> z = c.lo_at(m) * kappa[aq];
            const double f = q * fc + m * flo;
            if (!c.complex_if) {
                add(zone[aq], q < 0, f, z, m);
            } else {
                add(zone[aq], q < 0, f, c.mu * z, m);
                add(zone[aq], !(q < 0), -f, c.nu * std::conj(z), -m);  // ν·z*: conjugate envelope, mirrored
            }
        }
    }
    for (int m = c.complex_if ? -k : 1; m <= k; ++m)
        if (m != 0) add(ZoneEnvelope::constant, false, m * flo, c.leak_at(m), m);
    std::erase_if(s.lines, [](const Line& l) { return std::abs(l.coeff) == 0.0; });

    s.os = std::any_of(s.lines.begin(), s.lines.end(), [](const Line& l) { return l.straddles; }) ? 2 : 1;
    const double rate = s.os * fs;
    s.exact_low = wc - half;
    s.exact_high = wc + half;
    if (s.os == 2) {
        // ×2 interpolator (real taps, split into its two phases) and the window filter (−6 dB on the window edges).
        // Both are half-band filters (pass-band and stop-band symmetric about a quarter of the doubled rate).
        const std::vector<double> ip = halfband_lowpass(0.05);
        std::vector<double> h2(ip.size());
        for (std::size_t i = 0; i < h2.size(); ++i) h2[i] = 2.0 * ip[i];
        s.interp.init(h2, kChunk);
        const double t = kEdgeTransition / 4.0;  // at the doubled rate
        const std::vector<double> wf = halfband_lowpass(2.0 * t);
        s.window_fir.init(wf, kChunk);
        // Delay in output samples: the interpolator's (L−1)/2 at 2× (its even phase leads by one input sample
        // per two taps) plus the window filter's.
        s.delay = (static_cast<double>(ip.size() - 1) / 2.0 + static_cast<double>(wf.size() - 1) / 2.0) / 2.0;
        s.exact_low = wc - half * (1.0 - kEdgeTransition);
        s.exact_high = wc + half * (1.0 - kEdgeTransition);
    }
    const double neg_width = half - wc, pos_width = half + wc;  // the window's parts below and above 0 Hz
    s.analytic = !c.complex_if && neg_width > kZeroTransition * fs && pos_width > kZeroTransition * fs;
    if (s.analytic) {
        // Low-pass prototype with its −6 dB edges on 0 Hz and on the window's wrap point, moved to the middle of the
        // positive part.
        const double cut = pos_width / (2.0 * fs), dt = kZeroTransition / 2.0;
        const FirLowpass lp = design_fir_lowpass(FirDesignMethod::kaiser, cut - dt, cut + dt, kFilterAttenDb, 0.1,
                                                 "mixer emulator: positive-frequency filter");
        const double shift = (half - wc) / 2.0 / fs;  // cycles per sample: the middle of the positive part
        // Taps lp[i]·e^{j2π·shift·(i − mid)}, run as mix down, real low-pass, mix up (ShiftedFirKernel).
        const double mid = static_cast<double>(lp.taps.size() - 1) / 2.0;
        s.positive.init(lp.taps, shift, mid, kChunk);
        s.delay += mid;
        s.exact_low = std::max(s.exact_low, dt * fs);
        s.exact_high = std::min(s.exact_high, wc + half - dt * fs);
    }
    // DC bypasses the filters (it sits on the positive filter's edge): a tone at −centre, delayed to match.
    s.dc = c.dc;
    s.dc_step = -wc / fs;

    // NCO steps at the synthesis rate; order by phase-noise multiplier.
    for (Line& l : s.lines) {
        l.delta /= rate;
        for (int stream = 0; stream < s.os; ++stream)
            for (std::size_t lane = 0; lane < kLanes; ++lane) {
                const double tau = static_cast<double>(s.os * lane + static_cast<std::size_t>(stream));
                const double a = kTwoPi * std::fmod(l.delta * tau, 1.0);
                l.lane_re[stream][lane] = std::cos(a);
                l.lane_im[stream][lane] = std::sin(a);
            }
        const std::complex<double> st =
            std::polar(1.0, kTwoPi * std::fmod(l.delta * static_cast<double>(s.os * kLanes), 1.0));
        l.step_re = static_cast<float>(st.real());
        l.step_im = static_cast<float>(st.imag());
    }
    std::stable_sort(s.lines.begin(), s.lines.end(), [](const Line& a, const Line& b) {
        return std::abs(a.pn) != std::abs(b.pn) ? std::abs(a.pn) < std::abs(b.pn) : a.pn < b.pn;
    });
    for (const Line& l : s.lines) {
        s.terms.push_back({l.env, l.conj, l.pn, l.freq_hz, l.coeff, l.straddles});
        s.need_e0 |= l.env == ZoneEnvelope::zone0;
        s.need_e1 |= l.env == ZoneEnvelope::zone1;
        s.need_e2 |= l.env == ZoneEnvelope::zone2;
        s.need_e3 |= l.env == ZoneEnvelope::zone3;
    }
    s.e1_cubic = s.need_e1 && cubic;
    s.need_e0 |= s.e1_cubic;
    s.c3 = static_cast<float>(3.0 * c.a3 / 4.0);

    s.pn = PhaseNoiseSource::make(params.phase_noise, rate, derive_seed(cfg.seed, kPhaseSeedTag));
    s.pn_on = s.pn.enabled();
    if (std::isfinite(c.noise_out_dbfs_per_hz))
        s.noise_sigma = static_cast<float>(std::sqrt(power_from_db(c.noise_out_dbfs_per_hz) * fs / 2.0));

    const std::size_t big = static_cast<std::size_t>(s.os) * kChunk;  // kChunk is a multiple of kLanes
    for (auto* v : {&s.xr, &s.xi, &s.e0, &s.e1r, &s.e1i, &s.e2r, &s.e2i, &s.e3r, &s.e3i, &s.ar, &s.ai, &s.tr, &s.ti,
                    &s.phi, &s.br, &s.bi, &s.cr, &s.ci})
        v->assign(big, 0.0f);
    if (s.pn_on && s.os == 2) s.phi_t.assign(big, 0.0f);
    s.nr.assign(kChunk, 0.0f);
    s.ni.assign(kChunk, 0.0f);
    em.reset();
    return em;
}

void MixerEmulator::reset() {
    if (!impl_ || impl_->bypass) return;
    Impl& s = *impl_;
    for (Line& l : s.lines) l.phase = 0.0;
    s.interp.reset();
    s.window_fir.reset();
    s.positive.reset();
    // The terms leave the filters `delay` samples late: DC starts as if it had been delayed the same.
    s.dc_phase = -s.dc_step * s.delay;
    s.dc_phase -= std::floor(s.dc_phase);
    s.pn.reset();
    s.rng = GaussRng::make(derive_seed(s.seed, kNoiseSeedTag));
}

double MixerEmulator::output_center_hz() const {
    return impl_ ? impl_->out_center : 0.0;
}
bool MixerEmulator::bypass() const {
    return impl_ && impl_->bypass;
}
bool MixerEmulator::analytic_filter() const {
    return impl_ && impl_->analytic;
}
int MixerEmulator::oversampling() const {
    return impl_ ? impl_->os : 1;
}
double MixerEmulator::delay_samples() const {
    return impl_ ? impl_->delay : 0.0;
}
double MixerEmulator::exact_low_hz() const {
    return impl_ ? impl_->exact_low : 0.0;
}
double MixerEmulator::exact_high_hz() const {
    return impl_ ? impl_->exact_high : 0.0;
}
std::span<const ZoneTerm> MixerEmulator::terms() const {
    return impl_ ? std::span<const ZoneTerm>(impl_->terms) : std::span<const ZoneTerm>();
}

void MixerEmulator::process(std::span<const std::complex<float>> in, std::span<std::complex<float>> out) {
    if (in.size() != out.size())
        throw InputError("mixer emulator: input block of " + std::to_string(in.size()) + " samples but output of " +
                         std::to_string(out.size()));
    if (!impl_) throw InputError("mixer emulator: used before make()");
    if (impl_->bypass) {
        if (in.data() != out.data()) std::copy(in.begin(), in.end(), out.begin());
        return;
    }
    for (std::size_t pos = 0; pos < in.size(); pos += kChunk) {
        const std::size_t cnt = std::min(kChunk, in.size() - pos);
        impl_->run_chunk(in.data() + pos, out.data() + pos, cnt);
    }
}

void MixerEmulator::Impl::run_chunk(const std::complex<float>* in, std::complex<float>* out, std::size_t cnt) {
    const std::size_t m = static_cast<std::size_t>(os) * cnt;     // samples at the synthesis rate
    const std::size_t nh = (cnt + kLanes - 1) / kLanes * kLanes;  // each stream runs on whole lane groups
    const std::size_t n = static_cast<std::size_t>(os) * nh;      // elements of the chunk's buffers
    float* __restrict pxr = xr.data();
    float* __restrict pxi = xi.data();
    if (os == 2) {
        interp.process(in, cnt, pxr, pxi, pxr + nh, pxi + nh);
        std::fill(pxr + cnt, pxr + nh, 0.0f);
        std::fill(pxi + cnt, pxi + nh, 0.0f);
        std::fill(pxr + nh + cnt, pxr + n, 0.0f);
        std::fill(pxi + nh + cnt, pxi + n, 0.0f);
    } else {
        deinterleave(in, cnt, pxr, pxi);
        std::fill(pxr + cnt, pxr + n, 0.0f);
        std::fill(pxi + cnt, pxi + n, 0.0f);
    }

    // RF zone envelopes (constants are in the line coefficients): E0 = |x|², E1 = x·(1 + c3|x|²), E2 = x², E3 = x³.
    // n is a whole number of lane groups, so these loops run on whole vectors.
    using simd::vf;
    constexpr std::size_t V = static_cast<std::size_t>(simd::kWidth);
    e1re = pxr;
    e1im = pxi;
    const vf k3 = simd::splat(c3), two = simd::splat(2.0f), one = simd::splat(1.0f);
    for (std::size_t i = 0; i < n; i += V) {
        const vf a = simd::load(pxr + i), b = simd::load(pxi + i);
        const vf p0 = a * a + b * b;
        if (need_e0) simd::store(e0.data() + i, p0);
        if (e1_cubic) {
            const vf k = one + k3 * p0;
            simd::store(e1r.data() + i, a * k);
            simd::store(e1i.data() + i, b * k);
        }
        if (need_e2 || need_e3) {
            const vf qr = a * a - b * b, qi = two * a * b;
            simd::store(e2r.data() + i, qr);
            simd::store(e2i.data() + i, qi);
            if (need_e3) {
                simd::store(e3r.data() + i, qr * a - qi * b);
                simd::store(e3i.data() + i, qr * b + qi * a);
            }
        }
    }
    if (e1_cubic) {
        e1re = e1r.data();
        e1im = e1i.data();
    }

    if (pn_on) {
        if (os == 2) {
            // Time order from the source, stored as the even-time then the odd-time stream.
            pn.generate(phi_t.data(), m);
            std::fill(phi.begin(), phi.begin() + static_cast<std::ptrdiff_t>(n), 0.0f);
            for (std::size_t i = 0; i < cnt; ++i) {
                phi[i] = phi_t[2 * i];
                phi[nh + i] = phi_t[2 * i + 1];
            }
        } else {
            pn.generate(phi.data(), m);
            std::fill(phi.begin() + static_cast<std::ptrdiff_t>(m), phi.begin() + static_cast<std::ptrdiff_t>(n), 0.0f);
        }
        const float* __restrict ph = phi.data();
        float* __restrict pbr = br.data();
        float* __restrict pbi = bi.data();
        for (std::size_t b = 0; b < n; b += kLanes)
            for (std::size_t i = b; i < b + kLanes; ++i)
                vmath::sincos_turns(ph[i] * 0.159154943091895336f, pbi[i], pbr[i]);
    }
    accumulate(m, nh);

    if (os == 2)
        window_fir.process(ar.data(), ai.data(), ar.data() + nh, ai.data() + nh, cnt, out);
    else
        interleave(ar.data(), ai.data(), cnt, out);
    if (analytic) positive.process(out, cnt, out);
    if (dc != std::complex<double>{}) {
        // A tone at −centre from a double-precision phase, re-seeded per chunk, in time lanes like the terms.
        alignas(64) float sr[kLanes], si[kLanes];
        for (std::size_t lane = 0; lane < kLanes; ++lane) {
            const std::complex<double> v =
                dc * std::polar(1.0, kTwoPi * std::fmod(dc_phase + dc_step * static_cast<double>(lane), 1.0));
            sr[lane] = static_cast<float>(v.real());
            si[lane] = static_cast<float>(v.imag());
        }
        const std::complex<double> st = std::polar(1.0, kTwoPi * std::fmod(dc_step * double(kLanes), 1.0));
        std::fill(tr.begin(), tr.begin() + static_cast<std::ptrdiff_t>(nh), 0.0f);
        std::fill(ti.begin(), ti.begin() + static_cast<std::ptrdiff_t>(nh), 0.0f);
        acc_const(tr.data(), ti.data(), sr, si, static_cast<float>(st.real()), static_cast<float>(st.imag()), nh);
        add_planar(out, tr.data(), ti.data(), cnt, 1.0f);
        dc_phase += dc_step * static_cast<double>(cnt);
        dc_phase -= std::floor(dc_phase);
    }
    if (noise_sigma > 0.0f) {
        rng.fill_pairs(nr.data(), ni.data(), cnt);
        add_planar(out, nr.data(), ni.data(), cnt, noise_sigma);
    }
}

void MixerEmulator::Impl::accumulate(std::size_t cnt, std::size_t nh) {
    const std::size_t n = static_cast<std::size_t>(os) * nh;
    const std::size_t begin = 0, end_all = lines.size();
    float* dst0_r = ar.data();
    float* dst0_i = ai.data();
    std::fill(dst0_r, dst0_r + n, 0.0f);
    std::fill(dst0_i, dst0_i + n, 0.0f);

    // Phase noise: base phasor e^{jφ}; the running power e^{j|k|φ} grows with the groups' |k|.
    int cur_k = 0;
    if (pn_on) {
        std::fill(cr.begin(), cr.begin() + static_cast<std::ptrdiff_t>(n), 1.0f);
        std::fill(ci.begin(), ci.begin() + static_cast<std::ptrdiff_t>(n), 0.0f);
    }

    alignas(64) float seed_re[kLanes], seed_im[kLanes];
    std::size_t i = begin;
    while (i < end_all) {
        const int pnk = lines[i].pn;
        const bool rotate = pn_on && pnk != 0;
        float* dst_r = rotate ? tr.data() : dst0_r;
        float* dst_i = rotate ? ti.data() : dst0_i;
        if (rotate) {
            std::fill(tr.begin(), tr.begin() + static_cast<std::ptrdiff_t>(n), 0.0f);
            std::fill(ti.begin(), ti.begin() + static_cast<std::ptrdiff_t>(n), 0.0f);
        }
        // Lines are sorted by |pn|: the pn = 0 group comes first; without phase noise everything is one group.
        std::size_t end = i;
        if (!pn_on)
            end = end_all;
        else
            while (end < end_all && lines[end].pn == pnk) ++end;
        for (std::size_t j = i; j < end; ++j) {
            Line& l = lines[j];
            // Lane seeds coeff·e^{j2π(phase + Δ·τ)} in double (multiplied out by hand: std::complex
            // multiplication goes through the NaN-safe library call), per stream.
            const double c0 = std::cos(kTwoPi * l.phase), s0 = std::sin(kTwoPi * l.phase);
            const double ar0 = l.coeff.real() * c0 - l.coeff.imag() * s0;
            const double ai0 = l.coeff.real() * s0 + l.coeff.imag() * c0;
            for (int stream = 0; stream < os; ++stream) {
                for (std::size_t lane = 0; lane < kLanes; ++lane) {
                    seed_re[lane] = static_cast<float>(ar0 * l.lane_re[stream][lane] - ai0 * l.lane_im[stream][lane]);
                    seed_im[lane] = static_cast<float>(ar0 * l.lane_im[stream][lane] + ai0 * l.lane_re[stream][lane]);
                }
                const std::size_t o = static_cast<std::size_t>(stream) * nh;
                float* d_r = dst_r + o;
                float* d_i = dst_i + o;
                const float* er = nullptr;  // the complex envelope of zones 1..3
                const float* ei = nullptr;
                switch (l.env) {
                    case ZoneEnvelope::zone0:
                        acc_real(e0.data() + o, d_r, d_i, seed_re, seed_im, l.step_re, l.step_im, nh);
                        break;
                    case ZoneEnvelope::constant:
                        acc_const(d_r, d_i, seed_re, seed_im, l.step_re, l.step_im, nh);
                        break;
                    case ZoneEnvelope::zone1:
                        er = e1re + o, ei = e1im + o;
                        break;
                    case ZoneEnvelope::zone2:
                        er = e2r.data() + o, ei = e2i.data() + o;
                        break;
                    case ZoneEnvelope::zone3:
                        er = e3r.data() + o, ei = e3i.data() + o;
                        break;
                }
                if (er && l.conj)
                    acc_complex<true>(er, ei, d_r, d_i, seed_re, seed_im, l.step_re, l.step_im, nh);
                else if (er)
                    acc_complex<false>(er, ei, d_r, d_i, seed_re, seed_im, l.step_re, l.step_im, nh);
            }
            // Exact phase for the next chunk, from the double accumulator.
            l.phase += l.delta * static_cast<double>(cnt);
            l.phase -= std::floor(l.phase);
        }
        if (rotate) {
            const int ak = pnk < 0 ? -pnk : pnk;
            // n is whole lane groups: the inner loops have a fixed count and vectorise.
            for (; cur_k < ak; ++cur_k)
                for (std::size_t b = 0; b < n; b += kLanes)
                    for (std::size_t t = b; t < b + kLanes; ++t) {
                        const float r = cr[t] * br[t] - ci[t] * bi[t];
                        ci[t] = cr[t] * bi[t] + ci[t] * br[t];
                        cr[t] = r;
                    }
            const float sgn = pnk < 0 ? -1.0f : 1.0f;
            for (std::size_t b = 0; b < n; b += kLanes)
                for (std::size_t t = b; t < b + kLanes; ++t) {
                    const float pr = cr[t], pi = sgn * ci[t];
                    dst0_r[t] += tr[t] * pr - ti[t] * pi;
                    dst0_i[t] += tr[t] * pi + ti[t] * pr;
                }
        }
        i = end;
    }
}

}  // namespace hb
