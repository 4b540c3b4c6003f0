// The bench generator's virtual RF world and the block synthesiser that shows a window of it.
//
// A Scenario lists signals at absolute RF frequencies with levels in dBm at the RF port. A Synth is tuned
// like a receiver (centre frequency, sample rate, analog bandwidth, gain) and produces the complex baseband
// stream that window would give: only the signals inside the window are synthesised, each at its offset from
// the centre, so nothing outside ever folds in.
//
// Level mapping (stated once, used everywhere):
//     dBFS = dBm - full_scale_dbm + gain_db
// i.e. a CW tone of full_scale_dbm reads 0 dBFS (|z| = 1) at 0 dB gain, and every dB of gain lifts everything
// by a dB, as in a tuner whose gain sits before the ADC. The stream's level offset (dBm = dBFS + offset) is
// therefore full_scale_dbm - gain_db. The noise floor is given in dBm/Hz at the RF port (scaled by the gain);
// an optional ADC floor in dBFS/Hz is added after the gain. With clip on, I and Q are limited to +-1 (the ADC's
// full scale), so an overdriven front end distorts as a real one does.
//
// Life cycle (as the other blocks): construct from a scenario and seed -> tune() (allocates; not per block)
// -> process() one kSynthBlock block at a time (no allocation) -> reset() to start the stream over.
// Determinism: sample n of the stream depends only on the scenario, the seed, the tuning and n.
#pragma once

#include <complex>
#include <cstdint>
#include <memory>
#include <span>
#include <string>
#include <string_view>
#include <vector>

#include "dsp/setup.hpp"

namespace hb {

enum class SignalType { cw, two_tone, am, fm, stations, noise };
enum class ModSource { tone, noise };  // what modulates an AM or FM carrier
enum class ModKind { am, fm };         // how the stations of a band are modulated

// One entry of a scenario. Plain data; which fields matter depends on `type` (see validate_scenario).
struct SignalSpec {
    SignalType type = SignalType::cw;
    std::string label;  // optional, for listings
    // cw, am, fm: the carrier; two_tone: the centre between the two tones
    double frequency_hz = 0.0;
    // cw: the tone; two_tone: each tone; am: the unmodulated carrier; fm: the (constant) total power;
    // stations: the mean carrier level
    double level_dbm = -60.0;
    double spacing_hz = 0.0;  // two_tone: tone spacing; stations: channel raster
    // am, fm (and stations): modulation
    ModSource modulation = ModSource::tone;
    double tone_hz = 1000.0;                  // modulating tone
    double modulation_bandwidth_hz = 3000.0;  // noise modulation: -3 dB corner of a first-order low-pass
    double depth = 0.5;          // AM modulation index: peak for a tone, rms for noise
    double deviation_hz = 5e3;   // FM deviation: peak for a tone, rms for noise
    // stations: a band of invented stations on a raster, content from the seed
    double first_hz = 0.0;        // first raster channel
    int count = 0;                // raster channels
    double occupancy = 1.0;       // fraction of channels on air (which ones: from the seed)
    double level_spread_db = 0.0; // levels spread uniformly over +-spread/2 around level_dbm (from the seed)
    ModKind station_modulation = ModKind::am;
    double tone_low_hz = 300.0;   // each station is modulated by one tone in [low, high] (from the seed)
    double tone_high_hz = 3000.0;
    // noise: a band of white noise
    double low_hz = 0.0;
    double high_hz = 0.0;
    double density_dbm_per_hz = -150.0;
    friend bool operator==(const SignalSpec&, const SignalSpec&) = default;
};

struct Scenario {
    std::string name;
    double full_scale_dbm = 0.0;             // CW level at the RF port that reads 0 dBFS at 0 dB gain
    double noise_floor_dbm_per_hz = -165.0;  // white, at the RF port (scaled by the gain)
    bool has_adc_noise = false;
    double adc_noise_dbfs_per_hz = -150.0;   // white, after the gain (not scaled); used when has_adc_noise
    bool clip = true;                        // limit I and Q to +-1 (ADC full scale)
    std::vector<SignalSpec> signals;
    friend bool operator==(const Scenario&, const Scenario&) = default;
};

// Problems with key paths such as "signal[2].deviation_hz"; empty when the scenario is usable.
std::vector<SetupProblem> validate_scenario(const Scenario& s);

std::string_view to_string(SignalType);
std::string_view to_string(ModSource);
std::string_view to_string(ModKind);
bool parse(std::string_view text, SignalType& out);
bool parse(std::string_view text, ModSource& out);
bool parse(std::string_view text, ModKind& out);
template <> std::string allowed_names<SignalType>();
template <> std::string allowed_names<ModSource>();
template <> std::string allowed_names<ModKind>();

// How the synthesiser is tuned: what a receiver's settings would be.
struct Tuning {
    double center_hz = 100e6;
    double sample_rate_hz = 2.4e6;
    double bandwidth_hz = 0.0;  // analog bandwidth centred on center_hz; 0 or > sample rate: the sample rate
    double gain_db = 0.0;
    bool terminated = false;    // input terminated (no signals, only the noise floors)
    friend bool operator==(const Tuning&, const Tuning&) = default;
};

// What a tuning shows, for listings and tests.
struct WindowContents {
    int tones = 0;         // pure tones synthesised (CW, two-tone, each AM-by-tone carrier and sideband)
    int carriers = 0;      // carriers with per-sample modulation (FM, AM by noise)
    int noise_bins = 0;    // spectral bins of band noise (0: none, or merged into the white floor)
    int left_out = 0;      // modulated carriers straddling the window's edge, left out instead of folded
    double white_noise_power = 0.0;  // variance of the white floor per complex sample (full scale = 1)
    double level_offset_db = 0.0;    // dBm = dBFS + level_offset_db
};

inline constexpr std::size_t kSynthBlock = 4096;  // samples per process() call

// The expanded list of stations of a band: which raster channels are on air, with their level and tone.
struct Station {
    double frequency_hz = 0.0;
    double level_dbm = 0.0;
    double tone_hz = 0.0;
};
std::vector<Station> stations_of(const SignalSpec& band, std::size_t signal_index, std::uint64_t seed);

class Synth {
public:
    // Throws InputError when validate_scenario finds problems.
    Synth(Scenario scenario, std::uint64_t seed);
    ~Synth();
    Synth(const Synth&) = delete;
    Synth& operator=(const Synth&) = delete;

    // Chooses the window; allocates and plans here. Keeps the sample position (stream time goes on).
    void tune(const Tuning& t);
    // Writes the next kSynthBlock samples (out.size() must be kSynthBlock).
    void process(std::span<std::complex<float>> out);
    // Back to sample 0 (same samples again).
    void reset();

    const Tuning& tuning() const;
    const WindowContents& contents() const;
    const Scenario& scenario() const;
    std::uint64_t position() const;  // index of the next sample

private:
    struct Impl;
    std::unique_ptr<Impl> impl_;
};

}  // namespace hb
