// The side panel: the editor of the selected block (fields of the Setup, edited in place; the window applies the
// change once it validates) and the views that belong to that block.
#include <imgui.h>
#include <imgui_stdlib.h>

#include <algorithm>
#include <cfloat>
#include <cmath>

#include "dsp/filter_presets.hpp"
#include "dsp/mixer.hpp"
#include "dsp/units.hpp"
#include "gui/gui_helpers.hpp"
#include "gui/palette.hpp"
#include "gui/panels.hpp"

namespace hb::gui {

namespace pal = palette;

namespace {

constexpr float kLabelWidth = 150.0f;

void section(const char* title) {
    ImGui::Spacing();
    ImGui::TextColored(ImGui::ColorConvertU32ToFloat4(pal::text_dim), "%s", title);
    ImGui::Separator();
}

void row(const char* label) {
    ImGui::AlignTextToFramePadding();
    ImGui::TextUnformatted(label);
    ImGui::SameLine(kLabelWidth);
    ImGui::SetNextItemWidth(-FLT_MIN);
}

// A frequency typed with a unit. The text stays as typed while the field is being edited; Enter (or leaving the
// field) parses it; bad text keeps the old value and shows why under the field.
bool freq_entry(const char* label, const std::string& key, double& hz, GuiState& ui, double min_hz = 0.0) {
    std::string& txt = ui.entry_text[key];
    std::string& err = ui.entry_error[key];
    const std::string editing_key = key + "#editing";
    const bool editing = ui.entry_text.count(editing_key) > 0;
    if (!editing && err.empty()) txt = format_frequency(hz, 9);
    row(label);
    ImGui::PushID(key.c_str());
    bool changed = false;
    const bool enter =
        ImGui::InputText("##f", &txt, ImGuiInputTextFlags_EnterReturnsTrue | ImGuiInputTextFlags_AutoSelectAll);
    const bool left = ImGui::IsItemDeactivatedAfterEdit();
    if (ImGui::IsItemActive())
        ui.entry_text[editing_key];
    else
        ui.entry_text.erase(editing_key);
    if (ImGui::IsItemHovered())
        ImGui::SetTooltip("%s: type a frequency with a unit, e.g. 98.3M, 455k, 10.7 MHz", label);
    if (enter || left) {
        if (const auto v = parse_frequency_entry(txt, &err, min_hz)) {
            changed = *v != hz;
            hz = *v;
            ui.entry_text.erase(editing_key);
        }
    }
    if (!err.empty()) ImGui::TextColored(ImGui::ColorConvertU32ToFloat4(pal::fail), "%s", err.c_str());
    ImGui::PopID();
    return changed;
}

// An optional frequency: "auto" shows what the chain uses instead.
bool opt_freq_entry(const char* label, const std::string& key, std::optional<double>& v, double auto_hz, GuiState& ui) {
    ImGui::PushID(key.c_str());
    bool set = v.has_value();
    bool changed = false;
    if (ImGui::Checkbox("##set", &set)) {
        v = set ? std::optional<double>(std::isfinite(auto_hz) ? auto_hz : 0.0) : std::nullopt;
        changed = true;
    }
    if (ImGui::IsItemHovered()) ImGui::SetTooltip("checked: set here; unchecked: automatic");
    ImGui::SameLine();
    if (v) {
        double x = *v;
        changed |= freq_entry(label, key + ".v", x, ui);
        v = x;
    } else {
        ImGui::AlignTextToFramePadding();
        ImGui::TextUnformatted(label);
        ImGui::SameLine(kLabelWidth);
        ImGui::TextDisabled("auto: %s", freq_text(auto_hz).c_str());
    }
    ImGui::PopID();
    return changed;
}

bool num_entry(const char* label, double& v, const char* fmt, double step = 0.5) {
    row(label);
    ImGui::PushID(label);
    const bool c = ImGui::InputDouble("##d", &v, step, step * 10, fmt);
    ImGui::PopID();
    return c;
}

bool opt_num_entry(const char* label, std::optional<double>& v, double shown, const char* fmt, const char* auto_what,
                   double step = 0.5) {
    ImGui::PushID(label);
    bool set = v.has_value();
    bool changed = false;
    if (ImGui::Checkbox("##set", &set)) {
        v = set ? std::optional<double>(std::isfinite(shown) ? shown : 0.0) : std::nullopt;
        changed = true;
    }
    if (ImGui::IsItemHovered()) ImGui::SetTooltip("checked: set here; unchecked: %s", auto_what);
    ImGui::SameLine();
    if (v) {
        double x = *v;
        changed |= num_entry(label, x, fmt, step);
        v = x;
    } else {
        ImGui::AlignTextToFramePadding();
        ImGui::TextUnformatted(label);
        ImGui::SameLine(kLabelWidth);
        char b[64];
        std::snprintf(b, sizeof b, fmt, shown);
        ImGui::TextDisabled("%s: %s", auto_what, std::isfinite(shown) ? b : "none");
    }
    ImGui::PopID();
    return changed;
}

bool int_entry(const char* label, int& v, int lo, int hi) {
    row(label);
    ImGui::PushID(label);
    int x = v;
    const bool c = ImGui::InputInt("##i", &x);
    ImGui::PopID();
    if (c) v = std::clamp(x, lo, hi);
    return c;
}

template <class E, std::size_t N>
bool enum_combo(const char* label, E& v, const std::array<E, N>& values) {
    row(label);
    bool changed = false;
    ImGui::PushID(label);
    if (ImGui::BeginCombo("##c", std::string(to_string(v)).c_str())) {
        for (E e : values) {
            if (ImGui::Selectable(std::string(to_string(e)).c_str(), e == v)) {
                changed = e != v;
                v = e;
            }
        }
        ImGui::EndCombo();
    }
    ImGui::PopID();
    return changed;
}

bool text_entry(const char* label, std::string& v) {
    row(label);
    ImGui::PushID(label);
    std::string t = v;
    const bool c = ImGui::InputText("##t", &t, ImGuiInputTextFlags_EnterReturnsTrue);
    ImGui::PopID();
    if (c) v = t;
    return c;
}

constexpr std::array<FilterType, 8> kFilterTypes = {
    FilterType::none,     FilterType::butterworth, FilterType::chebyshev1, FilterType::chebyshev2,
    FilterType::elliptic, FilterType::bessel,      FilterType::fir,        FilterType::touchstone};
constexpr std::array<FilterResponse, 2> kResponses = {FilterResponse::bandpass, FilterResponse::lowpass};
constexpr std::array<FirMethod, 2> kFirMethods = {FirMethod::kaiser, FirMethod::parks_mcclellan};
constexpr std::array<MixerModel, 5> kMixerModels = {MixerModel::bypass, MixerModel::ideal, MixerModel::unipolar,
                                                    MixerModel::bipolar, MixerModel::quadrature};
constexpr std::array<WindowType, 5> kWindows = {WindowType::hann, WindowType::blackman_harris, WindowType::flat_top,
                                                WindowType::kaiser, WindowType::rectangular};
constexpr std::array<Averaging, 4> kAveraging = {Averaging::rms, Averaging::exponential, Averaging::max_hold,
                                                 Averaging::min_hold};
constexpr std::array<LevelUnit, 2> kUnits = {LevelUnit::dbfs, LevelUnit::dbm};
constexpr std::array<Injection, 2> kInjection = {Injection::low, Injection::high};

void filter_editor(FilterSpec& f, const std::string& key, GuiState& ui) {
    enum_combo("type", f.type, kFilterTypes);
    row("preset");
    ImGui::PushID((key + ".preset").c_str());
    if (ImGui::BeginCombo("##p", f.preset.empty() ? "(none)" : f.preset.c_str())) {
        if (ImGui::Selectable("(none)", f.preset.empty())) f.preset.clear();
        for (const FilterPreset& p : filter_presets()) {
            if (ImGui::Selectable(std::string(p.name).c_str(), f.preset == p.name)) f = p.spec;
            if (ImGui::IsItemHovered()) ImGui::SetTooltip("%s", std::string(p.description).c_str());
        }
        ImGui::EndCombo();
    }
    ImGui::PopID();
    if (f.type == FilterType::none) return;
    if (f.type == FilterType::touchstone) {
        text_entry("Touchstone file", f.path);
        row("phase");
        ImGui::Checkbox("linear-phase fit", &f.linear_phase);
        num_entry("insertion loss", f.insertion_loss_db, "%.2f dB", 0.1);
        return;
    }
    enum_combo("response", f.response, kResponses);
    if (f.response == FilterResponse::bandpass) freq_entry("centre", key + ".center", f.center_hz, ui);
    freq_entry(f.response == FilterResponse::bandpass ? "bandwidth" : "edge", key + ".bw", f.bandwidth_hz, ui);
    if (f.type != FilterType::fir) int_entry("order", f.order, 1, kMaxFilterOrder);
    if (f.type == FilterType::chebyshev1 || f.type == FilterType::elliptic)
        num_entry("ripple", f.ripple_db, "%.2f dB", 0.1);
    if (f.type == FilterType::chebyshev2 || f.type == FilterType::elliptic || f.type == FilterType::fir)
        num_entry("stop-band", f.stop_atten_db, "%.1f dB", 1.0);
    if (f.type == FilterType::fir) {
        freq_entry("transition (0: BW/4)", key + ".tr", f.transition_hz, ui);
        enum_combo("design", f.fir_method, kFirMethods);
    }
    int_entry("sections in series", f.sections, 1, 8);
    num_entry("insertion loss", f.insertion_loss_db, "%.2f dB", 0.1);
}

void source_editor(Setup& s, const BenchData& d, GuiState& ui) {
    if (s.sources.empty()) {
        ImGui::TextWrapped(
            "No [[source]] in this session: the window shows the plan alone (predicted lines, the spur "
            "table, the tuning range, the filters and the LO). Add a source to the session file, e.g.");
        ImGui::TextDisabled(
            "[[source]]\nkind = \"generator\"\nscenario = \"world.toml\"\nfrequency_hz = \"1.2M\"\n"
            "sample_rate_hz = \"2.4M\"");
        ImGui::TextWrapped("then open it again (Session > Open).");
        return;
    }
    SourceSpec& src = s.sources.front();
    if (s.sources.size() > 1)
        ImGui::TextDisabled("source 1 of %zu (the others are edited in the session file)", s.sources.size());
    row("kind");
    ImGui::TextUnformatted(std::string(to_string(src.kind)).c_str());
    switch (src.kind) {
        case SourceKind::recording:
            text_entry("file", src.path);
            break;
        case SourceKind::generator:
            text_entry("scenario", src.scenario);
            text_entry("device args", src.args);
            break;
        case SourceKind::device:
            text_entry("device args", src.args);
            text_entry("antenna", src.antenna);
            break;
    }
    const double fc = d.frame ? d.frame->status.center_hz : kNaN;
    const double fs = d.frame ? d.frame->status.sample_rate_hz : kNaN;
    opt_freq_entry("centre", "source.fc", src.frequency_hz, fc, ui);
    opt_freq_entry("sample rate", "source.fs", src.sample_rate_hz, fs, ui);
    if (src.kind != SourceKind::recording) opt_num_entry("gain", src.gain_db, 0.0, "%.1f dB", "device default");
    num_entry("level offset", src.level_offset_db, "%.2f dB", 0.5);
    if (ImGui::IsItemHovered()) ImGui::SetTooltip("dBm at the RF port = dBFS + this");
    if (src.kind == SourceKind::recording) {
        row("playback");
        ImGui::Checkbox("loop", &src.loop);
    }
    ImGui::TextDisabled("A change here restarts the source.");
}

void mixer_editor(Setup& s, const BenchData& d, GuiState& ui) {
    MixerSpec& m = s.mixer;
    const MixerParams* r = d.views && d.views->ok ? &d.views->model.mixer : nullptr;
    auto res = [&](auto get) { return r ? get(*r) : kNaN; };
    enum_combo("model", m.model, kMixerModels);
    row("preset");
    if (ImGui::BeginCombo("##mp", m.preset.empty() ? "(none)" : m.preset.c_str())) {
        if (ImGui::Selectable("(none)", m.preset.empty())) m.preset.clear();
        for (const MixerPreset& p : mixer_presets()) {
            if (ImGui::Selectable(std::string(p.name).c_str(), m.preset == p.name)) m.preset = p.name;
            if (ImGui::IsItemHovered()) ImGui::SetTooltip("%s", std::string(p.summary).c_str());
        }
        ImGui::EndCombo();
    }
    const char* from = m.preset.empty() ? "ideal" : "preset";
    opt_num_entry("conversion gain", m.conversion_gain_db,
                  res([](const MixerParams& p) { return p.conversion_gain_db; }), "%.2f dB", "LO waveform's own");
    opt_num_entry("LO-IF isolation", m.lo_if_isolation_db,
                  res([](const MixerParams& p) { return p.lo_if_isolation_db.value_or(kNaN); }), "%.1f dB", from);
    opt_num_entry("RF-IF isolation", m.rf_if_isolation_db,
                  res([](const MixerParams& p) { return p.rf_if_isolation_db.value_or(kNaN); }), "%.1f dB", from);
    opt_num_entry("IIP2", m.iip2_dbm, res([](const MixerParams& p) { return p.iip2_dbm.value_or(kNaN); }), "%.1f dBm",
                  from);
    opt_num_entry("IIP3", m.iip3_dbm, res([](const MixerParams& p) { return p.iip3_dbm.value_or(kNaN); }), "%.1f dBm",
                  from);
    opt_num_entry("duty cycle", m.duty_cycle, res([](const MixerParams& p) { return p.lo.duty; }),
                  "%.3f (of the period)", from, 0.01);
    opt_num_entry("edge time", m.edge_time, res([](const MixerParams& p) { return p.lo.edge; }), "%.3f (of the period)",
                  from, 0.005);
    {
        ImGui::PushID("harm");
        bool set = m.harmonics.has_value();
        if (ImGui::Checkbox("##set", &set))
            m.harmonics = set ? std::optional<int>(r ? r->lo.harmonics : kDefaultLoHarmonics) : std::nullopt;
        ImGui::SameLine();
        if (m.harmonics) {
            int h = *m.harmonics;
            int_entry("LO harmonics", h, 1, 63);
            m.harmonics = h;
        } else {
            ImGui::AlignTextToFramePadding();
            ImGui::TextUnformatted("LO harmonics");
            ImGui::SameLine(kLabelWidth);
            ImGui::TextDisabled("%s: %d", from, r ? r->lo.harmonics : kDefaultLoHarmonics);
        }
        ImGui::PopID();
    }
    if (m.model == MixerModel::quadrature || (r && r->predict_model == MixerModel::quadrature)) {
        opt_num_entry("IQ gain error", m.iq_gain_error_db, res([](const MixerParams& p) { return p.iq_gain_error_db; }),
                      "%.3f dB", from, 0.01);
        opt_num_entry("IQ phase error", m.iq_phase_error_deg,
                      res([](const MixerParams& p) { return p.iq_phase_error_deg; }), "%.3f deg", from, 0.1);
    }
    opt_num_entry("DC offset", m.dc_offset_dbfs,
                  res([](const MixerParams& p) { return p.dc_offset_dbfs.value_or(kNaN); }), "%.1f dBFS", from);
    opt_num_entry("noise figure", m.noise_figure_db,
                  res([](const MixerParams& p) { return p.noise_figure_db.value_or(kNaN); }), "%.1f dB", from);
    section("Local oscillator");
    const double plan_lo = d.views && d.views->ok ? d.views->plan.lo_hz : kNaN;
    opt_freq_entry("LO frequency", "lo.f", m.lo.frequency_hz, plan_lo, ui);
    if (!m.lo.frequency_hz) enum_combo("injection (plan)", s.plan.injection, kInjection);
    num_entry("LO level", m.lo.level_dbm, "%.1f dBm", 0.5);
    num_entry("LO offset", m.lo.offset_ppm, "%.2f ppm", 0.1);
    if (!m.lo.phase_noise.empty())
        ImGui::TextDisabled("phase noise: %zu points (edit in the session file)", m.lo.phase_noise.size());
    if (r)
        for (const std::string& w : r->warnings)
            ImGui::TextColored(ImGui::ColorConvertU32ToFloat4(pal::order_colour(2)), "%s", w.c_str());
}

void if_editor(Setup& s, const BenchData& d, GuiState& ui) {
    IfChainSpec& c = s.if_chain;
    opt_freq_entry("IF centre", "if.c", c.center_hz, s.plan.if_hz, ui);
    const double rf_rate = d.frame ? d.frame->status.sample_rate_hz : kNaN;
    opt_freq_entry("IF sample rate", "if.fs", c.sample_rate_hz, rf_rate, ui);
    int_entry("decimation", c.decimation, 1, 1024);
    num_entry("IF gain", c.gain_db, "%.1f dB", 0.5);
    if (d.frame && d.frame->layout.if_output.sample_rate_hz > 0)
        ImGui::TextDisabled("output: %s at %s", freq_text(d.frame->layout.if_output.center_hz).c_str(),
                            rate_text(d.frame->layout.if_output.sample_rate_hz).c_str());
    int remove = -1;
    for (std::size_t i = 0; i < s.if_filters.size(); ++i) {
        ImGui::PushID(static_cast<int>(i));
        const std::string title =
            "IF filter " + std::to_string(i + 1) + ": " + std::string(to_string(s.if_filters[i].type));
        if (ImGui::CollapsingHeader(title.c_str(), ImGuiTreeNodeFlags_DefaultOpen)) {
            filter_editor(s.if_filters[i], "if_filter" + std::to_string(i), ui);
            if (ImGui::SmallButton("remove this filter")) remove = static_cast<int>(i);
        }
        ImGui::PopID();
    }
    if (remove >= 0) s.if_filters.erase(s.if_filters.begin() + remove);
    if (ImGui::Button("add an IF filter")) {
        FilterSpec f;
        f.type = FilterType::butterworth;
        f.center_hz = c.center_hz.value_or(s.plan.if_hz);
        f.bandwidth_hz = s.plan.if_bandwidth_hz;
        s.if_filters.push_back(f);
    }
}

void analyzer_editor(Setup& s) {
    AnalyzerSpec& a = s.analyzer;
    row("FFT size");
    if (ImGui::BeginCombo("##fft", std::to_string(a.fft_size).c_str())) {
        for (int n = kMinFftSize; n <= (1 << 18); n *= 2)
            if (ImGui::Selectable(std::to_string(n).c_str(), n == a.fft_size)) a.fft_size = n;
        ImGui::EndCombo();
    }
    enum_combo("window", a.window, kWindows);
    if (a.window == WindowType::kaiser) num_entry("Kaiser beta", a.kaiser_beta, "%.2f", 0.5);
    row("overlap");
    float ov = static_cast<float>(a.overlap * 100);
    if (ImGui::SliderFloat("##ov", &ov, 0.0f, 95.0f, "%.0f %%")) a.overlap = ov / 100.0;
    int_entry("averages", a.averages, 1, 100000);
    enum_combo("averaging", a.averaging, kAveraging);
    enum_combo("unit", a.unit, kUnits);
    num_entry("calibration", a.calibration_db, "%.2f dB", 0.5);
    if (ImGui::IsItemHovered()) ImGui::SetTooltip("dBm = dBFS + this, when the unit is dBm");
}

void plan_editor(Setup& s, GuiState& ui) {
    PlanSpec& p = s.plan;
    text_entry("bench name", s.bench.name);
    freq_entry("wanted", "plan.wanted", p.wanted_hz, ui);
    freq_entry("IF", "plan.if", p.if_hz, ui);
    freq_entry("IF bandwidth", "plan.ifbw", p.if_bandwidth_hz, ui);
    freq_entry("RF band low", "plan.rflo", p.rf_low_hz, ui);
    freq_entry("RF band high", "plan.rfhi", p.rf_high_hz, ui);
    freq_entry("channel spacing", "plan.sp", p.channel_spacing_hz, ui);
    enum_combo("injection", p.injection, kInjection);
    int_entry("max order m+|n|", p.max_order, 1, kMaxOrderLimit);
    section("Limits");
    num_entry("image rejection", p.limits.image_rejection_db, "%.1f dB", 1.0);
    num_entry("spurs at most", p.limits.spur_dbc, "%.1f dBc", 1.0);
    num_entry("LO feedthrough", p.limits.lo_feedthrough_dbc, "%.1f dBc", 1.0);
    num_entry("spur rejection", p.limits.spur_rejection_db, "%.1f dB", 1.0);
}

}  // namespace

void draw_side_panel(const Rect& r, Setup& s, const BenchData& d, GuiState& ui) {
    ImGui::SetNextWindowPos(ImVec2(r.x0, r.y0));
    ImGui::SetNextWindowSize(ImVec2(r.w(), r.h()));
    ImGui::Begin("##side", nullptr,
                 ImGuiWindowFlags_NoDecoration | ImGuiWindowFlags_NoMove | ImGuiWindowFlags_NoSavedSettings |
                     ImGuiWindowFlags_NoBringToFrontOnFocus);
    ImGui::TextColored(ImGui::ColorConvertU32ToFloat4(pal::probe), "%s", block_title(ui.selected));
    ImGui::SameLine();
    ImGui::TextDisabled("settings (Enter applies a typed value)");
    if (!d.problem.empty())
        ImGui::TextColored(ImGui::ColorConvertU32ToFloat4(pal::fail), "not applied: %s", d.problem.c_str());
    const float total = ImGui::GetContentRegionAvail().y;
    ImGui::BeginChild("##editor", ImVec2(0, std::floor(total * 0.5f)), true);
    switch (ui.selected) {
        case Block::source:
            source_editor(s, d, ui);
            break;
        case Block::rf_filter:
            filter_editor(s.rf_filter, "rf_filter", ui);
            break;
        case Block::mixer:
            mixer_editor(s, d, ui);
            break;
        case Block::if_chain:
            if_editor(s, d, ui);
            break;
        case Block::analyzer:
            analyzer_editor(s);
            break;
        case Block::plan:
            plan_editor(s, ui);
            break;
    }
    ImGui::EndChild();

    ImGui::BeginChild("##views", ImVec2(0, 0), true, ImGuiWindowFlags_NoScrollbar | ImGuiWindowFlags_NoScrollWithMouse);
    ui.rects["side.views"] = {ImGui::GetWindowPos().x, ImGui::GetWindowPos().y,
                              ImGui::GetWindowPos().x + ImGui::GetWindowSize().x,
                              ImGui::GetWindowPos().y + ImGui::GetWindowSize().y};
    const PlanViews* v = d.views;
    auto response_choice = [&] {
        ImGui::RadioButton("magnitude", &ui.filter_view, 0);
        ImGui::SameLine();
        ImGui::RadioButton("group delay", &ui.filter_view, 1);
    };
    switch (ui.selected) {
        case Block::source:
        case Block::analyzer:
            ImGui::TextDisabled("Scope at the probe point (time domain)");
            plot_scope(d, ImGui::GetContentRegionAvail());
            break;
        case Block::rf_filter:
            if (v) {
                ImGui::TextDisabled("%s", v->rf_filter.title.c_str());
                response_choice();
                plot_response(v->rf_filter, ui.filter_view, ImGui::GetContentRegionAvail());
            }
            break;
        case Block::if_chain:
            if (v) {
                ImGui::TextDisabled("%s (gain and decimation not included)", v->if_chain.title.c_str());
                response_choice();
                plot_response(v->if_chain, ui.filter_view, ImGui::GetContentRegionAvail());
            }
            break;
        case Block::mixer:
            if (v) plot_lo(*v, ImGui::GetContentRegionAvail());
            break;
        case Block::plan:
            ImGui::RadioButton("spur table", &ui.plan_view, 0);
            ImGui::SameLine();
            ImGui::RadioButton("tuning range", &ui.plan_view, 1);
            if (v) {
                if (ui.plan_view == 0)
                    plot_spur_table(*v);
                else
                    plot_tuning_range(*v, ImGui::GetContentRegionAvail());
            }
            break;
    }
    ImGui::EndChild();
    ImGui::End();
}

}  // namespace hb::gui
