// The few values that belong to the window alone (not to the Setup): which block is selected, where the probe
// is, the spectrum's zoom, the marker toggles, freeze, and the text of fields being typed. Everything else the
// window shows is a function of the Setup and the latest Frame.
#pragma once

#include <array>
#include <map>
#include <string>

#include "dsp/signal_chain.hpp"

namespace hb::gui {

enum class Block { source, rf_filter, mixer, if_chain, analyzer, plan };
inline constexpr std::array<Block, 6> kBlocks = {Block::source,   Block::rf_filter, Block::mixer,
                                                 Block::if_chain, Block::analyzer,  Block::plan};
inline constexpr std::array<Probe, 4> kProbes = {Probe::rf_input, Probe::rf_filtered, Probe::mixer_output,
                                                 Probe::if_output};

const char* block_key(Block b);    // "source", "rf_filter", "mixer", "if_chain", "analyzer", "plan"
const char* block_title(Block b);  // "Source", "RF filter", ...
const char* probe_title(Probe p);  // "RF in", "RF filtered", "mixer out", "IF out"

// A screen rectangle in window pixels (for the state dump: tests click on what the window drew).
struct Rect {
    float x0 = 0, y0 = 0, x1 = 0, y1 = 0;
    float w() const { return x1 - x0; }
    float h() const { return y1 - y0; }
};

struct SpectrumView {
    bool follow = true;  // the view is the probe's whole band (zoom or pan turns this off; Home turns it on)
    double low_hz = 0.0, high_hz = 0.0;
    float top_db = 0.0f;        // level at the top of the plot, in the spectrum's unit
    float range_db = 120.0f;    // dB from top to bottom
    bool level_pending = true;  // set top and range from the next spectrum (a new probe band, or key A)
};

// Index 1..8 of show_order is order m + |n| (8: 8 and above). show_kind is indexed by LineKind.
struct MarkerToggles {
    std::array<bool, 9> show_order = {true, true, true, true, true, true, true, true, true};
    std::array<bool, 7> show_kind = {true, true, true, true, true, true, true};
    bool limits = true;
};

struct GuiState {
    Block selected = Block::if_chain;
    Probe probe = Probe::if_output;
    bool frozen = false;
    SpectrumView view;
    MarkerToggles toggles;
    int filter_view = 0;  // 0 magnitude, 1 group delay
    int plan_view = 0;    // 0 spur table, 1 tuning range
    bool quit = false;

    std::string session_path;  // where Save writes ("" until opened or saved as)
    std::string message;       // the last action's result, shown in the status line
    bool message_is_error = false;

    // Pop-ups of the menu (their path fields).
    bool want_open = false, want_save_as = false, want_record = false, want_save = false, want_stop_record = false,
         want_replay = false;
    std::string path_entry;
    int record_datatype = 0;  // 0 cf32_le, 1 ci16_le

    // Fields being typed (a frequency entry keeps its text until Enter) and their last error.
    std::map<std::string, std::string> entry_text;
    std::map<std::string, std::string> entry_error;

    // Filled while drawing, for the state dump.
    std::map<std::string, Rect> rects;
    int markers_drawn = 0;
};

}  // namespace hb::gui
