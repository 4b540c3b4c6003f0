#include "dsp/filter_presets.hpp"

#include <array>

namespace hb {
namespace {

FilterSpec make(std::string_view name, FilterType type, double center, double bw, int order, double ripple,
                double atten, double loss) {
    FilterSpec f;
    f.type = type;
    f.preset = std::string(name);
    f.response = FilterResponse::bandpass;
    f.center_hz = center;
    f.bandwidth_hz = bw;
    f.order = order;
    f.ripple_db = ripple;
    f.stop_atten_db = atten;
    f.insertion_loss_db = loss;
    return f;
}

// Values are common practice for the class (typical figures of such parts as a family, not the data of any one
// part); they are modelled with an analog prototype that has the same -3 dB width, skirt and stop-band floor.
const std::array<FilterPreset, 3> kPresets{{
    // 10.7 MHz ceramic-type band-pass, about 200 kHz wide at -3 dB, a few dB insertion loss, about 50 dB
    // out-of-band rejection (the floor set by the package feedthrough in real parts), specified with a few hundred
    // ohms (typically 330 ohm) source and load; the model assumes those terminations. Inverse Chebyshev, order 4
    // (even, so the 50 dB floor stays flat far out like a real part's feedthrough): -20 dB over about 325 kHz,
    // -40 dB over about 470 kHz, the floor beyond +-265 kHz of the centre. Two in series (sections = 2) give
    // about 100 dB, the usual bench practice.
    {"ceramic-10m7",
     "10.7 MHz ceramic-type band-pass, 200 kHz at -3 dB, 4 dB loss, 50 dB stop-band floor (330 ohm terminations)",
     make("ceramic-10m7", FilterType::chebyshev2, 10.7e6, 200e3, 4, 0.5, 50.0, 4.0)},
    // 455 kHz-class narrow IF filter for AM-bandwidth channels: 6 kHz ripple band, about 1 dB ripple, 6 dB loss,
    // 50 dB floor. Elliptic order 4 gives the steep skirts of such ladder filters: the floor from +-5.8 kHz.
    {"ceramic-455k", "455 kHz narrow IF band-pass, 6 kHz pass-band, 1 dB ripple, 6 dB loss, 50 dB stop-band floor",
     make("ceramic-455k", FilterType::elliptic, 455e3, 6e3, 4, 1.0, 50.0, 6.0)},
    // The wider 455 kHz class used for broadcast-quality AM and data: 15 kHz at -3 dB, soft skirts, 40 dB floor.
    {"ceramic-455k-wide", "455 kHz wide IF band-pass, 15 kHz at -3 dB, 4 dB loss, 40 dB stop-band floor",
     make("ceramic-455k-wide", FilterType::chebyshev2, 455e3, 15e3, 4, 0.5, 40.0, 4.0)},
}};

}  // namespace

std::span<const FilterPreset> filter_presets() {
    return kPresets;
}

std::optional<FilterSpec> filter_preset(std::string_view name) {
    for (const auto& p : kPresets)
        if (p.name == name) return p.spec;
    return std::nullopt;
}

std::string filter_preset_names() {
    std::string s;
    for (const auto& p : kPresets) {
        if (!s.empty()) s += '|';
        s += p.name;
    }
    return s;
}

}  // namespace hb
