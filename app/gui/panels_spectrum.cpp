// The spectrum at the probe point with its markers and limits, zoom, pan and a hover readout, and the waterfall
// under it on the same frequency axis.
//
// Drawing cost stays independent of the FFT size: the trace is reduced to one min/max pair per pixel column
// (gui_helpers reduce_columns), so a 65,536-bin spectrum costs as many line segments as the plot has columns; the
// waterfall is one texture that gets one new row per spectrum (uploaded by the window), drawn with a wrapping
// texture coordinate instead of moving rows.
#include <algorithm>
#include <cmath>
#include <cstdio>

#include "gui/gui_helpers.hpp"
#include "gui/palette.hpp"
#include "gui/panels.hpp"

namespace hb::gui {

namespace pal = palette;

namespace {

constexpr ImGuiWindowFlags kPanelFlags = ImGuiWindowFlags_NoDecoration | ImGuiWindowFlags_NoMove |
                                         ImGuiWindowFlags_NoSavedSettings | ImGuiWindowFlags_NoScrollWithMouse |
                                         ImGuiWindowFlags_NoBringToFrontOnFocus;

bool marker_visible(const Marker& m, const MarkerToggles& t) {
    const int o = std::clamp(m.order, 1, 8);
    return t.show_order[static_cast<std::size_t>(o)] && t.show_kind[static_cast<std::size_t>(m.kind)];
}

// A toggle drawn as a small coloured button: filled when on.
bool toggle_chip(const char* label, bool& on, ImU32 colour, const char* tip) {
    const ImVec4 c = ImGui::ColorConvertU32ToFloat4(colour);
    ImGui::PushStyleColor(ImGuiCol_Button,
                          on ? ImVec4(c.x * 0.55f, c.y * 0.55f, c.z * 0.55f, 1.0f) : ImVec4(0.1f, 0.13f, 0.12f, 1));
    ImGui::PushStyleColor(ImGuiCol_ButtonHovered, ImVec4(c.x * 0.7f, c.y * 0.7f, c.z * 0.7f, 1.0f));
    ImGui::PushStyleColor(ImGuiCol_Text, on ? ImVec4(1, 1, 1, 1) : ImVec4(c.x, c.y, c.z, 0.8f));
    const bool pressed = ImGui::SmallButton(label);
    ImGui::PopStyleColor(3);
    if (pressed) on = !on;
    if (ImGui::IsItemHovered())
        ImGui::SetTooltip("%s: %s", tip, on ? "shown (click to hide)" : "hidden (click to show)");
    return pressed;
}

void dashed_hline(ImDrawList* dl, float x0, float x1, float y, ImU32 c) {
    for (float x = x0; x < x1; x += 9) dl->AddLine(ImVec2(x, y), ImVec2(std::min(x + 5, x1), y), c, 1.0f);
}

// The band the plot shows when following: the probe's band, or for the plan alone the analysis window (IF
// centre ± output rate / 2) or the IF passband widened.
std::pair<double, double> default_band(const BenchData& d) {
    if (d.band_high_hz > d.band_low_hz) return {d.band_low_hz, d.band_high_hz};
    if (d.views && d.views->ok) {
        const FrequencyPlan& p = d.views->plan;
        if (p.window) return {p.window->low_hz(), p.window->high_hz()};
        const double c = p.if_band.center_hz, w = std::max(p.if_band.width_hz, 1.0);
        return {std::max(0.0, c - 12 * w), c + 12 * w};
    }
    return {0.0, 1.0};
}

}  // namespace

void draw_spectrum_panel(const Rect& r, const BenchData& d, GuiState& ui) {
    ImGui::SetNextWindowPos(ImVec2(r.x0, r.y0));
    ImGui::SetNextWindowSize(ImVec2(r.w(), r.h()));
    ImGui::Begin("##spectrum", nullptr, kPanelFlags);
    ImDrawList* dl = ImGui::GetWindowDrawList();
    const ImGuiIO& io = ImGui::GetIO();
    const Spectrum* sp = d.frame && d.spectrum_db && !d.spectrum_db->empty() ? &d.frame->spectrum : nullptr;
    const bool plan_only = sp == nullptr;
    const std::string unit = plan_only ? std::string("dBc") : d.unit;

    // ---- toolbar ----
    {
        const char* where = d.frame ? probe_title(d.frame->probe) : probe_title(ui.probe);
        if (sp)
            ImGui::Text("Spectrum at %s: %s \u00b1 %s, RBW %s, %d bins", where, freq_text(sp->center_hz).c_str(),
                        freq_text(sp->sample_rate_hz / 2).c_str(), freq_text(sp->rbw_hz, 4).c_str(), sp->size());
        else
            ImGui::Text("Plan lines (predicted, dBc): %s",
                        d.has_source ? "waiting for the first spectrum" : "no source");
        ImGui::SameLine(std::max(ImGui::GetCursorPosX() + 8, ImGui::GetWindowWidth() - 330));
        ImGui::SetNextItemWidth(96);
        const std::string top_fmt = "top %.0f " + unit;
        ImGui::DragFloat("##top", &ui.view.top_db, 0.5f, -300.0f, 100.0f, top_fmt.c_str());
        if (ImGui::IsItemHovered())
            ImGui::SetTooltip("level at the top of the plot (drag; or the wheel over the level axis)");
        ImGui::SameLine(0, 2);
        ImGui::SetNextItemWidth(80);
        ImGui::DragFloat("##range", &ui.view.range_db, 0.5f, 10.0f, 250.0f, "range %.0f dB");
        if (ImGui::IsItemHovered())
            ImGui::SetTooltip("dB from the top to the bottom of the plot (Ctrl + wheel over the level axis)");
        ImGui::SameLine(0, 2);
        if (ImGui::SmallButton("auto")) ui.view.level_pending = true;
        if (ImGui::IsItemHovered()) ImGui::SetTooltip("fit the level axis to the spectrum (key A)");
        ImGui::SameLine(0, 2);
        if (ImGui::SmallButton(ui.view.follow ? "span: full" : "span: zoomed")) ui.view.follow = true;
        if (ImGui::IsItemHovered())
            ImGui::SetTooltip("wheel over the plot zooms, drag pans, double-click or Home shows the whole band");
        ImGui::TextDisabled("markers: order");
        static const char* kOrderLabels[] = {"", "1", "2", "3", "4", "5", "6", "7", "8+"};
        for (int o = 1; o <= 8; ++o) {
            ImGui::SameLine(0, 2);
            ImGui::PushID(o);
            bool on = ui.toggles.show_order[static_cast<std::size_t>(o)];
            toggle_chip(kOrderLabels[o], on, pal::order_colour(o), "markers of this order m + |n|");
            ui.toggles.show_order[static_cast<std::size_t>(o)] = on;
            ImGui::PopID();
        }
        ImGui::SameLine();
        ImGui::TextDisabled("kind");
        static const char* kKindLabels[] = {"wanted", "image", "\u00bdIF", "IF", "LO", "RF", "spur"};
        for (int k = 0; k < 7; ++k) {
            ImGui::SameLine(0, 2);
            ImGui::PushID(100 + k);
            bool on = ui.toggles.show_kind[static_cast<std::size_t>(k)];
            toggle_chip(kKindLabels[k], on, pal::text_dim, kind_name(static_cast<LineKind>(k)));
            ui.toggles.show_kind[static_cast<std::size_t>(k)] = on;
            ImGui::PopID();
        }
        ImGui::SameLine(0, 8);
        bool lim = ui.toggles.limits;
        toggle_chip("limits", lim, pal::limit, "limit lines and ticks");
        ui.toggles.limits = lim;
    }

    // ---- the view ----
    const auto [band_lo, band_hi] = default_band(d);
    if (ui.view.follow || !(ui.view.high_hz > ui.view.low_hz)) {
        ui.view.low_hz = band_lo;
        ui.view.high_hz = band_hi;
    }
    if (sp && ui.view.level_pending) {
        float mx = -1e30f;
        std::vector<float> sorted(*d.spectrum_db);
        for (float v : sorted) mx = std::max(mx, std::isfinite(v) ? v : mx);
        std::nth_element(sorted.begin(), sorted.begin() + static_cast<std::ptrdiff_t>(sorted.size() / 10),
                         sorted.end());
        const float low = sorted[sorted.size() / 10];
        if (mx > -1e29f && std::isfinite(low)) {
            ui.view.top_db = std::ceil((mx + 8.0f) / 10.0f) * 10.0f;
            ui.view.range_db = std::clamp(ui.view.top_db - (std::floor((low - 15.0f) / 10.0f) * 10.0f), 60.0f, 200.0f);
        }
        ui.view.level_pending = false;
    } else if (plan_only && ui.view.level_pending) {
        ui.view.top_db = 10.0f;
        ui.view.range_db = 130.0f;
    }

    const ImVec2 avail = ImGui::GetContentRegionAvail();
    const ImVec2 o0 = ImGui::GetCursorScreenPos();
    const float wf_h = std::floor(avail.y * 0.36f);
    const ImVec2 o1(o0.x + avail.x, o0.y + avail.y - wf_h - 4);
    const double y_top = ui.view.top_db, y_bot = ui.view.top_db - ui.view.range_db;
    const PlotAxes a =
        draw_axes(dl, o0, o1, ui.view.low_hz, ui.view.high_hz, y_bot, y_top, true, "", unit.c_str(), 70.0f);
    ui.rects["spectrum_plot"] = {a.p0.x, a.p0.y, a.p1.x, a.p1.y};
    const int cols = std::max(1, static_cast<int>(a.p1.x - a.p0.x));
    auto clamp_y = [&](float y) { return std::clamp(y, a.p0.y, a.p1.y); };

    // ---- interaction: zoom around the cursor, pan by dragging, reset by double-click ----
    ImGui::SetCursorScreenPos(o0);
    ImGui::InvisibleButton("##plot", ImVec2(o1.x - o0.x, o1.y - o0.y));
    const bool hovered = ImGui::IsItemHovered();
    const bool over_levels = hovered && io.MousePos.x < a.p0.x;
    auto zoom_pan = [&](bool item_hovered, bool item_active) {
        const double span = ui.view.high_hz - ui.view.low_hz;
        if (item_hovered && io.MouseWheel != 0 && !over_levels) {
            const double f = a.x_at(std::clamp(io.MousePos.x, a.p0.x, a.p1.x));
            const double k = std::pow(0.8, static_cast<double>(io.MouseWheel));
            const double min_span = sp ? 8 * sp->bin_hz() : 10.0;
            const double nk = std::max(k, min_span / span);
            ui.view.low_hz = f - (f - ui.view.low_hz) * nk;
            ui.view.high_hz = f + (ui.view.high_hz - f) * nk;
            ui.view.follow = false;
        }
        if (item_active && io.MouseDelta.x != 0 && ImGui::IsMouseDragging(ImGuiMouseButton_Left, 2.0f)) {
            const double df = -io.MouseDelta.x * span / (a.p1.x - a.p0.x);
            ui.view.low_hz += df;
            ui.view.high_hz += df;
            ui.view.follow = false;
        }
        if (item_hovered && ImGui::IsMouseDoubleClicked(ImGuiMouseButton_Left)) ui.view.follow = true;
    };
    zoom_pan(hovered, ImGui::IsItemActive());
    if (over_levels && io.MouseWheel != 0) {
        if (io.KeyCtrl)
            ui.view.range_db = std::clamp(ui.view.range_db - 10.0f * io.MouseWheel, 10.0f, 250.0f);
        else
            ui.view.top_db = std::clamp(ui.view.top_db + 5.0f * io.MouseWheel, -300.0f, 100.0f);
    }

    // ---- the trace: min/max per pixel column ----
    std::vector<float> cmin(static_cast<std::size_t>(cols)), cmax(static_cast<std::size_t>(cols));
    dl->PushClipRect(a.p0, a.p1, true);
    if (sp) {
        const double first = sp->bin_of_freq(a.x0) + 0.5, last = sp->bin_of_freq(a.x1) + 0.5;
        reduce_columns(*d.spectrum_db, first, last, cmin, cmax);
        std::vector<ImVec2> line;
        line.reserve(static_cast<std::size_t>(cols));
        auto flush = [&] {
            if (line.size() > 1) dl->AddPolyline(line.data(), static_cast<int>(line.size()), pal::trace, 0, 1.0f);
            line.clear();
        };
        for (int c = 0; c < cols; ++c) {
            const float lo = cmin[static_cast<std::size_t>(c)], hi = cmax[static_cast<std::size_t>(c)];
            if (std::isnan(hi)) {
                flush();
                continue;
            }
            const float x = a.p0.x + static_cast<float>(c) + 0.5f;
            // Rows snapped to pixel centres: a level holding across columns draws as a crisp row of pixels.
            const float yhi = std::floor(clamp_y(a.y_of(hi))) + 0.5f, ylo = std::floor(clamp_y(a.y_of(lo))) + 0.5f;
            if (ylo - yhi > 1.5f) dl->AddLine(ImVec2(x, ylo), ImVec2(x, yhi), pal::trace_band);
            line.emplace_back(x, yhi);
        }
        flush();
    } else {
        dl->AddText(ImVec2(a.p0.x + 10, a.p1.y - 22), pal::text_dim,
                    d.has_source ? (d.running ? "waiting for the first spectrum..."
                                              : ("the source is not running: " + d.pipeline_error).c_str())
                                 : "no [[source]] in this session: the plan's predicted lines, in dBc");
    }

    // ---- limits ----
    const MarkerSet* ms = d.markers;
    const bool rf_probe = ms && !ms->markers.empty() && ms->markers.front().response;
    if (ui.toggles.limits && ms && std::isfinite(ms->wanted_level_db) && d.views && !rf_probe) {
        const PlanLimits& l = d.views->setup.plan.limits;
        const float ys = a.y_of(ms->wanted_level_db + l.spur_dbc);
        const float yl = a.y_of(ms->wanted_level_db + l.lo_feedthrough_dbc);
        dashed_hline(dl, a.p0.x, a.p1.x, ys, pal::limit);
        dashed_hline(dl, a.p0.x, a.p1.x, yl, pal::limit_lo);
        dl->AddText(ImVec2(a.p0.x + 4, ys - 14), pal::limit, ("spur limit " + db_text(l.spur_dbc, "dBc")).c_str());
        dl->AddText(ImVec2(a.p0.x + 4, yl - 14), pal::limit_lo,
                    ("LO limit " + db_text(l.lo_feedthrough_dbc, "dBc")).c_str());
    }

    // ---- markers ----
    const Marker* hovered_marker = nullptr;
    float hovered_dx = 6.0f;
    ui.markers_drawn = 0;
    if (ms) {
        std::vector<const Marker*> vis;
        for (const Marker& m : ms->markers)
            if (marker_visible(m, ui.toggles) && m.freq_hz >= a.x0 && m.freq_hz <= a.x1) vis.push_back(&m);
        std::sort(vis.begin(), vis.end(), [](const Marker* x, const Marker* y) { return x->freq_hz < y->freq_hz; });
        std::array<float, 3> row_right = {-1e9f, -1e9f, -1e9f};
        const float wanted = static_cast<float>(ms->wanted_level_db);
        for (const Marker* m : vis) {
            const ImU32 c = pal::order_colour(m->order);
            const float x = std::round(a.x_of(m->freq_hz)) + 0.5f;
            if (m->response && std::isfinite(m->band_low_hz)) {
                const float bx0 = a.x_of(m->band_low_hz), bx1 = std::max(a.x_of(m->band_high_hz), bx0 + 2);
                dl->AddRectFilled(ImVec2(bx0, a.p0.y), ImVec2(bx1, a.p1.y), pal::with_alpha(c, 34));
            }
            // Where the stem ends: the measured level, else the predicted one, else the bottom.
            float y_end = a.p1.y;
            const bool observed = m->measured && (m->status == LineStatus::pass || m->status == LineStatus::fail);
            if (observed && std::isfinite(m->level_db))
                y_end = a.y_of(m->level_db);
            else if (std::isfinite(wanted) && std::isfinite(m->predicted_dbc))
                y_end = a.y_of(wanted + m->predicted_dbc);
            else if (m->response && std::isfinite(m->level_db))
                y_end = a.y_of(m->level_db);
            y_end = clamp_y(y_end);
            const bool is_wanted = m->kind == LineKind::wanted;
            dl->AddLine(ImVec2(x, a.p0.y + 7), ImVec2(x, y_end), pal::with_alpha(c, is_wanted ? 230 : 150),
                        is_wanted ? 2.0f : 1.0f);
            // Flag at the top: a filled triangle, bigger for the wanted.
            const float fw = is_wanted ? 6.0f : 4.5f;
            dl->AddTriangleFilled(ImVec2(x - fw, a.p0.y + 1), ImVec2(x + fw, a.p0.y + 1),
                                  ImVec2(x, a.p0.y + 1 + 1.6f * fw), c);
            // Predicted: a hollow diamond; measured: a filled dot; below the floor: a caret at the bound.
            if (std::isfinite(wanted) && std::isfinite(m->predicted_dbc) && !is_wanted) {
                const float yp = a.y_of(wanted + m->predicted_dbc);
                if (yp >= a.p0.y && yp <= a.p1.y)
                    dl->AddQuad(ImVec2(x, yp - 4), ImVec2(x + 4, yp), ImVec2(x, yp + 4), ImVec2(x - 4, yp), c, 1.2f);
            }
            if (observed && std::isfinite(m->level_db)) dl->AddCircleFilled(ImVec2(x, y_end), 3.0f, c, 10);
            if (m->status == LineStatus::below_floor && std::isfinite(wanted) && std::isfinite(m->upper_bound_dbc)) {
                const float yb = clamp_y(a.y_of(wanted + m->upper_bound_dbc));
                dl->AddLine(ImVec2(x - 4, yb - 4), ImVec2(x, yb), c, 1.2f);
                dl->AddLine(ImVec2(x + 4, yb - 4), ImVec2(x, yb), c, 1.2f);
            }
            if (ui.toggles.limits && std::isfinite(wanted) && std::isfinite(m->limit_dbc) && !m->response) {
                const float yl = a.y_of(wanted + m->limit_dbc);
                if (yl >= a.p0.y && yl <= a.p1.y) dl->AddLine(ImVec2(x - 6, yl), ImVec2(x + 7, yl), pal::limit, 2.0f);
            }
            // Label in the first free row.
            const ImVec2 ts = ImGui::CalcTextSize(m->label.c_str());
            for (std::size_t row = 0; row < row_right.size(); ++row) {
                const float lx = x - ts.x / 2;
                if (lx > row_right[row] + 4) {
                    const float ly = a.p0.y + 12 + static_cast<float>(row) * (ts.y + 1);
                    dl->AddRectFilled(ImVec2(lx - 1, ly), ImVec2(lx + ts.x + 1, ly + ts.y),
                                      pal::with_alpha(pal::plot_bg, 200));
                    dl->AddText(ImVec2(lx, ly), c, m->label.c_str());
                    row_right[row] = lx + ts.x;
                    break;
                }
            }
            ++ui.markers_drawn;
            if (hovered && std::abs(io.MousePos.x - x) < hovered_dx) {
                hovered_dx = std::abs(io.MousePos.x - x);
                hovered_marker = m;
            }
        }
    }
    dl->PopClipRect();

    // ---- hover readout ----
    if (hovered && io.MousePos.x >= a.p0.x) {
        const float mx = std::clamp(io.MousePos.x, a.p0.x, a.p1.x - 1);
        dl->AddLine(ImVec2(mx, a.p0.y), ImVec2(mx, a.p1.y), pal::with_alpha(pal::text, 60));
        std::string t = freq_text(a.x_at(mx));
        if (sp) {
            const auto c = static_cast<std::size_t>(std::clamp(static_cast<int>(mx - a.p0.x), 0, cols - 1));
            t += "   " + db_text(cmax[c], unit) + " (peak in this column)";
        } else {
            t += "   " + db_text(a.y_at(io.MousePos.y), unit);
        }
        const ImVec2 ts = ImGui::CalcTextSize(t.c_str());
        dl->AddRectFilled(ImVec2(a.p1.x - ts.x - 10, a.p0.y + 56), ImVec2(a.p1.x - 2, a.p0.y + 58 + ts.y),
                          pal::with_alpha(pal::panel, 230));
        dl->AddText(ImVec2(a.p1.x - ts.x - 6, a.p0.y + 57), pal::text, t.c_str());
        if (hovered_marker) {
            ImGui::BeginTooltip();
            ImGui::PushStyleColor(ImGuiCol_Text,
                                  ImGui::ColorConvertU32ToFloat4(pal::order_colour(hovered_marker->order)));
            ImGui::Text("%s at %s", hovered_marker->label.c_str(), freq_text(hovered_marker->freq_hz).c_str());
            ImGui::PopStyleColor();
            ImGui::TextUnformatted(hovered_marker->explanation.c_str());
            ImGui::EndTooltip();
        }
    }

    // ---- waterfall ----
    const ImVec2 w0(o0.x, o1.y + 4), w1(o1.x, o1.y + 4 + wf_h);
    dl->AddRectFilled(w0, w1, pal::plot_bg);
    const ImVec2 wp0(a.p0.x, w0.y), wp1(a.p1.x, w1.y);
    ui.rects["waterfall"] = {wp0.x, wp0.y, wp1.x, wp1.y};
    const WaterfallView& wf = d.waterfall;
    if (wf.texture && wf.rows > 0 && wf.high_hz > wf.low_hz) {
        const double span = wf.high_hz - wf.low_hz;
        const double vlo = std::max(a.x0, wf.low_hz), vhi = std::min(a.x1, wf.high_hz);
        if (vhi > vlo) {
            const float x0 = a.x_of(vlo), x1 = a.x_of(vhi);
            const float u0 = static_cast<float>((vlo - wf.low_hz) / span),
                        u1 = static_cast<float>((vhi - wf.low_hz) / span);
            const float vtop = static_cast<float>(wf.head + 1) / static_cast<float>(wf.height);
            dl->AddImage(wf.texture, ImVec2(x0, wp0.y), ImVec2(x1, wp1.y), ImVec2(u0, vtop), ImVec2(u1, vtop - 1.0f));
        }
    }
    dl->AddRect(wp0, wp1, pal::axis);
    dl->AddText(ImVec2(w0.x + 4, w0.y + 2), pal::text_dim, "newest");
    dl->AddText(ImVec2(w0.x + 4, w0.y + 16), pal::text_dim, "\u2191 top");
    if (wf.rows > 0) {
        const std::string rows = std::to_string(wf.rows) + " rows";
        dl->AddText(ImVec2(w0.x + 4, w1.y - 16), pal::text_dim, rows.c_str());
    }
    ImGui::SetCursorScreenPos(wp0);
    ImGui::InvisibleButton("##waterfall", ImVec2(std::max(1.0f, wp1.x - wp0.x), std::max(1.0f, wp1.y - wp0.y)));
    const bool wf_hovered = ImGui::IsItemHovered();
    zoom_pan(wf_hovered, ImGui::IsItemActive());
    if (wf_hovered) {
        dl->AddLine(ImVec2(io.MousePos.x, wp0.y), ImVec2(io.MousePos.x, wp1.y), pal::with_alpha(pal::text, 60));
        ImGui::SetTooltip("%s", freq_text(a.x_at(io.MousePos.x)).c_str());
    }
    ImGui::End();
}

}  // namespace hb::gui
