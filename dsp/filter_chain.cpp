#include "dsp/filter_chain.hpp"

#include <algorithm>
#include <cmath>

#include "dsp/errors.hpp"
#include "dsp/units.hpp"

namespace hb {
namespace {

void init_kernels(ChainStage& st, std::size_t block) {
    if (st.realisation.form == RealisationForm::pole_sections) {
        st.main.init(st.realisation.sections);
        st.mirror.init(st.realisation.mirror_sections);
    } else if (st.realisation.form == RealisationForm::fir) {
        st.fir.init(st.realisation.taps, block);
    }
}

}  // namespace

FirLowpass anti_alias_design(int d) {
    const double out = 1.0 / d;  // output rate as a fraction of the input rate
    return design_fir_lowpass(FirDesignMethod::kaiser, 0.4 * out, 0.6 * out, 100.0, 0.1,
                              "anti-alias filter for decimation by " + std::to_string(d));
}

FilterChain make_filter_chain(const std::vector<FilterModel>& filters, const ChainOptions& opt) {
    const double fs = opt.window.sample_rate_hz;
    if (!(std::isfinite(fs) && fs > 0))
        throw InputError("filter chain: the window needs a sample rate above 0 Hz, got " + format_number(fs));
    if (opt.decimation < 1 || opt.decimation > 4096)
        throw InputError("filter chain: decimation " + std::to_string(opt.decimation) + " is outside 1..4096");
    if (!std::isfinite(opt.gain_db) || std::abs(opt.gain_db) > 300)
        throw InputError("filter chain: gain " + format_number(opt.gain_db) + " dB is not a usable gain");
    FilterChain c;
    c.input = opt.window;
    c.decimation = opt.decimation;
    c.output = {opt.window.center_hz, fs / opt.decimation};
    c.gain = static_cast<float>(amplitude_from_db(opt.gain_db));
    c.block_ = std::max<std::size_t>(opt.max_block, 16);
    bool last_is_user_fir = false;
    for (const FilterModel& given : filters) {
        if (given.kind == ModelKind::none) continue;
        FilterModel m = given;
        if (m.kind == ModelKind::fir && (std::abs(m.fir_window.sample_rate_hz - fs) > 1e-9 * fs ||
                                         std::abs(m.fir_window.center_hz - opt.window.center_hz) > 1e-9 * fs)) {
            ModelOptions mo;
            mo.fir_window = opt.window;
            m = make_filter_model(given.spec, given.name, mo);
        }
        const Realisation r = realise_filter(m, opt.window);
        const int n = m.spec.sections;
        for (int k = 1; k <= n; ++k) {
            ChainStage st;
            st.label = m.name + (n > 1 ? " section " + std::to_string(k) + "/" + std::to_string(n) : "");
            st.realisation = r;
            c.stages.push_back(std::move(st));
        }
        last_is_user_fir = m.kind == ModelKind::fir;
    }
    if (c.decimation > 1) {
        if (!last_is_user_fir) {
            ChainStage st;
            const FirLowpass aa = anti_alias_design(c.decimation);
            st.label = "anti-alias";
            st.realisation.form = RealisationForm::fir;
            st.realisation.taps.assign(aa.taps.begin(), aa.taps.end());
            st.realisation.why = "anti-alias FIR, " + std::to_string(aa.taps.size()) +
                                 " taps (Kaiser, 100 dB beyond 0.6 of the output rate)";
            c.stages.push_back(std::move(st));
        }
        c.stages.back().decimates = true;
    }
    for (auto& st : c.stages) init_kernels(st, c.block_);
    c.buf_.assign(c.block_, cf32{});
    c.tmp_.assign(c.block_, cf32{});
    return c;
}

std::size_t FilterChain::process(const cf32* in, std::size_t n, cf32* out) {
    std::size_t produced = 0;
    while (n > 0) {
        const std::size_t m = std::min(n, block_);
        cf32* b = buf_.data();
        if (gain == 1.0f)
            std::copy(in, in + m, b);
        else
            for (std::size_t i = 0; i < m; ++i) b[i] = in[i] * gain;
        bool written = false;
        for (ChainStage& st : stages) {
            const Realisation& r = st.realisation;
            if (st.decimates) {
                produced += st.fir.process(b, m, out + produced, decimation, phase_);
                written = true;
                break;  // the decimating stage is always the last
            }
            if (r.form == RealisationForm::pole_sections) {
                if (st.mirror.sections > 0) {
                    cf32* t = tmp_.data();
                    std::copy(b, b + m, t);
                    st.mirror.process(t, m);
                    const cf32 d(static_cast<float>(r.direct.real()), static_cast<float>(r.direct.imag()));
                    if (d != cf32(0.0f))
                        for (std::size_t i = 0; i < m; ++i)
                            t[i] += cf32(d.real() * b[i].real() - d.imag() * b[i].imag(),
                                         d.real() * b[i].imag() + d.imag() * b[i].real());
                    st.main.process(b, m);
                    for (std::size_t i = 0; i < m; ++i) b[i] += t[i];
                } else {
                    st.main.process(b, m);
                }
            } else if (r.form == RealisationForm::fir) {
                int ph = 0;
                st.fir.process(b, m, b, 1, ph);
            }
        }
        if (!written) {
            std::copy(b, b + m, out + produced);
            produced += m;
        }
        in += m;
        n -= m;
    }
    return produced;
}

void FilterChain::reset() {
    phase_ = 0;
    for (ChainStage& st : stages) {
        st.main.reset();
        st.mirror.reset();
        st.fir.reset();
    }
}

std::complex<double> FilterChain::response(double f) const {
    const double fs = input.sample_rate_hz;
    const double nu = f - input.center_hz;
    const double th = kTwoPi * nu / fs;
    std::complex<double> h = gain;
    for (const ChainStage& st : stages)
        h *= st.realisation.response(nu, fs) * std::polar(1.0, -th * st.realisation.delay_samples);
    return h;
}

int FilterChain::delay_samples() const {
    int d = 0;
    for (const ChainStage& st : stages) {
        d += st.realisation.delay_samples;
        if (st.label == "anti-alias") d += static_cast<int>(st.realisation.taps.size() - 1) / 2;
    }
    return d;
}

}  // namespace hb
