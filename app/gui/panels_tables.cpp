// The bottom panel: the plan check table (every expected line with its frequency, predicted and measured level,
// limit and status, coloured by status) and, beside it, the unexplained peaks and the probe's scope.
#include <algorithm>
#include <cmath>

#include "gui/gui_helpers.hpp"
#include "gui/palette.hpp"
#include "gui/panels.hpp"

namespace hb::gui {

namespace pal = palette;

namespace {

ImVec4 v4(std::uint32_t c) {
    return ImGui::ColorConvertU32ToFloat4(c);
}

void check_table(const BenchData& d, ImVec2 size) {
    const MarkerSet* ms = d.check;
    const Frame* f = d.frame;
    if (f && f->has_analysis) {
        const PlanCheck& c = f->analysis.check;
        const ImageRejection& im = f->analysis.image;
        const char* verdict = !c.wanted_observed() ? "NO WANTED" : c.passed() ? "PASS" : "FAIL";
        ImGui::TextColored(v4(!c.wanted_observed() ? pal::not_observable
                              : c.passed()         ? pal::pass
                                                   : pal::fail),
                           "%s", verdict);
        ImGui::SameLine();
        ImGui::Text("plan check at TP4 IF out: wanted %s, floor %s, RBW %s;",
                    db_text(ms ? ms->wanted_level_db : kNaN, ms ? ms->unit : "dBFS").c_str(),
                    db_text(c.floor.db_per_hz, (ms ? ms->unit : std::string("dBFS")) + "/Hz").c_str(),
                    freq_text(c.rbw_hz, 4).c_str());
        ImGui::TextColored(v4(status_colour(im.status)), "image rejection %s%s (limit %s): %s",
                           im.lower_bound ? "\u2265 " : "", db_text(im.rejection_db, "dB").c_str(),
                           db_text(im.limit_db, "dB").c_str(), status_name(im.status));
        if (ImGui::IsItemHovered() && !im.note.empty()) ImGui::SetTooltip("%s", im.note.c_str());
    } else {
        ImGui::TextDisabled("Plan lines (predicted only: %s)", d.has_source ? "no measurement yet" : "no source");
    }
    if (!ms || ms->markers.empty()) {
        ImGui::TextDisabled("no lines");
        return;
    }
    const ImGuiTableFlags flags = ImGuiTableFlags_ScrollY | ImGuiTableFlags_RowBg | ImGuiTableFlags_BordersInnerV |
                                  ImGuiTableFlags_Resizable | ImGuiTableFlags_SizingStretchProp;
    if (!ImGui::BeginTable("##check", 8, flags, ImVec2(size.x, ImGui::GetContentRegionAvail().y))) return;
    ImGui::TableSetupScrollFreeze(0, 1);
    ImGui::TableSetupColumn("line", 0, 1.2f);
    ImGui::TableSetupColumn("m, n", 0, 0.55f);
    ImGui::TableSetupColumn("frequency", 0, 1.15f);
    ImGui::TableSetupColumn("predicted", 0, 1.0f);
    ImGui::TableSetupColumn("measured", 0, 1.15f);
    ImGui::TableSetupColumn("limit", 0, 0.9f);
    ImGui::TableSetupColumn("margin", 0, 0.85f);
    ImGui::TableSetupColumn("status", 0, 1.2f);
    ImGui::TableHeadersRow();
    for (std::size_t i = 0; i < ms->markers.size(); ++i) {
        const Marker& m = ms->markers[i];
        ImGui::TableNextRow();
        const ImU32 sc = status_colour(m.status);
        ImGui::TableSetBgColor(ImGuiTableBgTarget_RowBg1, pal::with_alpha(sc, m.status == LineStatus::fail ? 70 : 30));
        ImGui::TableSetColumnIndex(0);
        ImGui::PushID(static_cast<int>(i));
        ImGui::Selectable("##row", false, ImGuiSelectableFlags_SpanAllColumns);
        if (ImGui::IsItemHovered()) ImGui::SetTooltip("%s", m.explanation.c_str());
        ImGui::PopID();
        ImGui::SameLine(0, 0);
        ImGui::TextColored(v4(pal::order_colour(m.order)), "%s", m.label.c_str());
        ImGui::TableSetColumnIndex(1);
        ImGui::Text("%d, %d", m.m, m.n);
        ImGui::TableSetColumnIndex(2);
        ImGui::TextUnformatted(freq_text(m.freq_hz).c_str());
        ImGui::TableSetColumnIndex(3);
        ImGui::TextUnformatted(db_text(m.predicted_dbc, "dBc").c_str());
        ImGui::TableSetColumnIndex(4);
        if (m.kind == LineKind::wanted)
            ImGui::TextUnformatted(db_text(m.level_db, ms->unit).c_str());
        else if (m.status == LineStatus::below_floor)
            ImGui::TextUnformatted(("< " + db_text(m.upper_bound_dbc, "dBc")).c_str());
        else if (m.measured && (m.status == LineStatus::pass || m.status == LineStatus::fail))
            ImGui::TextUnformatted(db_text(m.level_dbc, "dBc").c_str());
        else
            ImGui::TextDisabled("\u2014");
        ImGui::TableSetColumnIndex(5);
        ImGui::TextUnformatted(db_text(m.limit_dbc, "dBc").c_str());
        ImGui::TableSetColumnIndex(6);
        ImGui::TextUnformatted(db_text(m.margin_db, "dB").c_str());
        ImGui::TableSetColumnIndex(7);
        ImGui::TextColored(v4(sc), "%s%s", status_name(m.status), m.measured ? "" : " (pred.)");
    }
    ImGui::EndTable();
}

void unexplained_list(const BenchData& d) {
    if (!d.frame || !d.frame->has_analysis) {
        ImGui::TextDisabled("no measurement yet");
        return;
    }
    const PlanCheck& c = d.frame->analysis.check;
    const std::string unit = c.unit == LevelUnit::dbm ? "dBm" : "dBFS";
    ImGui::TextDisabled("%zu peak%s no plan line explains%s (> %s over the local floor)", c.unexplained.size(),
                        c.unexplained.size() == 1 ? "" : "s", c.unexplained_truncated ? ", list cut" : "",
                        db_text(c.unexplained_threshold_db, "dB").c_str());
    if (c.unexplained.empty()) return;
    if (!ImGui::BeginTable("##unexpl", 4,
                           ImGuiTableFlags_ScrollY | ImGuiTableFlags_RowBg | ImGuiTableFlags_SizingStretchProp,
                           ImVec2(0, ImGui::GetContentRegionAvail().y)))
        return;
    ImGui::TableSetupScrollFreeze(0, 1);
    ImGui::TableSetupColumn("frequency");
    ImGui::TableSetupColumn("level");
    ImGui::TableSetupColumn("rel. wanted");
    ImGui::TableSetupColumn("over floor");
    ImGui::TableHeadersRow();
    for (const UnexplainedPeak& p : c.unexplained) {
        ImGui::TableNextRow();
        ImGui::TableSetColumnIndex(0);
        ImGui::TextUnformatted(freq_text(p.freq_hz).c_str());
        ImGui::TableSetColumnIndex(1);
        ImGui::TextUnformatted(db_text(c.unit == LevelUnit::dbm ? p.level_dbm : p.level_dbfs, unit).c_str());
        ImGui::TableSetColumnIndex(2);
        ImGui::TextUnformatted(db_text(p.level_dbc, "dBc").c_str());
        ImGui::TableSetColumnIndex(3);
        ImGui::TextUnformatted(db_text(p.above_floor_db, "dB").c_str());
    }
    ImGui::EndTable();
}

}  // namespace

void draw_tables_panel(const Rect& r, const BenchData& d, GuiState& ui) {
    ImGui::SetNextWindowPos(ImVec2(r.x0, r.y0));
    ImGui::SetNextWindowSize(ImVec2(r.w(), r.h()));
    ImGui::Begin("##tables", nullptr,
                 ImGuiWindowFlags_NoDecoration | ImGuiWindowFlags_NoMove | ImGuiWindowFlags_NoSavedSettings |
                     ImGuiWindowFlags_NoBringToFrontOnFocus);
    const float w = ImGui::GetContentRegionAvail().x;
    const float left = std::floor(w * 0.68f);
    ImGui::BeginChild("##checkpane", ImVec2(left, 0), false);
    check_table(d, ImVec2(left, 0));
    ImGui::EndChild();
    ImGui::SameLine();
    ImGui::BeginChild("##rightpane", ImVec2(0, 0), false);
    if (ImGui::BeginTabBar("##righttabs")) {
        if (ImGui::BeginTabItem("Unexplained peaks")) {
            unexplained_list(d);
            ImGui::EndTabItem();
        }
        if (ImGui::BeginTabItem("Scope")) {
            plot_scope(d, ImGui::GetContentRegionAvail());
            ImGui::EndTabItem();
        }
        ImGui::EndTabBar();
    }
    ImGui::EndChild();
    (void)ui;
    ImGui::End();
}

}  // namespace hb::gui
