// Any SoapySDR device (and the hetbench-gen generator module) as a SampleSource, plus device enumeration.
//
// Opening applies the SourceSpec's settings and reads back what the driver actually applied (drivers round
// frequencies, rates and gains). Streaming is CF32; when the device's native format is CS16 the source
// reads CS16 and scales by the reported full scale itself. readStream results map onto ReadStatus:
//   samples                -> ok (or overflow when samples were lost before them)
//   SOAPY_SDR_TIMEOUT      -> timeout (counted; the message says how long nothing came)
//   SOAPY_SDR_OVERFLOW     -> counted; the next samples carry status overflow and, when the device sends
//                             timestamps, the exact number lost (from the gap in time)
//   MORE_FRAGMENTS         -> the rest of the packet is read into the same buffer
//   any other error code,  -> error: the stream is over (message names the code); open again to continue
//   or an exception (a vanished device)
#pragma once

#include <map>
#include <memory>
#include <string>
#include <vector>

#include "devices/source.hpp"

namespace hb {

// Makes sure the hetbench-gen module is loaded: first whatever SoapySDR itself finds (SOAPY_SDR_ROOT,
// SOAPY_SDR_PLUGIN_PATH), then, if the generator is not among them, the module beside the executable or in
// the build tree. Runs once per process; returns the path it loaded ("" when SoapySDR already had it, none was
// found, or an earlier call did the work).
std::string load_generator_module();

// The SoapySDR argument string for a SourceSpec (kind device or generator); for the generator: driver,
// scenario (resolved against setup.base_dir), seed (bench.seed), then spec.args, whose keys win.
std::string soapy_args_for(const SourceSpec& spec, const Setup& setup);

// What the driver applied after opening (read back, not what was asked).
struct AppliedSettings {
    std::string args;  // the argument string the device was opened with
    std::string driver;
    double frequency_hz = 0.0;
    double sample_rate_hz = 0.0;
    double bandwidth_hz = 0.0;
    double gain_db = 0.0;
    std::vector<std::pair<std::string, double>> named_gains;  // every gain element and its value
    std::string antenna;
    std::string stream_format;  // CF32 or CS16 (what is read from the device)
    double full_scale = 1.0;    // of the stream format
};

// open_soapy with the applied settings available.
struct OpenedSoapy {
    std::unique_ptr<SampleSource> source;
    AppliedSettings applied;
};
OpenedSoapy open_soapy_detailed(const SourceSpec& spec, const Setup& setup);

// Devices SoapySDR finds for an argument filter (e.g. "driver=hetbench-gen"): each as key/value pairs.
// A filter with a driver key runs only that driver's discovery.
std::vector<std::map<std::string, std::string>> enumerate_devices(const std::string& filter);

struct RangeText {
    std::string name;   // gain element or frequency component ("" for the overall value)
    std::string text;   // e.g. "[0, 60] step 0.5 dB"
};
// The ranges of a device's first RX channel, for `hetbench devices --probe`.
struct DeviceProbe {
    std::map<std::string, std::string> hardware;
    std::vector<RangeText> frequency;
    std::vector<RangeText> sample_rate;
    std::vector<RangeText> bandwidth;
    std::vector<RangeText> gains;  // first the overall range, then each element
    std::vector<std::string> antennas;
    std::vector<std::string> formats;
    std::string native_format;
    double native_full_scale = 0.0;
    std::size_t rx_channels = 0;
};
// Opens the device the arguments name and reads its ranges. Throws InputError.
DeviceProbe probe_device(const std::string& args);

}  // namespace hb
