// hetbench-gen: the bench generator as a SoapySDR device module, so "no hardware" still goes through
// SoapySDR like any receiver. One RX channel showing a window of a virtual RF world (a scenario file,
// dsp/synth.hpp), tuned like a real tuner: frequency (1 Hz steps), sample rate (whole Hz), analog bandwidth,
// gain (LNA in 3 dB steps + IF in 0.5 dB steps), antenna (RX or TERM, a terminated input).
//
// Device args (all optional):
//   scenario=PATH        the world (TOML); none: an empty world, the noise floor only
//   seed=N               random content and phases (default 1); same seed, same samples
//   throttle=true|false  pace the stream to real time (default true; false for tests: as fast as read)
//   format=CF32|CS16     the native stream format reported (both can be streamed)
// Fault injection (times in seconds of stream time, i.e. samples produced / sample rate):
//   overflow_every=N, overflow_skip=M   every N samples, report an overflow and drop M samples (default 4096)
//   timeout_at=T, timeout_count=K       from T, K reads (default 1) wait their timeout and return a timeout
//   error_at=T                          from T, every read returns a stream error
//   disconnect_at=T                     from T, the device is gone: every read throws
//   freeze_at=T                         from T, no more samples: every read times out
#include <SoapySDR/Device.hpp>
#include <SoapySDR/Formats.hpp>
#include <SoapySDR/Registry.hpp>
#include <SoapySDR/Time.hpp>
#include <algorithm>
#include <chrono>
#include <cmath>
#include <complex>
#include <cstring>
#include <mutex>
#include <stdexcept>
#include <thread>

#include "devices/scenario_file.hpp"
#include "dsp/synth.hpp"
#include "dsp/units.hpp"

namespace {

using Clock = std::chrono::steady_clock;
using cf32 = std::complex<float>;

constexpr const char* kDriver = "hetbench-gen";
constexpr double kMinFreq = 0.0, kMaxFreq = 6e9;
constexpr double kMinRate = 1e3, kMaxRate = 60e6;
constexpr double kLnaMax = 30.0, kLnaStep = 3.0, kIfMax = 30.0, kIfStep = 0.5;
constexpr std::size_t kMtu = 8192;
constexpr double kBufferSeconds = 0.25;  // throttled: a reader this far behind overflows the device buffer

const char* const kArgKeys[] = {"scenario",      "seed",       "throttle",      "format",   "overflow_every",
                                "overflow_skip", "timeout_at", "timeout_count", "error_at", "disconnect_at",
                                "freeze_at",     "label",      "serial"};

bool is_our_key(const std::string& k) {
    return std::find(std::begin(kArgKeys), std::end(kArgKeys), k) != std::end(kArgKeys);
}

// Keys a SoapyRemote server leaves in the args it hands to the local driver: not ours, not errors.
bool is_transport_key(const std::string& k) {
    return k == "remote" || k.rfind("remote:", 0) == 0 || k.rfind("soapy_remote", 0) == 0;
}

std::string allowed_keys() {
    std::string s;
    for (const char* k : kArgKeys) s += (s.empty() ? "" : ", ") + std::string(k);
    return s;
}

double arg_number(const SoapySDR::Kwargs& a, const std::string& key, double def, double lo, double hi) {
    auto it = a.find(key);
    if (it == a.end()) return def;
    char* end = nullptr;
    const double v = std::strtod(it->second.c_str(), &end);
    if (it->second.empty() || *end != '\0' || !std::isfinite(v) || v < lo || v > hi)
        throw std::runtime_error(std::string(kDriver) + ": device arg " + key + "=\"" + it->second +
                                 "\": expected a number from " + hb::format_number(lo) + " to " +
                                 hb::format_number(hi));
    return v;
}

bool arg_bool(const SoapySDR::Kwargs& a, const std::string& key, bool def) {
    auto it = a.find(key);
    if (it == a.end()) return def;
    if (it->second == "true" || it->second == "1") return true;
    if (it->second == "false" || it->second == "0") return false;
    throw std::runtime_error(std::string(kDriver) + ": device arg " + key + "=\"" + it->second +
                             "\": expected true or false");
}

struct Faults {
    std::uint64_t overflow_every = 0, overflow_skip = 4096;
    double timeout_at = -1, error_at = -1, disconnect_at = -1, freeze_at = -1;  // < 0: off
    int timeout_count = 1;
};

class GeneratorDevice : public SoapySDR::Device {
  public:
    explicit GeneratorDevice(const SoapySDR::Kwargs& args) : synth_(load(args), seed_of(args)) {
        for (const auto& [k, v] : args)
            if (!is_our_key(k) && k != "driver" && !is_transport_key(k))
                throw std::runtime_error(std::string(kDriver) + ": unknown device arg \"" + k +
                                         "\"; allowed: " + allowed_keys());
        scenario_path_ = args.count("scenario") ? args.at("scenario") : "";
        seed_ = seed_of(args);
        throttle_ = arg_bool(args, "throttle", true);
        if (args.count("format")) {
            native_ = args.at("format");
            if (native_ != SOAPY_SDR_CF32 && native_ != SOAPY_SDR_CS16)
                throw std::runtime_error(std::string(kDriver) + ": device arg format=\"" + native_ +
                                         "\": expected CF32 or CS16");
        }
        faults_.overflow_every = static_cast<std::uint64_t>(arg_number(args, "overflow_every", 0, 0, 1e15));
        faults_.overflow_skip = static_cast<std::uint64_t>(arg_number(args, "overflow_skip", 4096, 1, 1e12));
        faults_.timeout_at = arg_number(args, "timeout_at", -1, 0, 1e9);
        faults_.timeout_count = static_cast<int>(arg_number(args, "timeout_count", 1, 1, 1e6));
        faults_.error_at = arg_number(args, "error_at", -1, 0, 1e9);
        faults_.disconnect_at = arg_number(args, "disconnect_at", -1, 0, 1e9);
        faults_.freeze_at = arg_number(args, "freeze_at", -1, 0, 1e9);
        next_overflow_ = faults_.overflow_every;
        buffer_.resize(hb::kSynthBlock);
        hb::Tuning t;
        t.center_hz = 100e6;
        t.sample_rate_hz = 2.4e6;
        t.gain_db = 20.0;
        lna_db_ = 18;
        if_db_ = 2;
        retune(t);
    }

    // ---- identification ----
    std::string getDriverKey() const override { return kDriver; }
    std::string getHardwareKey() const override { return "hetbench bench generator"; }
    SoapySDR::Kwargs getHardwareInfo() const override {
        SoapySDR::Kwargs info;
        info["scenario"] = scenario_path_.empty() ? "(none: noise floor only)" : scenario_path_;
        info["scenario_name"] = synth_.scenario().name;
        info["seed"] = std::to_string(seed_);
        info["level_mapping"] = "dBFS = dBm - full_scale_dbm + gain_db; full_scale_dbm = " +
                                hb::format_number(synth_.scenario().full_scale_dbm);
        info["throttle"] = throttle_ ? "true" : "false";
        return info;
    }
    std::size_t getNumChannels(const int dir) const override { return dir == SOAPY_SDR_RX ? 1 : 0; }

    // ---- settings: the stream's calibration, readable by any client ----
    SoapySDR::ArgInfoList getSettingInfo() const override {
        SoapySDR::ArgInfo a;
        a.key = "level_offset_db";
        a.name = "Level offset";
        a.description = "dBm at the RF port = dBFS + this (read-only; follows the gain)";
        a.units = "dB";
        a.type = SoapySDR::ArgInfo::FLOAT;
        return {a};
    }
    std::string readSetting(const std::string& key) const override {
        std::lock_guard<std::mutex> lock(mutex_);
        if (key == "level_offset_db") return hb::format_number(synth_.contents().level_offset_db);
        return "";
    }

    // ---- antenna ----
    std::vector<std::string> listAntennas(const int, const std::size_t) const override { return {"RX", "TERM"}; }
    void setAntenna(const int, const std::size_t, const std::string& name) override {
        if (name != "RX" && name != "TERM")
            throw std::runtime_error(std::string(kDriver) + ": unknown antenna \"" + name + "\"; expected RX or TERM");
        std::lock_guard<std::mutex> lock(mutex_);
        hb::Tuning t = synth_.tuning();
        t.terminated = name == "TERM";
        retune(t);
    }
    std::string getAntenna(const int, const std::size_t) const override {
        std::lock_guard<std::mutex> lock(mutex_);
        return synth_.tuning().terminated ? "TERM" : "RX";
    }

    // ---- gain: LNA (3 dB steps) then IF (0.5 dB steps); drivers round, so clients read back ----
    std::vector<std::string> listGains(const int, const std::size_t) const override { return {"LNA", "IF"}; }
    void setGain(const int, const std::size_t, const double value) override {
        std::lock_guard<std::mutex> lock(mutex_);
        const double v = std::clamp(value, 0.0, kLnaMax + kIfMax);
        lna_db_ = std::min(kLnaMax, std::floor(v / kLnaStep) * kLnaStep);
        if_db_ = std::clamp(std::round((v - lna_db_) / kIfStep) * kIfStep, 0.0, kIfMax);
        apply_gain();
    }
    void setGain(const int, const std::size_t, const std::string& name, const double value) override {
        std::lock_guard<std::mutex> lock(mutex_);
        if (name == "LNA")
            lna_db_ = std::clamp(std::round(value / kLnaStep) * kLnaStep, 0.0, kLnaMax);
        else if (name == "IF")
            if_db_ = std::clamp(std::round(value / kIfStep) * kIfStep, 0.0, kIfMax);
        else
            throw std::runtime_error(std::string(kDriver) + ": unknown gain \"" + name + "\"; expected LNA or IF");
        apply_gain();
    }
    double getGain(const int, const std::size_t) const override {
        std::lock_guard<std::mutex> lock(mutex_);
        return lna_db_ + if_db_;
    }
    double getGain(const int, const std::size_t, const std::string& name) const override {
        std::lock_guard<std::mutex> lock(mutex_);
        return name == "LNA" ? lna_db_ : name == "IF" ? if_db_ : 0.0;
    }
    SoapySDR::Range getGainRange(const int, const std::size_t) const override {
        return SoapySDR::Range(0, kLnaMax + kIfMax, kIfStep);
    }
    SoapySDR::Range getGainRange(const int, const std::size_t, const std::string& name) const override {
        return name == "LNA" ? SoapySDR::Range(0, kLnaMax, kLnaStep) : SoapySDR::Range(0, kIfMax, kIfStep);
    }

    // ---- frequency: one synthesiser, 1 Hz steps ----
    std::vector<std::string> listFrequencies(const int, const std::size_t) const override { return {"RF"}; }
    void setFrequency(const int, const std::size_t, const double f, const SoapySDR::Kwargs&) override {
        std::lock_guard<std::mutex> lock(mutex_);
        hb::Tuning t = synth_.tuning();
        t.center_hz = std::clamp(std::round(f), kMinFreq, kMaxFreq);
        retune(t);
    }
    void setFrequency(const int dir, const std::size_t ch, const std::string&, const double f,
                      const SoapySDR::Kwargs& args) override {
        setFrequency(dir, ch, f, args);
    }
    double getFrequency(const int, const std::size_t) const override {
        std::lock_guard<std::mutex> lock(mutex_);
        return synth_.tuning().center_hz;
    }
    double getFrequency(const int dir, const std::size_t ch, const std::string&) const override {
        return getFrequency(dir, ch);
    }
    SoapySDR::RangeList getFrequencyRange(const int, const std::size_t) const override {
        return {SoapySDR::Range(kMinFreq, kMaxFreq, 1.0)};
    }
    SoapySDR::RangeList getFrequencyRange(const int, const std::size_t, const std::string&) const override {
        return {SoapySDR::Range(kMinFreq, kMaxFreq, 1.0)};
    }

    // ---- sample rate (whole Hz) and analog bandwidth ----
    void setSampleRate(const int, const std::size_t, const double rate) override {
        std::lock_guard<std::mutex> lock(mutex_);
        hb::Tuning t = synth_.tuning();
        t.sample_rate_hz = std::clamp(std::round(rate), kMinRate, kMaxRate);
        retune(t);
    }
    double getSampleRate(const int, const std::size_t) const override {
        std::lock_guard<std::mutex> lock(mutex_);
        return synth_.tuning().sample_rate_hz;
    }
    SoapySDR::RangeList getSampleRateRange(const int, const std::size_t) const override {
        return {SoapySDR::Range(kMinRate, kMaxRate, 1.0)};
    }
    std::vector<double> listSampleRates(const int, const std::size_t) const override {
        return {48e3, 96e3, 192e3, 250e3, 1e6, 2.4e6, 10e6};
    }
    void setBandwidth(const int, const std::size_t, const double bw) override {
        std::lock_guard<std::mutex> lock(mutex_);
        hb::Tuning t = synth_.tuning();
        t.bandwidth_hz = bw <= 0 ? 0.0 : std::clamp(std::round(bw), kMinRate, kMaxRate);
        retune(t);
    }
    double getBandwidth(const int, const std::size_t) const override {
        std::lock_guard<std::mutex> lock(mutex_);
        const hb::Tuning& t = synth_.tuning();
        return t.bandwidth_hz > 0 ? std::min(t.bandwidth_hz, t.sample_rate_hz) : t.sample_rate_hz;
    }
    SoapySDR::RangeList getBandwidthRange(const int, const std::size_t) const override {
        return {SoapySDR::Range(kMinRate, kMaxRate, 1.0)};
    }

    bool hasHardwareTime(const std::string& what) const override { return what.empty(); }
    long long getHardwareTime(const std::string&) const override {
        std::lock_guard<std::mutex> lock(mutex_);
        return time_ns(next_index_);
    }

    // ---- streaming ----
    std::vector<std::string> getStreamFormats(const int, const std::size_t) const override {
        return {SOAPY_SDR_CF32, SOAPY_SDR_CS16};
    }
    std::string getNativeStreamFormat(const int, const std::size_t, double& full_scale) const override {
        full_scale = native_ == SOAPY_SDR_CS16 ? 32767.0 : 1.0;
        return native_;
    }
    SoapySDR::Stream* setupStream(const int dir, const std::string& format, const std::vector<std::size_t>& channels,
                                  const SoapySDR::Kwargs&) override {
        if (dir != SOAPY_SDR_RX) throw std::runtime_error(std::string(kDriver) + ": receive only");
        if (format != SOAPY_SDR_CF32 && format != SOAPY_SDR_CS16)
            throw std::runtime_error(std::string(kDriver) + ": stream format " + format +
                                     " not supported (CF32, CS16)");
        if (channels.size() > 1 || (channels.size() == 1 && channels[0] != 0))
            throw std::runtime_error(std::string(kDriver) + ": one channel (0) only");
        std::lock_guard<std::mutex> lock(mutex_);
        if (stream_open_) throw std::runtime_error(std::string(kDriver) + ": a stream is already open");
        stream_open_ = true;
        cs16_ = format == SOAPY_SDR_CS16;
        return reinterpret_cast<SoapySDR::Stream*>(this);
    }
    void closeStream(SoapySDR::Stream*) override {
        std::lock_guard<std::mutex> lock(mutex_);
        stream_open_ = active_ = false;
    }
    std::size_t getStreamMTU(SoapySDR::Stream*) const override { return kMtu; }
    int activateStream(SoapySDR::Stream*, const int, const long long, const std::size_t) override {
        std::lock_guard<std::mutex> lock(mutex_);
        active_ = true;
        restart_clock();
        return 0;
    }
    int deactivateStream(SoapySDR::Stream*, const int, const long long) override {
        std::lock_guard<std::mutex> lock(mutex_);
        active_ = false;
        return 0;
    }

    int readStream(SoapySDR::Stream*, void* const* buffs, const std::size_t num_elems, int& flags,
                   long long& time_ns_out, const long timeout_us) override {
        std::unique_lock<std::mutex> lock(mutex_);
        flags = 0;
        const auto deadline = Clock::now() + std::chrono::microseconds(std::max(0L, timeout_us));
        auto wait_out = [&] {
            lock.unlock();
            std::this_thread::sleep_until(deadline);
            return SOAPY_SDR_TIMEOUT;
        };
        if (disconnected_) throw std::runtime_error(std::string(kDriver) + ": device disconnected (fault injection)");
        if (!active_) return wait_out();
        const double t = stream_seconds();
        if (faults_.disconnect_at >= 0 && t >= faults_.disconnect_at) {
            disconnected_ = true;
            throw std::runtime_error(std::string(kDriver) + ": device disconnected (fault injection)");
        }
        if (faults_.error_at >= 0 && t >= faults_.error_at) return SOAPY_SDR_STREAM_ERROR;
        if (faults_.freeze_at >= 0 && t >= faults_.freeze_at) return wait_out();
        if (faults_.timeout_at >= 0 && t >= faults_.timeout_at && timeouts_done_ < faults_.timeout_count) {
            ++timeouts_done_;
            return wait_out();
        }
        if (faults_.overflow_every > 0 && next_index_ >= next_overflow_) {
            next_overflow_ += faults_.overflow_every;
            drop(faults_.overflow_skip);  // the samples really are lost: the stream moves past them
            return SOAPY_SDR_OVERFLOW;
        }
        std::size_t want = std::min(num_elems, kMtu);
        if (faults_.overflow_every > 0)  // end the read at the next injected overflow
            want = static_cast<std::size_t>(std::min<std::uint64_t>(want, next_overflow_ - next_index_));
        if (throttle_) {
            // Real time: samples exist once their time has come. A reader too far behind loses samples.
            const auto due = [&] {
                return static_cast<std::uint64_t>(std::chrono::duration<double>(Clock::now() - t0_).count() *
                                                  synth_.tuning().sample_rate_hz);
            };
            // One reading of the clock per difference: two could straddle paced_ and wrap the unsigned result.
            auto ahead = [&] {
                const std::uint64_t d = due();
                return d > paced_ ? d - paced_ : 0;
            };
            std::uint64_t avail = ahead();
            if (avail > static_cast<std::uint64_t>(kBufferSeconds * synth_.tuning().sample_rate_hz)) {
                drop(avail);
                return SOAPY_SDR_OVERFLOW;
            }
            if (avail < want) {
                const auto ready = t0_ + std::chrono::duration_cast<Clock::duration>(std::chrono::duration<double>(
                                             double(paced_ + want) / synth_.tuning().sample_rate_hz));
                lock.unlock();
                std::this_thread::sleep_until(std::min(ready, deadline));
                lock.lock();
                avail = ahead();
                if (avail == 0) return SOAPY_SDR_TIMEOUT;
                want = std::min<std::size_t>(want, avail);
            }
        }
        flags |= SOAPY_SDR_HAS_TIME;
        time_ns_out = time_ns(next_index_);
        copy_out(buffs[0], want);
        return static_cast<int>(want);
    }

  private:
    static hb::Scenario load(const SoapySDR::Kwargs& args) {
        auto it = args.find("scenario");
        if (it == args.end() || it->second.empty()) return hb::Scenario{};
        return hb::load_scenario(it->second);  // InputError: file, line and key
    }
    static std::uint64_t seed_of(const SoapySDR::Kwargs& args) {
        return static_cast<std::uint64_t>(arg_number(args, "seed", 1, 0, 9007199254740992.0));
    }

    void apply_gain() {
        hb::Tuning t = synth_.tuning();
        t.gain_db = lna_db_ + if_db_;
        retune(t);
    }

    // A new window: samples already synthesised belong to the old one and are discarded.
    void retune(const hb::Tuning& t) {
        rate_index_ = next_index_;
        rate_time_ns_ = time_ns(next_index_);
        synth_.tune(t);
        filled_ = pos_ = 0;
        restart_clock();
    }
    void restart_clock() {
        t0_ = Clock::now();
        paced_ = 0;
    }

    long long time_ns(std::uint64_t index) const {
        return rate_time_ns_ +
               SoapySDR::ticksToTimeNs(static_cast<long long>(index - rate_index_), synth_.tuning().sample_rate_hz);
    }
    double stream_seconds() const { return static_cast<double>(time_ns(next_index_)) * 1e-9; }

    // Moves `count` samples from the synthesiser into `out` (nullptr: discard them).
    void take(cf32* out, std::size_t count) {
        while (count > 0) {
            if (pos_ == filled_) {
                synth_.process(buffer_);
                filled_ = buffer_.size();
                pos_ = 0;
            }
            const std::size_t n = std::min(count, filled_ - pos_);
            if (out) {
                std::memcpy(out, buffer_.data() + pos_, n * sizeof(cf32));
                out += n;
            }
            pos_ += n;
            count -= n;
            next_index_ += n;
            paced_ += n;
        }
    }
    void drop(std::uint64_t count) {
        while (count > 0) {
            const std::size_t n = static_cast<std::size_t>(std::min<std::uint64_t>(count, 1u << 20));
            take(nullptr, n);
            count -= n;
        }
    }
    void copy_out(void* dst, std::size_t n) {
        if (!cs16_) {
            take(static_cast<cf32*>(dst), n);
            return;
        }
        auto* out = static_cast<std::int16_t*>(dst);
        cf32 tmp[512];
        while (n > 0) {
            const std::size_t k = std::min<std::size_t>(n, 512);
            take(tmp, k);
            for (std::size_t i = 0; i < k; ++i) {
                out[2 * i] = static_cast<std::int16_t>(std::lrint(std::clamp(tmp[i].real(), -1.0f, 1.0f) * 32767.0f));
                out[2 * i + 1] =
                    static_cast<std::int16_t>(std::lrint(std::clamp(tmp[i].imag(), -1.0f, 1.0f) * 32767.0f));
            }
            out += 2 * k;
            n -= k;
        }
    }

    mutable std::mutex mutex_;
    hb::Synth synth_;
    std::string scenario_path_;
    std::uint64_t seed_ = 1;
    bool throttle_ = true;
    std::string native_ = SOAPY_SDR_CF32;
    Faults faults_;
    double lna_db_ = 0, if_db_ = 0;

    bool stream_open_ = false, active_ = false, cs16_ = false, disconnected_ = false;
    std::vector<cf32> buffer_;
    std::size_t filled_ = 0, pos_ = 0;
    std::uint64_t next_index_ = 0;  // stream index of the next sample (delivered or dropped)
    std::uint64_t rate_index_ = 0;  // index and time where the current sample rate began
    long long rate_time_ns_ = 0;
    std::uint64_t next_overflow_ = 0;  // index of the next injected overflow
    int timeouts_done_ = 0;
    Clock::time_point t0_;  // real-time pacing: wall clock of paced_ = 0
    std::uint64_t paced_ = 0;
};

// The generator is always "present". It answers an enumeration only when every filter key is one of its own
// (so a search for another driver's serial number does not list it), and echoes its args in the result:
// SoapySDR caches devices by that result, so different scenarios or faults give different devices.
SoapySDR::KwargsList find_generator(const SoapySDR::Kwargs& args) {
    for (const auto& [k, v] : args)
        if (!is_our_key(k) && !is_transport_key(k) && !(k == "driver" && v == kDriver)) return {};
    if (args.count("serial") && args.at("serial") != "hetbench-gen-0") return {};
    SoapySDR::Kwargs found = args;
    found.erase("driver");  // SoapySDR adds it back
    found["label"] = "hetbench bench generator";
    found["serial"] = "hetbench-gen-0";
    return {found};
}

SoapySDR::Device* make_generator(const SoapySDR::Kwargs& args) {
    return new GeneratorDevice(args);
}

const SoapySDR::Registry registration(kDriver, &find_generator, &make_generator, SOAPY_SDR_ABI_VERSION);

}  // namespace
