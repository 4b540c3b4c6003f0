#include "dsp/synth.hpp"

#include "dsp/fft.hpp"
#include "dsp/names.hpp"

#include <fftw3.h>

#include <algorithm>
#include <array>
#include <cmath>
#include <cstring>
#include <mutex>
#include <utility>

#include "dsp/errors.hpp"
#include "dsp/fast_math.hpp"
#include "dsp/units.hpp"

namespace hb {
namespace {

namespace fm = fastmath;

// ---- names --------------------------------------------------------------------------------------------

constexpr NameTable<SignalType, 6> kSignalTypes{{{SignalType::cw, "cw"},
                                                 {SignalType::two_tone, "two-tone"},
                                                 {SignalType::am, "am"},
                                                 {SignalType::fm, "fm"},
                                                 {SignalType::stations, "stations"},
                                                 {SignalType::noise, "noise"}}};
constexpr NameTable<ModSource, 2> kModSources{{{ModSource::tone, "tone"}, {ModSource::noise, "noise"}}};
constexpr NameTable<ModKind, 2> kModKinds{{{ModKind::am, "am"}, {ModKind::fm, "fm"}}};

constexpr double kMinLevelDbm = -250.0, kMaxLevelDbm = 100.0;
constexpr int kMaxStations = 100000;

void check_modulation(Checker& c, const std::string& at, ModKind kind, ModSource src, const SignalSpec& s) {
    if (kind == ModKind::am) c.range(at + ".depth", s.depth, 0.0, 1.0, "");
    if (kind == ModKind::fm) c.range(at + ".deviation_hz", s.deviation_hz, 0.0, kMaxFrequencyHz, "Hz");
    if (src == ModSource::tone) c.positive(at + ".tone_hz", s.tone_hz, kMaxFrequencyHz, "Hz");
    if (src == ModSource::noise)
        c.positive(at + ".modulation_bandwidth_hz", s.modulation_bandwidth_hz, kMaxFrequencyHz, "Hz");
}

// ---- helpers ------------------------------------------------------------------------------------------

// A named random stream: every random process of the world gets its own key from the seed.
std::uint64_t stream_key(std::uint64_t seed, std::uint64_t tag) { return fm::mix64(seed ^ fm::mix64(tag + 1)); }
std::uint64_t signal_tag(std::size_t signal_index, std::uint64_t sub) { return 1000 + signal_index * 64 + sub; }
constexpr std::uint64_t kTagFloor = 1, kTagBandNoise = 2;

// Phase as a 64-bit fraction of a turn: exact wrap-around, no drift, resolution 2^-64 cycle.
using Phase = std::uint64_t;
Phase phase_increment(double cycles_per_sample) {
    const double c = cycles_per_sample - std::nearbyint(cycles_per_sample);  // [-0.5, 0.5]
    return static_cast<Phase>(std::llround(c * 0x1p63)) << 1;
}
double phase_radians(Phase p) { return static_cast<double>(static_cast<std::int64_t>(p)) * 0x1p-64 * kTwoPi; }

double amplitude_of(double dbfs) { return amplitude_from_db(dbfs); }

constexpr std::size_t kLanes = 128;  // samples per row of the phasor kernel (a loop the compiler vectorises)
static_assert(kSynthBlock % kLanes == 0);

// A complex exponential amplitude * exp(j(phase0 + inc*n)), evaluated in rows of kLanes samples: the row start
// comes from a double-precision recurrence re-seeded from the exact integer phase every block, the lanes from
// a float table. No error accumulates in float (a float recurrence drifts, see platform notes).
struct Phasor {
    Phase phase0 = 0;
    Phase inc = 0;
    double row_re = 1.0, row_im = 0.0;  // exp(j * inc * kLanes)
    std::array<float, kLanes> lane_re{}, lane_im{};

    Phasor() = default;
    Phasor(Phase p0, Phase increment, double amplitude) : phase0(p0), inc(increment) {
        for (std::size_t k = 0; k < kLanes; ++k) {
            const double a = phase_radians(static_cast<Phase>(inc * k));
            lane_re[k] = static_cast<float>(amplitude * std::cos(a));
            lane_im[k] = static_cast<float>(amplitude * std::sin(a));
        }
        const double r = phase_radians(static_cast<Phase>(inc * kLanes));
        row_re = std::cos(r);
        row_im = std::sin(r);
    }

    // re/im (+)= the phasor for samples n0 .. n0 + kSynthBlock - 1.
    template <bool Accumulate>
    void run(std::uint64_t n0, float* __restrict re, float* __restrict im) const {
        const double a = phase_radians(static_cast<Phase>(phase0 + inc * n0));
        double br = std::cos(a), bi = std::sin(a);
        for (std::size_t r = 0; r < kSynthBlock; r += kLanes) {
            const float fr = static_cast<float>(br), fi = static_cast<float>(bi);
            for (std::size_t k = 0; k < kLanes; ++k) {
                const float vr = fr * lane_re[k] - fi * lane_im[k];
                const float vi = fr * lane_im[k] + fi * lane_re[k];
                if constexpr (Accumulate) {
                    re[r + k] += vr;
                    im[r + k] += vi;
                } else {
                    re[r + k] = vr;
                    im[r + k] = vi;
                }
            }
            const double nr = br * row_re - bi * row_im;
            bi = br * row_im + bi * row_re;
            br = nr;
        }
    }
};

// Unit-variance noise low-passed by a first-order section, computed at a reduced rate ("knots", every
// `decim` samples) and interpolated linearly: the modulating signal of noise-modulated carriers.
struct ModNoise {
    std::uint64_t key = 0;
    std::uint64_t decim = 1;
    float a = 0.0f, b = 1.0f;           // y_j = a y_{j-1} + b g_j, b = sqrt(1 - a^2) keeps unit variance
    std::vector<float> knots;           // knots[j - base]
    std::uint64_t base = 0;
    std::uint64_t have = 0;             // knots[0 .. have) valid

    ModNoise() = default;
    ModNoise(std::uint64_t k, double bandwidth_hz, double fs) : key(k) {
        decim = std::max<std::uint64_t>(1, static_cast<std::uint64_t>(fs / (16.0 * bandwidth_hz)));
        const double knot_rate = fs / static_cast<double>(decim);
        a = static_cast<float>(std::exp(-kTwoPi * bandwidth_hz / knot_rate));
        b = std::sqrt(1.0f - a * a);
        knots.assign(kSynthBlock / decim + 3, 0.0f);
    }

    float gauss(std::uint64_t j) const {
        const std::uint64_t w = fm::random_word(key, j);
        float c, s;
        fm::cos_sin_cycles(fm::uniform_low24(w), c, s);
        return std::sqrt(-2.0f * fm::log(fm::uniform_open0(w))) * c;  // Box & Muller (1958), real part
    }

    // x[i] for samples n0 .. n0 + kSynthBlock - 1.
    void run(std::uint64_t n0, float* x) {
        const std::uint64_t first = n0 / decim, last = (n0 + kSynthBlock - 1) / decim + 1;
        // Keep the knots this block shares with the previous one; the sequence is continuous when blocks are.
        std::size_t keep = 0;
        if (have > 0 && first >= base && first < base + have) {
            keep = static_cast<std::size_t>(base + have - first);
            std::memmove(knots.data(), knots.data() + (first - base), keep * sizeof(float));
        }
        base = first;
        for (std::uint64_t j = first + keep; j <= last; ++j) {
            const std::size_t i = static_cast<std::size_t>(j - base);
            knots[i] = i == 0 ? gauss(j) : a * knots[i - 1] + b * gauss(j);  // a fresh start is stationary
        }
        have = last - first + 1;
        std::uint64_t n = n0;
        std::size_t i = 0;
        const float inv = 1.0f / static_cast<float>(decim);
        while (i < kSynthBlock) {
            const std::uint64_t j = n / decim, r = n - j * decim;
            const std::size_t len = static_cast<std::size_t>(std::min<std::uint64_t>(decim - r, kSynthBlock - i));
            const float y0 = knots[j - base], dy = (knots[j - base + 1] - y0) * inv;
            for (std::size_t t = 0; t < len; ++t) x[i + t] = y0 + dy * static_cast<float>(r + t);
            i += len;
            n += len;
        }
    }
};

// A carrier whose modulation needs work per sample: FM (tone or noise) or AM by noise.
struct Carrier {
    ModKind kind = ModKind::fm;
    ModSource source = ModSource::tone;
    Phasor carrier;             // amplitude * exp(j carrier phase)
    Phasor mod_tone;            // tone modulation: its imaginary part is the FM phase in cycles
    ModNoise mod_noise;
    float depth = 0.0f;         // AM index
    double cycles_per_unit = 0; // FM by noise: deviation / fs (cycles per sample per unit of x)
    double fm_phase = 0.0;      // FM by noise: integrated phase in cycles, kept in [-0.5, 0.5]
};

}  // namespace

std::string_view to_string(SignalType v) { return name_of(kSignalTypes, v); }
std::string_view to_string(ModSource v) { return name_of(kModSources, v); }
std::string_view to_string(ModKind v) { return name_of(kModKinds, v); }
bool parse(std::string_view t, SignalType& o) { return value_of(kSignalTypes, t, o); }
bool parse(std::string_view t, ModSource& o) { return value_of(kModSources, t, o); }
bool parse(std::string_view t, ModKind& o) { return value_of(kModKinds, t, o); }
template <> std::string allowed_names<SignalType>() { return join_names(kSignalTypes); }
template <> std::string allowed_names<ModSource>() { return join_names(kModSources); }
template <> std::string allowed_names<ModKind>() { return join_names(kModKinds); }

std::vector<SetupProblem> validate_scenario(const Scenario& s) {
    Checker c;
    c.range("scenario.full_scale_dbm", s.full_scale_dbm, -200, 100, "dBm");
    c.range("scenario.noise_floor_dbm_per_hz", s.noise_floor_dbm_per_hz, -300, 0, "dBm/Hz");
    if (s.has_adc_noise) c.range("scenario.adc_noise_dbfs_per_hz", s.adc_noise_dbfs_per_hz, -300, 0, "dBFS/Hz");
    for (std::size_t i = 0; i < s.signals.size(); ++i) {
        const SignalSpec& g = s.signals[i];
        const std::string at = "signal[" + std::to_string(i) + "]";
        switch (g.type) {
            case SignalType::cw:
            case SignalType::two_tone:
            case SignalType::am:
            case SignalType::fm:
                c.range(at + ".frequency_hz", g.frequency_hz, 0, kMaxFrequencyHz, "Hz");
                c.range(at + ".level_dbm", g.level_dbm, kMinLevelDbm, kMaxLevelDbm, "dBm");
                break;
            case SignalType::stations:
                c.range(at + ".first_hz", g.first_hz, 0, kMaxFrequencyHz, "Hz");
                c.range(at + ".level_dbm", g.level_dbm, kMinLevelDbm, kMaxLevelDbm, "dBm");
                break;
            case SignalType::noise: break;
        }
        switch (g.type) {
            case SignalType::cw: break;
            case SignalType::two_tone:
                c.positive(at + ".spacing_hz", g.spacing_hz, kMaxFrequencyHz, "Hz");
                if (std::isfinite(g.spacing_hz) && g.spacing_hz / 2 > g.frequency_hz)
                    c.fail(at + ".spacing_hz", "got " + format_number(g.spacing_hz) +
                                                   " Hz, the lower tone would fall below 0 Hz: expected at most "
                                                   "twice frequency_hz");
                break;
            case SignalType::am: check_modulation(c, at, ModKind::am, g.modulation, g); break;
            case SignalType::fm: check_modulation(c, at, ModKind::fm, g.modulation, g); break;
            case SignalType::stations:
                c.positive(at + ".spacing_hz", g.spacing_hz, kMaxFrequencyHz, "Hz");
                if (g.count < 1 || g.count > kMaxStations)
                    c.fail(at + ".count", "got " + std::to_string(g.count) + ", expected an integer from 1 to " +
                                              std::to_string(kMaxStations));
                c.range(at + ".occupancy", g.occupancy, 0, 1, "");
                c.range(at + ".level_spread_db", g.level_spread_db, 0, 100, "dB");
                c.positive(at + ".tone_low_hz", g.tone_low_hz, kMaxFrequencyHz, "Hz");
                c.positive(at + ".tone_high_hz", g.tone_high_hz, kMaxFrequencyHz, "Hz");
                if (g.tone_high_hz < g.tone_low_hz)
                    c.fail(at + ".tone_high_hz", "got " + format_number(g.tone_high_hz) +
                                                     " Hz, expected at least tone_low_hz (" +
                                                     format_number(g.tone_low_hz) + " Hz)");
                if (g.station_modulation == ModKind::am) c.range(at + ".depth", g.depth, 0.0, 1.0, "");
                else c.range(at + ".deviation_hz", g.deviation_hz, 0.0, kMaxFrequencyHz, "Hz");
                break;
            case SignalType::noise:
                c.range(at + ".low_hz", g.low_hz, 0, kMaxFrequencyHz, "Hz");
                c.range(at + ".high_hz", g.high_hz, 0, kMaxFrequencyHz, "Hz");
                if (std::isfinite(g.low_hz) && std::isfinite(g.high_hz) && g.high_hz <= g.low_hz)
                    c.fail(at + ".high_hz", "got " + format_number(g.high_hz) + " Hz, expected more than low_hz (" +
                                                format_number(g.low_hz) + " Hz)");
                c.range(at + ".density_dbm_per_hz", g.density_dbm_per_hz, -300, 0, "dBm/Hz");
                break;
        }
    }
    return c.problems;
}

std::vector<Station> stations_of(const SignalSpec& band, std::size_t signal_index, std::uint64_t seed) {
    std::vector<Station> out;
    const std::uint64_t key = stream_key(seed, signal_tag(signal_index, 0));
    for (int i = 0; i < band.count; ++i) {
        const auto k = static_cast<std::uint64_t>(i) * 3;
        const double on = fm::uniform_low24(fm::random_word(key, k));
        const double spread = fm::uniform_low24(fm::random_word(key, k + 1));
        const double tone = fm::uniform_low24(fm::random_word(key, k + 2));
        if (on >= band.occupancy) continue;
        Station st;
        st.frequency_hz = band.first_hz + i * band.spacing_hz;
        st.level_dbm = band.level_dbm + band.level_spread_db * (spread - 0.5);
        // Invented programme content: one tone per station, on a 10 Hz grid.
        st.tone_hz = std::round((band.tone_low_hz + (band.tone_high_hz - band.tone_low_hz) * tone) / 10.0) * 10.0;
        st.tone_hz = std::clamp(st.tone_hz, band.tone_low_hz, band.tone_high_hz);
        out.push_back(st);
    }
    return out;
}

// ---- the synthesiser ----------------------------------------------------------------------------------

namespace {
constexpr std::size_t kNoiseFft = 2 * kSynthBlock;  // band noise: sine-windowed frames, 50 % overlap
}  // namespace

struct Synth::Impl {
    Scenario scenario;
    std::uint64_t seed = 0;
    Tuning tuning;
    WindowContents contents;
    std::uint64_t n = 0;  // next sample

    std::vector<Phasor> tones;
    std::vector<Carrier> carriers;
    float floor_sigma = 0.0f;  // sqrt of the white floor's variance per complex sample
    std::uint64_t floor_key = 0, band_key = 0;

    // Band noise (overlap-add of independent frames, sine window: w[i]^2 + w[i+H]^2 = 1 keeps the variance
    // constant, so the sum is stationary white noise shaped by the bin profile).
    std::vector<std::uint32_t> noise_bins;  // FFT bins with noise
    std::vector<float> noise_sigma;         // per entry of noise_bins: std. dev. of the bin
    std::vector<float> window;              // kNoiseFft
    std::vector<float> tail_re, tail_im;    // the previous frame's second half, windowed
    fftwf_complex* fft_in = nullptr;
    fftwf_complex* fft_out = nullptr;
    fftwf_plan plan = nullptr;

    // Scratch (one block each): accumulators and per-carrier work.
    std::vector<float> acc_re, acc_im, tmp_re, tmp_im, mod, mod_im;

    ~Impl() {
        std::lock_guard<std::mutex> lock(fftw_planner_mutex());
        if (plan) fftwf_destroy_plan(plan);
        if (fft_in) fftwf_free(fft_in);
        if (fft_out) fftwf_free(fft_out);
    }

    double amplitude(double level_dbm) const {
        return amplitude_of(level_dbm - scenario.full_scale_dbm + tuning.gain_db);
    }
    double density_fs(double dbm_per_hz) const {  // full-scale power per Hz
        return power_from_db(dbm_per_hz - scenario.full_scale_dbm + tuning.gain_db);
    }
    double half_window() const {
        const double fs = tuning.sample_rate_hz;
        const double bw = tuning.bandwidth_hz > 0 ? std::min(tuning.bandwidth_hz, fs) : fs;
        return bw / 2;
    }
    Phase random_phase(std::size_t signal_index, std::uint64_t sub) const {
        return fm::random_word(stream_key(seed, signal_tag(signal_index, 1)), sub);
    }

    void add_tone(double rf_hz, double amp, Phase phase0) {
        const double off = rf_hz - tuning.center_hz;
        if (std::abs(off) >= half_window()) return;
        tones.emplace_back(phase0, phase_increment(off / tuning.sample_rate_hz), amp);
        ++contents.tones;
    }

    // AM by a tone is exactly three tones: carrier and two sidebands of depth/2, with coherent phases.
    void add_am_tone(double rf_hz, double amp, double depth, double tone_hz, Phase pc, Phase pm) {
        const double fs = tuning.sample_rate_hz;
        const double off = rf_hz - tuning.center_hz;
        const Phase ic = phase_increment(off / fs), im = phase_increment(tone_hz / fs);
        const double hw = half_window();
        auto add = [&](double o, Phase p0, Phase inc, double a) {
            if (std::abs(o) >= hw || a == 0.0) return;
            tones.emplace_back(p0, inc, a);
            ++contents.tones;
        };
        add(off, pc, ic, amp);
        add(off + tone_hz, pc + pm, ic + im, amp * depth / 2);
        add(off - tone_hz, pc - pm, ic - im, amp * depth / 2);
    }

    // A carrier with per-sample modulation, kept only when its occupied band fits the window.
    void add_carrier(ModKind kind, ModSource src, double rf_hz, double amp, const SignalSpec& g, double tone_hz,
                     std::size_t index, std::uint64_t sub) {
        const double fs = tuning.sample_rate_hz, off = rf_hz - tuning.center_hz, hw = half_window();
        // Occupied half-bandwidth: Carson's rule (deviation + highest modulating frequency) for FM, taking
        // 3x the rms deviation as the peak for noise; the modulation bandwidth for AM.
        double half_bw = 0;
        if (kind == ModKind::fm)
            half_bw = src == ModSource::tone ? g.deviation_hz + tone_hz : 3 * g.deviation_hz + g.modulation_bandwidth_hz;
        else
            half_bw = g.modulation_bandwidth_hz;
        if (std::abs(off) + half_bw >= hw) {
            if (std::abs(off) - half_bw < hw) ++contents.left_out;
            return;
        }
        Carrier c;
        c.kind = kind;
        c.source = src;
        c.carrier = Phasor(random_phase(index, 2 * sub), phase_increment(off / fs), amp);
        if (src == ModSource::tone) {
            // FM by a tone: phase = beta sin(wm t), beta = deviation / tone (radians) -> beta/2pi in cycles.
            c.mod_tone = Phasor(random_phase(index, 2 * sub + 1), phase_increment(tone_hz / fs),
                                g.deviation_hz / tone_hz / kTwoPi);
        } else {
            c.mod_noise = ModNoise(stream_key(seed, signal_tag(index, 2 + sub)), g.modulation_bandwidth_hz, fs);
            c.cycles_per_unit = g.deviation_hz / fs;
        }
        c.depth = static_cast<float>(g.depth);
        carriers.push_back(std::move(c));
        ++contents.carriers;
    }

    void add_noise_band(double low_hz, double high_hz, double dbm_per_hz, std::vector<double>& bin_var,
                        double& white_var) {
        const double fs = tuning.sample_rate_hz, hw = half_window(), c = tuning.center_hz;
        const double density = density_fs(dbm_per_hz);
        // A band covering the whole (unfiltered) window is white: it joins the floor, no FFT needed.
        if (hw >= fs / 2 && low_hz <= c - fs / 2 && high_hz >= c + fs / 2) {
            white_var += density * fs;
            return;
        }
        if (bin_var.empty()) bin_var.assign(kNoiseFft, 0.0);
        for (std::size_t k = 0; k < kNoiseFft; ++k) {
            const double f = (k < kNoiseFft / 2 ? double(k) : double(k) - double(kNoiseFft)) * fs / double(kNoiseFft);
            if (std::abs(f) > hw || c + f < low_hz || c + f > high_hz) continue;
            bin_var[k] += density * fs / double(kNoiseFft);  // sum of bin variances = band power
        }
    }

    void build() {
        tones.clear();
        carriers.clear();
        noise_bins.clear();
        noise_sigma.clear();
        contents = WindowContents{};
        const double fs = tuning.sample_rate_hz;
        double white_var = density_fs(scenario.noise_floor_dbm_per_hz) * fs;
        if (scenario.has_adc_noise) white_var += power_from_db(scenario.adc_noise_dbfs_per_hz) * fs;
        std::vector<double> bin_var;
        for (std::size_t i = 0; i < scenario.signals.size() && !tuning.terminated; ++i) {
            const SignalSpec& g = scenario.signals[i];
            const double a = amplitude(g.level_dbm);
            switch (g.type) {
                case SignalType::cw: add_tone(g.frequency_hz, a, random_phase(i, 0)); break;
                case SignalType::two_tone:
                    add_tone(g.frequency_hz - g.spacing_hz / 2, a, random_phase(i, 0));
                    add_tone(g.frequency_hz + g.spacing_hz / 2, a, random_phase(i, 1));
                    break;
                case SignalType::am:
                    if (g.modulation == ModSource::tone)
                        add_am_tone(g.frequency_hz, a, g.depth, g.tone_hz, random_phase(i, 0), random_phase(i, 1));
                    else
                        add_carrier(ModKind::am, ModSource::noise, g.frequency_hz, a, g, 0, i, 0);
                    break;
                case SignalType::fm: add_carrier(ModKind::fm, g.modulation, g.frequency_hz, a, g, g.tone_hz, i, 0); break;
                case SignalType::stations: {
                    const auto list = stations_of(g, i, seed);
                    for (std::size_t k = 0; k < list.size(); ++k) {
                        const Station& st = list[k];
                        // Quick reject before any work: a station far outside the window.
                        if (std::abs(st.frequency_hz - tuning.center_hz) > half_window() + g.spacing_hz + g.deviation_hz +
                                                                               st.tone_hz)
                            continue;
                        const double sa = amplitude(st.level_dbm);
                        if (g.station_modulation == ModKind::am)
                            add_am_tone(st.frequency_hz, sa, g.depth, st.tone_hz, random_phase(i, 2 * k + 2),
                                        random_phase(i, 2 * k + 3));
                        else
                            add_carrier(ModKind::fm, ModSource::tone, st.frequency_hz, sa, g, st.tone_hz, i, k + 1);
                    }
                    break;
                }
                case SignalType::noise: add_noise_band(g.low_hz, g.high_hz, g.density_dbm_per_hz, bin_var, white_var); break;
            }
        }
        floor_sigma = static_cast<float>(std::sqrt(white_var));
        contents.white_noise_power = white_var;
        contents.level_offset_db = scenario.full_scale_dbm - tuning.gain_db;
        for (std::size_t k = 0; k < bin_var.size(); ++k)
            if (bin_var[k] > 0) {
                noise_bins.push_back(static_cast<std::uint32_t>(k));
                noise_sigma.push_back(static_cast<float>(std::sqrt(bin_var[k])));
            }
        contents.noise_bins = static_cast<int>(noise_bins.size());
        if (!noise_bins.empty()) {
            prepare_fft();
            std::memset(fft_in, 0, sizeof(fftwf_complex) * kNoiseFft);  // bins of an earlier tuning
            noise_frame(n / kSynthBlock - 1);  // prime the overlap so the first block has full variance
            for (std::size_t i = 0; i < kSynthBlock; ++i) {
                tail_re[i] = fft_out[kSynthBlock + i][0] * window[kSynthBlock + i];
                tail_im[i] = fft_out[kSynthBlock + i][1] * window[kSynthBlock + i];
            }
        }
    }

    void prepare_fft() {
        if (plan) return;
        std::lock_guard<std::mutex> lock(fftw_planner_mutex());
        fft_in = fftwf_alloc_complex(kNoiseFft);
        fft_out = fftwf_alloc_complex(kNoiseFft);
        plan = fftwf_plan_dft_1d(static_cast<int>(kNoiseFft), fft_in, fft_out, FFTW_BACKWARD, FFTW_ESTIMATE);
        window.resize(kNoiseFft);
        for (std::size_t i = 0; i < kNoiseFft; ++i)
            window[i] = static_cast<float>(std::sin(kPi * (double(i) + 0.5) / double(kNoiseFft)));
        tail_re.assign(kSynthBlock, 0.0f);
        tail_im.assign(kSynthBlock, 0.0f);
    }

    // One frame of band noise into fft_out: complex Gaussian bins of the profile's variance, inverse FFT.
    void noise_frame(std::uint64_t frame) {
        const std::uint64_t first = frame * kNoiseFft;
        for (std::size_t b = 0; b < noise_bins.size(); ++b) {
            const std::uint64_t w = fm::random_word(band_key, first + noise_bins[b]);
            float c, s;
            fm::cos_sin_cycles(fm::uniform_low24(w), c, s);
            const float r = noise_sigma[b] * std::sqrt(-fm::log(fm::uniform_open0(w)));
            fft_in[noise_bins[b]][0] = r * c;
            fft_in[noise_bins[b]][1] = r * s;
        }
        fftwf_execute(plan);
    }

    void process(std::span<std::complex<float>> out) {
        if (out.size() != kSynthBlock) throw std::logic_error("Synth::process: the block must be kSynthBlock samples");
        float* __restrict re = acc_re.data();
        float* __restrict im = acc_im.data();
        // White floor: complex Gaussian of variance sigma^2, |z| = sigma sqrt(-ln u1), arg = 2 pi u2
        // (Box & Muller, "A note on the generation of random normal deviates", Ann. Math. Stat. 29, 1958).
        // The 32-bit u1 limits |z| to 4.7 sigma (probability of exceeding it: 2^-32).
        // Locals, not members, in the loop: the stores to re/im cannot then alias them, and it vectorises without
        // a run-time alias check.
        const float sigma = floor_sigma;
        const std::uint64_t key = floor_key, n0 = n;
        for (std::size_t i = 0; i < kSynthBlock; ++i) {
            const std::uint64_t w = fm::random_word(key, n0 + i);
            float c, s;
            fm::cos_sin_cycles(fm::uniform_low24(w), c, s);
            const float r = sigma * std::sqrt(-fm::log(fm::uniform_open0(w)));
            re[i] = r * c;
            im[i] = r * s;
        }
        for (const Phasor& t : tones) t.run<true>(n, re, im);
        for (Carrier& c : carriers) run_carrier(c, re, im);
        if (!noise_bins.empty()) {
            noise_frame(n / kSynthBlock);
            const float* w = window.data();
            for (std::size_t i = 0; i < kSynthBlock; ++i) {
                re[i] += tail_re[i] + fft_out[i][0] * w[i];
                im[i] += tail_im[i] + fft_out[i][1] * w[i];
                tail_re[i] = fft_out[kSynthBlock + i][0] * w[kSynthBlock + i];
                tail_im[i] = fft_out[kSynthBlock + i][1] * w[kSynthBlock + i];
            }
        }
        if (scenario.clip) {
            for (std::size_t i = 0; i < kSynthBlock; ++i)
                out[i] = {std::clamp(re[i], -1.0f, 1.0f), std::clamp(im[i], -1.0f, 1.0f)};
        } else {
            for (std::size_t i = 0; i < kSynthBlock; ++i) out[i] = {re[i], im[i]};
        }
        n += kSynthBlock;
    }

    void run_carrier(Carrier& c, float* __restrict re, float* __restrict im) {
        float* __restrict x = mod.data();
        float* __restrict tr = tmp_re.data();
        float* __restrict ti = tmp_im.data();
        c.carrier.run<false>(n, tr, ti);  // A exp(j phi_c)
        if (c.kind == ModKind::am) {      // AM by noise: A (1 + m x) exp(j phi_c)
            c.mod_noise.run(n, x);
            for (std::size_t i = 0; i < kSynthBlock; ++i) {
                const float e = 1.0f + c.depth * x[i];
                re[i] += e * tr[i];
                im[i] += e * ti[i];
            }
            return;
        }
        // FM: A exp(j phi_c) exp(j 2 pi x), x = the modulation phase in cycles.
        if (c.source == ModSource::tone) {
            c.mod_tone.run<false>(n, mod_im.data(), x);  // x = (beta / 2 pi) sin(wm t)
        } else {
            c.mod_noise.run(n, x);
            double p = c.fm_phase;  // integrate the frequency; serial, in double, wrapped every sample
            for (std::size_t i = 0; i < kSynthBlock; ++i) {
                p += c.cycles_per_unit * x[i];
                p -= std::nearbyint(p);
                x[i] = static_cast<float>(p);
            }
            c.fm_phase = p;
        }
        for (std::size_t i = 0; i < kSynthBlock; ++i) {
            float co, si;
            fm::cos_sin_cycles(x[i], co, si);
            re[i] += tr[i] * co - ti[i] * si;
            im[i] += tr[i] * si + ti[i] * co;
        }
    }
};

Synth::Synth(Scenario scenario, std::uint64_t seed) : impl_(std::make_unique<Impl>()) {
    const auto problems = validate_scenario(scenario);
    if (!problems.empty()) {
        std::string msg = "scenario: " + std::to_string(problems.size()) + " problem(s)";
        for (const auto& p : problems) msg += "\n  " + p.key + ": " + p.message;
        throw InputError(msg);
    }
    impl_->scenario = std::move(scenario);
    impl_->seed = seed;
    impl_->floor_key = stream_key(seed, kTagFloor);
    impl_->band_key = stream_key(seed, kTagBandNoise);
    for (auto* v : {&impl_->acc_re, &impl_->acc_im, &impl_->tmp_re, &impl_->tmp_im, &impl_->mod, &impl_->mod_im})
        v->assign(kSynthBlock, 0.0f);
    tune(impl_->tuning);
}

Synth::~Synth() = default;

void Synth::tune(const Tuning& t) {
    if (!(t.sample_rate_hz > 0) || !std::isfinite(t.sample_rate_hz) || !std::isfinite(t.center_hz) ||
        !std::isfinite(t.gain_db) || !std::isfinite(t.bandwidth_hz))
        throw InputError("generator tuning: sample rate, centre, gain and bandwidth must be finite, rate above 0");
    impl_->tuning = t;
    impl_->build();
}

void Synth::process(std::span<std::complex<float>> out) { impl_->process(out); }

void Synth::reset() {
    impl_->n = 0;
    impl_->build();
}

const Tuning& Synth::tuning() const { return impl_->tuning; }
const WindowContents& Synth::contents() const { return impl_->contents; }
const Scenario& Synth::scenario() const { return impl_->scenario; }
std::uint64_t Synth::position() const { return impl_->n; }

}  // namespace hb
