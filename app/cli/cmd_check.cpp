// hetbench check FILE.toml: validate a session, or a generator scenario (a file with a top-level [scenario]
// table or [[signal]] array and no [plan]), and print it back normalised; or list every problem (exit 2).
#include <fstream>
#include <iostream>
#include <sstream>

#include "cli/commands.hpp"
#include "devices/scenario_file.hpp"
#include "devices/scenario_toml.hpp"
#include "devices/session.hpp"
#include "dsp/errors.hpp"

namespace hb::cli {
namespace {

std::string read_text(const std::string& path) {
    std::ifstream in(path, std::ios::binary);
    if (!in) throw InputError(path + ": cannot open (does it exist and is it readable?)");
    std::ostringstream ss;
    ss << in.rdbuf();
    if (in.bad()) throw InputError(path + ": read error");
    return ss.str();
}

}  // namespace

void register_check(CLI::App& app, int& rc) {
    auto* cmd =
        app.add_subcommand("check", "Validate a session or a generator scenario file and print it back normalised");
    auto path = std::make_shared<std::string>();
    cmd->add_option("file", *path, "Session file, or generator scenario file (TOML)")->required();
    cmd->callback([path, &rc] {
        const std::string text = read_text(*path);
        if (is_scenario_text(text, *path)) {
            std::cout << scenario_to_toml(parse_scenario(text, *path));
        } else {
            std::cout << session_to_toml(parse_session(text, *path));
        }
        rc = kExitOk;
    });
}

}  // namespace hb::cli
