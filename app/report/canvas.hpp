// A CPU raster for the report PNGs (the plan check's spectrum, the sweep's rejection plot): pixels, rectangles,
// dashed and Bresenham lines, text in stb_easy_font's segment font (ASCII only) and the PNG encoding (libstb).
#pragma once

#include <cstdint>
#include <string>
#include <string_view>
#include <vector>

#include "report/plot.hpp"

namespace hb::canvas {

using plot::Rgb;

struct Canvas {
    int w, h;
    std::vector<std::uint8_t> px;  // RGB, row after row
    Canvas(int w_, int h_, Rgb bg);
    void set(int x, int y, Rgb c);                           // clipped
    void rect(int x0, int y0, int x1, int y1, Rgb c);        // filled, inclusive corners, any order
    void vline(int x, int y0, int y1, Rgb c, int dash = 0);  // dashed every `dash` pixels (0: solid)
    void hline(int x0, int x1, int y, Rgb c, int dash = 0);
    void line(int x0, int y0, int x1, int y1, Rgb c, int dash = 0);  // any direction (Bresenham)
};

// Printable ASCII for the font: common trade symbols spelled out (− ½ × ≤ ≥ · µ °), anything else '?'.
std::string ascii(std::string_view s);
int text_width(std::string_view t, int scale);
void text(Canvas& cv, int x, int y, std::string_view s, Rgb c, int scale);
std::vector<std::uint8_t> png(const Canvas& cv);

}  // namespace hb::canvas
