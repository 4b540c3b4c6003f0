// hetbench devices [ARGS] [--probe]: the SoapySDR devices an argument filter finds (the bench generator
// included), each with its key/values; --probe opens each and lists its receive ranges.
#include <iostream>

#include "cli/commands.hpp"
#include "devices/soapy_source.hpp"
#include "dsp/units.hpp"

namespace hb::cli {

void register_devices(CLI::App& app, int& rc) {
    auto* cmd = app.add_subcommand(
        "devices", "List SoapySDR devices matching ARGS (e.g. driver=hetbench-gen); --probe shows their ranges");
    auto filter = std::make_shared<std::string>();
    auto probe = std::make_shared<bool>(false);
    cmd->add_option("args", *filter,
                    "SoapySDR argument filter, key=value pairs separated by commas. With a driver key only that "
                    "driver searches (no network discovery by other modules)");
    cmd->add_flag("--probe", *probe, "Open each device found and list its frequency, rate, gain and antenna ranges");
    cmd->callback([filter, probe, &rc] {
        const auto found = enumerate_devices(*filter);
        if (found.empty()) {
            std::cout << "No SoapySDR device matches \"" << *filter << "\"\n";
            rc = kExitOk;
            return;
        }
        for (std::size_t i = 0; i < found.size(); ++i) {
            std::cout << "device " << i << "\n";
            std::string args;
            for (const auto& [k, v] : found[i]) {
                std::cout << "  " << k << " = " << v << "\n";
                args += (args.empty() ? "" : ",") + k + "=" + v;
            }
            if (!*probe) continue;
            const DeviceProbe p = probe_device(args);
            std::cout << "  receive channels: " << p.rx_channels << "\n";
            if (p.rx_channels == 0) continue;
            auto ranges = [](const char* what, const std::vector<RangeText>& list) {
                for (const auto& r : list)
                    std::cout << "  " << what << (r.name.empty() ? "" : " " + r.name) << ": " << r.text << "\n";
            };
            ranges("frequency", p.frequency);
            ranges("sample rate", p.sample_rate);
            ranges("bandwidth", p.bandwidth);
            ranges("gain", p.gains);
            std::string ants, fmts;
            for (const auto& a : p.antennas) ants += (ants.empty() ? "" : ", ") + a;
            for (const auto& f : p.formats) fmts += (fmts.empty() ? "" : ", ") + f;
            std::cout << "  antennas: " << (ants.empty() ? "(none reported)" : ants) << "\n";
            std::cout << "  stream formats: " << fmts << " (native " << p.native_format << ", full scale "
                      << format_number(p.native_full_scale) << ")\n";
        }
        rc = kExitOk;
    });
}

}  // namespace hb::cli
