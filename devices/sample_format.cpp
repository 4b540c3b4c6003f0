#include "devices/sample_format.hpp"

#include <bit>
#include <cmath>
#include <cstring>

#include "dsp/errors.hpp"

namespace hb {
namespace {

static_assert(std::endian::native == std::endian::little || std::endian::native == std::endian::big);
constexpr bool kHostBig = std::endian::native == std::endian::big;

template <class U> U byteswap_if(U v, bool swap) {
    if (!swap) return v;
    U r = 0;
    for (std::size_t i = 0; i < sizeof(U); ++i) r = static_cast<U>((r << 8) | ((v >> (8 * i)) & 0xFF));
    return r;
}

// One component, read as its unsigned bit pattern, then reinterpreted and scaled.
template <class T> float load(const std::byte* p, bool swap) {
    using U = std::conditional_t<sizeof(T) == 1, std::uint8_t,
                                 std::conditional_t<sizeof(T) == 2, std::uint16_t,
                                                    std::conditional_t<sizeof(T) == 4, std::uint32_t, std::uint64_t>>>;
    U u;
    std::memcpy(&u, p, sizeof(U));
    u = byteswap_if(u, swap);
    const T v = std::bit_cast<T>(u);
    if constexpr (std::is_floating_point_v<T>) {
        return static_cast<float>(v);
    } else if constexpr (std::is_signed_v<T>) {
        constexpr double scale = 1.0 / static_cast<double>(std::uint64_t{1} << (8 * sizeof(T) - 1));
        return static_cast<float>(static_cast<double>(v) * scale);
    } else {
        constexpr double half = static_cast<double>(std::uint64_t{1} << (8 * sizeof(T) - 1));
        return static_cast<float>((static_cast<double>(v) - half) / half);
    }
}

template <class T>
void decode_as(bool complex, bool swap, const std::byte* in, std::size_t n, std::complex<float>* out) {
    constexpr std::size_t w = sizeof(T);
    if (complex) {
        for (std::size_t i = 0; i < n; ++i) out[i] = {load<T>(in + 2 * w * i, swap), load<T>(in + 2 * w * i + w, swap)};
    } else {
        for (std::size_t i = 0; i < n; ++i) out[i] = {load<T>(in + w * i, swap), 0.0f};
    }
}

}  // namespace

std::optional<SampleFormat> parse_datatype(std::string_view t) {
    // (r/c) ((f32/f64/i32/i16/u32/u16)(_le/_be) / i8 / u8): lower case only, nothing after.
    if (t.size() < 3) return std::nullopt;
    SampleFormat f;
    if (t[0] == 'c') f.complex = true;
    else if (t[0] == 'r') f.complex = false;
    else return std::nullopt;
    t.remove_prefix(1);
    if (t == "i8" || t == "u8") {
        f.kind = t[0] == 'i' ? SampleFormat::Kind::signed_int : SampleFormat::Kind::unsigned_int;
        f.bits = 8;
        return f;
    }
    if (t.size() != 6) return std::nullopt;
    const std::string_view body = t.substr(0, 3), end = t.substr(3);
    if (body == "f32") f.kind = SampleFormat::Kind::floating, f.bits = 32;
    else if (body == "f64") f.kind = SampleFormat::Kind::floating, f.bits = 64;
    else if (body == "i32") f.kind = SampleFormat::Kind::signed_int, f.bits = 32;
    else if (body == "i16") f.kind = SampleFormat::Kind::signed_int, f.bits = 16;
    else if (body == "u32") f.kind = SampleFormat::Kind::unsigned_int, f.bits = 32;
    else if (body == "u16") f.kind = SampleFormat::Kind::unsigned_int, f.bits = 16;
    else return std::nullopt;
    if (end == "_le") f.big_endian = false;
    else if (end == "_be") f.big_endian = true;
    else return std::nullopt;
    return f;
}

SampleFormat require_datatype(std::string_view text, const std::string& where) {
    if (auto f = parse_datatype(text)) return *f;
    throw InputError(where + ": got \"" + std::string(text) +
                     "\", expected a SigMF datatype: c or r, then f32/f64/i32/i16/u32/u16 with _le or _be, "
                     "or i8/u8 (e.g. cf32_le, ci16_le, cu8)");
}

std::string datatype_name(const SampleFormat& f) {
    std::string s(1, f.complex ? 'c' : 'r');
    s += f.kind == SampleFormat::Kind::floating ? 'f' : f.kind == SampleFormat::Kind::signed_int ? 'i' : 'u';
    s += std::to_string(f.bits);
    if (f.bits > 8) s += f.big_endian ? "_be" : "_le";
    return s;
}

void decode_samples(const SampleFormat& f, const std::byte* in, std::size_t n, std::complex<float>* out) {
    const bool swap = f.bits > 8 && f.big_endian != kHostBig;
    using K = SampleFormat::Kind;
    if (f.kind == K::floating && f.bits == 32 && f.complex && !swap) {
        std::memcpy(static_cast<void*>(out), in, n * sizeof(std::complex<float>));  // the native layout
        return;
    }
    switch (f.kind) {
        case K::floating:
            if (f.bits == 32) decode_as<float>(f.complex, swap, in, n, out);
            else decode_as<double>(f.complex, swap, in, n, out);
            return;
        case K::signed_int:
            if (f.bits == 8) decode_as<std::int8_t>(f.complex, swap, in, n, out);
            else if (f.bits == 16) decode_as<std::int16_t>(f.complex, swap, in, n, out);
            else decode_as<std::int32_t>(f.complex, swap, in, n, out);
            return;
        case K::unsigned_int:
            if (f.bits == 8) decode_as<std::uint8_t>(f.complex, swap, in, n, out);
            else if (f.bits == 16) decode_as<std::uint16_t>(f.complex, swap, in, n, out);
            else decode_as<std::uint32_t>(f.complex, swap, in, n, out);
            return;
    }
}

bool can_encode(const SampleFormat& f) {
    return f.complex && !f.big_endian &&
           ((f.kind == SampleFormat::Kind::floating && f.bits == 32) ||
            (f.kind == SampleFormat::Kind::signed_int && f.bits == 16));
}

std::size_t encode_samples(const SampleFormat& f, const std::complex<float>* in, std::size_t n, std::byte* out) {
    static_assert(!kHostBig, "the writers assume a little-endian host");
    if (f.kind == SampleFormat::Kind::floating) {
        std::memcpy(out, static_cast<const void*>(in), n * sizeof(std::complex<float>));
        return 0;
    }
    std::size_t clipped = 0;
    auto q = [&clipped](float x) -> std::int16_t {
        const float s = std::nearbyint(x * 32767.0f);
        if (s > 32767.0f) return ++clipped, 32767;
        if (s < -32767.0f) return ++clipped, -32767;  // symmetric: -32768 would be beyond full scale
        if (s != s) return ++clipped, 0;               // NaN
        return static_cast<std::int16_t>(s);
    };
    for (std::size_t i = 0; i < n; ++i) {
        const std::int16_t iq[2] = {q(in[i].real()), q(in[i].imag())};
        std::memcpy(out + 4 * i, iq, 4);
    }
    return clipped;
}

}  // namespace hb
