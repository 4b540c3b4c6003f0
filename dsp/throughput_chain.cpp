#include "dsp/throughput_chain.hpp"

// clang-format off
#include <complex>  // before liquid.h, so that liquid_float_complex is std::complex<float>
#include <liquid/liquid.h>
// clang-format on

#include <cmath>
#include <string>

#include "dsp/errors.hpp"
#include "dsp/filter_fir.hpp"
#include "dsp/lo.hpp"

namespace hb {
namespace {

void check_spec(const ThroughputChainSpec& s) {
    if (s.harmonics < 1 || s.harmonics > 64)
        throw InputError("bench chain: harmonics " + std::to_string(s.harmonics) + ", expected 1 to 64");
    if (s.fir_taps < 1 || s.fir_taps > 4096)
        throw InputError("bench chain: fir_taps " + std::to_string(s.fir_taps) + ", expected 1 to 4096");
    if (s.decimation < 1 || s.decimation > 256)
        throw InputError("bench chain: decimation " + std::to_string(s.decimation) + ", expected 1 to 256");
}

LoMixSpec lo_spec(const ThroughputChainSpec& s) {
    LoMixSpec l;
    l.lo_cycles = s.lo_cycles;
    l.harmonic = default_lo_harmonics(s.harmonics);
    l.a3 = s.a3;
    l.iq_gain_db = s.iq_gain_db;
    l.iq_phase_deg = s.iq_phase_deg;
    l.dc = s.dc;
    return l;
}

}  // namespace

std::vector<std::complex<double>> default_lo_harmonics(int k) {
    LoWaveform w;
    w.shape = LoShape::bipolar;
    w.duty = 0.505;
    w.edge = 0.02;
    w.harmonics = std::max(k, 1);
    std::vector<std::complex<double>> g(static_cast<std::size_t>(std::max(k, 0)));
    // c_m·cos(mθ) has c_m/2 at +m (the analytic part the complex chain keeps).
    for (int m = 1; m <= k; ++m)
        g[static_cast<std::size_t>(m - 1)] = std::polar(lo_cosine_coefficient(w, m) / 2.0, 0.1 * m);
    return g;
}

std::vector<double> throughput_fir_taps(int taps, int decimation) {
    return kaiser_lowpass(taps, 0.5 / decimation, kaiser_beta(80.0));
}

ThroughputChain ThroughputChain::make(const ThroughputChainSpec& spec) {
    check_spec(spec);
    ThroughputChain c;
    c.spec_ = spec;
    c.lo_.init(lo_spec(spec));
    const std::vector<double> h = throughput_fir_taps(spec.fir_taps, spec.decimation);
    c.fir_.init(std::vector<std::complex<double>>(h.begin(), h.end()), kBlock);
    c.welch_ = std::make_unique<Welch>(Welch::make(spec.analyzer, 0.0, 1.0, Fft::Effort::measure));
    c.dec_.assign(kBlock / static_cast<std::size_t>(spec.decimation) + 1, {});
    return c;
}

void ThroughputChain::reset() {
    lo_.reset();
    fir_.reset();
    phase_ = 0;
    welch_->reset();
    dec_count_ = 0;
}

void ThroughputChain::process(std::span<const std::complex<float>> in) {
    for (std::size_t pos = 0; pos < in.size(); pos += kBlock) {
        const std::size_t n = std::min(kBlock, in.size() - pos);
        // Straight into the FIR's input; the next block (when whole) is prefetched as this one goes.
        const std::complex<float>* next = pos + n + kBlock <= in.size() ? in.data() + pos + n : nullptr;
        lo_.process(in.data() + pos, n, fir_.input_re(), fir_.input_im(), next);
        dec_count_ = fir_.run(n, dec_.data(), spec_.decimation, phase_);
        welch_->push(std::span<const std::complex<float>>(dec_.data(), dec_count_));
    }
}

// ---------------------------------------------------------------------------------------------------------------

struct LiquidChain::Impl {
    ThroughputChainSpec spec;
    std::vector<nco_crcf> ncos;
    std::vector<std::complex<float>> g;
    firdecim_crcf decim = nullptr;
    spgramcf spgram = nullptr;
    std::complex<float> mu, eta, dc;
    float a3 = 0.0f;
    std::vector<std::complex<float>> u, mixed, acc, out;
    std::size_t out_count = 0;
    ~Impl() {
        for (nco_crcf q : ncos) nco_crcf_destroy(q);
        if (decim) firdecim_crcf_destroy(decim);
        if (spgram) spgramcf_destroy(spgram);
    }
};

LiquidChain::LiquidChain() = default;
LiquidChain::~LiquidChain() = default;
LiquidChain::LiquidChain(LiquidChain&&) noexcept = default;
LiquidChain& LiquidChain::operator=(LiquidChain&&) noexcept = default;

LiquidChain LiquidChain::make(const ThroughputChainSpec& spec) {
    check_spec(spec);
    LiquidChain c;
    c.impl_ = std::make_unique<Impl>();
    Impl& m = *c.impl_;
    m.spec = spec;
    const auto gd = default_lo_harmonics(spec.harmonics);
    for (int k = 1; k <= spec.harmonics; ++k) {
        nco_crcf q = nco_crcf_create(LIQUID_NCO);
        const double f = std::fmod(k * spec.lo_cycles, 1.0);
        nco_crcf_set_frequency(q, static_cast<float>(6.283185307179586 * f));
        nco_crcf_set_phase(q, 0.0f);
        m.ncos.push_back(q);
        m.g.emplace_back(static_cast<float>(gd[static_cast<std::size_t>(k - 1)].real()),
                         static_cast<float>(gd[static_cast<std::size_t>(k - 1)].imag()));
    }
    std::complex<double> mu, eta;
    iq_imbalance_coefficients(spec.iq_gain_db, spec.iq_phase_deg, mu, eta);
    m.mu = std::complex<float>(mu);
    m.eta = std::complex<float>(eta);
    m.dc = std::complex<float>(spec.dc);
    m.a3 = static_cast<float>(spec.a3);
    const std::vector<double> h = throughput_fir_taps(spec.fir_taps, spec.decimation);
    std::vector<float> hf(h.begin(), h.end());
    m.decim = firdecim_crcf_create(static_cast<unsigned>(spec.decimation), hf.data(), static_cast<unsigned>(hf.size()));
    const auto nfft = static_cast<unsigned>(spec.analyzer.fft_size);
    const auto hop = static_cast<unsigned>(std::lround(nfft * (1.0 - spec.analyzer.overlap)));
    m.spgram = spgramcf_create(nfft, LIQUID_WINDOW_BLACKMANHARRIS, nfft, std::max(1u, hop));
    const std::size_t b = ThroughputChain::kBlock;
    m.u.resize(b);
    m.mixed.resize(b);
    m.acc.resize(b);
    m.out.resize(b / static_cast<std::size_t>(spec.decimation) + 1);
    return c;
}

void LiquidChain::process(std::span<const std::complex<float>> in) {
    Impl& m = *impl_;
    const std::size_t D = static_cast<std::size_t>(m.spec.decimation);
    for (std::size_t pos = 0; pos < in.size(); pos += ThroughputChain::kBlock) {
        const std::size_t n = std::min(ThroughputChain::kBlock, in.size() - pos) / D * D;
        if (n == 0) break;
        const std::complex<float>* x = in.data() + pos;
        for (std::size_t i = 0; i < n; ++i) m.u[i] = x[i] * (1.0f + m.a3 * std::norm(x[i]));
        std::fill(m.acc.begin(), m.acc.begin() + static_cast<std::ptrdiff_t>(n), std::complex<float>{});
        for (std::size_t k = 0; k < m.ncos.size(); ++k) {
            nco_crcf_mix_block_up(m.ncos[k], m.u.data(), m.mixed.data(), static_cast<unsigned>(n));
            const std::complex<float> g = m.g[k];
            for (std::size_t i = 0; i < n; ++i) m.acc[i] += g * m.mixed[i];
        }
        for (std::size_t i = 0; i < n; ++i) m.acc[i] = m.mu * m.acc[i] + m.eta * std::conj(m.acc[i]) + m.dc;
        firdecim_crcf_execute_block(m.decim, m.acc.data(), static_cast<unsigned>(n / D), m.out.data());
        m.out_count = n / D;
        spgramcf_write(m.spgram, m.out.data(), static_cast<unsigned>(m.out_count));
    }
}

std::span<const std::complex<float>> LiquidChain::last_output() const {
    return {impl_->out.data(), impl_->out_count};
}

}  // namespace hb
