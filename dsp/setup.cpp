#include "dsp/setup.hpp"

#include <array>
#include <cmath>
#include <utility>

#include "dsp/filter_presets.hpp"
#include "dsp/mixer.hpp"
#include "dsp/names.hpp"
#include "dsp/plan.hpp"
#include "dsp/units.hpp"

namespace hb {
namespace {

constexpr NameTable<SourceKind, 3> kSourceKinds{
    {{SourceKind::recording, "recording"}, {SourceKind::device, "device"}, {SourceKind::generator, "generator"}}};
constexpr NameTable<FilterType, 8> kFilterTypes{{{FilterType::none, "none"},
                                                 {FilterType::butterworth, "butterworth"},
                                                 {FilterType::chebyshev1, "chebyshev1"},
                                                 {FilterType::chebyshev2, "chebyshev2"},
                                                 {FilterType::elliptic, "elliptic"},
                                                 {FilterType::bessel, "bessel"},
                                                 {FilterType::fir, "fir"},
                                                 {FilterType::touchstone, "touchstone"}}};
constexpr NameTable<FilterResponse, 2> kResponses{
    {{FilterResponse::bandpass, "bandpass"}, {FilterResponse::lowpass, "lowpass"}}};
constexpr NameTable<FirMethod, 2> kFirMethods{
    {{FirMethod::kaiser, "kaiser"}, {FirMethod::parks_mcclellan, "parks-mcclellan"}}};
constexpr NameTable<MixerModel, 5> kMixerModels{{{MixerModel::bypass, "bypass"},
                                                 {MixerModel::ideal, "ideal"},
                                                 {MixerModel::unipolar, "unipolar"},
                                                 {MixerModel::bipolar, "bipolar"},
                                                 {MixerModel::quadrature, "quadrature"}}};
constexpr NameTable<WindowType, 5> kWindows{{{WindowType::hann, "hann"},
                                             {WindowType::blackman_harris, "blackman-harris"},
                                             {WindowType::flat_top, "flat-top"},
                                             {WindowType::kaiser, "kaiser"},
                                             {WindowType::rectangular, "rectangular"}}};
constexpr NameTable<Averaging, 4> kAveraging{{{Averaging::rms, "rms"},
                                              {Averaging::exponential, "exponential"},
                                              {Averaging::max_hold, "max-hold"},
                                              {Averaging::min_hold, "min-hold"}}};
constexpr NameTable<LevelUnit, 2> kUnits{{{LevelUnit::dbfs, "dBFS"}, {LevelUnit::dbm, "dBm"}}};
constexpr NameTable<Injection, 2> kInjections{{{Injection::low, "low"}, {Injection::high, "high"}}};
constexpr NameTable<SweepMethod, 2> kSweepMethods{
    {{SweepMethod::fixed_level, "fixed-level"}, {SweepMethod::equal_output, "equal-output"}}};

void check_filter(Checker& c, const std::string& at, const FilterSpec& f) {
    if (!f.preset.empty() && !filter_preset(f.preset))
        c.fail(at + ".preset", "got \"" + f.preset + "\", expected one of " + filter_preset_names());
    if (f.type == FilterType::none) return;
    if (f.type == FilterType::touchstone) {
        if (f.path.empty()) c.fail(at + ".path", "a touchstone filter needs the path of its .s2p file");
        c.int_range(at + ".sections", f.sections, 1, 8);
        c.range(at + ".insertion_loss_db", f.insertion_loss_db, 0, 100, "dB");
        return;
    }
    if (f.response == FilterResponse::bandpass) c.positive(at + ".center_hz", f.center_hz, kMaxFrequencyHz, "Hz");
    c.positive(at + ".bandwidth_hz", f.bandwidth_hz, kMaxFrequencyHz, "Hz");
    if (f.response == FilterResponse::bandpass && std::isfinite(f.center_hz) && std::isfinite(f.bandwidth_hz) &&
        f.center_hz > 0 && f.bandwidth_hz > 0 && f.bandwidth_hz / 2 >= f.center_hz)
        c.fail(at + ".bandwidth_hz", "got " + format_number(f.bandwidth_hz) +
                                         " Hz, a band-pass must stay above 0 Hz: expected less than twice center_hz (" +
                                         format_number(2 * f.center_hz) + " Hz)");
    if (f.type != FilterType::fir) c.int_range(at + ".order", f.order, 1, kMaxFilterOrder);
    if (f.type == FilterType::chebyshev1 || f.type == FilterType::elliptic)
        c.range(at + ".ripple_db", f.ripple_db, 0.001, 10, "dB");
    if (f.type == FilterType::chebyshev2 || f.type == FilterType::elliptic || f.type == FilterType::fir)
        c.range(at + ".stop_atten_db", f.stop_atten_db, 3, 200, "dB");
    if (f.type == FilterType::fir && f.fir_method == FirMethod::parks_mcclellan)
        c.range(at + ".ripple_db", f.ripple_db, 0.001, 10, "dB");
    if (f.type == FilterType::elliptic && std::isfinite(f.ripple_db) && std::isfinite(f.stop_atten_db) &&
        f.stop_atten_db <= f.ripple_db)
        c.fail(at + ".stop_atten_db", "got " + format_number(f.stop_atten_db) +
                                          " dB, an elliptic filter needs more stop-band attenuation than ripple (" +
                                          format_number(f.ripple_db) + " dB)");
    c.range(at + ".transition_hz", f.transition_hz, 0, kMaxFrequencyHz, "Hz");
    c.int_range(at + ".sections", f.sections, 1, 8);
    c.range(at + ".insertion_loss_db", f.insertion_loss_db, 0, 100, "dB");
}

}  // namespace

std::string_view to_string(SourceKind v) {
    return name_of(kSourceKinds, v);
}
std::string_view to_string(FilterType v) {
    return name_of(kFilterTypes, v);
}
std::string_view to_string(FilterResponse v) {
    return name_of(kResponses, v);
}
std::string_view to_string(FirMethod v) {
    return name_of(kFirMethods, v);
}
std::string_view to_string(MixerModel v) {
    return name_of(kMixerModels, v);
}
std::string_view to_string(WindowType v) {
    return name_of(kWindows, v);
}
std::string_view to_string(Averaging v) {
    return name_of(kAveraging, v);
}
std::string_view to_string(LevelUnit v) {
    return name_of(kUnits, v);
}
std::string_view to_string(Injection v) {
    return name_of(kInjections, v);
}
std::string_view to_string(SweepMethod v) {
    return name_of(kSweepMethods, v);
}

bool parse(std::string_view t, SourceKind& o) {
    return value_of(kSourceKinds, t, o);
}
bool parse(std::string_view t, FilterType& o) {
    return value_of(kFilterTypes, t, o);
}
bool parse(std::string_view t, FilterResponse& o) {
    return value_of(kResponses, t, o);
}
bool parse(std::string_view t, FirMethod& o) {
    return value_of(kFirMethods, t, o);
}
bool parse(std::string_view t, MixerModel& o) {
    return value_of(kMixerModels, t, o);
}
bool parse(std::string_view t, WindowType& o) {
    return value_of(kWindows, t, o);
}
bool parse(std::string_view t, Averaging& o) {
    return value_of(kAveraging, t, o);
}
bool parse(std::string_view t, LevelUnit& o) {
    return value_of(kUnits, t, o);
}
bool parse(std::string_view t, Injection& o) {
    return value_of(kInjections, t, o);
}
bool parse(std::string_view t, SweepMethod& o) {
    return value_of(kSweepMethods, t, o);
}

template <>
std::string allowed_names<SourceKind>() {
    return join_names(kSourceKinds);
}
template <>
std::string allowed_names<FilterType>() {
    return join_names(kFilterTypes);
}
template <>
std::string allowed_names<FilterResponse>() {
    return join_names(kResponses);
}
template <>
std::string allowed_names<FirMethod>() {
    return join_names(kFirMethods);
}
template <>
std::string allowed_names<MixerModel>() {
    return join_names(kMixerModels);
}
template <>
std::string allowed_names<WindowType>() {
    return join_names(kWindows);
}
template <>
std::string allowed_names<Averaging>() {
    return join_names(kAveraging);
}
template <>
std::string allowed_names<LevelUnit>() {
    return join_names(kUnits);
}
template <>
std::string allowed_names<Injection>() {
    return join_names(kInjections);
}
template <>
std::string allowed_names<SweepMethod>() {
    return join_names(kSweepMethods);
}

std::string resolve_path(const Setup& s, const std::string& path) {
    if (path.empty() || path.front() == '/' || s.base_dir.empty()) return path;
    return s.base_dir + "/" + path;
}

double lo_frequency_hz(const Setup& s) {
    if (s.mixer.lo.frequency_hz) return *s.mixer.lo.frequency_hz;
    return s.plan.injection == Injection::high ? s.plan.wanted_hz + s.plan.if_hz : s.plan.wanted_hz - s.plan.if_hz;
}

std::vector<SetupProblem> validate(const Setup& s) {
    Checker c;

    for (std::size_t i = 0; i < s.sources.size(); ++i) {
        const SourceSpec& src = s.sources[i];
        const std::string at = "source[" + std::to_string(i) + "]";
        if (src.kind == SourceKind::recording && src.path.empty())
            c.fail(at + ".path", "a recording source needs the path of its file");
        if (src.kind == SourceKind::device && src.args.empty())
            c.fail(at + ".args", "a device source needs a SoapySDR argument string, e.g. \"driver=...\"");
        c.opt_range(at + ".frequency_hz", src.frequency_hz, 0, kMaxFrequencyHz, "Hz");
        if (src.sample_rate_hz) c.positive(at + ".sample_rate_hz", *src.sample_rate_hz, kMaxFrequencyHz, "Hz");
        c.opt_range(at + ".gain_db", src.gain_db, -100, 200, "dB");
        if (src.bandwidth_hz) c.positive(at + ".bandwidth_hz", *src.bandwidth_hz, kMaxFrequencyHz, "Hz");
        c.range(at + ".level_offset_db", src.level_offset_db, -300, 300, "dB");
        for (const NamedGain& g : src.gains) {
            if (g.name.empty()) c.fail(at + ".gains", "a gain element needs a name, e.g. gains = { LNA = 12 }");
            c.range(at + ".gains." + g.name, g.db, -100, 200, "dB");
        }
    }

    check_filter(c, "rf_filter", s.rf_filter);
    for (std::size_t i = 0; i < s.if_filters.size(); ++i)
        check_filter(c, "if_filter[" + std::to_string(i) + "]", s.if_filters[i]);

    const MixerSpec& m = s.mixer;
    if (!m.preset.empty() && !find_mixer_preset(m.preset))
        c.fail("mixer.preset", "got \"" + m.preset + "\", expected one of " + mixer_preset_names());
    c.opt_range("mixer.conversion_gain_db", m.conversion_gain_db, -60, 60, "dB");
    c.opt_range("mixer.lo_if_isolation_db", m.lo_if_isolation_db, 0, 200, "dB");
    c.opt_range("mixer.rf_if_isolation_db", m.rf_if_isolation_db, 0, 200, "dB");
    c.opt_range("mixer.iip2_dbm", m.iip2_dbm, -100, 150, "dBm");
    c.opt_range("mixer.iip3_dbm", m.iip3_dbm, -100, 100, "dBm");
    if (m.duty_cycle && !(*m.duty_cycle > 0.0 && *m.duty_cycle < 1.0))
        c.fail("mixer.duty_cycle",
               "got " + format_number(*m.duty_cycle) + ", expected a fraction of the LO period above 0 and below 1");
    c.opt_range("mixer.edge_time", m.edge_time, 0, 0.5, "of the LO period");
    if (m.edge_time && m.duty_cycle && *m.edge_time > std::min(*m.duty_cycle, 1.0 - *m.duty_cycle))
        c.fail("mixer.edge_time", "got " + format_number(*m.edge_time) +
                                      ", an edge cannot be longer than the shorter half of the duty cycle (" +
                                      format_number(std::min(*m.duty_cycle, 1.0 - *m.duty_cycle)) + ")");
    if (m.harmonics) c.int_range("mixer.harmonics", *m.harmonics, 1, 63);
    c.opt_range("mixer.iq_gain_error_db", m.iq_gain_error_db, -20, 20, "dB");
    c.opt_range("mixer.iq_phase_error_deg", m.iq_phase_error_deg, -89, 89, "degrees");
    c.opt_range("mixer.dc_offset_dbfs", m.dc_offset_dbfs, -300, 0, "dBFS");
    c.opt_range("mixer.noise_figure_db", m.noise_figure_db, 0, 60, "dB");
    c.opt_range("mixer.noise_dbfs_per_hz", m.noise_dbfs_per_hz, -300, 0, "dBFS/Hz");
    if (m.lo.frequency_hz) c.positive("mixer.lo.frequency_hz", *m.lo.frequency_hz, kMaxFrequencyHz, "Hz");
    c.range("mixer.lo.level_dbm", m.lo.level_dbm, -60, 40, "dBm");
    c.range("mixer.lo.offset_ppm", m.lo.offset_ppm, -10000, 10000, "ppm");
    for (std::size_t i = 0; i < m.lo.phase_noise.size(); ++i) {
        const auto& p = m.lo.phase_noise[i];
        const std::string at = "mixer.lo.phase_noise[" + std::to_string(i) + "]";
        c.positive(at + ".offset_hz", p.offset_hz, kMaxFrequencyHz, "Hz");
        c.range(at + ".dbc_per_hz", p.dbc_per_hz, -250, 0, "dBc/Hz");
        if (i > 0 && !(p.offset_hz > m.lo.phase_noise[i - 1].offset_hz))
            c.fail(at + ".offset_hz", "got " + format_number(p.offset_hz) +
                                          " Hz, expected offsets in increasing order (previous " +
                                          format_number(m.lo.phase_noise[i - 1].offset_hz) + " Hz)");
    }

    c.opt_range("if_chain.center_hz", s.if_chain.center_hz, 0, kMaxFrequencyHz, "Hz");
    if (s.if_chain.sample_rate_hz)
        c.positive("if_chain.sample_rate_hz", *s.if_chain.sample_rate_hz, kMaxFrequencyHz, "Hz");
    c.int_range("if_chain.decimation", s.if_chain.decimation, 1, 4096);
    c.range("if_chain.gain_db", s.if_chain.gain_db, -100, 100, "dB");

    const AnalyzerSpec& a = s.analyzer;
    if (a.fft_size < kMinFftSize || a.fft_size > kMaxFftSize || (a.fft_size & (a.fft_size - 1)) != 0)
        c.fail("analyzer.fft_size", "got " + std::to_string(a.fft_size) + ", expected a power of two from " +
                                        std::to_string(kMinFftSize) + " to " + std::to_string(kMaxFftSize));
    c.range("analyzer.kaiser_beta", a.kaiser_beta, 0, 50, "");
    c.range("analyzer.overlap", a.overlap, 0, 0.95, "of a frame");
    c.int_range("analyzer.averages", a.averages, 1, 1000000);
    c.range("analyzer.calibration_db", a.calibration_db, -300, 300, "dB");

    const PlanSpec& p = s.plan;
    c.positive("plan.wanted_hz", p.wanted_hz, kMaxFrequencyHz, "Hz");
    c.positive("plan.if_hz", p.if_hz, kMaxFrequencyHz, "Hz");
    c.positive("plan.if_bandwidth_hz", p.if_bandwidth_hz, kMaxFrequencyHz, "Hz");
    c.range("plan.rf_low_hz", p.rf_low_hz, 0, kMaxFrequencyHz, "Hz");
    c.range("plan.rf_high_hz", p.rf_high_hz, 0, kMaxFrequencyHz, "Hz");
    c.range("plan.channel_spacing_hz", p.channel_spacing_hz, 0, kMaxFrequencyHz, "Hz");
    c.int_range("plan.max_order", p.max_order, 1, kMaxOrderLimit);
    c.range("plan.limits.image_rejection_db", p.limits.image_rejection_db, 0, 300, "dB");
    c.range("plan.limits.spur_dbc", p.limits.spur_dbc, -300, 0, "dBc");
    c.range("plan.limits.lo_feedthrough_dbc", p.limits.lo_feedthrough_dbc, -300, 0, "dBc");
    c.range("plan.limits.spur_rejection_db", p.limits.spur_rejection_db, 0, 300, "dB");
    if (p.limits.iip3_min_dbm) c.range("plan.limits.iip3_min_dbm", *p.limits.iip3_min_dbm, -300, 300, "dBm");
    if (p.limits.iip2_min_dbm) c.range("plan.limits.iip2_min_dbm", *p.limits.iip2_min_dbm, -300, 300, "dBm");
    c.range("plan.two_tone_spacing_hz", p.two_tone_spacing_hz, 0, kMaxFrequencyHz, "Hz");
    if (p.two_tone_spacing_hz > 0 && std::isfinite(p.if_bandwidth_hz) &&
        3 * p.two_tone_spacing_hz > p.if_bandwidth_hz * 10)
        c.fail("plan.two_tone_spacing_hz",
               "got " + format_number(p.two_tone_spacing_hz) +
                   " Hz: the IM3 products (1.5 spacings either side) would fall far outside "
                   "the IF passband; expected a spacing near the channel width");

    const SweepSpec& w = s.sweep;
    if (w.rf_low_hz) c.range("sweep.rf_low_hz", *w.rf_low_hz, 0, kMaxFrequencyHz, "Hz");
    if (w.rf_high_hz) c.range("sweep.rf_high_hz", *w.rf_high_hz, 0, kMaxFrequencyHz, "Hz");
    if (w.rf_low_hz && w.rf_high_hz && *w.rf_high_hz <= *w.rf_low_hz)
        c.fail("sweep.rf_high_hz", "got " + format_number(*w.rf_high_hz) + " Hz, expected above sweep.rf_low_hz (" +
                                       format_number(*w.rf_low_hz) + " Hz)");
    if (w.step_hz) c.positive("sweep.step_hz", *w.step_hz, kMaxFrequencyHz, "Hz");
    c.range("sweep.reference_dbfs", w.reference_dbfs, -200, 0, "dBFS");
    if (w.tone_dbfs) c.range("sweep.tone_dbfs", *w.tone_dbfs, -200, 0, "dBFS");

    const bool finite_plan = std::isfinite(p.wanted_hz) && std::isfinite(p.if_hz) && std::isfinite(p.if_bandwidth_hz) &&
                             std::isfinite(p.rf_low_hz) && std::isfinite(p.rf_high_hz) && p.wanted_hz > 0 &&
                             p.if_hz > 0 && p.if_bandwidth_hz > 0;
    if (finite_plan) {
        if (p.rf_high_hz < p.rf_low_hz)
            c.fail("plan.rf_high_hz", "got " + format_number(p.rf_high_hz) + " Hz, expected at least rf_low_hz (" +
                                          format_number(p.rf_low_hz) + " Hz)");
        else if (p.wanted_hz < p.rf_low_hz || p.wanted_hz > p.rf_high_hz)
            c.fail("plan.wanted_hz", "got " + format_number(p.wanted_hz) +
                                         " Hz, expected a frequency inside the RF band " + format_number(p.rf_low_hz) +
                                         " to " + format_number(p.rf_high_hz) + " Hz");
        if (p.channel_spacing_hz > 0 && (p.rf_high_hz - p.rf_low_hz) / p.channel_spacing_hz > 1e6)
            c.fail("plan.channel_spacing_hz", "got " + format_number(p.channel_spacing_hz) +
                                                  " Hz, which gives more than 1000000 channels across the RF band");
        const double half_bw = p.if_bandwidth_hz / 2;
        if (p.if_hz - half_bw <= 0)
            c.fail("plan.if_bandwidth_hz", "got " + format_number(p.if_bandwidth_hz) +
                                               " Hz: the IF passband would contain 0 Hz; expected less than twice "
                                               "plan.if_hz (" +
                                               format_number(2 * p.if_hz) + " Hz)");
        const double lo = lo_frequency_hz(s);
        const std::string lo_key = m.lo.frequency_hz ? "mixer.lo.frequency_hz" : "plan.injection";
        if (!(lo > 0))
            c.fail(lo_key, "the LO would be at " + format_number(lo) + " Hz (wanted " + format_number(p.wanted_hz) +
                               " Hz, IF " + format_number(p.if_hz) +
                               " Hz); a low-side LO needs the IF below the wanted frequency: use injection = \"high\"");
        else if (std::abs(lo - p.if_hz) <= half_bw)
            c.fail(lo_key, "the LO at " + format_number(lo) + " Hz falls inside the IF passband " +
                               format_number(p.if_hz - half_bw) + " to " + format_number(p.if_hz + half_bw) + " Hz");
    }
    // Channel by channel (dsp/plan): only once the values themselves are sane.
    if (c.problems.empty())
        for (SetupProblem& q : check_plan_channels(s)) c.problems.push_back(std::move(q));
    return c.problems;
}

}  // namespace hb
