// Shared drawing: the style, plot axes, and the small plots of the side panel (scope, filter response, LO
// waveform and harmonics, spur table, tuning range). Everything is drawn with ImDrawList from plain data.
#include <algorithm>
#include <cmath>
#include <cstdio>

#include "gui/gui_helpers.hpp"
#include "gui/palette.hpp"
#include "gui/panels.hpp"

namespace hb::gui {

namespace pal = palette;

ImU32 status_colour(LineStatus s) {
    switch (s) {
        case LineStatus::pass:
            return pal::pass;
        case LineStatus::fail:
            return pal::fail;
        case LineStatus::below_floor:
            return pal::below_floor;
        case LineStatus::not_observable:
            return pal::not_observable;
    }
    return pal::not_observable;
}

namespace {

ImVec4 v4(std::uint32_t c) {
    return ImGui::ColorConvertU32ToFloat4(c);
}

// The label of a frequency tick: the number in the axis unit with the decimals the step needs, and the unit.
std::string freq_tick(double hz, const FreqUnit& u, int decimals) {
    char b[48];
    std::snprintf(b, sizeof b, "%.*f %s", decimals, hz / u.scale, u.name);
    std::string s = b;
    if (s.rfind("-", 0) == 0) s = "\u2212" + s.substr(1);
    return s;
}

std::string num_tick(double v, int decimals, const char* unit) {
    char b[48];
    std::snprintf(b, sizeof b, "%.*f", decimals, std::abs(v) < 1e-12 ? 0.0 : v);
    std::string s = b;
    if (s.rfind("-", 0) == 0) s = "\u2212" + s.substr(1);
    if (unit && *unit) s += std::string(" ") + unit;
    return s;
}

}  // namespace

void apply_style() {
    ImGuiStyle& s = ImGui::GetStyle();
    s.WindowRounding = 0.0f;
    s.ChildRounding = 3.0f;
    s.FrameRounding = 2.0f;
    s.GrabRounding = 2.0f;
    s.TabRounding = 2.0f;
    s.WindowPadding = ImVec2(6, 5);
    s.FramePadding = ImVec2(5, 2);
    s.ItemSpacing = ImVec2(6, 3);
    s.WindowBorderSize = 0.0f;
    s.ScrollbarSize = 11.0f;
    ImVec4* c = s.Colors;
    c[ImGuiCol_Text] = v4(pal::text);
    c[ImGuiCol_TextDisabled] = v4(pal::text_dim);
    c[ImGuiCol_WindowBg] = v4(pal::mat);
    c[ImGuiCol_ChildBg] = v4(pal::panel);
    c[ImGuiCol_PopupBg] = v4(pal::rgba(30, 42, 39, 250));
    c[ImGuiCol_Border] = v4(pal::rgba(60, 80, 74));
    c[ImGuiCol_FrameBg] = v4(pal::rgba(40, 56, 51));
    c[ImGuiCol_FrameBgHovered] = v4(pal::rgba(52, 74, 67));
    c[ImGuiCol_FrameBgActive] = v4(pal::rgba(62, 88, 80));
    c[ImGuiCol_TitleBg] = v4(pal::panel);
    c[ImGuiCol_TitleBgActive] = v4(pal::panel);
    c[ImGuiCol_MenuBarBg] = v4(pal::rgba(18, 25, 23));
    c[ImGuiCol_CheckMark] = v4(pal::probe);
    c[ImGuiCol_SliderGrab] = v4(pal::rgba(200, 170, 70));
    c[ImGuiCol_SliderGrabActive] = v4(pal::probe);
    c[ImGuiCol_Button] = v4(pal::rgba(44, 62, 56));
    c[ImGuiCol_ButtonHovered] = v4(pal::rgba(62, 88, 78));
    c[ImGuiCol_ButtonActive] = v4(pal::rgba(96, 84, 40));
    c[ImGuiCol_Header] = v4(pal::rgba(48, 68, 61));
    c[ImGuiCol_HeaderHovered] = v4(pal::rgba(60, 84, 76));
    c[ImGuiCol_HeaderActive] = v4(pal::rgba(96, 84, 40));
    c[ImGuiCol_Tab] = v4(pal::rgba(36, 50, 46));
    c[ImGuiCol_TabHovered] = v4(pal::rgba(70, 96, 86));
    c[ImGuiCol_TabActive] = v4(pal::rgba(66, 88, 62));
    c[ImGuiCol_TableHeaderBg] = v4(pal::rgba(36, 50, 46));
    c[ImGuiCol_TableRowBg] = v4(pal::rgba(0, 0, 0, 0));
    c[ImGuiCol_TableRowBgAlt] = v4(pal::rgba(255, 255, 255, 10));
    c[ImGuiCol_Separator] = v4(pal::rgba(60, 80, 74));
}

PlotAxes draw_axes(ImDrawList* dl, ImVec2 o0, ImVec2 o1, double x0, double x1, double y0, double y1, bool x_is_freq,
                   const char* x_unit, const char* y_unit, float left_margin) {
    PlotAxes a;
    a.p0 = ImVec2(o0.x + left_margin, o0.y + 4);
    a.p1 = ImVec2(o1.x - 6, o1.y - 16);
    a.x0 = x0;
    a.x1 = x1 > x0 ? x1 : x0 + 1;
    a.y0 = y0;
    a.y1 = y1 > y0 ? y1 : y0 + 1;
    dl->AddRectFilled(o0, o1, pal::plot_bg);
    if (a.p1.x - a.p0.x < 20 || a.p1.y - a.p0.y < 10) return a;
    const float fh = ImGui::GetFontSize();
    // y grid and labels
    double ystep = 0;
    const auto yt = nice_ticks(a.y0, a.y1, std::max(2, static_cast<int>((a.p1.y - a.p0.y) / (2.2f * fh))), &ystep);
    const int yd = decimals_for_step(ystep, 1.0);
    for (double y : yt) {
        const float py = a.y_of(y);
        dl->AddLine(ImVec2(a.p0.x, py), ImVec2(a.p1.x, py), pal::grid);
        const std::string t = num_tick(y, yd, y_unit);
        const ImVec2 ts = ImGui::CalcTextSize(t.c_str());
        dl->AddText(ImVec2(a.p0.x - ts.x - 4, py - ts.y / 2), pal::text_dim, t.c_str());
    }
    // x grid and labels: about one label per 110 px
    double xstep = 0;
    const auto xt =
        nice_ticks(a.x0, a.x1, std::max(3, static_cast<int>(std::lround((a.p1.x - a.p0.x) / 90.0f))), &xstep);
    const FreqUnit u = x_is_freq ? freq_unit_for(std::max(std::abs(a.x0), std::abs(a.x1))) : FreqUnit{1.0, ""};
    const int xd = decimals_for_step(xstep, u.scale);
    float last_right = -1e9f;
    for (double x : xt) {
        const float px = a.x_of(x);
        dl->AddLine(ImVec2(px, a.p0.y), ImVec2(px, a.p1.y), pal::grid);
        const std::string t = x_is_freq ? freq_tick(x, u, xd) : num_tick(x, xd, x_unit);
        const ImVec2 ts = ImGui::CalcTextSize(t.c_str());
        const float tx = std::clamp(px - ts.x / 2, o0.x, o1.x - ts.x);
        if (tx < last_right + 8) continue;
        dl->AddText(ImVec2(tx, a.p1.y + 2), pal::text_dim, t.c_str());
        last_right = tx + ts.x;
    }
    dl->AddRect(a.p0, a.p1, pal::axis);
    return a;
}

void plot_scope(const BenchData& d, ImVec2 size) {
    ImDrawList* dl = ImGui::GetWindowDrawList();
    const ImVec2 o0 = ImGui::GetCursorScreenPos();
    const ImVec2 o1(o0.x + size.x, o0.y + size.y);
    ImGui::Dummy(size);
    if (!d.frame || d.frame->scope.empty() || d.frame->scope_rate_hz <= 0) {
        dl->AddRectFilled(o0, o1, pal::plot_bg);
        dl->AddText(ImVec2(o0.x + 8, o0.y + 8), pal::text_dim,
                    d.has_source ? "scope: waiting for samples" : "scope: no source in the session");
        return;
    }
    const auto& x = d.frame->scope;
    double peak = 0;
    for (const cf32& v : x)
        peak = std::max({peak, static_cast<double>(std::abs(v.real())), static_cast<double>(std::abs(v.imag()))});
    double step = 0;
    nice_ticks(0, std::max(peak, 1e-9), 2, &step);
    const double ymax = std::max(step * std::ceil(std::max(peak, 1e-9) / step), 1e-9);
    const double t_end = static_cast<double>(x.size()) / d.frame->scope_rate_hz;
    // Time axis in µs or ms so the ticks read plainly; amplitude in full-scale units (|z| = 1 is 0 dBFS).
    const bool ms = t_end > 2e-3;
    const double tscale = ms ? 1e3 : 1e6;
    const PlotAxes a =
        draw_axes(dl, o0, o1, 0.0, t_end * tscale, -ymax, ymax, false, ms ? "ms" : "\u00b5s", "FS", 62.0f);
    dl->PushClipRect(a.p0, a.p1, true);
    std::vector<ImVec2> pi(x.size()), pq(x.size());
    for (std::size_t i = 0; i < x.size(); ++i) {
        const double t = static_cast<double>(i) / d.frame->scope_rate_hz * tscale;
        pi[i] = ImVec2(a.x_of(t), a.y_of(x[i].real()));
        pq[i] = ImVec2(a.x_of(t), a.y_of(x[i].imag()));
    }
    dl->AddPolyline(pq.data(), static_cast<int>(pq.size()), pal::trace_q, 0, 1.0f);
    dl->AddPolyline(pi.data(), static_cast<int>(pi.size()), pal::trace, 0, 1.0f);
    dl->PopClipRect();
    const std::string t = std::string("I") + "   ";
    dl->AddText(ImVec2(a.p0.x + 6, a.p0.y + 2), pal::trace, "I");
    dl->AddText(ImVec2(a.p0.x + 18, a.p0.y + 2), pal::trace_q, "Q");
    const std::string info = std::to_string(x.size()) + " samples at " + rate_text(d.frame->scope_rate_hz) + " (" +
                             probe_title(d.frame->probe) + ")";
    dl->AddText(ImVec2(a.p0.x + 34, a.p0.y + 2), pal::text_dim, info.c_str());
}

void plot_response(const ResponseCurve& c, int view, ImVec2 size) {
    ImDrawList* dl = ImGui::GetWindowDrawList();
    if (!c.valid) {
        ImGui::TextDisabled("%s", c.error.empty() ? "no filter: nothing to plot" : c.error.c_str());
        return;
    }
    const FilterSummary& s = c.summary;
    ImGui::TextDisabled("-3 dB: %s (%s to %s); -60 dB: %s", freq_text(s.bw3_hz, 5).c_str(),
                        freq_text(s.lo3_hz, 6).c_str(), freq_text(s.hi3_hz, 6).c_str(),
                        std::isfinite(s.bw60_hz) ? freq_text(s.bw60_hz, 5).c_str() : "not reached");
    ImGui::TextDisabled("shape %s, loss %s, ripple %s, stop-band %s",
                        std::isfinite(s.shape_factor) ? fixed_trim(s.shape_factor, 2).c_str() : "n/a",
                        db_text(s.insertion_loss_db, "dB", 2).c_str(), db_text(s.ripple_db, "dB", 2).c_str(),
                        db_text(s.stop_rejection_db, "dB").c_str());
    const ImVec2 o0 = ImGui::GetCursorScreenPos();
    const ImVec2 o1(o0.x + size.x, o0.y + std::max(40.0f, size.y - 2 * ImGui::GetTextLineHeightWithSpacing()));
    ImGui::Dummy(ImVec2(o1.x - o0.x, o1.y - o0.y));
    const double f0 = c.f_hz.front(), f1 = c.f_hz.back();
    std::vector<ImVec2> pts(c.f_hz.size());
    PlotAxes a;
    if (view == 0) {
        const float top = *std::max_element(c.mag_db.begin(), c.mag_db.end());
        const double y1 = std::ceil((top + 5.0) / 10.0) * 10.0;
        a = draw_axes(dl, o0, o1, f0, f1, y1 - 100.0, y1, true, "", "dB", 52.0f);
        for (std::size_t i = 0; i < pts.size(); ++i)
            pts[i] = ImVec2(a.x_of(c.f_hz[i]), a.y_of(std::max<double>(c.mag_db[i], y1 - 101.0)));
    } else {
        // Group delay where the response is within 40 dB of its peak (outside, it is large and meaningless).
        const float top = *std::max_element(c.mag_db.begin(), c.mag_db.end());
        double lo = 1e300, hi = -1e300;
        for (std::size_t i = 0; i < pts.size(); ++i)
            if (c.mag_db[i] > top - 40) {
                lo = std::min<double>(lo, c.delay_s[i]);
                hi = std::max<double>(hi, c.delay_s[i]);
            }
        if (!(hi > lo)) {
            lo = 0;
            hi = std::max(hi, 1e-9);
        }
        const double scale = hi >= 1e-3 ? 1e3 : 1e6;
        const char* unit = hi >= 1e-3 ? "ms" : "\u00b5s";
        const double pad = 0.1 * (hi - lo);
        a = draw_axes(dl, o0, o1, f0, f1, std::max(0.0, lo - pad) * scale, (hi + pad) * scale, true, "", unit, 58.0f);
        for (std::size_t i = 0; i < pts.size(); ++i)
            pts[i] = ImVec2(a.x_of(c.f_hz[i]), a.y_of(std::clamp<double>(c.delay_s[i] * scale, a.y0 - 1, a.y1 + 1)));
    }
    dl->PushClipRect(a.p0, a.p1, true);
    dl->AddPolyline(pts.data(), static_cast<int>(pts.size()), pal::trace, 0, 1.5f);
    dl->PopClipRect();
}

void plot_lo(const PlanViews& v, ImVec2 size) {
    if (!v.ok) {
        ImGui::TextDisabled("%s", v.error.c_str());
        return;
    }
    const char* shape = v.lo.shape == LoShape::sine       ? "sine"
                        : v.lo.shape == LoShape::unipolar ? "0/1 switch"
                                                          : "\u00b11 switch";
    ImGui::TextDisabled("%s%s, duty %s %%, edge %s %% of the period, %d harmonic%s emulated", shape,
                        v.lo_quadrature ? " (I arm of the IQ pair)" : "", fixed_trim(100 * v.lo.duty, 1).c_str(),
                        fixed_trim(100 * v.lo.edge, 2).c_str(), v.lo.harmonics, v.lo.harmonics == 1 ? "" : "s");
    ImDrawList* dl = ImGui::GetWindowDrawList();
    const float h = std::max(60.0f, size.y - ImGui::GetTextLineHeightWithSpacing());
    // The waveform over two periods.
    {
        const ImVec2 o0 = ImGui::GetCursorScreenPos();
        const ImVec2 o1(o0.x + size.x, o0.y + 0.45f * h);
        ImGui::Dummy(ImVec2(size.x, 0.45f * h));
        const PlotAxes a = draw_axes(dl, o0, o1, -0.5, 1.5, -1.25, 1.25, false, "T", "", 40.0f);
        std::vector<ImVec2> pts(v.lo_wave.size());
        for (std::size_t i = 0; i < pts.size(); ++i)
            pts[i] = ImVec2(a.x_of(2.0 * static_cast<double>(i) / static_cast<double>(pts.size() - 1) - 0.5),
                            a.y_of(v.lo_wave[i]));
        dl->PushClipRect(a.p0, a.p1, true);
        dl->AddPolyline(pts.data(), static_cast<int>(pts.size()), pal::probe, 0, 1.5f);
        dl->PopClipRect();
        dl->AddText(ImVec2(a.p0.x + 4, a.p0.y + 2), pal::text_dim, "s(t) over two LO periods");
    }
    // |c_m| relative to the fundamental.
    {
        const ImVec2 o0 = ImGui::GetCursorScreenPos();
        const ImVec2 o1(o0.x + size.x, o0.y + 0.55f * h);
        ImGui::Dummy(ImVec2(size.x, 0.55f * h));
        const int k = static_cast<int>(v.lo_harm_db.size()) - 1;
        const PlotAxes a = draw_axes(dl, o0, o1, -0.5, k + 0.5, -60.0, 5.0, false, "", "dB", 46.0f);
        const float bw = std::max(2.0f, 0.6f * (a.x_of(1) - a.x_of(0)));
        for (int m = 0; m <= k; ++m) {
            const float db = v.lo_harm_db[static_cast<std::size_t>(m)];
            const float x = a.x_of(m);
            const bool emulated = m <= v.lo.harmonics;
            const ImU32 col = emulated ? pal::probe : pal::with_alpha(pal::probe, 70);
            if (std::isfinite(db))
                dl->AddRectFilled(ImVec2(x - bw / 2, a.y_of(std::max(db, -60.0f))), ImVec2(x + bw / 2, a.p1.y), col);
            else
                dl->AddText(ImVec2(x - 3, a.p1.y - ImGui::GetFontSize() - 1), pal::text_dim, "0");
            if (ImGui::IsMouseHoveringRect(ImVec2(x - bw, a.p0.y), ImVec2(x + bw, a.p1.y)))
                ImGui::SetTooltip("harmonic %d: %s relative to the fundamental%s", m,
                                  std::isfinite(db) ? db_text(db, "dB").c_str() : "none (a zero coefficient)",
                                  emulated ? "" : " (above the harmonics emulated)");
        }
        dl->AddText(ImVec2(a.p0.x + 4, a.p0.y + 2), pal::text_dim, "|c_m| / |c_1| by LO harmonic m");
    }
}

void plot_spur_table(const PlanViews& v) {
    if (!v.ok) {
        ImGui::TextDisabled("%s", v.error.c_str());
        return;
    }
    const SpurTable& st = v.model.plan.spurs;
    if (st.dbc.empty()) {
        ImGui::TextDisabled("no spur table: the mixer model has no levels (%s)", v.model.note.c_str());
        return;
    }
    const double limit = v.setup.plan.limits.spur_dbc;
    ImGui::TextWrapped(
        "dBc at %s RF drive; rows m (LO harmonic), columns |n| (RF order). Red: above the %s "
        "limit, amber: within 10 dB of it.",
        db_text(st.ref_level_dbfs, "dBFS").c_str(), db_text(limit, "dBc").c_str());
    const int cols = st.max_n + 2;
    if (ImGui::BeginTable("spurtable", cols,
                          ImGuiTableFlags_Borders | ImGuiTableFlags_SizingFixedFit | ImGuiTableFlags_ScrollX |
                              ImGuiTableFlags_ScrollY,
                          ImVec2(0, ImGui::GetContentRegionAvail().y))) {
        ImGui::TableSetupScrollFreeze(1, 1);
        ImGui::TableSetupColumn("m\\|n|");
        for (int n = 0; n <= st.max_n; ++n) ImGui::TableSetupColumn(std::to_string(n).c_str());
        ImGui::TableHeadersRow();
        for (int m = 0; m <= st.max_m; ++m) {
            ImGui::TableNextRow();
            ImGui::TableSetColumnIndex(0);
            ImGui::Text("%d", m);
            for (int n = 0; n <= st.max_n; ++n) {
                ImGui::TableSetColumnIndex(n + 1);
                const double e = st.entry(m, n);
                if (std::isnan(e)) {
                    ImGui::TextDisabled("\u2014");
                    continue;
                }
                const bool wanted = m == 1 && n == 1;
                const ImU32 bg = wanted             ? pal::with_alpha(pal::order_colour(2), 60)
                                 : e > limit        ? pal::with_alpha(pal::fail, 90)
                                 : e > limit - 10.0 ? pal::with_alpha(pal::order_colour(2), 70)
                                                    : pal::with_alpha(pal::pass, 28);
                ImGui::TableSetBgColor(ImGuiTableBgTarget_CellBg, bg);
                ImGui::Text("%s", fixed_trim(std::round(e * 10) / 10, 1).c_str());
                if (ImGui::IsItemHovered())
                    ImGui::SetTooltip("m = %d, |n| = %d: %s at %s drive%s", m, n, db_text(e, "dBc").c_str(),
                                      db_text(st.ref_level_dbfs, "dBFS").c_str(),
                                      wanted ? " (the wanted conversion)" : "");
            }
        }
        ImGui::EndTable();
    }
}

void plot_tuning_range(const PlanViews& v, ImVec2 size) {
    if (!v.ok) {
        ImGui::TextDisabled("%s", v.error.c_str());
        return;
    }
    const TuningAnalysis& t = v.report.tuning;
    ImGui::TextDisabled("%zu channels, %d with in-band spurs; dots: each spur by order, line: the worst",
                        t.channels.size(), t.channels_with_spurs);
    ImDrawList* dl = ImGui::GetWindowDrawList();
    const ImVec2 o0 = ImGui::GetCursorScreenPos();
    const ImVec2 o1(o0.x + size.x, o0.y + std::max(60.0f, size.y - ImGui::GetTextLineHeightWithSpacing()));
    ImGui::Dummy(ImVec2(o1.x - o0.x, o1.y - o0.y));
    if (t.channels.empty()) return;
    double f0 = t.channels.front().wanted_hz, f1 = t.channels.back().wanted_hz;
    if (!(f1 > f0)) {
        f0 -= 0.5 * std::max(v.plan.if_band.width_hz, 1.0);
        f1 = f0 + std::max(v.plan.if_band.width_hz, 1.0);
    }
    const double pad = 0.02 * (f1 - f0);
    double lo = -100.0, hi = 0.0;
    for (const ChannelResult& c : t.channels)
        for (const ChannelSpur& s : c.spurs)
            if (std::isfinite(s.predicted_dbc)) {
                lo = std::min(lo, std::floor(s.predicted_dbc / 20) * 20);
                hi = std::max(hi, std::ceil(s.predicted_dbc / 10) * 10 + 10);
            }
    lo = std::max(lo, -200.0);
    hi = std::min(hi, 100.0);
    const PlotAxes a = draw_axes(dl, o0, o1, f0 - pad, f1 + pad, lo, hi, true, "", "dBc", 60.0f);
    dl->PushClipRect(a.p0, a.p1, true);
    const PlanLimits& lim = v.setup.plan.limits;
    for (double y : {lim.spur_dbc, -lim.spur_rejection_db}) {
        const float py = a.y_of(y);
        for (float x = a.p0.x; x < a.p1.x; x += 8)
            dl->AddLine(ImVec2(x, py), ImVec2(std::min(x + 4, a.p1.x), py), pal::limit);
    }
    const float wx = a.x_of(v.plan.wanted_hz);
    dl->AddLine(ImVec2(wx, a.p0.y), ImVec2(wx, a.p1.y), pal::with_alpha(pal::order_colour(2), 120));
    std::vector<ImVec2> worst;
    for (const ChannelResult& c : t.channels) {
        const float x = a.x_of(c.wanted_hz);
        double w = -1e300;
        for (const ChannelSpur& s : c.spurs) {
            if (!std::isfinite(s.predicted_dbc)) continue;
            w = std::max(w, s.predicted_dbc);
            dl->AddCircleFilled(ImVec2(x, a.y_of(s.predicted_dbc)), 2.0f, pal::order_colour(s.order), 8);
        }
        if (w > -1e300) worst.emplace_back(x, a.y_of(w));
    }
    if (worst.size() > 1)
        dl->AddPolyline(worst.data(), static_cast<int>(worst.size()), pal::with_alpha(pal::text, 150), 0, 1.0f);
    dl->PopClipRect();
    // Hover: the nearest channel.
    if (ImGui::IsMouseHoveringRect(a.p0, a.p1)) {
        const double f = a.x_at(ImGui::GetIO().MousePos.x);
        const ChannelResult* best = nullptr;
        for (const ChannelResult& c : t.channels)
            if (!best || std::abs(c.wanted_hz - f) < std::abs(best->wanted_hz - f)) best = &c;
        if (best) {
            std::string tip = "channel " + freq_text(best->wanted_hz) + " (LO " + freq_text(best->lo_hz) + ", IF " +
                              freq_text(best->if_hz) + "): " + std::to_string(best->spurs.size()) + " spurs";
            const std::size_t shown = std::min<std::size_t>(best->spurs.size(), 6);
            for (std::size_t i = 0; i < shown; ++i) {
                const ChannelSpur& s = best->spurs[i];
                tip += "\n  " + s.label + " (m = " + std::to_string(s.m) + ", n = " + std::to_string(s.n) + ", " +
                       (s.response ? "response at " + freq_text(s.rf_hz) : "product at IF " + freq_text(s.if_hz)) +
                       "): " + db_text(s.predicted_dbc, "dBc");
            }
            if (best->spurs.size() > shown) tip += "\n  ... " + std::to_string(best->spurs.size() - shown) + " more";
            ImGui::SetTooltip("%s", tip.c_str());
        }
    }
}

}  // namespace hb::gui
