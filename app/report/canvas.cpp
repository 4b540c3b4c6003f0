// The report raster: see canvas.hpp.
#include "report/canvas.hpp"

#include <stb_easy_font.h>
#include <stb_image_write.h>

#include <algorithm>
#include <cmath>
#include <cstring>
#include <utility>

namespace hb::canvas {

Canvas::Canvas(int w_, int h_, Rgb bg)
    : w(w_), h(h_), px(static_cast<std::size_t>(w_) * static_cast<std::size_t>(h_) * 3) {
    for (std::size_t i = 0; i < px.size(); i += 3) {
        px[i] = bg.r;
        px[i + 1] = bg.g;
        px[i + 2] = bg.b;
    }
}

void Canvas::set(int x, int y, Rgb c) {
    if (x < 0 || y < 0 || x >= w || y >= h) return;
    const std::size_t i = (static_cast<std::size_t>(y) * static_cast<std::size_t>(w) + static_cast<std::size_t>(x)) * 3;
    px[i] = c.r;
    px[i + 1] = c.g;
    px[i + 2] = c.b;
}

void Canvas::rect(int x0, int y0, int x1, int y1, Rgb c) {
    if (x0 > x1) std::swap(x0, x1);
    if (y0 > y1) std::swap(y0, y1);
    for (int y = std::max(y0, 0); y <= std::min(y1, h - 1); ++y)
        for (int x = std::max(x0, 0); x <= std::min(x1, w - 1); ++x) set(x, y, c);
}

void Canvas::vline(int x, int y0, int y1, Rgb c, int dash) {
    if (y0 > y1) std::swap(y0, y1);
    y0 = std::max(y0, 0);
    y1 = std::min(y1, h - 1);
    for (int y = y0; y <= y1; ++y)
        if (dash == 0 || (y / dash) % 2 == 0) set(x, y, c);
}

void Canvas::hline(int x0, int x1, int y, Rgb c, int dash) {
    if (x0 > x1) std::swap(x0, x1);
    x0 = std::max(x0, 0);
    x1 = std::min(x1, w - 1);
    for (int x = x0; x <= x1; ++x)
        if (dash == 0 || (x / dash) % 2 == 0) set(x, y, c);
}

void Canvas::line(int x0, int y0, int x1, int y1, Rgb c, int dash) {
    const int dx = std::abs(x1 - x0), dy = -std::abs(y1 - y0);
    const int sx = x0 < x1 ? 1 : -1, sy = y0 < y1 ? 1 : -1;
    int err = dx + dy, k = 0;
    for (;;) {
        if (dash == 0 || (k / dash) % 2 == 0) set(x0, y0, c);
        ++k;
        if (x0 == x1 && y0 == y1) break;
        const int e2 = 2 * err;
        if (e2 >= dy) {
            err += dy;
            x0 += sx;
        }
        if (e2 <= dx) {
            err += dx;
            y0 += sy;
        }
    }
}

// stb_easy_font reads its glyph table at [ch − 32]: only printable ASCII may reach it. Common trade symbols
// in labels are spelled out; anything else becomes '?'.
std::string ascii(std::string_view s) {
    std::string out;
    for (std::size_t i = 0; i < s.size(); ++i) {
        const auto ch = static_cast<unsigned char>(s[i]);
        if (ch >= 32 && ch < 127) {
            out += static_cast<char>(ch);
            continue;
        }
        if (ch < 0x80) continue;  // control characters
        const std::string_view rest = s.substr(i);
        struct Sub {
            std::string_view utf8, text;
        };
        static constexpr Sub kSubs[] = {{"\u2212", "-"},  {"\u00bd", "1/2"}, {"\u00d7", "x"},   {"\u2264", "<="},
                                        {"\u2265", ">="}, {"\u00b7", "."},   {"\u2013", "-"},   {"\u2014", "-"},
                                        {"\u00b5", "u"},  {"\u03bc", "u"},   {"\u00b0", " deg"}};
        bool done = false;
        for (const Sub& sub : kSubs)
            if (rest.substr(0, sub.utf8.size()) == sub.utf8) {
                out += sub.text;
                i += sub.utf8.size() - 1;
                done = true;
                break;
            }
        if (done) continue;
        out += '?';
        while (i + 1 < s.size() && (static_cast<unsigned char>(s[i + 1]) & 0xC0) == 0x80) ++i;  // skip the sequence
    }
    return out;
}

int text_width(std::string_view t, int scale) {
    std::string buf = ascii(t);
    return stb_easy_font_width(buf.data()) * scale;
}

void text(Canvas& cv, int x, int y, std::string_view s, Rgb c, int scale) {
    std::string t = ascii(s);
    // 64 bytes per quad, and a glyph has at most a dozen or so segments: be generous, a short buffer truncates.
    std::vector<char> vbuf(t.size() * 64 * 24 + 64);
    const int quads = stb_easy_font_print(0, 0, t.data(), nullptr, vbuf.data(), static_cast<int>(vbuf.size()));
    // Each quad is four vertices of 16 bytes (x, y, z floats and RGBA), an axis-aligned rectangle.
    for (int q = 0; q < quads; ++q) {
        float vx[4], vy[4];
        for (int k = 0; k < 4; ++k) {
            const char* v = vbuf.data() + (q * 4 + k) * 16;
            std::memcpy(&vx[k], v, sizeof(float));
            std::memcpy(&vy[k], v + 4, sizeof(float));
        }
        const float x0 = *std::min_element(vx, vx + 4), x1 = *std::max_element(vx, vx + 4);
        const float y0 = *std::min_element(vy, vy + 4), y1 = *std::max_element(vy, vy + 4);
        cv.rect(x + static_cast<int>(x0 * scale), y + static_cast<int>(y0 * scale),
                x + static_cast<int>(x1 * scale) - 1, y + static_cast<int>(y1 * scale) - 1, c);
    }
}

static void write_to_vector(void* ctx, void* data, int size) {
    auto* out = static_cast<std::vector<std::uint8_t>*>(ctx);
    const auto* p = static_cast<const std::uint8_t*>(data);
    out->insert(out->end(), p, p + size);
}

std::vector<std::uint8_t> png(const Canvas& cv) {
    std::vector<std::uint8_t> out;
    stbi_write_png_to_func(write_to_vector, &out, cv.w, cv.h, 3, cv.px.data(), cv.w * 3);
    return out;
}

}  // namespace hb::canvas
