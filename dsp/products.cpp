#include "dsp/products.hpp"

#include <algorithm>
#include <cstdlib>

#include "dsp/errors.hpp"
#include "dsp/units.hpp"

namespace hb {
namespace {

std::string term(int k, const char* name) {
    return k == 1 ? std::string(name) : std::to_string(k) + name;
}

void check_frequency(const char* what, double v) {
    if (!std::isfinite(v) || v <= 0)
        throw InputError(std::string(what) + ": got " + format_number(v) + " Hz, expected a frequency above 0 Hz");
}

void check_if_band(const Band& b) {
    check_frequency("IF centre", b.center_hz);
    if (!std::isfinite(b.width_hz) || b.width_hz <= 0 || b.low_hz() <= 0)
        throw InputError("IF bandwidth: got " + format_number(b.width_hz) + " Hz around " + format_number(b.center_hz) +
                         " Hz, expected a width above 0 Hz that keeps the passband above 0 Hz");
}

void check_order(int max_order) {
    if (max_order < 1 || max_order > 63)
        throw InputError("max order: got " + std::to_string(max_order) + ", expected an integer from 1 to 63");
}

}  // namespace

std::string_view to_string(ProductKind k) {
    switch (k) {
        case ProductKind::wanted:
            return "wanted";
        case ProductKind::image:
            return "image";
        case ProductKind::half_if:
            return "half-IF";
        case ProductKind::if_feedthrough:
            return "IF-feedthrough";
        case ProductKind::lo_feedthrough:
            return "LO-feedthrough";
        case ProductKind::rf_feedthrough:
            return "RF-feedthrough";
        case ProductKind::spur:
            return "spur";
    }
    return "?";
}

std::string_view to_string(Placement p) {
    switch (p) {
        case Placement::if_band:
            return "IF-band";
        case Placement::window:
            return "window";
        case Placement::outside:
            return "outside";
    }
    return "?";
}

std::string mix_expression(int m, int n, double signed_hz) {
    const int k = std::abs(n);
    if (m == 0) return term(k, "RF");
    if (n == 0) return term(m, "LO");
    if (n > 0) return term(m, "LO") + "+" + term(k, "RF");
    return signed_hz < 0 ? term(k, "RF") + "-" + term(m, "LO") : term(m, "LO") + "-" + term(k, "RF");
}

int wanted_conversion(double lo_hz, double rf_hz, const Band& if_band) {
    const double diff = std::abs(lo_hz - rf_hz), sum = lo_hz + rf_hz;
    const bool d = if_band.contains(diff), s = if_band.contains(sum);
    if (d && s) return std::abs(diff - if_band.center_hz) <= std::abs(sum - if_band.center_hz) ? -1 : 1;
    return d ? -1 : (s ? 1 : 0);
}

std::vector<Product> enumerate_products(const ProductQuery& q) {
    check_frequency("LO frequency", q.lo_hz);
    check_frequency("RF frequency", q.rf_hz);
    check_if_band(q.if_band);
    check_order(q.max_order);
    std::vector<Product> out;
    out.reserve(static_cast<std::size_t>(q.max_order * (q.max_order + 1)));
    for (int m = 0; m <= q.max_order; ++m) {
        const int kmax = q.max_order - m;
        // m = 0: n > 0 only (n < 0 is the mirror of n > 0, n = 0 is DC).
        for (int n = (m == 0 ? 1 : -kmax); n <= kmax; ++n) {
            Product p;
            p.m = m;
            p.n = n;
            p.order = m + std::abs(n);
            p.signed_hz = m * q.lo_hz + n * q.rf_hz;
            p.freq_hz = std::abs(p.signed_hz);
            p.expr = mix_expression(m, n, p.signed_hz);
            p.label = p.expr;
            if (m == 1 && q.wanted_n != 0 && n == q.wanted_n) {
                p.kind = ProductKind::wanted;
                p.label = "wanted";
            } else if (n == 0) {
                p.kind = ProductKind::lo_feedthrough;
            } else if (m == 0 && n == 1) {
                p.kind = ProductKind::rf_feedthrough;
            }
            if (q.if_band.contains(p.freq_hz))
                p.where = Placement::if_band;
            else if (q.window && q.window->contains(p.freq_hz))
                p.where = Placement::window;
            out.push_back(std::move(p));
        }
    }
    std::stable_sort(out.begin(), out.end(), [](const Product& x, const Product& y) {
        return x.freq_hz != y.freq_hz ? x.freq_hz < y.freq_hz : x.order < y.order;
    });
    return out;
}

std::vector<Response> spurious_responses(const ResponseQuery& q) {
    check_frequency("LO frequency", q.lo_hz);
    check_frequency("wanted RF frequency", q.wanted_rf_hz);
    check_if_band(q.if_band);
    check_order(q.max_order);
    std::vector<Response> out;
    for_each_response_band(q.lo_hz, q.if_band, q.max_order,
                           [&](int m, int n, double rf, double lo, double hi, double if_signed) {
                               Response r;
                               r.m = m;
                               r.n = n;
                               r.order = m + std::abs(n);
                               r.rf_hz = rf;
                               r.rf_low_hz = lo;
                               r.rf_high_hz = hi;
                               r.if_signed_hz = if_signed;
                               r.expr = mix_expression(m, n, m * q.lo_hz + n * rf);
                               r.label = r.expr;
                               r.in_rf_band = hi >= q.rf_low_hz && lo <= q.rf_high_hz;
                               out.push_back(std::move(r));
                           });

    // Name the special responses. The wanted is the first-order band holding the wanted frequency; the image
    // is the other first-order band; the half-IF is the 2x2 band holding the midpoint of wanted and LO
    // (|2·LO − 2·(f_RF + f_LO)/2| = |f_LO − f_RF| = IF).
    auto holds = [](const Response& r, double f) { return f >= r.rf_low_hz && f <= r.rf_high_hz; };
    const Response* wanted = nullptr;
    for (Response& r : out)
        if (r.m == 1 && std::abs(r.n) == 1 && holds(r, q.wanted_rf_hz)) {
            r.kind = ProductKind::wanted;
            r.label = "wanted";
            wanted = &r;
            break;
        }
    const double half_if_hz = (q.wanted_rf_hz + q.lo_hz) / 2;
    for (Response& r : out) {
        if (&r == wanted) continue;
        if (r.m == 1 && std::abs(r.n) == 1 && wanted) {
            r.kind = ProductKind::image;
            r.label = "image";
        } else if (r.m == 2 && std::abs(r.n) == 2 && wanted && holds(r, half_if_hz)) {
            r.kind = ProductKind::half_if;
            r.label = "half-IF";
        } else if (r.m == 0 && r.n == 1) {
            r.kind = ProductKind::if_feedthrough;
            r.label = "IF";
        }
    }
    std::stable_sort(out.begin(), out.end(), [](const Response& x, const Response& y) {
        return x.rf_hz != y.rf_hz ? x.rf_hz < y.rf_hz : x.order < y.order;
    });
    return out;
}

}  // namespace hb
