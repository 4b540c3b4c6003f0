#include "devices/soapy_source.hpp"

#include <SoapySDR/Device.hpp>
#include <SoapySDR/Errors.hpp>
#include <SoapySDR/Formats.hpp>
#include <SoapySDR/Modules.hpp>
#include <SoapySDR/Registry.hpp>
#include <SoapySDR/Version.hpp>
#include <unistd.h>

#include <algorithm>
#include <chrono>
#include <cmath>
#include <filesystem>
#include <mutex>
#include <optional>

#include "dsp/errors.hpp"
#include "dsp/units.hpp"

#ifndef HETBENCH_GEN_MODULE
#define HETBENCH_GEN_MODULE ""
#endif

namespace hb {
namespace {

constexpr const char* kGeneratorDriver = "hetbench-gen";
constexpr const char* kGeneratorFile = "libhetbench_gen.so";

std::filesystem::path executable_dir() {
    std::error_code ec;
    const auto exe = std::filesystem::read_symlink("/proc/self/exe", ec);
    return ec ? std::filesystem::path() : exe.parent_path();
}

// "[0, 6000] MHz, step 1 Hz": limits in the scaled unit, the step in the base unit.
std::string range_text(const SoapySDR::Range& r, std::string_view unit, double scale = 1.0,
                       std::string_view base_unit = "") {
    std::string s = "[" + format_number(r.minimum() / scale) + ", " + format_number(r.maximum() / scale) + "] " +
                    std::string(unit);
    if (r.step() > 0)
        s += ", step " + (scale == 1.0 ? format_number(r.step()) + " " + std::string(unit)
                                       : format_number(r.step()) + " " + std::string(base_unit));
    return s;
}

std::string ranges_text(const SoapySDR::RangeList& list, std::string_view unit, double scale,
                        std::string_view base_unit) {
    std::string s;
    for (const auto& r : list) s += (s.empty() ? "" : "; ") + range_text(r, unit, scale, base_unit);
    return s.empty() ? "(none reported)" : s;
}

std::string opening_error(const std::string& args, const std::string& what) {
    return "SoapySDR device \"" + args + "\": " + what;
}

SoapySDR::Device* make_device(const std::string& args) {
    load_generator_module();
    try {
        return SoapySDR::Device::make(args);
    } catch (const std::exception& e) {
        std::string hint;
        const auto kw = SoapySDR::KwargsFromString(args);
        if (kw.count("driver") && !SoapySDR::Registry::listMakeFunctions().count(kw.at("driver")))
            hint = " (no SoapySDR module provides driver \"" + kw.at("driver") + "\"; is it installed?)";
        throw InputError(opening_error(args, std::string("cannot open: ") + e.what() + hint));
    }
}

// The stream of one opened device. One owner: the source unmakes the device when it dies.
class SoapySource final : public SampleSource {
public:
    SoapySource(SoapySDR::Device* dev, const std::string& args, StreamInfo info, AppliedSettings applied)
        : dev_(dev), args_(args), info_(std::move(info)), applied_(std::move(applied)) {
        cs16_ = applied_.stream_format == SOAPY_SDR_CS16;
        try {
            stream_ = dev_->setupStream(SOAPY_SDR_RX, applied_.stream_format, {0});
            mtu_ = std::max<std::size_t>(1, dev_->getStreamMTU(stream_));
            if (cs16_) scratch_.resize(2 * mtu_);
            const int r = dev_->activateStream(stream_);
            if (r != 0) throw std::runtime_error("activateStream: " + std::string(SoapySDR::errToStr(r)));
        } catch (const std::exception& e) {
            close();
            throw InputError(opening_error(args_, std::string("cannot start the stream: ") + e.what()));
        }
    }
    ~SoapySource() override { close(); }

    const StreamInfo& info() const override { return info_; }
    const SourceCounters& counters() const override { return counters_; }

    ReadResult read(std::span<cf32> out, double timeout_s) override {
        if (!failed_.empty()) return {ReadStatus::error, 0, 0, failed_};
        const auto start = std::chrono::steady_clock::now();
        const long timeout_us = static_cast<long>(std::clamp(timeout_s, 0.0, 3600.0) * 1e6);
        std::size_t got = 0;
        while (got < out.size()) {
            int flags = 0;
            long long time_ns = 0;
            const std::size_t want = std::min(out.size() - got, cs16_ ? mtu_ : out.size() - got);
            void* buffs[1] = {cs16_ ? static_cast<void*>(scratch_.data()) : static_cast<void*>(out.data() + got)};
            int r = 0;
            try {
                r = dev_->readStream(stream_, buffs, want, flags, time_ns, timeout_us);
            } catch (const std::exception& e) {
                return fail(std::string("the device vanished: ") + e.what());
            }
            if (r > 0) {
                const auto n = static_cast<std::size_t>(r);
                if (cs16_) convert(out.data() + got, n);
                if (flags & SOAPY_SDR_HAS_TIME) note_time(time_ns, n);
                got += n;
                if ((flags & SOAPY_SDR_MORE_FRAGMENTS) && got < out.size()) continue;  // rest of this packet
                break;
            }
            if (r == SOAPY_SDR_OVERFLOW) {
                ++counters_.overflows;
                pending_overflow_ = true;
                if (got > 0) break;
                if (std::chrono::steady_clock::now() - start > std::chrono::duration<double>(timeout_s)) break;
                continue;  // the samples after the gap are what the caller wants
            }
            if (r == SOAPY_SDR_TIMEOUT) {
                if (got > 0) break;
                ++counters_.timeouts;
                if (!idle_since_) idle_since_ = start;
                const double idle = std::chrono::duration<double>(std::chrono::steady_clock::now() - *idle_since_).count();
                ReadResult res{ReadStatus::timeout, 0, 0, ""};
                res.message = "no samples for " + format_number(std::round(idle * 10) / 10) + " s";
                if (pending_overflow_) res.message += " (after an overflow)";
                return res;
            }
            return fail("stream error " + std::to_string(r) + " (" + SoapySDR::errToStr(r) + ")");
        }
        idle_since_.reset();
        ReadResult res{ReadStatus::ok, got, 0, ""};
        if (pending_overflow_ || lost_pending_ > 0) {
            res.status = ReadStatus::overflow;
            res.lost = lost_pending_;
            res.message = lost_pending_ > 0 ? std::to_string(lost_pending_) + " samples lost before these"
                                            : "samples lost before these (count unknown: no timestamps)";
            if (!pending_overflow_) ++counters_.overflows;  // a gap in time without an overflow report
            counters_.lost_samples += lost_pending_;
            pending_overflow_ = false;
            lost_pending_ = 0;
        }
        counters_.non_finite += scrub(out.first(got));
        counters_.samples += got;
        return res;
    }

private:
    ReadResult fail(std::string why) {
        ++counters_.errors;
        failed_ = opening_error(args_, why + "; the stream has ended, open the source again to continue");
        return {ReadStatus::error, 0, 0, failed_};
    }

    // Timestamps reveal lost samples exactly: the gap between where the stream should be and where it is.
    void note_time(long long time_ns, std::size_t n) {
        const double fs = info_.sample_rate_hz;
        if (expected_ns_) {
            const double gap = static_cast<double>(time_ns - *expected_ns_) * 1e-9 * fs;
            if (gap >= 0.5) lost_pending_ += static_cast<std::uint64_t>(std::llround(gap));
        }
        expected_ns_ = time_ns + static_cast<long long>(std::llround(double(n) / fs * 1e9));
    }

    void convert(cf32* out, std::size_t n) const {
        const float k = static_cast<float>(1.0 / applied_.full_scale);
        for (std::size_t i = 0; i < n; ++i)
            out[i] = {static_cast<float>(scratch_[2 * i]) * k, static_cast<float>(scratch_[2 * i + 1]) * k};
    }

    static std::uint64_t scrub(std::span<cf32> x) {
        std::uint64_t bad = 0;
        for (cf32& z : x)
            if (!std::isfinite(z.real()) || !std::isfinite(z.imag())) {
                z = {0.0f, 0.0f};
                ++bad;
            }
        return bad;
    }

    void close() {
        if (!dev_) return;
        try {
            if (stream_) {
                dev_->deactivateStream(stream_);
                dev_->closeStream(stream_);
            }
        } catch (const std::exception&) {  // a vanished device may refuse; unmake still releases it
        }
        try {
            SoapySDR::Device::unmake(dev_);
        } catch (const std::exception&) {
        }
        dev_ = nullptr;
        stream_ = nullptr;
    }

    SoapySDR::Device* dev_ = nullptr;
    SoapySDR::Stream* stream_ = nullptr;
    std::string args_;
    StreamInfo info_;
    AppliedSettings applied_;
    SourceCounters counters_;
    bool cs16_ = false;
    std::size_t mtu_ = 1;
    std::vector<std::int16_t> scratch_;
    std::string failed_;
    bool pending_overflow_ = false;
    std::uint64_t lost_pending_ = 0;
    std::optional<long long> expected_ns_;
    std::optional<std::chrono::steady_clock::time_point> idle_since_;
};

// Reads a device's numeric setting when it offers one under `key`.
std::optional<double> numeric_setting(SoapySDR::Device& dev, const std::string& key) {
    for (const auto& a : dev.getSettingInfo())
        if (a.key == key) {
            const std::string v = dev.readSetting(key);
            char* end = nullptr;
            const double x = std::strtod(v.c_str(), &end);
            if (!v.empty() && *end == '\0' && std::isfinite(x)) return x;
        }
    return std::nullopt;
}

}  // namespace

std::string load_generator_module() {
    static std::mutex m;
    static bool done = false;  // once per process: module loading scans folders
    std::lock_guard<std::mutex> lock(m);
    if (done) return "";
    done = true;
    SoapySDR::loadModules();  // what the environment provides (SOAPY_SDR_ROOT, SOAPY_SDR_PLUGIN_PATH)
    if (SoapySDR::Registry::listFindFunctions().count(kGeneratorDriver)) return "";
    std::vector<std::filesystem::path> candidates;
    const auto exe = executable_dir();
    if (!exe.empty()) {
        candidates.push_back(exe / kGeneratorFile);                               // installed side by side
        candidates.push_back(exe.parent_path() / "devices" / "soapy" / kGeneratorFile);  // build/app/hetbench
    }
    if (std::string(HETBENCH_GEN_MODULE).size()) candidates.emplace_back(HETBENCH_GEN_MODULE);  // this build tree
    for (const auto& p : candidates) {
        std::error_code ec;
        if (!std::filesystem::exists(p, ec)) continue;
        const std::string err = SoapySDR::loadModule(p.string());
        if (err.empty() && SoapySDR::Registry::listFindFunctions().count(kGeneratorDriver)) return p.string();
    }
    return "";
}

std::string soapy_args_for(const SourceSpec& spec, const Setup& setup) {
    if (spec.kind != SourceKind::generator) return spec.args;
    SoapySDR::Kwargs kw;
    kw["driver"] = kGeneratorDriver;
    if (!spec.scenario.empty()) {
        std::error_code ec;
        const auto p = std::filesystem::absolute(resolve_path(setup, spec.scenario), ec);
        kw["scenario"] = ec ? resolve_path(setup, spec.scenario) : p.lexically_normal().string();
    }
    kw["seed"] = std::to_string(setup.bench.seed);
    for (const auto& [k, v] : SoapySDR::KwargsFromString(spec.args)) kw[k] = v;
    return SoapySDR::KwargsToString(kw);
}

OpenedSoapy open_soapy_detailed(const SourceSpec& spec, const Setup& setup) {
    if (spec.kind == SourceKind::recording) throw InputError("open_soapy: a recording is not a SoapySDR device");
    const std::string args = soapy_args_for(spec, setup);
    SoapySDR::Device* dev = make_device(args);
    AppliedSettings a;
    a.args = args;
    StreamInfo info;
    try {
        if (dev->getNumChannels(SOAPY_SDR_RX) == 0) throw std::runtime_error("the device has no receive channel");
        // Order as drivers expect: rate and bandwidth, then tuning, then gains and antenna.
        if (spec.sample_rate_hz) dev->setSampleRate(SOAPY_SDR_RX, 0, *spec.sample_rate_hz);
        if (spec.bandwidth_hz) dev->setBandwidth(SOAPY_SDR_RX, 0, *spec.bandwidth_hz);
        if (spec.frequency_hz) dev->setFrequency(SOAPY_SDR_RX, 0, *spec.frequency_hz);
        if (spec.gain_db) {
            dev->setGainMode(SOAPY_SDR_RX, 0, false);
            dev->setGain(SOAPY_SDR_RX, 0, *spec.gain_db);
        }
        const auto elements = dev->listGains(SOAPY_SDR_RX, 0);
        for (const NamedGain& g : spec.gains) {
            if (std::find(elements.begin(), elements.end(), g.name) == elements.end()) {
                std::string known;
                for (const auto& e : elements) known += (known.empty() ? "" : ", ") + e;
                throw std::runtime_error("no gain element \"" + g.name + "\" (the device has: " +
                                         (known.empty() ? "none" : known) + ")");
            }
            dev->setGain(SOAPY_SDR_RX, 0, g.name, g.db);
        }
        if (!spec.antenna.empty()) dev->setAntenna(SOAPY_SDR_RX, 0, spec.antenna);

        a.driver = dev->getDriverKey();
        a.frequency_hz = dev->getFrequency(SOAPY_SDR_RX, 0);
        a.sample_rate_hz = dev->getSampleRate(SOAPY_SDR_RX, 0);
        a.bandwidth_hz = dev->getBandwidth(SOAPY_SDR_RX, 0);
        a.gain_db = dev->getGain(SOAPY_SDR_RX, 0);
        for (const auto& e : elements) a.named_gains.emplace_back(e, dev->getGain(SOAPY_SDR_RX, 0, e));
        a.antenna = dev->getAntenna(SOAPY_SDR_RX, 0);
        double full_scale = 1.0;
        const std::string native = dev->getNativeStreamFormat(SOAPY_SDR_RX, 0, full_scale);
        // CS16 native: read it as it comes and scale once here (half the bytes over a network, no double
        // conversion); anything else: let the driver give CF32.
        a.stream_format = native == SOAPY_SDR_CS16 && full_scale > 0 ? SOAPY_SDR_CS16 : SOAPY_SDR_CF32;
        a.full_scale = a.stream_format == SOAPY_SDR_CS16 ? full_scale : 1.0;
        if (!(a.sample_rate_hz > 0)) throw std::runtime_error("the device reports a sample rate of 0");

        info.center_hz = a.frequency_hz;
        info.sample_rate_hz = a.sample_rate_hz;
        // dBm = dBFS + offset: the session's offset, plus the device's own calibration when it states one
        // (the generator does: full_scale_dbm - gain).
        info.level_offset_db = spec.level_offset_db + numeric_setting(*dev, "level_offset_db").value_or(0.0);
        info.live = true;
        const auto kw = SoapySDR::KwargsFromString(args);
        if (spec.kind == SourceKind::generator) {
            info.description = std::string(kGeneratorDriver) + ": " +
                               (spec.scenario.empty() ? std::string("no scenario (noise floor only)")
                                                      : std::filesystem::path(spec.scenario).filename().string());
        } else {
            info.description = "SoapySDR " + a.driver + (kw.count("label") ? ": " + kw.at("label") : std::string());
        }
        info.description += ", " + format_frequency(a.frequency_hz) + ", " + format_number(a.sample_rate_hz) +
                            " S/s, gain " + format_number(a.gain_db) + " dB";
        info.hardware = dev->getHardwareKey();
        for (const auto& [k, v] : dev->getHardwareInfo()) info.hardware += ", " + k + "=" + v;
    } catch (const std::exception& e) {
        SoapySDR::Device::unmake(dev);
        throw InputError(opening_error(args, e.what()));
    }
    OpenedSoapy out;
    out.source = std::make_unique<SoapySource>(dev, args, std::move(info), a);
    out.applied = std::move(a);
    return out;
}

std::unique_ptr<SampleSource> open_soapy(const SourceSpec& spec, const Setup& setup) {
    return open_soapy_detailed(spec, setup).source;
}

std::vector<std::map<std::string, std::string>> enumerate_devices(const std::string& filter) {
    load_generator_module();
    std::vector<std::map<std::string, std::string>> out;
    try {
        for (const auto& kw : SoapySDR::Device::enumerate(filter)) out.emplace_back(kw.begin(), kw.end());
    } catch (const std::exception& e) {
        throw InputError("SoapySDR enumeration \"" + filter + "\": " + e.what());
    }
    return out;
}

DeviceProbe probe_device(const std::string& args) {
    SoapySDR::Device* dev = make_device(args);
    DeviceProbe p;
    try {
        for (const auto& [k, v] : dev->getHardwareInfo()) p.hardware[k] = v;
        p.hardware["driver"] = dev->getDriverKey();
        p.hardware["hardware"] = dev->getHardwareKey();
        p.rx_channels = dev->getNumChannels(SOAPY_SDR_RX);
        if (p.rx_channels > 0) {
            p.frequency.push_back({"", ranges_text(dev->getFrequencyRange(SOAPY_SDR_RX, 0), "MHz", 1e6, "Hz")});
            for (const auto& f : dev->listFrequencies(SOAPY_SDR_RX, 0))
                p.frequency.push_back({f, ranges_text(dev->getFrequencyRange(SOAPY_SDR_RX, 0, f), "MHz", 1e6, "Hz")});
            p.sample_rate.push_back({"", ranges_text(dev->getSampleRateRange(SOAPY_SDR_RX, 0), "MS/s", 1e6, "S/s")});
            p.bandwidth.push_back({"", ranges_text(dev->getBandwidthRange(SOAPY_SDR_RX, 0), "MHz", 1e6, "Hz")});
            p.gains.push_back({"", range_text(dev->getGainRange(SOAPY_SDR_RX, 0), "dB")});
            for (const auto& g : dev->listGains(SOAPY_SDR_RX, 0))
                p.gains.push_back({g, range_text(dev->getGainRange(SOAPY_SDR_RX, 0, g), "dB")});
            p.antennas = dev->listAntennas(SOAPY_SDR_RX, 0);
            p.formats = dev->getStreamFormats(SOAPY_SDR_RX, 0);
            p.native_format = dev->getNativeStreamFormat(SOAPY_SDR_RX, 0, p.native_full_scale);
        }
    } catch (const std::exception& e) {
        SoapySDR::Device::unmake(dev);
        throw InputError(opening_error(args, std::string("probe failed: ") + e.what()));
    }
    SoapySDR::Device::unmake(dev);
    return p;
}

}  // namespace hb
