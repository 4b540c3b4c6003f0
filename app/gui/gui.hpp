// The bench window: `hetbench gui [SESSION]` (and `hetbench` with no arguments on a display). Declared without
// any GL or ImGui type so the command line can call it; built only with HETBENCH_GUI.
#pragma once

#include <string>

namespace hb::gui {

struct GuiOptions {
    std::string session;      // session file (TOML); required
    std::string screenshot;   // write a PNG of the window after `frames` frames, then exit
    int frames = 0;           // exit after this many frames (0: run until closed)
    double fps = 30.0;        // frame-rate cap (0: uncapped, for measurements)
    bool fps_report = false;  // print measured frame times (each second and at exit) to stderr
    std::string state_dump;   // write the window state and the Setup as JSON at exit
    int width = 1280, height = 800;
};

// Opens the window and runs it until closed (or `frames`). Returns the exit code (0, or 2 with a message on
// stderr when no window can be opened). Throws InputError for a session that cannot be read.
int run_gui(const GuiOptions& options);

// The bundled demo session (recordings/demo.toml), looked up beside the executable's tree and in the source
// tree; empty when not found.
std::string find_demo_session(const char* argv0);

}  // namespace hb::gui
