// Checks what the bench window wrote (tests/gui_test.sh):
//   gui_check screenshot SHOT.png DUMP.json   the spectrum plot holds the trace across most of its width, at least
//                                             one marker (pixels of a marker colour), and the waterfall has rows
//   gui_check dump DUMP.json PATH=VALUE ...   fields of the state dump (PATH like gui.probe or frame.center_hz;
//                                             numbers compare to 1e-6 relative)
//   gui_check centre DUMP.json RECT           prints "x y", the centre of a rectangle the window drew
// Exit 0 when every check holds, 1 with a message naming the failed check, 2 on bad use.
#include <stb_image.h>

#include <cmath>
#include <cstdio>
#include <cstdlib>
#include <fstream>
#include <iostream>
#include <nlohmann/json.hpp>
#include <string>

#include "gui/gui_helpers.hpp"
#include "gui/palette.hpp"

namespace pal = hb::gui::palette;

namespace {

nlohmann::json load_json(const std::string& path) {
    std::ifstream in(path);
    if (!in) {
        std::cerr << "gui_check: cannot read " << path << "\n";
        std::exit(2);
    }
    return nlohmann::json::parse(in);
}

struct Image {
    int w = 0, h = 0;
    unsigned char* px = nullptr;
    const unsigned char* at(int x, int y) const { return px + 4 * (static_cast<std::size_t>(y) * w + x); }
};

double distance(const unsigned char* p, std::uint32_t c) {
    const double dr = p[0] - pal::red(c), dg = p[1] - pal::green(c), db = p[2] - pal::blue(c);
    return std::sqrt(dr * dr + dg * dg + db * db);
}

struct Box {
    int x0, y0, x1, y1;
};
Box rect(const nlohmann::json& dump, const std::string& name) {
    const auto& r = dump.at("layout").at("rects").at(name);
    return {static_cast<int>(std::ceil(r[0].get<double>())), static_cast<int>(std::ceil(r[1].get<double>())),
            static_cast<int>(std::floor(r[2].get<double>())), static_cast<int>(std::floor(r[3].get<double>()))};
}

int check_screenshot(const std::string& png, const std::string& dump_path) {
    Image im;
    int n = 0;
    im.px = stbi_load(png.c_str(), &im.w, &im.h, &n, 4);
    if (!im.px) {
        std::cerr << "gui_check: cannot read the PNG " << png << "\n";
        return 1;
    }
    const nlohmann::json dump = load_json(dump_path);
    const Box p = rect(dump, "spectrum_plot");
    if (p.x1 > im.w || p.y1 > im.h || p.x1 - p.x0 < 100 || p.y1 - p.y0 < 50) {
        std::cerr << "gui_check: the spectrum plot rectangle does not fit the " << im.w << "x" << im.h << " image\n";
        return 1;
    }
    // The trace: a pixel near the trace colour in a column (anti-aliased lines blend at their edges, so within 45
    // of it in RGB distance; the plot background and the grid are over 150 away).
    int columns = 0, with_trace = 0;
    for (int x = p.x0 + 1; x < p.x1 - 1; ++x) {
        ++columns;
        for (int y = p.y0 + 1; y < p.y1 - 1; ++y)
            if (distance(im.at(x, y), pal::trace) < 45) {
                ++with_trace;
                break;
            }
    }
    const double trace_fraction = static_cast<double>(with_trace) / columns;
    // Markers: their flags and labels are drawn in the order colours.
    int marker_pixels = 0;
    for (int y = p.y0; y < p.y1; ++y)
        for (int x = p.x0; x < p.x1; ++x)
            for (int o = 1; o <= 8; ++o)
                if (distance(im.at(x, y), pal::order[static_cast<std::size_t>(o)]) < 12) {
                    ++marker_pixels;
                    break;
                }
    // The waterfall: rows above the colour map's darkest colour.
    const Box w = rect(dump, "waterfall");
    const hb::gui::Rgb8 dark = hb::gui::colormap(0.0);
    int lit = 0;
    for (int y = w.y0 + 1; y < w.y1 - 1; ++y)
        for (int x = w.x0 + 1; x < w.x1 - 1; ++x) {
            const unsigned char* q = im.at(x, y);
            if (std::abs(q[0] - dark.r) + std::abs(q[1] - dark.g) + std::abs(q[2] - dark.b) > 30) ++lit;
        }
    stbi_image_free(im.px);
    std::printf(
        "trace in %d of %d plot columns (%.1f %%), %d marker-coloured pixels, %d lit waterfall pixels, "
        "%d markers drawn\n",
        with_trace, columns, 100 * trace_fraction, marker_pixels, lit, dump.at("gui").at("markers_drawn").get<int>());
    int bad = 0;
    if (trace_fraction < 0.8) {
        std::cerr << "FAIL: the trace covers only " << 100 * trace_fraction << " % of the plot width (want >= 80 %)\n";
        ++bad;
    }
    if (marker_pixels < 30) {
        std::cerr << "FAIL: only " << marker_pixels << " marker-coloured pixels in the plot (want >= 30)\n";
        ++bad;
    }
    if (dump.at("gui").at("markers_drawn").get<int>() < 1) {
        std::cerr << "FAIL: the window drew no marker\n";
        ++bad;
    }
    if (lit < 200) {
        std::cerr << "FAIL: the waterfall shows nothing (" << lit << " lit pixels)\n";
        ++bad;
    }
    return bad ? 1 : 0;
}

const nlohmann::json* find(const nlohmann::json& j, const std::string& path) {
    const nlohmann::json* cur = &j;
    std::size_t start = 0;
    while (start <= path.size()) {
        const std::size_t dot = path.find('.', start);
        const std::string key = path.substr(start, dot == std::string::npos ? std::string::npos : dot - start);
        if (!cur->is_object() || !cur->contains(key)) return nullptr;
        cur = &cur->at(key);
        if (dot == std::string::npos) break;
        start = dot + 1;
    }
    return cur;
}

int check_dump(const std::string& dump_path, int argc, char** argv) {
    const nlohmann::json dump = load_json(dump_path);
    int bad = 0;
    for (int i = 0; i < argc; ++i) {
        const std::string a = argv[i];
        const std::size_t eq = a.find('=');
        if (eq == std::string::npos) {
            std::cerr << "gui_check: expected PATH=VALUE, got " << a << "\n";
            return 2;
        }
        const std::string path = a.substr(0, eq), want = a.substr(eq + 1);
        const nlohmann::json* v = find(dump, path);
        bool ok = false;
        std::string got = v ? v->dump() : "(missing)";
        if (v && v->is_string()) ok = v->get<std::string>() == want;
        if (v && v->is_boolean()) ok = (want == "true") == v->get<bool>();
        if (v && v->is_number()) {
            const double x = v->get<double>(), y = std::strtod(want.c_str(), nullptr);
            ok = std::abs(x - y) <= 1e-6 * std::max(1.0, std::abs(y));
        }
        std::printf("%s: %s %s %s\n", path.c_str(), got.c_str(), ok ? "==" : "!=", want.c_str());
        bad += !ok;
    }
    return bad ? 1 : 0;
}

}  // namespace

int main(int argc, char** argv) {
    if (argc >= 4 && std::string(argv[1]) == "screenshot") return check_screenshot(argv[2], argv[3]);
    if (argc >= 4 && std::string(argv[1]) == "dump") return check_dump(argv[2], argc - 3, argv + 3);
    if (argc == 4 && std::string(argv[1]) == "centre") {
        const Box b = rect(load_json(argv[2]), argv[3]);
        std::printf("%d %d\n", (b.x0 + b.x1) / 2, (b.y0 + b.y1) / 2);
        return 0;
    }
    std::cerr
        << "usage: gui_check screenshot SHOT.png DUMP.json | dump DUMP.json PATH=VALUE... | centre DUMP.json RECT\n";
    return 2;
}
