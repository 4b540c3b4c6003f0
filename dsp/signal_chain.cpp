#include "dsp/signal_chain.hpp"

#include <liquid/liquid.h>

#include <algorithm>
#include <array>
#include <cmath>

#include "dsp/errors.hpp"
#include "dsp/mixer_emulator.hpp"
#include "dsp/units.hpp"

namespace hb {
namespace {

constexpr std::array<std::pair<Probe, std::string_view>, 4> kProbeNames{{{Probe::rf_input, "rf-input"},
                                                                         {Probe::rf_filtered, "rf-filtered"},
                                                                         {Probe::mixer_output, "mixer-output"},
                                                                         {Probe::if_output, "if-output"}}};

// Resampler of one secondary source (liquid's multi-stage arbitrary resampler: it is off the main path).
struct Resampler {
    msresamp_crcf q = nullptr;
    double rate = 1.0;
    explicit Resampler(double r) : q(msresamp_crcf_create(static_cast<float>(r), 80.0f)), rate(r) {}
    ~Resampler() {
        if (q) msresamp_crcf_destroy(q);
    }
    Resampler(const Resampler&) = delete;
    Resampler& operator=(const Resampler&) = delete;
};

// One source on its way into a zone: resample, shift, scale, queue.
struct Lane {
    int zone = 0;
    double shift_hz = 0.0;  // source centre − zone centre
    double step = 0.0;      // radians per output sample
    double phase = 0.0;     // double-precision accumulator, re-seeded per call
    float gain = 1.0f;
    std::unique_ptr<Resampler> resampler;
    std::vector<cf32> resampled;  // scratch for the resampler output
    std::vector<cf32> fifo;       // samples at the zone rate not yet consumed
    std::size_t head = 0, tail = 0;

    std::size_t available() const { return tail - head; }
};

// Zone: one RF window with its RF filter and its mixer emulator.
struct Zone {
    EnvelopeWindow window;
    bool filtered = false;
    FilterChain rf_filter;
    MixerEmulator mixer;
    std::unique_ptr<Welch> rf_welch;
    std::vector<cf32> in, filt, out;  // max_block each
};

FilterModel default_loader(const FilterSpec& spec, const std::string& key, const std::optional<EnvelopeWindow>& w) {
    ModelOptions o;
    o.fir_window = w;
    return make_filter_model(spec, key, o);
}

bool fits(const EnvelopeWindow& zone, double center_hz, double rate_hz) {
    const double tol = 1e-9 * zone.sample_rate_hz;
    return center_hz - rate_hz / 2 >= zone.center_hz - zone.sample_rate_hz / 2 - tol &&
           center_hz + rate_hz / 2 <= zone.center_hz + zone.sample_rate_hz / 2 + tol;
}

Injection effective_injection(const Setup& s, double lo_hz) {
    if (!s.mixer.lo.frequency_hz) return s.plan.injection;
    return lo_hz >= s.plan.wanted_hz ? Injection::high : Injection::low;
}

}  // namespace

LineKind line_kind(ProductKind k) {
    switch (k) {
        case ProductKind::wanted:
            return LineKind::wanted;
        case ProductKind::image:
            return LineKind::image;
        case ProductKind::half_if:
            return LineKind::half_if;
        case ProductKind::if_feedthrough:
            return LineKind::if_feedthrough;
        case ProductKind::lo_feedthrough:
            return LineKind::lo_feedthrough;
        case ProductKind::rf_feedthrough:
            return LineKind::rf_feedthrough;
        case ProductKind::spur:
            return LineKind::spur;
    }
    return LineKind::spur;
}

std::string_view to_string(Probe p) {
    for (const auto& [v, n] : kProbeNames)
        if (v == p) return n;
    return "?";
}

bool parse(std::string_view text, Probe& out) {
    for (const auto& [v, n] : kProbeNames)
        if (n == text) {
            out = v;
            return true;
        }
    return false;
}

std::vector<ExpectedLine> expected_lines(const Setup& s, const BenchModel& model, double lo_hz, double drive_dbfs,
                                         const Band& window,
                                         const std::function<std::complex<double>(double)>& if_response) {
    const MixerParams& mp = model.mixer;
    const bool quadrature = mp.model == MixerModel::quadrature;
    ProductQuery q;
    q.lo_hz = lo_hz;
    q.rf_hz = s.plan.wanted_hz;
    q.max_order = s.plan.max_order;
    q.if_band = {s.plan.if_hz, s.plan.if_bandwidth_hz};
    q.window = window;
    q.wanted_n = wanted_conversion(lo_hz, s.plan.wanted_hz, q.if_band);
    if (q.wanted_n == 0) q.wanted_n = -1;
    const std::vector<Product> products = enumerate_products(q);

    // Where a product sits in the output frame: a real IF shows |m·LO + n·RF| (the analytic representation has
    // only positive frequencies); the IQ mixer's e^{−jωt} LO puts the wanted at RF − LO, so its lines sit at
    // sign·(m·LO + n·RF) with the sign the model gives (the stronger placement).
    const MixerCoeffs coeffs = mixer_coeffs(mp);
    auto frame_hz = [&](const Product& p, const ProductLevel& lvl) {
        if (!quadrature) return p.freq_hz;
        return lvl.sign * p.signed_hz;
    };
    const ProductLevel wanted_level =
        mp.predicts ? predict_product(mp, coeffs, 1, q.wanted_n, drive_dbfs) : ProductLevel{};
    const Product* wanted = nullptr;
    for (const Product& p : products)
        if (p.kind == ProductKind::wanted) wanted = &p;
    // (Without a wanted product, max_order < 2, the convention above still places it.)
    const double wanted_frame =
        wanted ? frame_hz(*wanted, wanted_level)
               : (quadrature ? s.plan.wanted_hz - lo_hz : std::abs(lo_hz + q.wanted_n * s.plan.wanted_hz));
    const double wanted_gain = if_response ? std::abs(if_response(wanted_frame)) : 1.0;

    std::vector<ExpectedLine> lines;
    for (const Product& p : products) {
        const ProductLevel lvl = mp.predicts ? predict_product(mp, coeffs, p.m, p.n, drive_dbfs) : ProductLevel{};
        const double f = p.kind == ProductKind::wanted ? wanted_frame : frame_hz(p, lvl);
        // Lines outside the window stay in the list: the plan check reports them as not observable in this input.
        const bool inside = window.contains(f);
        ExpectedLine e;
        e.label = p.label;
        e.m = p.m;
        e.n = p.n;
        e.kind = line_kind(p.kind);
        e.freq_hz = f;
        if (p.kind == ProductKind::wanted) {
            e.predicted_dbc = 0.0;
        } else if (mp.predicts) {
            double dbc = lvl.dbc;
            if (if_response && wanted_gain > 0 && inside)
                dbc += db_from_amplitude(std::abs(if_response(f)) / wanted_gain);
            e.predicted_dbc = std::isnan(dbc) ? kNaN : std::max(dbc, -400.0);
        } else {
            e.predicted_dbc = predict_product_dbc(model.plan, p.m, p.n, s.plan.wanted_hz);
        }
        e.limit_dbc = limit_dbc_for(e.kind, s.plan.limits);
        if (p.kind == ProductKind::wanted)
            lines.insert(lines.begin(), e);
        else
            lines.push_back(e);
    }
    if (lines.empty() || lines.front().kind != LineKind::wanted) {
        // The wanted always heads the list, even where it falls outside the window (then it is not observable).
        ExpectedLine e;
        e.label = "wanted";
        e.m = 1;
        e.n = q.wanted_n;
        e.kind = LineKind::wanted;
        e.freq_hz = wanted_frame;
        e.predicted_dbc = 0.0;
        lines.insert(lines.begin(), e);
    }
    return lines;
}

struct SignalChain::Impl {
    Setup setup;
    std::vector<RfInput> inputs;
    SignalChainOptions opt;
    FilterModelLoader loader;
    ChainLayout layout;
    BenchModel model;
    std::optional<FilterModel> rf_model;
    std::vector<Lane> lanes;
    std::vector<Zone> zones;
    FilterChain if_chain;
    std::vector<cf32> mix;     // sum of the zone outputs, max_block
    std::vector<cf32> if_out;  // max_output(max_block)
    std::size_t if_count = 0;  // valid samples in if_out from the last block
    std::size_t last_block = 0;
    std::unique_ptr<Welch> if_welch, probe_welch;
    Probe probe = Probe::if_output;
    SignalChainCounters counters;

    void build_layout() {
        const std::size_t n = inputs.size();
        layout = {};
        layout.zone_of_source.assign(n, 0);
        layout.zones.push_back({inputs[0].center_hz, inputs[0].sample_rate_hz});
        for (std::size_t k = 1; k < n; ++k) {
            int z = -1;
            for (std::size_t j = 0; j < layout.zones.size() && z < 0; ++j)
                if (fits(layout.zones[j], inputs[k].center_hz,
                         std::min(inputs[k].sample_rate_hz, inputs[0].sample_rate_hz)))
                    z = static_cast<int>(j);
            if (z < 0) {
                z = static_cast<int>(layout.zones.size());
                layout.zones.push_back({inputs[k].center_hz, inputs[0].sample_rate_hz});
            }
            layout.zone_of_source[k] = z;
        }
        layout.dbm_at_0dbfs = inputs[0].level_offset_db;
    }

    void build_lanes() {
        lanes.clear();
        lanes.resize(inputs.size());
        const double fs = inputs[0].sample_rate_hz;
        for (std::size_t k = 0; k < inputs.size(); ++k) {
            Lane& l = lanes[k];
            l.zone = layout.zone_of_source[k];
            l.shift_hz = inputs[k].center_hz - layout.zones[static_cast<std::size_t>(l.zone)].center_hz;
            l.step = kTwoPi * l.shift_hz / fs;
            // Equal dBm read equal dBFS: scale to the first source's calibration.
            l.gain = static_cast<float>(amplitude_from_db(inputs[k].level_offset_db - inputs[0].level_offset_db));
            const double ratio = fs / inputs[k].sample_rate_hz;
            const std::size_t in_max = static_cast<std::size_t>(std::ceil(opt.max_block / ratio)) + 64;
            if (std::abs(ratio - 1.0) > 1e-12) {
                l.resampler = std::make_unique<Resampler>(ratio);
                l.resampled.resize(static_cast<std::size_t>(std::ceil(in_max * ratio)) + 256);
            }
            // Room for a few calls' worth of samples from a source that runs ahead of the others.
            l.fifo.resize(8 * opt.max_block + static_cast<std::size_t>(std::ceil(in_max * ratio)) + 512);
        }
    }

    void build_mixers() {
        const double lo = lo_frequency_hz(setup);
        model = make_bench_model(setup, rf_model ? &*rf_model : nullptr, -10.0, layout.dbm_at_0dbfs);
        layout.lo_nominal_hz = model.mixer.lo_nominal_hz;
        layout.lo_hz = model.mixer.lo_hz;
        layout.injection = effective_injection(setup, lo);
        const double fs = inputs[0].sample_rate_hz;
        const bool bypass = model.mixer.model == MixerModel::bypass;
        if (bypass && layout.zones.size() > 1)
            throw InputError(
                "source: with mixer.model = \"bypass\" every source must fit in the first source's window "
                "(the input already is the IF of a real mixer)");
        const double out_c = bypass ? layout.zones[0].center_hz
                                    : setup.if_chain.center_hz.value_or(
                                          if_window_center_hz(model.mixer, setup.plan.if_hz, layout.injection));
        for (std::size_t z = 0; z < zones.size(); ++z) {
            MixerParams p = model.mixer;
            if (z > 0) {
                // The mixer's own additive impairments are counted once, in zone 0.
                p.noise_figure_db.reset();
                p.noise_dbfs_per_hz.reset();
                p.lo_if_isolation_db.reset();
                p.dc_offset_dbfs.reset();
            }
            EmulatorConfig c;
            c.rf_center_hz = zones[z].window.center_hz;
            c.sample_rate_hz = fs;
            c.output_center_hz = out_c;
            c.seed = setup.bench.seed;
            zones[z].mixer = MixerEmulator::make(p, c);
        }
        layout.mixer_output = {zones[0].mixer.output_center_hz(), fs};
    }

    void build_rf_filters() {
        rf_model.reset();
        if (setup.rf_filter.type != FilterType::none) rf_model = loader(setup.rf_filter, "rf_filter", std::nullopt);
        for (Zone& z : zones) {
            z.filtered = setup.rf_filter.type != FilterType::none;
            if (!z.filtered) continue;
            FilterModel m = loader(setup.rf_filter, "rf_filter", z.window);
            ChainOptions o;
            o.window = z.window;
            o.max_block = opt.max_block;
            z.rf_filter = make_filter_chain({m}, o);
        }
    }

    void build_if_chain() {
        if (setup.if_chain.sample_rate_hz &&
            std::abs(*setup.if_chain.sample_rate_hz - inputs[0].sample_rate_hz) > 1e-9 * inputs[0].sample_rate_hz)
            throw InputError("if_chain.sample_rate_hz: got " + format_number(*setup.if_chain.sample_rate_hz) +
                             " Hz; the IF window runs at the RF rate (" + format_number(inputs[0].sample_rate_hz) +
                             " Hz): leave it unset and use if_chain.decimation to lower the output rate");
        std::vector<FilterModel> models;
        for (std::size_t i = 0; i < setup.if_filters.size(); ++i)
            if (setup.if_filters[i].type != FilterType::none)
                models.push_back(
                    loader(setup.if_filters[i], "if_filter[" + std::to_string(i) + "]", layout.mixer_output));
        ChainOptions o;
        o.window = layout.mixer_output;
        o.decimation = setup.if_chain.decimation;
        o.gain_db = setup.if_chain.gain_db;
        o.max_block = opt.max_block;
        if_chain = make_filter_chain(models, o);
        layout.if_output = if_chain.output;
        if_out.assign(if_chain.max_output(opt.max_block), cf32{});
    }

    void build_analyzers() {
        // The analyzer's calibration is a correction on top of the RF port's: dBm = dBFS + level_offset + cal.
        AnalyzerSpec a = setup.analyzer;
        a.calibration_db += layout.dbm_at_0dbfs;
        if_welch = std::make_unique<Welch>(
            Welch::make(a, layout.if_output.center_hz, layout.if_output.sample_rate_hz, opt.fft_effort));
        for (Zone& z : zones)
            z.rf_welch = opt.rf_spectra ? std::make_unique<Welch>(Welch::make(a, z.window.center_hz,
                                                                              z.window.sample_rate_hz, opt.fft_effort))
                                        : nullptr;
        build_probe_welch();
    }

    void build_probe_welch() {
        probe_welch.reset();
        if (probe == Probe::rf_filtered || probe == Probe::mixer_output ||
            (probe == Probe::rf_input && !zones[0].rf_welch)) {
            AnalyzerSpec a = setup.analyzer;
            a.calibration_db += layout.dbm_at_0dbfs;
            const EnvelopeWindow w = window_of(probe);
            probe_welch = std::make_unique<Welch>(Welch::make(a, w.center_hz, w.sample_rate_hz, opt.fft_effort));
        }
    }

    EnvelopeWindow window_of(Probe p) const {
        switch (p) {
            case Probe::rf_input:
            case Probe::rf_filtered:
                return zones[0].window;
            case Probe::mixer_output:
                return layout.mixer_output;
            case Probe::if_output:
                return layout.if_output;
        }
        return layout.if_output;
    }

    void build_all() {
        build_layout();
        build_lanes();
        zones.clear();
        zones.resize(layout.zones.size());
        for (std::size_t z = 0; z < zones.size(); ++z) {
            zones[z].window = layout.zones[z];
            zones[z].in.assign(opt.max_block, cf32{});
            zones[z].filt.assign(opt.max_block, cf32{});
            zones[z].out.assign(opt.max_block, cf32{});
        }
        mix.assign(opt.max_block, cf32{});
        build_rf_filters();
        build_mixers();
        build_if_chain();
        build_analyzers();
    }

    // Moves samples of source k into its lane: resample, shift onto the zone, scale, replace non-finite values.
    void feed(std::size_t k, std::span<const cf32> x) {
        Lane& l = lanes[k];
        while (!x.empty()) {
            // Bounded pieces so the resampler scratch and the FIFO are never overrun.
            const std::size_t piece = std::min<std::size_t>(x.size(), opt.max_block);
            std::span<const cf32> in = x.first(piece);
            x = x.subspan(piece);
            std::span<const cf32> y = in;
            if (l.resampler) {
                unsigned int ny = 0;
                msresamp_crcf_execute(l.resampler->q, const_cast<cf32*>(in.data()), static_cast<unsigned>(in.size()),
                                      l.resampled.data(), &ny);
                y = std::span<const cf32>(l.resampled.data(), ny);
            }
            if (l.head > 0 && l.tail + y.size() > l.fifo.size()) {
                std::copy(l.fifo.begin() + static_cast<std::ptrdiff_t>(l.head),
                          l.fifo.begin() + static_cast<std::ptrdiff_t>(l.tail), l.fifo.begin());
                l.tail -= l.head;
                l.head = 0;
            }
            if (l.tail + y.size() > l.fifo.size())
                throw InputError("source[" + std::to_string(k) +
                                 "]: delivers samples far ahead of the first source; "
                                 "feed sources in proportion to their rates (SignalChain::samples_for)");
            cf32* out = l.fifo.data() + l.tail;
            // Shift with a double-precision phasor started from the accumulated phase (no drift across calls).
            std::complex<double> rot = std::polar(1.0, l.phase);
            const std::complex<double> step = std::polar(1.0, l.step);
            const bool shift = l.step != 0.0;
            for (std::size_t i = 0; i < y.size(); ++i) {
                cf32 v = y[i];
                if (!std::isfinite(v.real()) || !std::isfinite(v.imag())) {
                    v = {};
                    ++counters.non_finite;
                }
                if (shift) {
                    v *= cf32(static_cast<float>(rot.real()), static_cast<float>(rot.imag()));
                    rot *= step;
                }
                out[i] = v * l.gain;
            }
            l.phase = std::remainder(l.phase + l.step * static_cast<double>(y.size()), kTwoPi);
            l.tail += y.size();
        }
    }

    // Runs every zone, the IF chain and the analyzers on n samples taken from the lanes.
    void run_block(std::size_t n) {
        for (Zone& z : zones) std::fill(z.in.begin(), z.in.begin() + static_cast<std::ptrdiff_t>(n), cf32{});
        for (Lane& l : lanes) {
            Zone& z = zones[static_cast<std::size_t>(l.zone)];
            const cf32* src = l.fifo.data() + l.head;
            for (std::size_t i = 0; i < n; ++i) z.in[i] += src[i];
            l.head += n;
            if (l.head == l.tail) l.head = l.tail = 0;
        }
        std::fill(mix.begin(), mix.begin() + static_cast<std::ptrdiff_t>(n), cf32{});
        for (Zone& z : zones) {
            const std::span<const cf32> in(z.in.data(), n);
            if (z.rf_welch) z.rf_welch->push(in);
            const cf32* mixer_in = z.in.data();
            if (z.filtered) {
                z.rf_filter.process(z.in.data(), n, z.filt.data());
                mixer_in = z.filt.data();
            }
            z.mixer.process(std::span<const cf32>(mixer_in, n), std::span<cf32>(z.out.data(), n));
            for (std::size_t i = 0; i < n; ++i) mix[i] += z.out[i];
        }
        if_count = if_chain.process(mix.data(), n, if_out.data());
        if_welch->push(std::span<const cf32>(if_out.data(), if_count));
        if (probe_welch) {
            const std::span<const cf32> p =
                probe == Probe::rf_filtered
                    ? std::span<const cf32>(zones[0].filtered ? zones[0].filt.data() : zones[0].in.data(), n)
                : probe == Probe::mixer_output ? std::span<const cf32>(mix.data(), n)
                                               : std::span<const cf32>(zones[0].in.data(), n);
            probe_welch->push(p);
        }
        last_block = n;
        counters.samples += n;
        counters.if_samples += if_count;
    }

    void drain() {
        for (;;) {
            std::size_t n = opt.max_block;
            for (const Lane& l : lanes) n = std::min(n, l.available());
            if (n == 0) return;
            run_block(n);
        }
    }
};

SignalChain::SignalChain() = default;
SignalChain::~SignalChain() = default;
SignalChain::SignalChain(SignalChain&&) noexcept = default;
SignalChain& SignalChain::operator=(SignalChain&&) noexcept = default;

SignalChain SignalChain::make(const Setup& s, std::span<const RfInput> inputs, const SignalChainOptions& opt,
                              const FilterModelLoader& loader) {
    if (inputs.empty()) throw InputError("source: the chain needs at least one source");
    if (inputs.size() > kMaxSources)
        throw InputError("source: got " + std::to_string(inputs.size()) + " sources, the chain takes at most " +
                         std::to_string(kMaxSources));
    for (std::size_t k = 0; k < inputs.size(); ++k) {
        const RfInput& in = inputs[k];
        if (!(std::isfinite(in.sample_rate_hz) && in.sample_rate_hz > 0) || !std::isfinite(in.center_hz) ||
            !std::isfinite(in.level_offset_db))
            throw InputError("source[" + std::to_string(k) + "]: the stream has no usable centre/rate (centre " +
                             format_number(in.center_hz) + " Hz, rate " + format_number(in.sample_rate_hz) + " Hz)");
    }
    if (opt.max_block < 64) throw InputError("signal chain: max_block must be at least 64 samples");
    SignalChain c;
    c.impl_ = std::make_unique<Impl>();
    Impl& m = *c.impl_;
    m.setup = s;
    m.inputs.assign(inputs.begin(), inputs.end());
    m.opt = opt;
    m.loader = loader ? loader : FilterModelLoader(default_loader);
    m.probe = opt.probe;
    m.build_all();
    return c;
}

void SignalChain::process(std::span<const std::span<const cf32>> inputs) {
    Impl& m = *impl_;
    if (inputs.size() != m.lanes.size())
        throw InputError("signal chain: got samples for " + std::to_string(inputs.size()) + " sources, built for " +
                         std::to_string(m.lanes.size()));
    // Feed in bounded steps so no lane runs far ahead of the others.
    std::array<std::size_t, kMaxSources> pos{};
    bool more = true;
    while (more) {
        more = false;
        for (std::size_t k = 0; k < inputs.size(); ++k) {
            const std::size_t step = std::max<std::size_t>(1, samples_for(k, m.opt.max_block));
            const std::size_t take = std::min(step, inputs[k].size() - pos[k]);
            if (take == 0) continue;
            m.feed(k, inputs[k].subspan(pos[k], take));
            pos[k] += take;
            more = more || pos[k] < inputs[k].size();
        }
        m.drain();
    }
}

void SignalChain::process(std::span<const cf32> input) {
    Impl& m = *impl_;
    if (m.lanes.size() != 1) throw InputError("signal chain: built for several sources; pass samples for each");
    while (!input.empty()) {
        const std::size_t take = std::min(input.size(), m.opt.max_block);
        m.feed(0, input.first(take));
        input = input.subspan(take);
        m.drain();
    }
}

std::size_t SignalChain::samples_for(std::size_t source, std::size_t n_primary) const {
    const Impl& m = *impl_;
    const double r = m.inputs[source].sample_rate_hz / m.inputs[0].sample_rate_hz;
    return static_cast<std::size_t>(std::ceil(static_cast<double>(n_primary) * r));
}

namespace {

// Explains unexplained IF peaks by signals at the RF port: for each peak, the spurious responses (m, n) of the
// LO that land on its frequency (the peak taken as a narrow IF band), and among the RF signals found in those
// response bands the one of the lowest order (then the strongest). The rejection is the wanted's conversion
// gain over the response's, both measured: (wanted_IF − wanted_RF) − (peak_IF − signal_RF).
template <class RfSpectrum, class ZoneOf>
void attribute_unexplained(ChainAnalysis& a, const SignalChain::Impl& m, RfSpectrum&& rf_spectrum, ZoneOf&& zone_of) {
    if (a.check.unexplained.empty() || m.model.mixer.model == MixerModel::bypass) return;
    const Setup& s = m.setup;
    const bool quad = m.model.mixer.model == MixerModel::quadrature;
    struct ZoneView {
        bool made = false;
        Spectrum spectrum;
        NoiseFloor floor;
        WindowResponse response;
    };
    std::vector<ZoneView> views(m.zones.size());
    auto view = [&](int z) -> ZoneView& {
        ZoneView& v = views[static_cast<std::size_t>(z)];
        if (!v.made) {
            v.spectrum = rf_spectrum(z);
            v.floor = noise_floor(v.spectrum);
            v.response = make_window_response(v.spectrum.spec.window, v.spectrum.spec.kaiser_beta,
                                              static_cast<std::size_t>(v.spectrum.size()));
            v.made = true;
        }
        return v;
    };
    const bool have_wanted = a.check.wanted.status == LineStatus::pass && std::isfinite(a.wanted_rf_dbfs);
    for (UnexplainedPeak& u : a.check.unexplained) {
        const double tol = 2.0 * a.if_out.rbw_hz + 2.0 * a.if_out.bin_hz();
        const double f = std::abs(u.freq_hz);
        if (!(f > 2 * tol)) continue;
        ResponseQuery q;
        q.lo_hz = m.layout.lo_hz;
        q.max_order = s.plan.max_order;
        q.if_band = {f, 2 * tol};
        q.wanted_rf_hz = s.plan.wanted_hz;
        q.rf_low_hz = s.plan.rf_low_hz;
        q.rf_high_hz = s.plan.rf_high_hz;
        std::vector<Response> rs;
        try {
            rs = spurious_responses(q);
        } catch (const InputError&) {
            continue;
        }
        const Response* best = nullptr;
        Tone best_tone;
        for (const Response& r : rs) {
            // A complex IF tells the sides apart: the response must land on the peak's side.
            if (quad && (r.if_signed_hz > 0) != (u.freq_hz > 0)) continue;
            const int z = zone_of(r.rf_hz);
            if (z < 0) continue;
            ZoneView& v = view(z);
            // Narrow enough that a stronger neighbour (a carrier next to its own sideband) is not taken instead.
            const double half = tol / std::abs(r.n) + 2 * v.spectrum.bin_hz();
            const Tone t = measure_tone(v.spectrum, v.response, r.rf_hz - half, r.rf_hz + half, v.floor.power_per_bin);
            if (!t.found || !(t.power > 100 * v.floor.power_per_bin)) continue;
            // The signal found must itself map onto the peak (not merely sit near the response band's centre).
            const double lands = r.m * m.layout.lo_hz + r.n * t.freq_hz;
            if (std::abs(std::abs(lands) - f) > tol + std::abs(r.n) * 2 * v.spectrum.bin_hz()) continue;
            // The wanted channel's own content through the wanted conversion is not a spurious response.
            if (r.m == 1 && std::abs(r.n) == 1 && std::abs(t.freq_hz - s.plan.wanted_hz) < s.plan.if_bandwidth_hz / 2 &&
                (t.freq_hz - m.layout.lo_hz) * (s.plan.wanted_hz - m.layout.lo_hz) > 0)
                continue;
            if (!best || r.order < best->order || (r.order == best->order && t.power > best_tone.power)) {
                best = &r;
                best_tone = t;
            }
        }
        if (!best) continue;
        u.m = best->m;
        u.n = best->n;
        // Named as the trade names them relative to the tuned channel; otherwise the line's expression.
        const double lo = m.layout.lo_hz, w = s.plan.wanted_hz, rf = best_tone.freq_hz;
        const bool other_side = (rf - lo) * (w - lo) < 0;
        const bool between = (rf - w) * (rf - lo) < 0;
        if (best->m == 0 && std::abs(best->n) == 1)
            u.response = "IF";
        else if (best->m == 1 && std::abs(best->n) == 1 && other_side)
            u.response = "image";
        else if (best->m == 2 && std::abs(best->n) == 2 && between)
            u.response = "half-IF";
        else
            u.response = best->expr;
        u.source_rf_hz = best_tone.freq_hz;
        u.source_rf_dbfs = best_tone.level_dbfs;
        if (have_wanted)
            u.rejection_db = (a.check.wanted.level_dbfs - a.wanted_rf_dbfs) - (u.level_dbfs - best_tone.level_dbfs);
        const double if_centre = std::abs(a.check.wanted.line.freq_hz);
        u.in_if_band = std::abs(f - if_centre) <= s.plan.if_bandwidth_hz / 2;
        if (u.in_if_band) {
            u.limit_db = u.response == "image" ? s.plan.limits.image_rejection_db : s.plan.limits.spur_rejection_db;
            u.status = !std::isfinite(u.rejection_db) ? LineStatus::not_observable
                       : u.rejection_db >= u.limit_db ? LineStatus::pass
                                                      : LineStatus::fail;
        }
    }
}

}  // namespace

namespace {

PlanCheckOptions check_options(const SignalChain::Impl& m);

// The two-tone test (see TwoToneResult): the tones' conversions, IM3 and IM2 lines, the intercepts.
void analyze_two_tone(ChainAnalysis& a, const SignalChain::Impl& m) {
    const Setup& s = m.setup;
    TwoToneResult& r = a.two_tone;
    r.active = true;
    r.f1_hz = s.plan.wanted_hz - s.plan.two_tone_spacing_hz / 2;
    r.f2_hz = s.plan.wanted_hz + s.plan.two_tone_spacing_hz / 2;
    const double lo = m.layout.lo_hz, f1 = r.f1_hz, f2 = r.f2_hz;
    const bool quad = m.model.mixer.model == MixerModel::quadrature;
    const int n = wanted_conversion(lo, s.plan.wanted_hz, {s.plan.if_hz, s.plan.if_bandwidth_hz}) == 1 ? 1 : -1;
    // Where m·LO + (RF combination) lands: a real IF shows |·|; the IQ mixer's e^{−jωt} LO puts RF − LO.
    auto frame = [&](double rf_combination) { return quad ? rf_combination - lo : std::abs(lo + n * rf_combination); };
    auto line = [&](std::string label, LineKind kind, double f) {
        ExpectedLine e;
        e.label = std::move(label);
        e.m = 1;
        e.n = n;
        e.kind = kind;
        e.freq_hz = f;
        return e;
    };
    a.lines = {line("tone 1 (f1)", LineKind::wanted, frame(f1)), line("tone 2 (f2)", LineKind::spur, frame(f2)),
               line("IM3 2f1-f2", LineKind::spur, frame(2 * f1 - f2)),
               line("IM3 2f2-f1", LineKind::spur, frame(2 * f2 - f1)),
               line("IM2 f1+f2", LineKind::spur, quad ? f1 + f2 - lo : std::abs(lo - f1 - f2))};
    a.lines[4].n = -2;  // LO − (f1 + f2): through the LO fundamental, second order at the RF port

    // The tones at the RF port.
    const Spectrum& rs = a.rf;
    if (rs.power.empty()) {
        r.note = "no RF spectrum of the input";
    } else {
        const NoiseFloor fl = noise_floor(rs);
        const double half = std::max(2.0 * rs.rbw_hz, s.plan.two_tone_spacing_hz / 8);
        const Tone t1 = measure_tone(rs, f1 - half, f1 + half, fl.power_per_bin);
        const Tone t2 = measure_tone(rs, f2 - half, f2 + half, fl.power_per_bin);
        if (t1.found && t2.found && t1.power > 0 && t2.power > 0)
            r.tone_rf_dbfs = db_from_power((t1.power + t2.power) / 2);
        else
            r.note = "the two tones were not found at the RF port";
    }
    a.wanted_rf_dbfs = r.tone_rf_dbfs;
    a.drive_dbfs = r.tone_rf_dbfs;
    a.check = check_plan(a.if_out, a.lines, check_options(m));
    a.image.status = LineStatus::not_observable;
    a.image.limit_db = s.plan.limits.image_rejection_db;
    a.image.note = "two-tone test: the image is not measured";

    const LineResult& fund1 = a.check.wanted;
    const LineResult& fund2 = a.check.lines[0];
    if (fund1.status != LineStatus::pass || fund2.status != LineStatus::pass || !std::isfinite(r.tone_rf_dbfs)) {
        if (r.note.empty()) r.note = "the converted tones were not both seen at the IF output";
        return;
    }
    r.fundamental_if_dbfs = db_from_power((power_from_db(fund1.level_dbfs) + power_from_db(fund2.level_dbfs)) / 2);
    r.gain_db = r.fundamental_if_dbfs - r.tone_rf_dbfs;
    const double to_dbm = m.layout.dbm_at_0dbfs;
    auto level = [](const LineResult& l, bool& bound) {
        if (l.status == LineStatus::pass) return l.level_dbfs;
        if (l.status == LineStatus::below_floor) {
            bound = true;
            return l.upper_bound_dbfs;
        }
        return kNaN;
    };
    bool b_lo = false, b_hi = false;
    r.im3_low_dbfs = level(a.check.lines[1], b_lo);
    r.im3_high_dbfs = level(a.check.lines[2], b_hi);
    const double im3 = std::max(r.im3_low_dbfs, r.im3_high_dbfs);  // the worse side (NaN-safe below)
    if (std::isfinite(r.im3_low_dbfs) && std::isfinite(r.im3_high_dbfs)) {
        r.im3_bound = r.im3_low_dbfs >= r.im3_high_dbfs ? b_lo : b_hi;
        r.iip3_dbfs = r.tone_rf_dbfs + (r.fundamental_if_dbfs - im3) / 2;
        r.iip3_dbm = r.iip3_dbfs + to_dbm;
    }
    const LineResult& im2 = a.check.lines[3];
    r.im2_observable = im2.status != LineStatus::not_observable;
    r.im2_dbfs = level(im2, r.im2_bound);
    if (std::isfinite(r.im2_dbfs)) {
        r.iip2_dbfs = r.tone_rf_dbfs + (r.fundamental_if_dbfs - r.im2_dbfs);
        r.iip2_dbm = r.iip2_dbfs + to_dbm;
    }
    auto judge = [](double value, bool bound, const std::optional<double>& limit, double& limit_out) {
        if (!limit) return std::isfinite(value) ? LineStatus::pass : LineStatus::not_observable;
        limit_out = *limit;
        if (!std::isfinite(value)) return LineStatus::not_observable;
        if (value >= *limit) return LineStatus::pass;
        return bound ? LineStatus::below_floor : LineStatus::fail;
    };
    r.iip3_status = judge(r.iip3_dbm, r.im3_bound, s.plan.limits.iip3_min_dbm, r.iip3_limit_dbm);
    r.iip2_status = judge(r.iip2_dbm, r.im2_bound, s.plan.limits.iip2_min_dbm, r.iip2_limit_dbm);
    if (r.im3_bound || r.im2_bound) r.note = "a product under the floor: its intercept is at least the value shown";
}

PlanCheckOptions check_options(const SignalChain::Impl& m) {
    const Setup& s = m.setup;
    PlanCheckOptions po;
    po.lo_uncertainty_hz = std::abs(m.layout.lo_hz - m.layout.lo_nominal_hz);
    po.usable_fraction = s.if_chain.decimation > 1 ? 0.8 : 1.0;
    if (!m.zones[0].mixer.bypass()) {
        // Only where the emulated IF is exact (every zone's emulator shares the output window).
        po.usable_low_hz = m.zones[0].mixer.exact_low_hz();
        po.usable_high_hz = m.zones[0].mixer.exact_high_hz();
    }
    return po;
}

}  // namespace

ChainAnalysis SignalChain::analyze() const {
    const Impl& m = *impl_;
    ChainAnalysis a;
    a.if_out = m.if_welch->read();
    if (m.zones[0].rf_welch) a.rf = m.zones[0].rf_welch->read();
    const Setup& s = m.setup;
    const double wanted = s.plan.wanted_hz;
    if (s.plan.two_tone_spacing_hz > 0 && m.model.mixer.model != MixerModel::bypass) {
        analyze_two_tone(a, m);
        return a;
    }

    // The wanted at the RF port: measured where a window holds it.
    auto zone_holding = [&](double f) -> int {
        for (std::size_t z = 0; z < m.zones.size(); ++z)
            if (m.zones[z].rf_welch &&
                std::abs(f - m.zones[z].window.center_hz) < 0.45 * m.zones[z].window.sample_rate_hz)
                return static_cast<int>(z);
        return -1;
    };
    auto rf_spectrum = [&](int z) { return z == 0 ? a.rf : m.zones[static_cast<std::size_t>(z)].rf_welch->read(); };
    const double search = std::max(3.0 * (a.rf.rbw_hz > 0 ? a.rf.rbw_hz : 0.0), s.plan.if_bandwidth_hz / 2);
    if (const int z = zone_holding(wanted); z >= 0 && m.model.mixer.model != MixerModel::bypass) {
        const Spectrum rs = rf_spectrum(z);
        const NoiseFloor fl = noise_floor(rs);
        const Tone t = measure_tone(rs, wanted - search, wanted + search, fl.power_per_bin);
        if (t.found && t.power > 10 * fl.power_per_bin) a.wanted_rf_dbfs = t.level_dbfs;
    } else if (m.model.mixer.model != MixerModel::bypass) {
        a.notes.push_back("the wanted RF frequency is outside every RF window: predictions use a -10 dBFS drive");
    }
    const double atten = m.model.plan.rf_attenuation_db ? m.model.plan.rf_attenuation_db(wanted) : 0.0;
    a.drive_dbfs = (std::isnan(a.wanted_rf_dbfs) ? -10.0 : a.wanted_rf_dbfs) - atten;

    const EnvelopeWindow& w = m.layout.if_output;
    const Band window{w.center_hz, w.sample_rate_hz};
    const FilterChain& ifc = m.if_chain;
    a.lines =
        expected_lines(s, m.model, m.layout.lo_hz, a.drive_dbfs, window, [&ifc](double f) { return ifc.response(f); });

    // The image: the strongest signal in the image response band of an RF window, if any, and where it lands.
    ResponseQuery rq;
    rq.lo_hz = m.layout.lo_hz;
    rq.max_order = 2;  // the image is a (1, ±1) response: order 2
    rq.if_band = {s.plan.if_hz, s.plan.if_bandwidth_hz};
    rq.wanted_rf_hz = wanted;
    rq.rf_low_hz = s.plan.rf_low_hz;
    rq.rf_high_hz = s.plan.rf_high_hz;
    const std::vector<Response> responses = spurious_responses(rq);
    double image_rf_hz = kNaN, image_rf_db = kNaN;
    for (const Response& r : responses) {
        if (r.kind != ProductKind::image) continue;
        image_rf_hz = r.rf_hz;
        const int z = zone_holding(r.rf_hz);
        if (z < 0) {
            a.notes.push_back("the image band (" + format_frequency(r.rf_low_hz) + " to " +
                              format_frequency(r.rf_high_hz) +
                              ") is outside every RF window: image rejection not observable");
            break;
        }
        const Spectrum rs = rf_spectrum(z);
        const NoiseFloor fl = noise_floor(rs);
        const double half = std::max((r.rf_high_hz - r.rf_low_hz) / 2, 2 * rs.rbw_hz);
        const Tone t = measure_tone(rs, r.rf_hz - half, r.rf_hz + half, fl.power_per_bin);
        if (t.found && t.power > 100 * fl.power_per_bin) {
            image_rf_hz = t.freq_hz;
            image_rf_db = t.level_dbfs;
        } else {
            a.notes.push_back("no signal in the image band at the RF port: image rejection not observable");
        }
        break;
    }
    int image_line = -1;
    if (!std::isnan(image_rf_db)) {
        const double lo = m.layout.lo_hz;
        const bool quad = m.model.mixer.model == MixerModel::quadrature;
        // An IQ mixer tells the sides apart: the image-band signal reaches the wanted side only through the
        // imbalance (its mirror, lo − f); its own conversion lands on the other side of 0 Hz.
        const double f_if = quad ? lo - image_rf_hz : std::abs(lo - image_rf_hz);
        const double wanted_if = a.lines.front().freq_hz;
        if (std::abs(f_if - wanted_if) < 4 * a.if_out.rbw_hz) {
            a.notes.push_back("the image-band signal lands on the wanted output (" + format_frequency(f_if) +
                              "): offset it to measure image rejection");
            image_rf_db = kNaN;
        } else if (window.contains(f_if)) {
            ExpectedLine e;
            e.label = "image";
            e.m = 1;
            e.n = image_rf_hz > lo ? -1 : 1;
            e.kind = LineKind::image;
            e.freq_hz = f_if;
            e.limit_dbc = kNaN;  // judged by image_rejection against the rejection limit, not as a dBc line
            image_line = static_cast<int>(a.lines.size());
            a.lines.push_back(e);
        }
    }

    a.check = check_plan(a.if_out, a.lines, check_options(m));
    attribute_unexplained(a, m, rf_spectrum, zone_holding);
    if (image_line >= 0) {
        const LineResult& img = a.check.lines[static_cast<std::size_t>(image_line - 1)];
        a.image = image_rejection(image_rf_hz, a.wanted_rf_dbfs, a.check.wanted, image_rf_db, img,
                                  s.plan.limits.image_rejection_db);
    } else {
        a.image.rf_hz = image_rf_hz;
        a.image.limit_db = s.plan.limits.image_rejection_db;
        a.image.status = LineStatus::not_observable;
        a.image.note = a.notes.empty() ? "no image-band signal" : a.notes.back();
    }
    return a;
}

void SignalChain::update(const Setup& s) {
    Impl& m = *impl_;
    if (!(s.sources == m.setup.sources)) throw InputError("source: the sources changed; a new chain is needed");
    const Setup old = m.setup;
    m.setup = s;
    const bool rf = !(s.rf_filter == old.rf_filter);
    const bool mixer = rf || !(s.mixer == old.mixer) || !(s.plan == old.plan) || !(s.bench == old.bench) ||
                       s.if_chain.center_hz != old.if_chain.center_hz;
    const bool ifc = mixer || !(s.if_filters == old.if_filters) || !(s.if_chain == old.if_chain);
    const bool analyzer = ifc || !(s.analyzer == old.analyzer);
    if (rf) m.build_rf_filters();
    if (mixer) m.build_mixers();
    if (ifc) m.build_if_chain();
    if (analyzer) m.build_analyzers();
}

void SignalChain::set_probe(Probe p) {
    impl_->probe = p;
    impl_->build_probe_welch();
}

void SignalChain::reset() {
    Impl& m = *impl_;
    for (Lane& l : m.lanes) {
        l.head = l.tail = 0;
        l.phase = 0.0;
        if (l.resampler) msresamp_crcf_reset(l.resampler->q);
    }
    for (Zone& z : m.zones) {
        if (z.filtered) z.rf_filter.reset();
        z.mixer.reset();
        if (z.rf_welch) z.rf_welch->reset();
    }
    m.if_chain.reset();
    m.if_welch->reset();
    if (m.probe_welch) m.probe_welch->reset();
    m.counters = {};
    m.last_block = m.if_count = 0;
}

const Setup& SignalChain::setup() const {
    return impl_->setup;
}
const ChainLayout& SignalChain::layout() const {
    return impl_->layout;
}
const BenchModel& SignalChain::model() const {
    return impl_->model;
}
const SignalChainCounters& SignalChain::counters() const {
    return impl_->counters;
}
Probe SignalChain::probe() const {
    return impl_->probe;
}
EnvelopeWindow SignalChain::probe_window(Probe p) const {
    return impl_->window_of(p);
}

Spectrum SignalChain::probe_spectrum() const {
    const Impl& m = *impl_;
    if (m.probe_welch) return m.probe_welch->read();
    if (m.probe == Probe::rf_input && m.zones[0].rf_welch) return m.zones[0].rf_welch->read();
    return m.if_welch->read();
}

std::span<const cf32> SignalChain::probe_samples() const {
    const Impl& m = *impl_;
    const Zone& z = m.zones[0];
    switch (m.probe) {
        case Probe::rf_input:
            return {z.in.data(), m.last_block};
        case Probe::rf_filtered:
            return {z.filtered ? z.filt.data() : z.in.data(), m.last_block};
        case Probe::mixer_output:
            return {m.mix.data(), m.last_block};
        case Probe::if_output:
            return {m.if_out.data(), m.if_count};
    }
    return {};
}

const FilterChain* SignalChain::rf_filter() const {
    return impl_->zones[0].filtered ? &impl_->zones[0].rf_filter : nullptr;
}
const FilterChain& SignalChain::if_chain() const {
    return impl_->if_chain;
}

}  // namespace hb
