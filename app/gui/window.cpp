// The bench window: GLFW + OpenGL 3.3 + Dear ImGui. One loop, once per frame:
//   take the newest Frame from the pipeline (never waiting for the DSP) → derive what to show (dB spectrum, markers,
//   one new waterfall row) → draw every panel as a function of the Setup, the Frame and the UI state → apply the
//   edited Setup to the pipeline once it has settled and validates → sleep to the frame-rate cap.
// The cap (30 fps by default) keeps the GUI thread from taking a core the DSP needs; vsync does nothing on virtual
// displays, so the loop sleeps itself.
#include <GLFW/glfw3.h>
#include <backends/imgui_impl_glfw.h>
#include <backends/imgui_impl_opengl3.h>
#include <imgui.h>
#include <imgui_stdlib.h>
#include <stb_image_write.h>

#include <algorithm>
#include <chrono>
#include <cmath>
#include <cstdio>
#include <ctime>
#include <filesystem>
#include <fstream>
#include <iostream>
#include <memory>
#include <nlohmann/json.hpp>
#include <thread>

#include "devices/session.hpp"
#include "devices/setup_json.hpp"
#include "dsp/errors.hpp"
#include "gui/gui.hpp"
#include "gui/gui_helpers.hpp"
#include "gui/palette.hpp"
#include "gui/panels.hpp"

namespace hb::gui {
namespace {

using Clock = std::chrono::steady_clock;

double seconds(Clock::duration d) {
    return std::chrono::duration<double>(d).count();
}

std::string glfw_error;
void on_glfw_error(int code, const char* what) {
    glfw_error = std::string(what ? what : "?") + " (GLFW error " + std::to_string(code) + ")";
}

// Key presses queued as they arrive: a press and its release can both land between two frames (a quick tap, or
// xdotool), which a per-frame "is it down" look would miss. ImGui's GLFW backend chains to this callback.
struct KeyPress {
    int key, mods;
};
std::vector<KeyPress> key_queue;
void on_key(GLFWwindow*, int key, int, int action, int mods) {
    if (action == GLFW_PRESS && key_queue.size() < 64) key_queue.push_back({key, mods});
}

// ---- the waterfall texture -------------------------------------------------------------------------------

struct Waterfall {
    GLuint tex = 0;
    int width = 0, height = 200, head = -1, rows = 0;
    double low_hz = 0, high_hz = 0;
    // The spectrum geometry the rows belong to: a change starts a fresh waterfall.
    double key_center = 0, key_rate = 0;
    int key_bins = 0;
    Probe key_probe = Probe::if_output;
    std::vector<float> reduced;
    std::vector<std::uint32_t> row;

    void release() {
        if (tex) glDeleteTextures(1, &tex);
        tex = 0;
        width = 0;
    }
    void reset(const Spectrum& s, Probe p) {
        const int w = std::min(s.size(), 4096);
        if (w != width || !tex) {
            release();
            glGenTextures(1, &tex);
            glBindTexture(GL_TEXTURE_2D, tex);
            glTexParameteri(GL_TEXTURE_2D, GL_TEXTURE_MIN_FILTER, GL_NEAREST);
            glTexParameteri(GL_TEXTURE_2D, GL_TEXTURE_MAG_FILTER, GL_NEAREST);
            glTexParameteri(GL_TEXTURE_2D, GL_TEXTURE_WRAP_S, GL_CLAMP_TO_EDGE);
            glTexParameteri(GL_TEXTURE_2D, GL_TEXTURE_WRAP_T, GL_REPEAT);  // rows form a ring: v wraps
            width = w;
        }
        std::vector<std::uint32_t> blank(static_cast<std::size_t>(width) * height, colormap_lut()[0]);
        glBindTexture(GL_TEXTURE_2D, tex);
        glPixelStorei(GL_UNPACK_ALIGNMENT, 4);
        glTexImage2D(GL_TEXTURE_2D, 0, GL_RGBA8, width, height, 0, GL_RGBA, GL_UNSIGNED_BYTE, blank.data());
        head = -1;
        rows = 0;
        const double bin = s.bin_hz();
        low_hz = s.low_hz() - bin / 2;
        high_hz = s.high_hz() - bin / 2;
        key_center = s.center_hz;
        key_rate = s.sample_rate_hz;
        key_bins = s.size();
        key_probe = p;
        reduced.assign(static_cast<std::size_t>(width), 0.0f);
        row.assign(static_cast<std::size_t>(width), 0);
    }
    // One new row (the newest at the top): reduce to the texture width by the max of each group, colour, upload.
    void push(const Spectrum& s, Probe p, const std::vector<float>& db, float bottom_db, float range_db) {
        if (!tex || s.size() != key_bins || s.center_hz != key_center || s.sample_rate_hz != key_rate || p != key_probe)
            reset(s, p);
        reduce_max_groups(db, reduced);
        const auto& lut = colormap_lut();
        for (int i = 0; i < width; ++i) {
            const float t = (reduced[static_cast<std::size_t>(i)] - bottom_db) / range_db;
            const int k = std::isfinite(t) ? std::clamp(static_cast<int>(t * 255.0f + 0.5f), 0, 255) : 0;
            row[static_cast<std::size_t>(i)] = lut[static_cast<std::size_t>(k)];
        }
        head = (head + 1) % height;
        rows = std::min(rows + 1, height);
        glBindTexture(GL_TEXTURE_2D, tex);
        glPixelStorei(GL_UNPACK_ALIGNMENT, 4);
        glTexSubImage2D(GL_TEXTURE_2D, 0, 0, head, width, 1, GL_RGBA, GL_UNSIGNED_BYTE, row.data());
    }
};

// ---- frame times -------------------------------------------------------------------------------------------

struct FrameClock {
    std::vector<double> second;  // work times (ms) of frames in the current second
    std::vector<double> all;     // every frame's work time (ms), for the report at exit
    Clock::time_point second_start = Clock::now();
    int frames_in_second = 0;
    FrameTimes shown;
    bool report = false;

    static double percentile(std::vector<double> v, double p) {
        if (v.empty()) return 0;
        std::sort(v.begin(), v.end());
        return v[std::min(v.size() - 1, static_cast<std::size_t>(p * static_cast<double>(v.size() - 1) + 0.5))];
    }
    void add(double work_ms) {
        second.push_back(work_ms);
        all.push_back(work_ms);
        ++frames_in_second;
        const double el = seconds(Clock::now() - second_start);
        if (el >= 1.0) {
            shown.fps = frames_in_second / el;
            double sum = 0, worst = 0;
            for (double w : second) {
                sum += w;
                worst = std::max(worst, w);
            }
            shown.work_ms = sum / static_cast<double>(second.size());
            shown.worst_ms = worst;
            if (report)
                std::fprintf(stderr, "fps %.1f  frame work mean %.2f ms  p95 %.2f ms  max %.2f ms\n", shown.fps,
                             shown.work_ms, percentile(second, 0.95), worst);
            second.clear();
            frames_in_second = 0;
            second_start = Clock::now();
        }
    }
};

// ---- the window's state beyond GuiState: the pipeline, the frame, derived data --------------------------------

struct Bench {
    Setup setup;    // what the panels edit
    Setup applied;  // what the pipeline and the plan views run
    Clock::time_point changed_at{};
    Setup pending;  // the last edit seen, to wait until edits settle
    std::string problem;

    std::unique_ptr<Pipeline> pipe;
    std::string pipe_error;
    Frame frame;
    bool have_frame = false;
    std::uint64_t derived_sequence = 0, derived_analysis = ~0ull;
    Probe derived_probe = Probe::if_output;

    PlanViews views;
    Clock::time_point views_at{};
    std::vector<float> spectrum_db;
    MarkerSet markers, check;
    Waterfall wf;

    Clock::time_point record_start{};
    std::string record_path;
};

void start_pipeline(Bench& b, Probe probe) {
    b.pipe.reset();
    b.pipe_error.clear();
    b.have_frame = false;
    b.frame = Frame{};
    b.derived_sequence = 0;
    b.derived_analysis = ~0ull;
    if (b.applied.sources.empty()) return;
    try {
        PipelineOptions o;
        o.live = true;
        o.probe = probe;
        b.pipe = Pipeline::start(b.applied, o);
    } catch (const std::exception& e) {
        b.pipe_error = e.what();
    }
}

void rebuild_views(Bench& b) {
    const double drive = b.have_frame && b.frame.has_analysis ? b.frame.analysis.drive_dbfs : -10.0;
    b.views = build_plan_views(b.applied, drive);
    b.views_at = Clock::now();
    b.derived_analysis = ~0ull;  // markers carry plan numbers: make them again
}

// The markers at the probe and the IF output's check, made again when the frame or its analysis is new.
void derive(Bench& b, const SpectrumView& view) {
    (void)view;
    const bool new_spectrum = b.have_frame && b.frame.sequence != b.derived_sequence;
    const bool new_analysis = b.have_frame && b.frame.analysis_sequence != b.derived_analysis;
    if (b.have_frame && new_spectrum) {
        b.spectrum_db.resize(b.frame.spectrum.power.size());
        if (!b.spectrum_db.empty()) spectrum_to_db(b.frame.spectrum, b.spectrum_db);
    }
    const bool complex_if = b.views.ok && b.views.plan.complex_if;
    const double wanted_rf = b.applied.plan.wanted_hz;
    if (b.have_frame && b.frame.has_analysis && new_analysis) {
        const ChainAnalysis& a = b.frame.analysis;
        b.check = markers_from_check(a.check, b.frame.layout.lo_hz, wanted_rf, a.image.rf_hz, complex_if,
                                     b.applied.plan.limits);
        b.check.note = "plan check at the IF output";
    } else if (!b.have_frame || !b.frame.has_analysis) {
        double lo = 0, hi = 0;
        if (b.views.ok && b.views.plan.window) {
            lo = b.views.plan.window->low_hz();
            hi = b.views.plan.window->high_hz();
        } else if (b.views.ok) {
            lo = 0;
            hi = 1e300;
        }
        if (b.views.ok) b.check = markers_predicted(b.views, lo, hi);
    }
    if (!b.have_frame) {
        b.markers = b.check;
        return;
    }
    if (!new_spectrum && !new_analysis && b.derived_probe == b.frame.probe) return;
    const auto band = probe_band(b.frame.layout, b.frame.probe);
    switch (b.frame.probe) {
        case Probe::if_output:
            if (b.frame.has_analysis) b.markers = b.check;
            break;
        case Probe::mixer_output:
            if (new_analysis || b.derived_probe != b.frame.probe) {
                try {
                    const PlanCheck c =
                        check_mixer_output(b.views, b.frame.layout, b.frame.analysis.drive_dbfs, b.frame.spectrum);
                    b.markers =
                        markers_from_check(c, b.frame.layout.lo_hz, wanted_rf, kNaN, complex_if, b.applied.plan.limits);
                    b.markers.note = "plan check made at the mixer output";
                } catch (const std::exception& e) {
                    b.markers = markers_predicted(b.views, band.first, band.second);
                    b.markers.note = e.what();
                }
            }
            break;
        case Probe::rf_input:
        case Probe::rf_filtered:
            b.markers = markers_for_rf(b.views, b.frame.layout.lo_hz, band.first, band.second, &b.frame.spectrum);
            break;
    }
    b.derived_sequence = b.frame.sequence;
    b.derived_analysis = b.frame.analysis_sequence;
    b.derived_probe = b.frame.probe;
}

// Applies the edited Setup once it has stayed the same for a moment and validates.
void settle_edits(Bench& b, GuiState& ui) {
    if (b.setup == b.applied) {
        b.problem.clear();
        return;
    }
    const auto now = Clock::now();
    if (!(b.setup == b.pending)) {
        b.pending = b.setup;
        b.changed_at = now;
        return;
    }
    if (seconds(now - b.changed_at) < 0.2) return;
    if (const auto problems = validate(b.setup); !problems.empty()) {
        b.problem = problems.front().key + ": " + problems.front().message;
        return;
    }
    const bool sources_changed = !(b.setup.sources == b.applied.sources);
    b.problem.clear();
    b.applied = b.setup;
    try {
        if (b.pipe && !sources_changed)
            b.pipe->apply(b.applied);
        else
            start_pipeline(b, ui.probe);
    } catch (const std::exception& e) {
        b.problem = e.what();
    }
    rebuild_views(b);
    ui.message = "settings applied";
    ui.message_is_error = false;
}

void open_session(Bench& b, GuiState& ui, const std::string& path) {
    try {
        Setup s = load_session(path);
        if (b.pipe && b.pipe->recording()) b.pipe->stop_recording();
        b.setup = b.applied = b.pending = s;
        ui.session_path = path;
        ui.view.follow = true;
        ui.view.level_pending = true;
        ui.entry_text.clear();
        ui.entry_error.clear();
        start_pipeline(b, ui.probe);
        b.wf.rows = 0;
        rebuild_views(b);
        ui.message = "opened " + path;
        ui.message_is_error = false;
    } catch (const std::exception& e) {
        ui.message = e.what();
        ui.message_is_error = true;
    }
}

void save_session_to(Bench& b, GuiState& ui, const std::string& path) {
    try {
        save_session(b.setup, path);
        ui.session_path = path;
        ui.message = "saved to " + path;
        ui.message_is_error = false;
    } catch (const std::exception& e) {
        ui.message = e.what();
        ui.message_is_error = true;
    }
}

std::string default_recording_name() {
    char b[64];
    const std::time_t t = std::time(nullptr);
    std::tm tm{};
    localtime_r(&t, &tm);
    std::strftime(b, sizeof b, "bench-%Y%m%d-%H%M%S", &tm);
    return b;
}

void start_recording(Bench& b, GuiState& ui, const std::string& base) {
    if (!b.pipe) return;
    try {
        RecorderOptions o;
        o.out = base;
        o.datatype = ui.record_datatype == 1 ? "ci16_le" : "cf32_le";
        o.setup = b.applied;
        b.pipe->start_recording(o);
        b.record_start = Clock::now();
        b.record_path = base + ".sigmf-meta";
        ui.message = "recording to " + b.record_path;
        ui.message_is_error = false;
    } catch (const std::exception& e) {
        ui.message = e.what();
        ui.message_is_error = true;
    }
}

void stop_recording(Bench& b, GuiState& ui) {
    if (!b.pipe) return;
    const auto r = b.pipe->stop_recording();
    if (!r) return;
    ui.message = "recorded " + std::to_string(r->written) + " samples to " + r->meta_path +
                 (r->gaps ? " (" + std::to_string(r->gaps) + " gaps annotated)" : "") +
                 (r->complete ? "" : ": " + r->message);
    ui.message_is_error = !r->complete;
}

// A modal asking for a path; returns true when confirmed.
bool path_popup(const char* id, const char* prompt, const char* ok, std::string& path, bool with_datatype,
                int* datatype) {
    bool confirmed = false;
    ImGui::SetNextWindowSize(ImVec2(520, 0));
    if (ImGui::BeginPopupModal(id, nullptr, ImGuiWindowFlags_NoSavedSettings | ImGuiWindowFlags_AlwaysAutoResize)) {
        ImGui::TextUnformatted(prompt);
        ImGui::SetNextItemWidth(500);
        if (ImGui::IsWindowAppearing()) ImGui::SetKeyboardFocusHere();
        if (ImGui::InputText("##path", &path, ImGuiInputTextFlags_EnterReturnsTrue)) confirmed = true;
        if (with_datatype && datatype) {
            ImGui::RadioButton("cf32_le (32-bit float I/Q)", datatype, 0);
            ImGui::SameLine();
            ImGui::RadioButton("ci16_le (16-bit integer I/Q)", datatype, 1);
        }
        if (ImGui::Button(ok)) confirmed = true;
        ImGui::SameLine();
        if (ImGui::Button("Cancel")) ImGui::CloseCurrentPopup();
        if (confirmed) ImGui::CloseCurrentPopup();
        ImGui::EndPopup();
    }
    return confirmed && !path.empty();
}

nlohmann::json rect_json(const Rect& r) {
    return nlohmann::json::array({r.x0, r.y0, r.x1, r.y1});
}

nlohmann::json num(double v) {
    return std::isfinite(v) ? nlohmann::json(v) : nlohmann::json(nullptr);
}

void write_state_dump(const std::string& path, const Bench& b, const GuiState& ui, int frames, const FrameTimes& t,
                      int width, int height) {
    nlohmann::json j;
    j["schema"] = "hetbench.gui-state/1";
    nlohmann::json orders = nlohmann::json::array();
    for (int o = 1; o <= 8; ++o) orders.push_back(ui.toggles.show_order[static_cast<std::size_t>(o)]);
    nlohmann::json kinds;
    for (int k = 0; k < 7; ++k)
        kinds[std::string(to_string(static_cast<LineKind>(k)))] = ui.toggles.show_kind[static_cast<std::size_t>(k)];
    j["gui"] = {{"selected_block", block_key(ui.selected)},
                {"probe", std::string(to_string(ui.probe))},
                {"frozen", ui.frozen},
                {"view",
                 {{"follow", ui.view.follow},
                  {"low_hz", ui.view.low_hz},
                  {"high_hz", ui.view.high_hz},
                  {"span_hz", ui.view.high_hz - ui.view.low_hz},
                  {"top_db", ui.view.top_db},
                  {"range_db", ui.view.range_db}}},
                {"show_orders", orders},
                {"show_kinds", kinds},
                {"show_limits", ui.toggles.limits},
                {"frames_rendered", frames},
                {"fps", t.fps},
                {"frame_work_ms", t.work_ms},
                {"markers_drawn", ui.markers_drawn},
                {"session_path", ui.session_path},
                {"message", ui.message}};
    nlohmann::json rects;
    for (const auto& [k, r] : ui.rects) rects[k] = rect_json(r);
    j["layout"] = {{"window", {width, height}}, {"rects", rects}};
    nlohmann::json f;
    f["received"] = b.have_frame;
    if (b.have_frame) {
        const Frame& fr = b.frame;
        f["sequence"] = fr.sequence;
        f["setup_version"] = fr.setup_version;
        f["probe"] = std::string(to_string(fr.probe));
        f["center_hz"] = fr.spectrum.center_hz;
        f["sample_rate_hz"] = fr.spectrum.sample_rate_hz;
        f["bins"] = fr.spectrum.size();
        f["has_analysis"] = fr.has_analysis;
        if (fr.has_analysis) {
            f["verdict"] = !fr.analysis.check.wanted_observed() ? "no-wanted"
                           : fr.analysis.check.passed()         ? "pass"
                                                                : "fail";
            f["wanted_level_dbfs"] = num(fr.analysis.check.wanted.level_dbfs);
        }
        f["status"] = {{"source", fr.status.source},
                       {"state", fr.status.state},
                       {"sample_rate_hz", fr.status.sample_rate_hz},
                       {"dsp_load", fr.status.dsp_load},
                       {"overflows", fr.status.overflows},
                       {"dropped_blocks", fr.status.dropped_blocks}};
    }
    f["pipeline_error"] = b.pipe_error;
    j["frame"] = f;
    nlohmann::json markers = nlohmann::json::array();
    for (const Marker& m : b.markers.markers)
        markers.push_back({{"label", m.label},
                           {"m", m.m},
                           {"n", m.n},
                           {"order", m.order},
                           {"kind", std::string(to_string(m.kind))},
                           {"freq_hz", num(m.freq_hz)},
                           {"status", std::string(to_string(m.status))},
                           {"measured", m.measured}});
    j["markers"] = markers;
    j["problem"] = b.problem;
    j["setup"] = setup_to_json(b.setup);
    std::ofstream out(path, std::ios::trunc);
    if (!out) throw InputError(path + ": cannot write the state dump");
    out << j.dump(1) << "\n";
}

bool write_screenshot(const std::string& path, int w, int h) {
    std::vector<unsigned char> px(static_cast<std::size_t>(w) * h * 4);
    glReadBuffer(GL_BACK);
    glPixelStorei(GL_PACK_ALIGNMENT, 1);
    glReadPixels(0, 0, w, h, GL_RGBA, GL_UNSIGNED_BYTE, px.data());
    // Opaque: the alpha of the back buffer is whatever blending left there.
    for (std::size_t i = 3; i < px.size(); i += 4) px[i] = 255;
    stbi_flip_vertically_on_write(1);
    return stbi_write_png(path.c_str(), w, h, 4, px.data(), w * 4) != 0;
}

void load_fonts() {
    ImGuiIO& io = ImGui::GetIO();
    // Latin-1, general punctuation (−, ·, –), arrows, mathematical operators (≥, ∞), box and geometric shapes (●).
    static const ImWchar ranges[] = {0x0020, 0x00FF, 0x2010, 0x205E, 0x2190, 0x21FF, 0x2200, 0x22FF, 0x2500, 0x25FF, 0};
    for (const char* p : {"/usr/share/fonts/truetype/dejavu/DejaVuSans.ttf", "/usr/share/fonts/TTF/DejaVuSans.ttf"}) {
        if (std::filesystem::exists(p) && io.Fonts->AddFontFromFileTTF(p, 14.0f, nullptr, ranges)) return;
    }
    std::cerr << "hetbench gui: DejaVu Sans not found (Debian package fonts-dejavu-core): using the built-in font, "
                 "some symbols will show as '?'\n";
    io.Fonts->AddFontDefault();
}

}  // namespace

int run_gui(const GuiOptions& o) {
    Bench b;
    b.setup = b.applied = b.pending = load_session(o.session);
    GuiState ui;
    ui.session_path = o.session;

    glfwSetErrorCallback(on_glfw_error);
    if (!glfwInit()) {
        std::cerr << "hetbench gui: cannot open a window: " << (glfw_error.empty() ? "no display" : glfw_error)
                  << " (is DISPLAY set? On a machine without a screen run: xvfb-run -a hetbench gui ...)\n";
        return 2;
    }
    glfwWindowHint(GLFW_CONTEXT_VERSION_MAJOR, 3);
    glfwWindowHint(GLFW_CONTEXT_VERSION_MINOR, 3);
    glfwWindowHint(GLFW_OPENGL_PROFILE, GLFW_OPENGL_CORE_PROFILE);
    glfwWindowHint(GLFW_OPENGL_FORWARD_COMPAT, GLFW_TRUE);
    glfwWindowHint(GLFW_RESIZABLE, GLFW_TRUE);
    std::string title = "hetbench: " + b.setup.bench.name;
    GLFWwindow* win = glfwCreateWindow(o.width, o.height, title.c_str(), nullptr, nullptr);
    if (!win) {
        std::cerr << "hetbench gui: cannot create an OpenGL 3.3 window: " << glfw_error << "\n";
        glfwTerminate();
        return 2;
    }
    glfwMakeContextCurrent(win);
    glfwSwapInterval(0);  // the loop paces itself (see the top of this file)

    IMGUI_CHECKVERSION();
    ImGui::CreateContext();
    ImGui::GetIO().IniFilename = nullptr;  // no imgui.ini: the layout is ours, fixed
    load_fonts();
    apply_style();
    glfwSetKeyCallback(win, on_key);  // before the backend installs its own, which then calls this one
    ImGui_ImplGlfw_InitForOpenGL(win, true);
    ImGui_ImplOpenGL3_Init("#version 330 core");

    start_pipeline(b, ui.probe);
    rebuild_views(b);

    FrameClock clock;
    clock.report = o.fps_report;
    const auto t_start = Clock::now();
    auto next = Clock::now();
    int frames = 0;
    Probe sent_probe = ui.probe;
    int rc = 0;

    while (!glfwWindowShouldClose(win) && !ui.quit) {
        glfwPollEvents();
        const auto t0 = Clock::now();

        // ---- the newest frame ----
        if (b.pipe) {
            if (!ui.frozen && b.pipe->latest(b.frame)) b.have_frame = true;
            if (b.have_frame) b.frame.status = b.pipe->status();  // the counters stay live while frozen
        }
        const bool new_row = b.have_frame && !ui.frozen && b.frame.sequence != b.derived_sequence;
        // Plan levels follow the measured drive (re-made at most once a second).
        if (b.have_frame && b.frame.has_analysis && std::isfinite(b.frame.analysis.drive_dbfs) &&
            std::abs(b.frame.analysis.drive_dbfs - b.views.drive_dbfs) > 0.5 && seconds(t0 - b.views_at) > 1.0)
            rebuild_views(b);
        derive(b, ui.view);
        if (new_row && !b.spectrum_db.empty())
            b.wf.push(b.frame.spectrum, b.frame.probe, b.spectrum_db, ui.view.top_db - ui.view.range_db,
                      ui.view.range_db);

        // ---- what the panels see ----
        BenchData d;
        d.has_source = !b.applied.sources.empty();
        d.running = b.pipe != nullptr;
        d.pipeline_error = b.pipe_error;
        d.frame = b.have_frame ? &b.frame : nullptr;
        d.views = &b.views;
        d.markers = &b.markers;
        d.check = &b.check;
        d.spectrum_db = b.have_frame ? &b.spectrum_db : nullptr;
        if (b.have_frame && b.frame.spectrum.size() > 0) {
            d.band_low_hz = b.frame.spectrum.center_hz - b.frame.spectrum.sample_rate_hz / 2;
            d.band_high_hz = b.frame.spectrum.center_hz + b.frame.spectrum.sample_rate_hz / 2;
            d.unit = b.frame.spectrum.spec.unit == LevelUnit::dbm ? "dBm" : "dBFS";
        }
        d.problem = b.problem;
        if (b.wf.tex) {
            d.waterfall.texture = reinterpret_cast<ImTextureID>(static_cast<std::intptr_t>(b.wf.tex));
            d.waterfall.width = b.wf.width;
            d.waterfall.height = b.wf.height;
            d.waterfall.head = std::max(b.wf.head, 0);
            d.waterfall.rows = b.wf.rows;
            d.waterfall.low_hz = b.wf.low_hz;
            d.waterfall.high_hz = b.wf.high_hz;
        }
        d.times = clock.shown;
        d.recording = b.pipe && b.pipe->recording();
        d.recording_s = d.recording ? seconds(t0 - b.record_start) : 0.0;
        d.recording_path = b.record_path;

        ImGui_ImplOpenGL3_NewFrame();
        ImGui_ImplGlfw_NewFrame();
        ImGui::NewFrame();
        ImGuiIO& io = ImGui::GetIO();

        // ---- keys (not while a field takes the keyboard) ----
        for (const KeyPress& k : key_queue) {
            if (io.WantTextInput || ImGui::IsPopupOpen("", ImGuiPopupFlags_AnyPopupId)) break;
            const bool ctrl = (k.mods & GLFW_MOD_CONTROL) != 0;
            if (k.key >= GLFW_KEY_1 && k.key <= GLFW_KEY_4 && !ctrl)
                ui.probe = kProbes[static_cast<std::size_t>(k.key - GLFW_KEY_1)];
            else if (k.key == GLFW_KEY_SPACE)
                ui.frozen = !ui.frozen;
            else if (k.key == GLFW_KEY_HOME)
                ui.view.follow = true;
            else if (k.key == GLFW_KEY_A && !ctrl)
                ui.view.level_pending = true;
            else if (k.key == GLFW_KEY_R && !ctrl && b.pipe)
                (b.pipe->recording() ? ui.want_stop_record : ui.want_record) = true;
            else if (k.key == GLFW_KEY_S && ctrl)
                (ui.session_path.empty() ? ui.want_save_as : ui.want_save) = true;
            else if (k.key == GLFW_KEY_O && ctrl)
                ui.want_open = true;
            else if (k.key == GLFW_KEY_Q && ctrl)
                ui.quit = true;
        }
        key_queue.clear();

        // ---- layout ----
        int fbw = 0, fbh = 0, ww = 0, wh = 0;
        glfwGetFramebufferSize(win, &fbw, &fbh);
        glfwGetWindowSize(win, &ww, &wh);
        const float W = static_cast<float>(ww), H = static_cast<float>(wh);
        draw_menu_bar(b.setup, d, ui);
        const float menu_h = ImGui::GetFrameHeight();
        const float status_h = ImGui::GetFrameHeight() + 6;
        const float strip_h = 128;
        const float tables_h = std::floor(std::clamp(H * 0.24f, 120.0f, 260.0f));
        const float side_w = std::floor(std::clamp(W * 0.31f, 300.0f, 460.0f));
        const Rect strip{0, menu_h, W, menu_h + strip_h};
        const Rect status{0, H - status_h, W, H};
        const Rect side{W - side_w, strip.y1, W, status.y0};
        const Rect spectrum{0, strip.y1, side.x0, status.y0 - tables_h};
        const Rect tables{0, spectrum.y1, side.x0, status.y0};
        ui.rects["chain_strip"] = strip;
        ui.rects["status_line"] = status;
        draw_chain_strip(strip, b.setup, d, ui);
        draw_spectrum_panel(spectrum, d, ui);
        draw_side_panel(side, b.setup, d, ui);
        draw_tables_panel(tables, d, ui);
        draw_status_line(status, b.setup, d, ui);

        // ---- pop-ups of the menu ----
        if (ui.want_open) {
            ui.path_entry = ui.session_path;
            ImGui::OpenPopup("Open a session");
            ui.want_open = false;
        }
        if (ui.want_save_as) {
            ui.path_entry = ui.session_path.empty() ? "bench.toml" : ui.session_path;
            ImGui::OpenPopup("Save the session as");
            ui.want_save_as = false;
        }
        if (ui.want_record) {
            ui.path_entry = default_recording_name();
            ImGui::OpenPopup("Record to SigMF");
            ui.want_record = false;
        }
        if (path_popup("Open a session", "Session file (TOML):", "Open", ui.path_entry, false, nullptr))
            open_session(b, ui, ui.path_entry);
        if (path_popup("Save the session as", "Save to (TOML):", "Save", ui.path_entry, false, nullptr))
            save_session_to(b, ui, ui.path_entry);
        if (path_popup("Record to SigMF", "Base name (NAME.sigmf-meta + NAME.sigmf-data):", "Record", ui.path_entry,
                       true, &ui.record_datatype))
            start_recording(b, ui, ui.path_entry);
        if (ui.want_save) {
            save_session_to(b, ui, ui.session_path);
            ui.want_save = false;
        }
        if (ui.want_stop_record) {
            stop_recording(b, ui);
            ui.want_stop_record = false;
        }

        // ---- render ----
        ImGui::Render();
        glViewport(0, 0, fbw, fbh);
        const auto bg = ImGui::ColorConvertU32ToFloat4(palette::mat);
        glClearColor(bg.x, bg.y, bg.z, 1.0f);
        glClear(GL_COLOR_BUFFER_BIT);
        ImGui_ImplOpenGL3_RenderDrawData(ImGui::GetDrawData());
        ++frames;

        // With --frames: the last frame is one that shows a measurement (when a source runs), or after 20 s anyway.
        bool last = false;
        if (o.frames > 0 && frames >= o.frames) {
            const bool measured = b.have_frame && b.frame.has_analysis && ui.markers_drawn > 0 && b.wf.rows > 3;
            last = measured || !b.pipe || seconds(Clock::now() - t_start) > 20.0 || (b.pipe && b.pipe->status().failed);
        }
        if (last && !o.screenshot.empty() && !write_screenshot(o.screenshot, fbw, fbh)) {
            std::cerr << "hetbench gui: cannot write the screenshot " << o.screenshot << "\n";
            rc = 2;
        }
        glfwSwapBuffers(win);

        // ---- after the frame: the title, the probe, the edits ----
        if (const std::string t = "hetbench: " + b.applied.bench.name; t != title) {
            title = t;
            glfwSetWindowTitle(win, title.c_str());
        }
        if (ui.want_replay || (ui.probe != sent_probe && b.pipe && b.pipe->status().finished)) {
            // The source has ended (a recording without loop): run it again, at the probe now chosen.
            start_pipeline(b, ui.probe);
            ui.want_replay = false;
            sent_probe = ui.probe;
            ui.message = "replaying the source";
            ui.message_is_error = false;
        }
        if (ui.probe != sent_probe) {
            if (b.pipe) b.pipe->set_probe(ui.probe);
            sent_probe = ui.probe;
            ui.view.follow = true;
            ui.view.level_pending = true;
        }
        settle_edits(b, ui);
        clock.add(1e3 * seconds(Clock::now() - t0));
        if (last) break;

        // ---- the cap ----
        if (o.fps > 0) {
            const auto period = std::chrono::duration_cast<Clock::duration>(std::chrono::duration<double>(1.0 / o.fps));
            next += period;
            const auto now = Clock::now();
            if (next < now - period) next = now;  // fell behind: do not try to catch up
            std::this_thread::sleep_until(next);
        }
    }

    if (o.fps_report && !clock.all.empty()) {
        double sum = 0;
        for (double w : clock.all) sum += w;
        const double el = seconds(Clock::now() - t_start);
        std::fprintf(stderr,
                     "frames %zu in %.2f s (%.1f fps, cap %s); frame work mean %.2f ms, median %.2f ms, p95 %.2f ms, "
                     "max %.2f ms\n",
                     clock.all.size(), el, static_cast<double>(clock.all.size()) / el,
                     o.fps > 0 ? (fixed_trim(o.fps, 1) + " fps").c_str() : "none",
                     sum / static_cast<double>(clock.all.size()), FrameClock::percentile(clock.all, 0.5),
                     FrameClock::percentile(clock.all, 0.95), FrameClock::percentile(clock.all, 1.0));
    }
    if (!o.state_dump.empty()) {
        try {
            int ww = 0, wh = 0;
            glfwGetWindowSize(win, &ww, &wh);
            write_state_dump(o.state_dump, b, ui, frames, clock.shown, ww, wh);
        } catch (const std::exception& e) {
            std::cerr << "hetbench gui: " << e.what() << "\n";
            rc = 2;
        }
    }
    if (b.pipe && b.pipe->recording()) stop_recording(b, ui);
    b.pipe.reset();
    b.wf.release();
    ImGui_ImplOpenGL3_Shutdown();
    ImGui_ImplGlfw_Shutdown();
    ImGui::DestroyContext();
    glfwDestroyWindow(win);
    glfwTerminate();
    return rc;
}

}  // namespace hb::gui
