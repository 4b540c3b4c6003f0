// The panels of the bench window, each a plain function of the Setup (edited in place), what the window knows
// this frame (BenchData) and the few UI values (GuiState). Read top to bottom like the screen:
//
//   ┌ menu ─────────────────────────────────────────────────────────────────────────────────────┐
//   │ chain strip: Source ─TP1─ RF filter ─TP2─ Mixer ─TP3─ IF chain ─TP4─ Analyzer ┄ Plan check │
//   │                                           LO                                              │
//   ├───────────────────────────────────────────────────────────┬───────────────────────────────┤
//   │ spectrum at the probe (markers, limits, zoom, readout)     │ editor of the selected block  │
//   │ waterfall                                                  │ views of the selected block   │
//   ├──────────────────────────────────────┬────────────────────┤ (response, LO, spur table,    │
//   │ plan check table                      │ unexplained | scope│  tuning range, scope)        │
//   ├──────────────────────────────────────┴────────────────────┴───────────────────────────────┤
//   │ status line                                                                               │
//   └───────────────────────────────────────────────────────────────────────────────────────────┘
#pragma once

#include <imgui.h>

#include <string>
#include <vector>

#include "dsp/setup.hpp"
#include "gui/bench_view.hpp"
#include "gui/gui_state.hpp"
#include "pipeline/pipeline.hpp"

namespace hb::gui {

// The waterfall texture as the panels see it: width × height texels, the newest row at `head`, `rows` written,
// covering [low_hz, high_hz).
struct WaterfallView {
    ImTextureID texture = nullptr;
    int width = 0, height = 0, head = 0, rows = 0;
    double low_hz = 0.0, high_hz = 0.0;
};

struct FrameTimes {
    double fps = 0.0;       // frames per second over the last second
    double work_ms = 0.0;   // mean time to build and render a frame (without the cap's sleep)
    double worst_ms = 0.0;  // the longest of the last second
};

// What the window knows this frame.
struct BenchData {
    bool has_source = false;       // the Setup has a [[source]]
    bool running = false;          // a pipeline runs
    std::string pipeline_error;    // why none runs (opening the source failed, ...)
    const Frame* frame = nullptr;  // the latest frame (nullptr before the first)
    const PlanViews* views = nullptr;
    const MarkerSet* markers = nullptr;  // at the probe
    const MarkerSet* check = nullptr;    // the plan check of the IF output (the bench's verdict), or predicted lines
    const std::vector<float>* spectrum_db = nullptr;  // the frame's probe spectrum in dB (its unit)
    double band_low_hz = 0.0, band_high_hz = 0.0;     // the probe's band (absolute)
    std::string unit = "dBFS";
    std::string problem;  // the first problem of the Setup being edited (validate), or ""
    WaterfallView waterfall;
    FrameTimes times;
    bool recording = false;
    double recording_s = 0.0;
    std::string recording_path;
};

void apply_style();

// Each draws into the given rectangle (window pixels) as its own undecorated ImGui window.
void draw_menu_bar(Setup& setup, const BenchData& d, GuiState& ui);
void draw_chain_strip(const Rect& r, const Setup& setup, const BenchData& d, GuiState& ui);
void draw_spectrum_panel(const Rect& r, const BenchData& d, GuiState& ui);
void draw_side_panel(const Rect& r, Setup& setup, const BenchData& d, GuiState& ui);
void draw_tables_panel(const Rect& r, const BenchData& d, GuiState& ui);
void draw_status_line(const Rect& r, const Setup& setup, const BenchData& d, const GuiState& ui);

// Plots shared by the panels (inside the current ImGui window, `size` pixels).
void plot_scope(const BenchData& d, ImVec2 size);
void plot_response(const ResponseCurve& c, int view, ImVec2 size);
void plot_lo(const PlanViews& v, ImVec2 size);
void plot_spur_table(const PlanViews& v);
void plot_tuning_range(const PlanViews& v, ImVec2 size);

// Small drawing helpers (panels_plot.cpp).
ImU32 status_colour(LineStatus s);
// A plot frame: fills the background, draws the grid and the axis labels; returns the inner rectangle.
struct PlotAxes {
    ImVec2 p0, p1;  // inner rectangle
    double x0 = 0, x1 = 1, y0 = 0, y1 = 1;
    float x_of(double x) const { return p0.x + static_cast<float>((x - x0) / (x1 - x0)) * (p1.x - p0.x); }
    float y_of(double y) const { return p1.y - static_cast<float>((y - y0) / (y1 - y0)) * (p1.y - p0.y); }
    double x_at(float px) const { return x0 + (px - p0.x) / (p1.x - p0.x) * (x1 - x0); }
    double y_at(float py) const { return y0 + (p1.y - py) / (p1.y - p0.y) * (y1 - y0); }
};
// x is a frequency axis in Hz when x_is_freq (labels with the unit), else plain numbers with x_unit.
PlotAxes draw_axes(ImDrawList* dl, ImVec2 outer0, ImVec2 outer1, double x0, double x1, double y0, double y1,
                   bool x_is_freq, const char* x_unit, const char* y_unit, float left_margin = 54.0f);

}  // namespace hb::gui
