// UTF-8 well-formedness (RFC 3629; the Unicode standard's table of well-formed byte sequences): for text that
// must be UTF-8 (TOML documents, JSON, HTML) but comes from files made by others.
#pragma once

#include <cstddef>
#include <optional>
#include <string_view>

namespace hb {

// The length (1 to 4) of the well-formed sequence starting at text[i], or 0 when the bytes there are not UTF-8
// (a stray continuation byte, an overlong form, a surrogate, a value above U+10FFFF, or a cut-off sequence).
inline std::size_t utf8_sequence_length(std::string_view t, std::size_t i) {
    const auto b = [&](std::size_t k) { return static_cast<unsigned char>(t[k]); };
    const unsigned char c = b(i);
    if (c < 0x80) return 1;
    std::size_t n = 0;
    unsigned char lo = 0x80, hi = 0xbf;  // the allowed range of the second byte
    if (c >= 0xc2 && c <= 0xdf) {
        n = 2;
    } else if (c >= 0xe0 && c <= 0xef) {
        n = 3;
        if (c == 0xe0) lo = 0xa0;
        if (c == 0xed) hi = 0x9f;
    } else if (c >= 0xf0 && c <= 0xf4) {
        n = 4;
        if (c == 0xf0) lo = 0x90;
        if (c == 0xf4) hi = 0x8f;
    } else {
        return 0;
    }
    if (i + n > t.size() || b(i + 1) < lo || b(i + 1) > hi) return 0;
    for (std::size_t k = 2; k < n; ++k)
        if (b(i + k) < 0x80 || b(i + k) > 0xbf) return 0;
    return n;
}

// The offset of the first byte that is not part of well-formed UTF-8, or nothing when all of it is.
inline std::optional<std::size_t> first_invalid_utf8(std::string_view t) {
    for (std::size_t i = 0; i < t.size();) {
        const std::size_t n = utf8_sequence_length(t, i);
        if (n == 0) return i;
        i += n;
    }
    return std::nullopt;
}

}  // namespace hb
