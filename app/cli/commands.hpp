// The hetbench sub-commands. Each command file registers itself on the CLI11 app and, when run,
// sets the process exit code: 0 all good / every limit passed, 1 a limit failed, 2 an error.
#pragma once

#include <CLI/CLI.hpp>

namespace hb::cli {

inline constexpr int kExitOk = 0;
inline constexpr int kExitFail = 1;   // the bench ran and a limit failed
inline constexpr int kExitError = 2;  // bad input, bad usage or a device error

// Registers every command below (app/cli/registry.cpp: one line per command).
void register_all(CLI::App& app, int& rc);

// Each register_* adds one sub-command whose callback stores its exit code in `rc`.
void register_check(CLI::App& app, int& rc);
void register_plan(CLI::App& app, int& rc);
void register_devices(CLI::App& app, int& rc);
void register_record(CLI::App& app, int& rc);
void register_filter(CLI::App& app, int& rc);
void register_gui(CLI::App& app, int& rc);
void register_bench(CLI::App& app, int& rc);
void register_synth(CLI::App& app, int& rc);
void register_verify(CLI::App& app, int& rc);
void register_soak(CLI::App& app, int& rc);
void register_sweep(CLI::App& app, int& rc);

}  // namespace hb::cli
