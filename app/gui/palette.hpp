// The window's colours, packed as ImGui packs them (IM_COL32: 0xAABBGGRR), with no ImGui dependency so the
// window test can look for them in a screenshot.
//
// Our own palette: a dark green-grey "bench mat" ground, warm off-white text, a golden probe/selection colour,
// a mint spectrum trace, and one colour per product order for the markers (the wanted conversion is order 2).
#pragma once

#include <array>
#include <cstdint>

namespace hb::gui::palette {

constexpr std::uint32_t rgba(std::uint8_t r, std::uint8_t g, std::uint8_t b, std::uint8_t a = 255) {
    return (std::uint32_t(a) << 24) | (std::uint32_t(b) << 16) | (std::uint32_t(g) << 8) | std::uint32_t(r);
}
constexpr std::uint8_t red(std::uint32_t c) {
    return c & 0xFF;
}
constexpr std::uint8_t green(std::uint32_t c) {
    return (c >> 8) & 0xFF;
}
constexpr std::uint8_t blue(std::uint32_t c) {
    return (c >> 16) & 0xFF;
}
constexpr std::uint32_t with_alpha(std::uint32_t c, std::uint8_t a) {
    return (c & 0x00FFFFFFu) | (std::uint32_t(a) << 24);
}

inline constexpr std::uint32_t mat = rgba(22, 30, 28);      // window ground
inline constexpr std::uint32_t panel = rgba(28, 38, 35);    // panels and child areas
inline constexpr std::uint32_t plot_bg = rgba(11, 16, 15);  // inside plots
inline constexpr std::uint32_t grid = rgba(38, 54, 49);
inline constexpr std::uint32_t axis = rgba(92, 112, 104);
inline constexpr std::uint32_t text = rgba(230, 226, 214);
inline constexpr std::uint32_t text_dim = rgba(146, 158, 148);
inline constexpr std::uint32_t probe = rgba(255, 214, 64);      // the probe, the selected block, active widgets
inline constexpr std::uint32_t trace = rgba(120, 235, 190);     // the spectrum trace (max of each column)
inline constexpr std::uint32_t trace_band = rgba(52, 112, 92);  // min..max of each column
inline constexpr std::uint32_t trace_q = rgba(236, 150, 110);   // the scope's Q trace (I uses `trace`)
inline constexpr std::uint32_t limit = rgba(240, 84, 68);       // limit lines and ticks
inline constexpr std::uint32_t limit_lo = rgba(250, 150, 60);   // the LO-feedthrough limit
inline constexpr std::uint32_t block = rgba(33, 47, 43);
inline constexpr std::uint32_t block_hover = rgba(42, 60, 55);
inline constexpr std::uint32_t block_edge = rgba(88, 118, 108);
inline constexpr std::uint32_t wire = rgba(170, 186, 176);

inline constexpr std::uint32_t pass = rgba(104, 200, 120);
inline constexpr std::uint32_t fail = rgba(240, 84, 68);
inline constexpr std::uint32_t below_floor = rgba(120, 152, 196);
inline constexpr std::uint32_t not_observable = rgba(128, 128, 128);

// Marker colour by order m + |n|: index 1..7, and 8 for every order above 7.
inline constexpr std::array<std::uint32_t, 9> order = {
    rgba(128, 128, 128),  // (0: unused)
    rgba(238, 238, 238),  // 1: feedthroughs (LO, RF)
    rgba(255, 176, 56),   // 2: the wanted, the image, 2·LO, ...
    rgba(255, 104, 150),  // 3
    rgba(188, 128, 255),  // 4
    rgba(84, 170, 255),   // 5
    rgba(228, 110, 230),  // 6
    rgba(186, 206, 84),   // 7
    rgba(160, 160, 160),  // 8 and above
};
inline constexpr std::uint32_t order_colour(int ord) {
    return order[ord < 1 ? 0 : (ord > 8 ? 8 : ord)];
}

}  // namespace hb::gui::palette
