// hetbench gui [SESSION] [--screenshot FILE --frames N] [--fps N] [--fps-report] [--state-dump FILE] [--size WxH]:
// the bench window on a session (default: the bundled demo). See app/gui/window.cpp.
#include <cstdio>
#include <iostream>
#include <memory>

#include "cli/commands.hpp"
#include "cli/fft_wisdom.hpp"
#include "dsp/errors.hpp"
#include "gui/gui.hpp"

namespace hb::cli {

void register_gui(CLI::App& app, int& rc) {
    auto* cmd = app.add_subcommand("gui", "Open the bench window on a session (default: the bundled demo session)");
    auto o = std::make_shared<gui::GuiOptions>();
    auto size = std::make_shared<std::string>("1280x800");
    cmd->add_option("session", o->session, "Session file (TOML); default recordings/demo.toml");
    cmd->add_option("--screenshot", o->screenshot, "Write a PNG of the window after --frames frames, then exit");
    cmd->add_option("--frames", o->frames, "Exit after this many frames (with a source: once a measurement shows)")
        ->check(CLI::Range(1, 100000000));
    cmd->add_option("--fps", o->fps, "Frame-rate cap (default 30; 0: uncapped, for measuring)")
        ->check(CLI::Range(0.0, 1000.0));
    cmd->add_flag("--fps-report", o->fps_report, "Print measured frame times to stderr each second and at exit");
    cmd->add_option("--state-dump", o->state_dump, "Write the window state and the Setup as JSON at exit");
    cmd->add_option("--size", *size, "Window size WxH in pixels (default 1280x800)");
    cmd->callback([o, size, &rc] {
        int w = 0, h = 0;
        char tail = 0;
        if (std::sscanf(size->c_str(), "%dx%d%c", &w, &h, &tail) != 2 || w < 640 || h < 480 || w > 16384 || h > 16384)
            throw InputError("--size: got '" + *size + "', expected WxH with W from 640 and H from 480, e.g. 1280x800");
        o->width = w;
        o->height = h;
        if (!o->screenshot.empty() && o->frames == 0) o->frames = 60;
        if (o->session.empty()) {
            o->session = gui::find_demo_session(nullptr);
            if (o->session.empty())
                throw InputError(
                    "gui: no session given, and the bundled recordings/demo.toml was not found "
                    "(set HETBENCH_SOURCE_DIR to the project folder)");
        }
#ifdef HETBENCH_HAS_GUI
        const ScopedFftWisdom wisdom(std::cerr);  // the live analyzer's measured plans, kept between runs
        rc = gui::run_gui(*o);
#else
        throw InputError("gui: this hetbench was built without the bench window (configure with -DHETBENCH_GUI=ON)");
#endif
    });
}

}  // namespace hb::cli
