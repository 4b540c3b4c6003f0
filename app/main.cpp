// hetbench: a receiver test bench. Entry point: parses the command line and runs one command.
#include <iostream>

#include "cli/commands.hpp"
#include "dsp/errors.hpp"

int main(int argc, char** argv) {
    CLI::App app{"hetbench " HETBENCH_VERSION
                 ": a receiver test bench for frequency plans (image, IF feedthrough, LO harmonics, m x n spurs)"};
    app.set_version_flag("--version", "hetbench " HETBENCH_VERSION);
    app.require_subcommand(0, 1);
    app.fallthrough(false);
    int rc = hb::cli::kExitOk;
    hb::cli::register_check(app, rc);
    hb::cli::register_filter(app, rc);
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
