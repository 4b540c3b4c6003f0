// hetbench check SESSION.toml: validate a session and print it back normalised, or every problem.
#include <iostream>

#include "cli/commands.hpp"
#include "devices/session.hpp"

namespace hb::cli {

void register_check(CLI::App& app, int& rc) {
    auto* cmd = app.add_subcommand("check", "Validate a session file and print it back normalised");
    auto path = std::make_shared<std::string>();
    cmd->add_option("session", *path, "Session file (TOML)")->required();
    cmd->callback([path, &rc] {
        const Setup s = load_session(*path);
        std::cout << session_to_toml(s);
        rc = kExitOk;
    });
}

}  // namespace hb::cli
