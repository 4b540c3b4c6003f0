// Mixer products and spurious responses: the one enumeration the markers, the emulation, the measurement
// and the reports all use (design.md §2).
//
// A mixer driven by an LO at f_LO and an RF input at f_RF puts out lines at m·f_LO + n·f_RF for integers
// m >= 0 and n (signed). A real mixer output shows |m·f_LO + n·f_RF|; a quadrature (IQ) mixer keeps the sign,
// so every product carries its signed frequency too (the line sits at signed_hz when LO harmonic m is taken
// as e^{+j2π m f_LO t} and the RF component as e^{+j2π n f_RF t}). (m, n) and (0, −n) mirror each other
// on a real output, so m = 0 products are listed with n > 0 only. The order is m + |n|.
//
// Two views of the same (m, n) set:
//  - products: what one RF input turns into (where each line lands: IF passband, analysis window, outside);
//  - spurious responses: which RF inputs reach the IF passband through some (m, n). A response is a band,
//    not a point: the IF passband mapped back through (m, n) is B/|n| wide.
#pragma once

#include <algorithm>
#include <cmath>
#include <limits>
#include <optional>
#include <string>
#include <string_view>
#include <vector>

namespace hb {

// A pass band on the frequency axis: the IF passband or an analysis window. Edges are inclusive.
struct Band {
    double center_hz = 0.0;
    double width_hz = 0.0;
    double low_hz() const { return center_hz - width_hz / 2; }
    double high_hz() const { return center_hz + width_hz / 2; }
    bool contains(double f_hz) const { return std::abs(f_hz - center_hz) <= width_hz / 2; }
};

enum class ProductKind {
    wanted,          // the (1, ±1) conversion of the wanted signal
    image,           // the other (1, ±1) response: the RF mirrored about the LO
    half_if,         // the (2, ±2) response midway between the wanted and the LO (f_RF ± IF/2)
    if_feedthrough,  // the (0, 1) response: an RF signal at the IF itself
    lo_feedthrough,  // an LO harmonic on its own (m >= 1, n = 0)
    rf_feedthrough,  // the RF input on its own (0, 1) at the output
    spur,            // every other (m, n)
};

// Where an output line lands. The IF passband wins over the analysis window.
enum class Placement { if_band, window, outside };

inline constexpr double kUnknownDbc = std::numeric_limits<double>::quiet_NaN();

// One output line of one RF input.
struct Product {
    int m = 0;          // LO harmonic, >= 0
    int n = 0;          // RF order, signed
    int order = 0;      // m + |n|
    std::string label;  // trade label: "wanted" for the wanted conversion, else expr
    std::string expr;   // ASCII expression of the line: "RF", "2LO", "LO-RF", "3RF-LO", "LO+RF"
    ProductKind kind = ProductKind::spur;
    double freq_hz = 0.0;    // |m·f_LO + n·f_RF|: where a real mixer puts it
    double signed_hz = 0.0;  // m·f_LO + n·f_RF: where a complex (IQ) mixer puts it
    Placement where = Placement::outside;
    double predicted_dbc = kUnknownDbc;  // level relative to the wanted output; NaN where no model says
};

// One RF band that reaches the IF passband through (m, n).
struct Response {
    int m = 0;          // LO harmonic, >= 0
    int n = 0;          // RF order, signed so that m·f_LO + n·rf_hz = if_signed_hz
    int order = 0;      // m + |n|
    std::string label;  // "wanted", "image", "half-IF", "IF", else expr
    std::string expr;   // the line with the response frequency as RF, e.g. "2LO-2RF", "RF-LO"
    ProductKind kind = ProductKind::spur;
    double rf_hz = 0.0;      // RF input that lands on the IF centre
    double rf_low_hz = 0.0;  // RF band that lands inside the IF passband (width B/|n|; clipped at 0 Hz)
    double rf_high_hz = 0.0;
    double if_signed_hz = 0.0;           // m·f_LO + n·rf_hz: +IF or −IF (which side of a complex IF)
    bool in_rf_band = false;             // the response band overlaps the receiver's RF band
    double predicted_dbc = kUnknownDbc;  // output relative to the wanted for an input as strong as the wanted
};

std::string_view to_string(ProductKind);
std::string_view to_string(Placement);

// The ASCII expression of m·LO + n·RF, written the way round that is positive:
// (1,-1) "LO-RF" or "RF-LO", (2,0) "2LO", (0,1) "RF", (1,1) "LO+RF", (1,-3) "3RF-LO".
std::string mix_expression(int m, int n, double signed_hz);

// Which first-order conversion (1, n) carries rf_hz into the IF passband: −1 (difference, |LO − RF|),
// +1 (sum, LO + RF) or 0 (neither; when both, the one nearer the IF centre).
int wanted_conversion(double lo_hz, double rf_hz, const Band& if_band);

struct ProductQuery {
    double lo_hz = 0.0;
    double rf_hz = 0.0;
    int max_order = 7;  // m + |n| <= max_order
    Band if_band;
    std::optional<Band> window;  // the analysis window (IF centre ± output rate / 2), if there is one
    int wanted_n = 0;            // ±1: (1, wanted_n) is the wanted conversion; 0: this input is not the wanted
};

// Every product of one RF input, sorted by freq_hz (then order). Throws InputError on bad numbers.
std::vector<Product> enumerate_products(const ProductQuery& q);

struct ResponseQuery {
    double lo_hz = 0.0;
    int max_order = 7;
    Band if_band;
    double wanted_rf_hz = 0.0;  // names the wanted, the image and the half-IF responses
    double rf_low_hz = 0.0;     // the receiver's RF band, for in_rf_band
    double rf_high_hz = 0.0;
};

// Every spurious response, sorted by rf_hz (then order). For each m >= 0 and k = |n| >= 1 with m + k <=
// max_order there are at most two bands: |m·f_LO − k·f| = IF' with the output on the +IF side (f near
// |m·f_LO − IF|/k) and m·f_LO − k·f = −IF' (f near (m·f_LO + IF)/k), IF' across the passband; for m = 0
// only the first. Throws InputError on bad numbers (LO <= 0, IF passband containing 0 Hz).
std::vector<Response> spurious_responses(const ResponseQuery& q);

// The raw geometry without labels or allocation, for loops over many channels: calls
// fn(m, n, rf_hz, rf_low_hz, rf_high_hz, if_signed_hz) for every response band.
template <class Fn>
void for_each_response_band(double lo_hz, const Band& if_band, int max_order, Fn&& fn) {
    const double a = if_band.low_hz(), b = if_band.high_hz(), c = if_band.center_hz;
    for (int m = 0; m <= max_order; ++m) {
        const double mlo = m * lo_hz;
        for (int k = 1; m + k <= max_order; ++k) {
            // +IF side: |m·f_LO − k·f| = IF'. Below the passband n = −k (m·LO − k·f = IF'); above it
            // n = +k (m·LO + k·f = IF'); when m·LO sits inside the passband both halves start at 0 Hz.
            double lo, hi;
            if (mlo > b) {
                lo = (mlo - b) / k;
                hi = (mlo - a) / k;
            } else if (mlo < a) {
                lo = (a - mlo) / k;
                hi = (b - mlo) / k;
            } else {
                lo = 0.0;
                hi = std::max(mlo - a, b - mlo) / k;
            }
            const int n_plus = mlo >= c ? -k : k;
            fn(m, n_plus, std::abs(mlo - c) / k, lo, hi, c);
            // −IF side: k·f − m·LO = IF' (m >= 1; for m = 0 it is the mirror of the one above).
            if (m >= 1) fn(m, -k, (mlo + c) / k, (mlo + a) / k, (mlo + b) / k, -c);
        }
    }
}

}  // namespace hb
