// Sample formats of recordings, named by the SigMF datatype grammar (SigMF v1.2.5, "Dataset format"):
//     (r/c)((f32/f64/i32/i16/u32/u16)(_le/_be) / i8 / u8)
// e.g. cf32_le, ci16_le, cu8, ri8, cf64_be. The same names describe raw files.
//
// Scaling to complex float (0 dBFS = |z| = 1): floats as stored; signed integers divided by 2^(bits-1);
// unsigned integers offset by 2^(bits-1) first (so 128 is zero for u8). A real stream becomes complex
// with Q = 0.
#pragma once

#include <complex>
#include <cstddef>
#include <cstdint>
#include <optional>
#include <span>
#include <string>
#include <string_view>

namespace hb {

struct SampleFormat {
    enum class Kind { floating, signed_int, unsigned_int };
    bool complex = true;
    Kind kind = Kind::floating;
    int bits = 32;            // per component: 8, 16, 32 or 64
    bool big_endian = false;  // meaningless for 8-bit types

    std::size_t component_bytes() const { return static_cast<std::size_t>(bits / 8); }
    std::size_t sample_bytes() const { return component_bytes() * (complex ? 2 : 1); }
    friend bool operator==(const SampleFormat&, const SampleFormat&) = default;
};

// Parses a datatype by the grammar above; nothing for anything the grammar rejects (cf32, cu8_le,
// cf16_le, CF32_LE, ...).
std::optional<SampleFormat> parse_datatype(std::string_view text);

// Parses or throws hb::InputError "<where>: got "<text>", expected a SigMF datatype such as ...".
SampleFormat require_datatype(std::string_view text, const std::string& where);

// The canonical name ("cf32_le", "cu8").
std::string datatype_name(const SampleFormat& f);

// Converts n samples of format f from bytes (n * f.sample_bytes() of them) to complex float.
void decode_samples(const SampleFormat& f, const std::byte* in, std::size_t n, std::complex<float>* out);

// Converts complex float to cf32_le or ci16_le (the two formats hetbench writes). ci16 scales by 32767
// and saturates; the return value is the number of components that were clipped (0 for cf32_le).
std::size_t encode_samples(const SampleFormat& f, const std::complex<float>* in, std::size_t n, std::byte* out);

// True for the formats encode_samples can write.
bool can_encode(const SampleFormat& f);

}  // namespace hb
