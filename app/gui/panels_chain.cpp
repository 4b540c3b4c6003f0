// The menu bar, the chain strip (the receiver's block diagram with test points for the probe) and the status line.
#include <algorithm>
#include <cmath>
#include <cstdio>

#include "gui/gui_helpers.hpp"
#include "gui/palette.hpp"
#include "gui/panels.hpp"

namespace hb::gui {

namespace pal = palette;

const char* block_key(Block b) {
    switch (b) {
        case Block::source:
            return "source";
        case Block::rf_filter:
            return "rf_filter";
        case Block::mixer:
            return "mixer";
        case Block::if_chain:
            return "if_chain";
        case Block::analyzer:
            return "analyzer";
        case Block::plan:
            return "plan";
    }
    return "?";
}

const char* block_title(Block b) {
    switch (b) {
        case Block::source:
            return "Source";
        case Block::rf_filter:
            return "RF filter";
        case Block::mixer:
            return "Mixer";
        case Block::if_chain:
            return "IF chain";
        case Block::analyzer:
            return "Analyzer";
        case Block::plan:
            return "Plan check";
    }
    return "?";
}

const char* probe_title(Probe p) {
    switch (p) {
        case Probe::rf_input:
            return "TP1 RF in";
        case Probe::rf_filtered:
            return "TP2 RF filtered";
        case Probe::mixer_output:
            return "TP3 mixer out";
        case Probe::if_output:
            return "TP4 IF out";
    }
    return "?";
}

namespace {

constexpr ImGuiWindowFlags kPanelFlags = ImGuiWindowFlags_NoDecoration | ImGuiWindowFlags_NoMove |
                                         ImGuiWindowFlags_NoSavedSettings | ImGuiWindowFlags_NoScrollWithMouse |
                                         ImGuiWindowFlags_NoBringToFrontOnFocus;

const char* probe_short(Probe p) {
    switch (p) {
        case Probe::rf_input:
            return "RF in";
        case Probe::rf_filtered:
            return "RF filt";
        case Probe::mixer_output:
            return "mix out";
        case Probe::if_output:
            return "IF out";
    }
    return "?";
}

std::string window_short(WindowType w) {
    switch (w) {
        case WindowType::blackman_harris:
            return "Bl.-Harris";
        case WindowType::flat_top:
            return "flat-top";
        default:
            return std::string(to_string(w));
    }
}

// The key figures each block shows (up to three lines).
std::vector<std::string> block_lines(Block b, const Setup& s, const BenchData& d) {
    std::vector<std::string> l;
    const PlanViews* v = d.views;
    switch (b) {
        case Block::source:
            if (s.sources.empty()) {
                l = {"no source", "plan views only"};
            } else {
                const SourceSpec& src = s.sources.front();
                l.push_back(std::string(to_string(src.kind)) +
                            (s.sources.size() > 1 ? " +" + std::to_string(s.sources.size() - 1) : ""));
                const double fc = d.frame ? d.frame->status.center_hz : src.frequency_hz.value_or(kNaN);
                const double fs = d.frame ? d.frame->status.sample_rate_hz : src.sample_rate_hz.value_or(kNaN);
                l.push_back("at " + freq_text(fc));
                l.push_back(rate_text(fs));
            }
            break;
        case Block::rf_filter:
            if (s.rf_filter.type == FilterType::none) {
                l = {"none (a wire)"};
            } else {
                l.push_back(std::string(to_string(s.rf_filter.type)) +
                            (s.rf_filter.preset.empty() ? "" : " (" + s.rf_filter.preset + ")"));
                if (s.rf_filter.response == FilterResponse::bandpass)
                    l.push_back("at " + freq_text(s.rf_filter.center_hz));
                l.push_back("BW " + freq_text(s.rf_filter.bandwidth_hz));
            }
            break;
        case Block::mixer: {
            std::string m(to_string(s.mixer.model));
            if (!s.mixer.preset.empty()) m = s.mixer.preset + (s.mixer.model == MixerModel::ideal ? "" : " / " + m);
            l.push_back(m);
            if (v && v->ok) l.push_back("gain " + db_text(v->model.mixer.conversion_gain_db, "dB"));
            if (v && v->ok) l.push_back(v->plan.complex_if ? "complex IF (IQ)" : "real IF");
            break;
        }
        case Block::if_chain: {
            const double c = s.if_chain.center_hz.value_or(s.plan.if_hz);
            l.push_back("IF " + freq_text(c));
            std::size_t n = 0;
            for (const FilterSpec& f : s.if_filters) n += f.type != FilterType::none;
            l.push_back("BW " + freq_text(s.plan.if_bandwidth_hz) + ", " + std::to_string(n) +
                        (n == 1 ? " filter" : " filters"));
            l.push_back("gain " + db_text(s.if_chain.gain_db, "dB") + ", \u00f7" +
                        std::to_string(s.if_chain.decimation));
            break;
        }
        case Block::analyzer: {
            l.push_back("FFT " + std::to_string(s.analyzer.fft_size) + ", " + window_short(s.analyzer.window));
            if (d.frame && d.frame->spectrum.rbw_hz > 0) l.push_back("RBW " + freq_text(d.frame->spectrum.rbw_hz, 4));
            l.push_back(std::string(to_string(s.analyzer.averaging)) + " \u00d7" + std::to_string(s.analyzer.averages) +
                        ", " + std::string(to_string(s.analyzer.unit)));
            break;
        }
        case Block::plan: {
            l.push_back("wanted " + freq_text(s.plan.wanted_hz));
            if (d.frame && d.frame->has_analysis) {
                const PlanCheck& c = d.frame->analysis.check;
                int pass = 0, fail = 0;
                for (const LineResult& r : c.lines) {
                    pass += r.status == LineStatus::pass;
                    fail += r.status == LineStatus::fail;
                }
                l.push_back(std::to_string(pass) + " pass, " + std::to_string(fail) + " fail");
                const ImageRejection& im = d.frame->analysis.image;
                l.push_back(std::isfinite(im.rejection_db) ? std::string("image ") + (im.lower_bound ? "\u2265 " : "") +
                                                                 db_text(im.rejection_db, "dB")
                                                           : "image: not observable");
            } else if (v && v->ok) {
                l.push_back("not measured");
                l.push_back(std::to_string(v->report.tuning.channels_with_spurs) + " of " +
                            std::to_string(v->report.tuning.channels.size()) + " ch. with spurs");
            }
            break;
        }
    }
    return l;
}

// The verdict of the plan block: PASS / FAIL from the measurement, else "plan" (not measured).
std::pair<std::string, ImU32> verdict(const BenchData& d) {
    if (d.frame && d.frame->has_analysis) {
        const PlanCheck& c = d.frame->analysis.check;
        if (!c.wanted_observed()) return {"NO WANTED", pal::not_observable};
        return c.passed() ? std::pair<std::string, ImU32>{"PASS", pal::pass}
                          : std::pair<std::string, ImU32>{"FAIL", pal::fail};
    }
    return {"", pal::text_dim};  // nothing measured: the lines below say so
}

void arrow(ImDrawList* dl, ImVec2 a, ImVec2 b, ImU32 c) {
    dl->AddLine(a, b, c, 1.5f);
    const float dx = b.x - a.x, dy = b.y - a.y, len = std::sqrt(dx * dx + dy * dy);
    if (len < 1) return;
    const float ux = dx / len, uy = dy / len;
    dl->AddTriangleFilled(b, ImVec2(b.x - 7 * ux - 4 * uy, b.y - 7 * uy + 4 * ux),
                          ImVec2(b.x - 7 * ux + 4 * uy, b.y - 7 * uy - 4 * ux), c);
}

}  // namespace

void draw_chain_strip(const Rect& r, const Setup& s, const BenchData& d, GuiState& ui) {
    ImGui::SetNextWindowPos(ImVec2(r.x0, r.y0));
    ImGui::SetNextWindowSize(ImVec2(r.w(), r.h()));
    ImGui::Begin("##chain", nullptr, kPanelFlags);
    ImDrawList* dl = ImGui::GetWindowDrawList();
    dl->AddRectFilled(ImVec2(r.x0, r.y0), ImVec2(r.x1, r.y1), pal::rgba(18, 25, 23));

    const float margin = 10, gap = 62;
    const float bw = (r.w() - 2 * margin - 5 * gap) / 6;
    const float by0 = r.y0 + 8, by1 = r.y0 + 80;
    const float wire_y = by0 + 34;
    const float lh = ImGui::GetTextLineHeight();

    for (std::size_t i = 0; i < kBlocks.size(); ++i) {
        const Block b = kBlocks[i];
        const float x0 = r.x0 + margin + static_cast<float>(i) * (bw + gap);
        const ImVec2 p0(x0, by0), p1(x0 + bw, by1);
        ImGui::SetCursorScreenPos(p0);
        ImGui::PushID(static_cast<int>(i));
        if (ImGui::InvisibleButton("##block", ImVec2(bw, by1 - by0))) ui.selected = b;
        const bool hov = ImGui::IsItemHovered();
        if (hov) ImGui::SetTooltip("%s: click to edit it in the side panel", block_title(b));
        ImGui::PopID();
        const bool sel = ui.selected == b;
        ui.rects[std::string("block.") + block_key(b)] = {p0.x, p0.y, p1.x, p1.y};
        // The plan block is not a signal block: drawn with a dashed-looking double edge.
        dl->AddRectFilled(p0, p1, hov ? pal::block_hover : pal::block, 4.0f);
        dl->AddRect(p0, p1, sel ? pal::probe : pal::block_edge, 4.0f, 0, sel ? 2.5f : 1.0f);
        if (b == Block::plan)
            dl->AddRect(ImVec2(p0.x + 3, p0.y + 3), ImVec2(p1.x - 3, p1.y - 3), pal::with_alpha(pal::block_edge, 120),
                        3.0f);
        float tx = p0.x + 7;
        if (b == Block::mixer) {  // the mixer's symbol: a circle with a cross
            const ImVec2 c(p0.x + 13, p0.y + 4 + lh / 2);
            dl->AddCircle(c, 6.5f, pal::text, 16, 1.3f);
            dl->AddLine(ImVec2(c.x - 4.6f, c.y - 4.6f), ImVec2(c.x + 4.6f, c.y + 4.6f), pal::text, 1.3f);
            dl->AddLine(ImVec2(c.x - 4.6f, c.y + 4.6f), ImVec2(c.x + 4.6f, c.y - 4.6f), pal::text, 1.3f);
            tx += 16;
        }
        dl->AddText(ImVec2(tx, p0.y + 4), sel ? pal::probe : pal::text, block_title(b));
        if (b == Block::plan) {
            const auto [t, c] = verdict(d);
            const ImVec2 ts = ImGui::CalcTextSize(t.c_str());
            if (!t.empty()) dl->AddText(ImVec2(p1.x - ts.x - 7, p0.y + 4), c, t.c_str());
        }
        const auto lines = block_lines(b, s, d);
        dl->PushClipRect(p0, p1, true);
        for (std::size_t k = 0; k < lines.size(); ++k)
            dl->AddText(ImVec2(p0.x + 7, p0.y + 6 + (static_cast<float>(k) + 1) * (lh + 2)), pal::text_dim,
                        lines[k].c_str());
        dl->PopClipRect();

        // The wire to the next block, with its test point.
        if (i + 1 < kBlocks.size()) {
            const ImVec2 a(p1.x, wire_y), e(p1.x + gap, wire_y);
            if (i + 1 == kBlocks.size() - 1) {  // analyzer → plan: results, not signal
                for (float x = a.x + 2; x < e.x - 8; x += 7)
                    dl->AddLine(ImVec2(x, wire_y), ImVec2(x + 3, wire_y), pal::wire);
                dl->AddTriangleFilled(e, ImVec2(e.x - 7, e.y - 4), ImVec2(e.x - 7, e.y + 4), pal::wire);
                continue;
            }
            arrow(dl, a, ImVec2(e.x - 1, e.y), pal::wire);
            const Probe p = kProbes[i];
            const ImVec2 pin((a.x + e.x) / 2 - 3, wire_y);
            const bool active = ui.probe == p;
            ImGui::SetCursorScreenPos(ImVec2(pin.x - 12, pin.y - 12));
            ImGui::PushID(100 + static_cast<int>(i));
            if (ImGui::InvisibleButton("##pin", ImVec2(24, 44))) ui.probe = p;
            const bool ph = ImGui::IsItemHovered();
            if (ph)
                ImGui::SetTooltip(
                    "Test point %s: put the probe here (key %zu). The spectrum, the waterfall and the "
                    "scope then show this point of the chain.",
                    probe_title(p), i + 1);
            ImGui::PopID();
            ui.rects[std::string("probe.") + std::string(to_string(p))] = {pin.x - 12, pin.y - 12, pin.x + 12,
                                                                           pin.y + 32};
            dl->AddCircleFilled(pin, 6.0f, active ? pal::probe : (ph ? pal::block_hover : pal::rgba(18, 25, 23)), 16);
            dl->AddCircle(pin, 6.0f, active ? pal::probe : pal::wire, 16, 1.5f);
            const char* lbl = probe_short(p);
            const ImVec2 ts = ImGui::CalcTextSize(lbl);
            dl->AddText(ImVec2(pin.x - ts.x / 2, pin.y + 9), active ? pal::probe : pal::text_dim, lbl);
            char tp[8];
            std::snprintf(tp, sizeof tp, "TP%zu", i + 1);
            const ImVec2 tps = ImGui::CalcTextSize(tp);
            dl->AddText(ImVec2(pin.x - tps.x / 2, pin.y + 9 + lh), pal::text_dim, tp);
            if (active) {  // the probe itself: a tip touching the pin and its body going up and right
                const ImVec2 tip(pin.x + 3, pin.y - 4), body(pin.x + 16, pin.y - 26);
                dl->AddLine(tip, body, pal::probe, 2.0f);
                dl->AddRectFilled(ImVec2(body.x - 3, body.y - 10), ImVec2(body.x + 4, body.y + 1), pal::probe, 2.0f);
            }
        }
    }

    // The LO under the mixer, feeding it from below.
    const float mx0 = r.x0 + margin + 2 * (bw + gap);
    const ImVec2 l0(mx0 - gap / 2 + 4, by1 + 14), l1(mx0 + bw + gap / 2 - 4, r.y1 - 4);
    arrow(dl, ImVec2((l0.x + l1.x) / 2, l0.y), ImVec2((l0.x + l1.x) / 2, by1 + 1), pal::wire);
    ImGui::SetCursorScreenPos(l0);
    if (ImGui::InvisibleButton("##lo", ImVec2(l1.x - l0.x, std::max(1.0f, l1.y - l0.y)))) ui.selected = Block::mixer;
    const bool lh_hov = ImGui::IsItemHovered();
    if (lh_hov) ImGui::SetTooltip("The local oscillator: click to edit it with the mixer");
    ui.rects["block.lo"] = {l0.x, l0.y, l1.x, l1.y};
    dl->AddRectFilled(l0, l1, lh_hov ? pal::block_hover : pal::block, 4.0f);
    dl->AddRect(l0, l1, ui.selected == Block::mixer ? pal::probe : pal::block_edge, 4.0f);
    std::string lo = "LO ";
    if (d.views && d.views->ok) {
        const FrequencyPlan& p = d.views->plan;
        lo += freq_text(d.frame ? d.frame->layout.lo_hz : p.lo_hz) + ", " +
              (p.fixed_lo ? std::string("fixed") : (p.injection == Injection::high ? "high-side" : "low-side"));
        lo += ", " + db_text(s.mixer.lo.level_dbm, "dBm");
    } else {
        lo += "?";
    }
    dl->PushClipRect(l0, l1, true);
    dl->AddText(ImVec2(l0.x + 6, l0.y + 3), pal::text, lo.c_str());
    dl->PopClipRect();
    ImGui::End();
}

void draw_status_line(const Rect& r, const Setup& s, const BenchData& d, const GuiState& ui) {
    ImGui::SetNextWindowPos(ImVec2(r.x0, r.y0));
    ImGui::SetNextWindowSize(ImVec2(r.w(), r.h()));
    ImGui::PushStyleColor(ImGuiCol_WindowBg, ImGui::ColorConvertU32ToFloat4(pal::rgba(16, 22, 20)));
    ImGui::Begin("##status", nullptr, kPanelFlags);
    auto sep = [] {
        ImGui::SameLine();
        ImGui::TextDisabled("|");
        ImGui::SameLine();
    };
    if (!d.has_source) {
        ImGui::TextColored(ImGui::ColorConvertU32ToFloat4(pal::probe), "no [[source]] in the session: plan views only");
        ImGui::SameLine();
        ImGui::TextDisabled("(add a [[source]] to measure)");
    } else if (!d.running) {
        ImGui::TextColored(ImGui::ColorConvertU32ToFloat4(pal::fail), "source not running: %s",
                           d.pipeline_error.c_str());
    } else if (d.frame) {
        const PipelineStatus& st = d.frame->status;
        ImGui::Text("%s", st.source.c_str());
        sep();
        ImGui::Text("%s at %s", rate_text(st.sample_rate_hz).c_str(), freq_text(st.center_hz).c_str());
        sep();
        const double load = 100 * st.dsp_load;
        ImGui::TextColored(ImGui::ColorConvertU32ToFloat4(load > 90   ? pal::fail
                                                          : load > 60 ? pal::order_colour(2)
                                                                      : pal::text),
                           "DSP %.0f %%", load);
        sep();
        ImGui::TextColored(ImGui::ColorConvertU32ToFloat4(st.overflows ? pal::fail : pal::text), "overflows %llu",
                           static_cast<unsigned long long>(st.overflows));
        sep();
        ImGui::TextColored(ImGui::ColorConvertU32ToFloat4(st.dropped_blocks ? pal::fail : pal::text),
                           "drops %llu (%llu samples)", static_cast<unsigned long long>(st.dropped_blocks),
                           static_cast<unsigned long long>(st.dropped_samples));
        sep();
        ImGui::Text("%s", st.state.c_str());
    } else {
        ImGui::TextDisabled("starting %s...",
                            s.sources.empty() ? "" : std::string(to_string(s.sources.front().kind)).c_str());
    }
    sep();
    ImGui::Text("%.1f fps (%.1f ms/frame)", d.times.fps, d.times.work_ms);
    if (ui.frozen) {
        sep();
        ImGui::TextColored(ImGui::ColorConvertU32ToFloat4(pal::probe), "FROZEN (Space resumes)");
    }
    if (d.recording) {
        sep();
        ImGui::TextColored(ImGui::ColorConvertU32ToFloat4(pal::fail), "\u25cf REC %s to %s",
                           time_text(d.recording_s).c_str(), d.recording_path.c_str());
    }
    if (!ui.message.empty()) {
        sep();
        ImGui::TextColored(ImGui::ColorConvertU32ToFloat4(ui.message_is_error ? pal::fail : pal::text_dim), "%s",
                           ui.message.c_str());
    }
    ImGui::End();
    ImGui::PopStyleColor();
}

void draw_menu_bar(Setup& /*setup*/, const BenchData& d, GuiState& ui) {
    if (!ImGui::BeginMainMenuBar()) return;
    if (ImGui::BeginMenu("Session")) {
        if (ImGui::MenuItem("Open...", "Ctrl+O")) ui.want_open = true;
        if (ImGui::MenuItem("Save", "Ctrl+S")) {
            if (ui.session_path.empty())
                ui.want_save_as = true;
            else
                ui.want_save = true;
        }
        if (ImGui::MenuItem("Save as...")) ui.want_save_as = true;
        ImGui::Separator();
        if (ImGui::MenuItem("Quit", "Ctrl+Q")) ui.quit = true;
        ImGui::EndMenu();
    }
    if (ImGui::BeginMenu("Bench")) {
        if (ImGui::MenuItem(ui.frozen ? "Resume" : "Freeze", "Space")) ui.frozen = !ui.frozen;
        if (ImGui::MenuItem(d.recording ? "Stop recording" : "Record to SigMF...", "R", false, d.running)) {
            if (d.recording)
                ui.want_stop_record = true;
            else
                ui.want_record = true;
        }
        const bool ended = d.frame && d.frame->status.finished;
        if (ImGui::MenuItem("Replay the source", nullptr, false, ended)) ui.want_replay = true;
        ImGui::Separator();
        for (std::size_t i = 0; i < kProbes.size(); ++i) {
            const std::string key = std::to_string(i + 1);
            if (ImGui::MenuItem((std::string("Probe at ") + probe_title(kProbes[i])).c_str(), key.c_str(),
                                ui.probe == kProbes[i]))
                ui.probe = kProbes[i];
        }
        ImGui::Separator();
        if (ImGui::MenuItem("Whole band", "Home")) ui.view.follow = true;
        if (ImGui::MenuItem("Fit levels", "A")) ui.view.level_pending = true;
        ImGui::EndMenu();
    }
    if (ImGui::BeginMenu("Markers")) {
        for (int o = 1; o <= 8; ++o) {
            const std::string l = o == 8 ? "order 8 and above" : "order " + std::to_string(o);
            ImGui::MenuItem(l.c_str(), nullptr, &ui.toggles.show_order[static_cast<std::size_t>(o)]);
        }
        ImGui::Separator();
        for (int k = 0; k < 7; ++k)
            ImGui::MenuItem(kind_name(static_cast<LineKind>(k)), nullptr,
                            &ui.toggles.show_kind[static_cast<std::size_t>(k)]);
        ImGui::Separator();
        ImGui::MenuItem("limits", nullptr, &ui.toggles.limits);
        ImGui::EndMenu();
    }
    if (ImGui::BeginMenu("Help")) {
        ImGui::TextUnformatted(
            "Click a block of the chain strip to edit it; click a test point (TP1..TP4) to move the probe.\n"
            "Keys: 1-4 probe point, Space freeze/resume, Home whole band, A fit levels, R record,\n"
            "Ctrl+S save, Ctrl+O open, Ctrl+Q quit.\n"
            "Spectrum: wheel zooms around the cursor, drag pans, double-click shows the whole band;\n"
            "wheel over the level axis moves the top, Ctrl+wheel the range. Hover a marker for its numbers.\n"
            "Frequencies are typed with a unit: 98.3M, 455k, 10.7 MHz (Enter applies).");
        ImGui::EndMenu();
    }
    ImGui::EndMainMenuBar();
}

}  // namespace hb::gui
