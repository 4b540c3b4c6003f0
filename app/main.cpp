// hetbench: a receiver test bench. Entry point: parses the command line and runs one command.
#include <cstdlib>
#include <iostream>
#include <string>
#include <vector>

#include "cli/commands.hpp"
#include "dsp/errors.hpp"
#include "gui/gui.hpp"

int main(int argc, char** argv) {
    CLI::App app{"hetbench " HETBENCH_VERSION
                 ": a receiver test bench for frequency plans (image, IF feedthrough, LO harmonics, m x n spurs)"};
    app.set_version_flag("--version", "hetbench " HETBENCH_VERSION);
    app.require_subcommand(0, 1);
    app.fallthrough(false);
    int rc = hb::cli::kExitOk;
    hb::cli::register_all(app, rc);
#ifdef HETBENCH_HAS_GUI
    // No arguments on a display: the bench window on the bundled demo session ("hetbench gui").
    std::vector<char*> gui_argv;
    static char gui_word[] = "gui";
    if (argc == 1 && std::getenv("DISPLAY") && *std::getenv("DISPLAY") &&
        !hb::gui::find_demo_session(argv[0]).empty()) {
        gui_argv = {argv[0], gui_word, nullptr};
        argc = 2;
        argv = gui_argv.data();
    }
#endif
    // "hetbench nosuch --help" must fail, not print the main help: callers probe commands that way.
    if (argc > 1 && argv[1][0] != '-') {
        bool known = false;
        for (const CLI::App* sub : app.get_subcommands([](CLI::App*) { return true; }))
            known = known || sub->get_name() == argv[1];
        if (!known) {
            std::cerr << "hetbench: error: unknown command '" << argv[1] << "' (see hetbench --help)\n";
            return hb::cli::kExitError;
        }
    }
    try {
        app.parse(argc, argv);
        if (app.get_subcommands().empty()) {
            std::cout << app.help();
            return hb::cli::kExitOk;
        }
    } catch (const CLI::CallForHelp& e) {
        return app.exit(e);
    } catch (const CLI::CallForAllHelp& e) {
        return app.exit(e);
    } catch (const CLI::CallForVersion& e) {
        return app.exit(e);
    } catch (const CLI::ParseError& e) {
        app.exit(e);
        return hb::cli::kExitError;
    } catch (const hb::InputError& e) {
        std::cerr << "hetbench: error: " << e.what() << "\n";
        return hb::cli::kExitError;
    } catch (const std::exception& e) {
        std::cerr << "hetbench: error: " << e.what() << "\n";
        return hb::cli::kExitError;
    }
    return rc;
}
