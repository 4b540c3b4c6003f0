// Mixer products and spurious responses (dsp/products): labels, the image and half-IF responses for both
// injection sides, the full (m, n) list of a worked example, and a brute-force scan on random plans.
#include "dsp/products.hpp"

#include <gtest/gtest.h>

#include <algorithm>
#include <cmath>
#include <random>
#include <set>
#include <utility>

#include "dsp/errors.hpp"

namespace hb {
namespace {

constexpr double MHz = 1e6;

ResponseQuery vhf_query(double lo_hz) {
    ResponseQuery q;
    q.lo_hz = lo_hz;
    q.max_order = 7;
    q.if_band = {10.7 * MHz, 200e3};
    q.wanted_rf_hz = 100.0 * MHz;
    q.rf_low_hz = 88 * MHz;
    q.rf_high_hz = 108 * MHz;
    return q;
}

const Response* find_kind(const std::vector<Response>& rs, ProductKind k) {
    for (const Response& r : rs)
        if (r.kind == k) return &r;
    return nullptr;
}

TEST(Products, TradeLabels) {
    // The trade's notation, written the way round that is positive.
    EXPECT_EQ(mix_expression(0, 1, 100), "RF");
    EXPECT_EQ(mix_expression(1, 0, 110), "LO");
    EXPECT_EQ(mix_expression(2, 0, 220), "2LO");
    EXPECT_EQ(mix_expression(1, -1, 10.7), "LO-RF");
    EXPECT_EQ(mix_expression(1, -1, -10.7), "RF-LO");
    EXPECT_EQ(mix_expression(2, -1, 121.4), "2LO-RF");
    EXPECT_EQ(mix_expression(1, -3, -189.3), "3RF-LO");
    EXPECT_EQ(mix_expression(1, 1, 210.7), "LO+RF");
    EXPECT_EQ(mix_expression(3, 2, 532.1), "3LO+2RF");
    EXPECT_EQ(mix_expression(0, 3, 300), "3RF");
}

TEST(Products, WantedConversionSide) {
    const Band ifb{10.7 * MHz, 200e3};
    EXPECT_EQ(wanted_conversion(110.7 * MHz, 100 * MHz, ifb), -1);  // high side: LO − RF
    EXPECT_EQ(wanted_conversion(89.3 * MHz, 100 * MHz, ifb), -1);   // low side: RF − LO
    EXPECT_EQ(wanted_conversion(6.7 * MHz, 4 * MHz, ifb), 1);       // up-conversion: LO + RF
    EXPECT_EQ(wanted_conversion(120 * MHz, 100 * MHz, ifb), 0);     // lands at 20 MHz: not converted
}

TEST(Products, EveryPairOnceWithoutMirrors) {
    ProductQuery q;
    q.lo_hz = 110.7 * MHz;
    q.rf_hz = 100 * MHz;
    q.if_band = {10.7 * MHz, 200e3};
    q.wanted_n = -1;
    for (int order : {1, 2, 7, 15, 31}) {
        q.max_order = order;
        const auto ps = enumerate_products(q);
        // m = 0: n = 1..N (the n < 0 mirrors dropped); m >= 1: n = −(N−m)..(N−m). N + Σ(2(N−m)+1) = N + N².
        EXPECT_EQ(ps.size(), static_cast<std::size_t>(order + order * order)) << "order " << order;
        std::set<std::pair<int, int>> seen;
        for (const Product& p : ps) {
            EXPECT_TRUE(seen.insert({p.m, p.n}).second) << "duplicate (" << p.m << ", " << p.n << ")";
            EXPECT_GE(p.m, 0);
            EXPECT_FALSE(p.m == 0 && p.n <= 0) << "mirror or DC product listed";
            EXPECT_EQ(p.order, p.m + std::abs(p.n));
            EXPECT_LE(p.order, order);
            EXPECT_DOUBLE_EQ(p.signed_hz, p.m * q.lo_hz + p.n * q.rf_hz);
            EXPECT_DOUBLE_EQ(p.freq_hz, std::abs(p.signed_hz));
        }
        EXPECT_TRUE(std::is_sorted(ps.begin(), ps.end(),
                                   [](const Product& a, const Product& b) { return a.freq_hz < b.freq_hz; }));
    }
}

TEST(Products, KindsAndPlacement) {
    // Ideal multiplier: cos a · cos b = ½cos(a − b) + ½cos(a + b) (reference-values M1, derivable): the
    // wanted difference and the sum are the (1, ∓1) lines.
    ProductQuery q;
    q.lo_hz = 110.7 * MHz;
    q.rf_hz = 100 * MHz;
    q.max_order = 4;
    q.if_band = {10.7 * MHz, 200e3};
    q.window = Band{10.7 * MHz, 30 * MHz};  // 0 to 25.7 MHz (|f| for a real IF)
    q.wanted_n = -1;
    const auto ps = enumerate_products(q);
    auto get = [&](int m, int n) {
        for (const Product& p : ps)
            if (p.m == m && p.n == n) return p;
        ADD_FAILURE() << "no product (" << m << ", " << n << ")";
        return Product{};
    };
    const Product wanted = get(1, -1);
    EXPECT_EQ(wanted.kind, ProductKind::wanted);
    EXPECT_EQ(wanted.label, "wanted");
    EXPECT_EQ(wanted.expr, "LO-RF");
    EXPECT_NEAR(wanted.freq_hz, 10.7 * MHz, 1e-6);
    EXPECT_EQ(wanted.where, Placement::if_band);
    EXPECT_NEAR(get(1, 1).freq_hz, 210.7 * MHz, 1e-6);
    EXPECT_EQ(get(1, 1).label, "LO+RF");
    EXPECT_EQ(get(1, 0).kind, ProductKind::lo_feedthrough);
    EXPECT_EQ(get(2, 0).label, "2LO");
    EXPECT_EQ(get(0, 1).kind, ProductKind::rf_feedthrough);
    EXPECT_EQ(get(0, 1).label, "RF");
    // 2LO − 2RF = 21.4 MHz: outside the IF passband, inside the analysis window.
    EXPECT_NEAR(get(2, -2).freq_hz, 21.4 * MHz, 1e-6);
    EXPECT_EQ(get(2, -2).where, Placement::window);
    EXPECT_EQ(get(1, -2).expr, "2RF-LO");  // 110.7 − 200 = −89.3 MHz
    EXPECT_NEAR(get(1, -2).signed_hz, -89.3 * MHz, 1e-6);
    EXPECT_EQ(get(1, -2).where, Placement::outside);
}

// reference-values M3: f_RF 100.0 MHz, IF 10.7 MHz: high-side LO 110.7 → image 121.4 (f_RF + 2 IF);
// low-side LO 89.3 → image 78.6 (f_RF − 2 IF). Derivable.
TEST(Responses, ImageHighAndLowSide) {
    const auto high = spurious_responses(vhf_query(110.7 * MHz));
    const Response* img = find_kind(high, ProductKind::image);
    ASSERT_TRUE(img);
    EXPECT_EQ(img->label, "image");
    EXPECT_NEAR(img->rf_hz, 121.4 * MHz, 1e-3);
    EXPECT_EQ(img->expr, "RF-LO");
    EXPECT_LT(img->if_signed_hz, 0);  // the far side of a complex IF
    EXPECT_FALSE(img->in_rf_band);
    const Response* w = find_kind(high, ProductKind::wanted);
    ASSERT_TRUE(w);
    EXPECT_NEAR(w->rf_hz, 100 * MHz, 1e-3);
    EXPECT_GT(w->if_signed_hz, 0);

    const auto low = spurious_responses(vhf_query(89.3 * MHz));
    img = find_kind(low, ProductKind::image);
    ASSERT_TRUE(img);
    EXPECT_NEAR(img->rf_hz, 78.6 * MHz, 1e-3);
    EXPECT_EQ(img->expr, "LO-RF");
    w = find_kind(low, ProductKind::wanted);
    ASSERT_TRUE(w);
    EXPECT_NEAR(w->rf_hz, 100 * MHz, 1e-3);
    // Low side: the wanted and its image sit on opposite sides of a complex IF, as on the high side.
    EXPECT_LT(w->if_signed_hz * img->if_signed_hz, 0);
    // A 200 kHz IF maps back to a 200 kHz RF band for a first-order response.
    EXPECT_NEAR(img->rf_high_hz - img->rf_low_hz, 200e3, 1e-3);
}

// reference-values M4: the half-IF (2x2) response at 105.35 MHz (high side, f_RF + IF/2) and 94.65 MHz
// (low side, f_RF − IF/2), with |2·LO − 2·f| = 10.700 MHz. Derivable.
TEST(Responses, HalfIfHighAndLowSide) {
    for (auto [lo, expect] : {std::pair{110.7 * MHz, 105.35 * MHz}, std::pair{89.3 * MHz, 94.65 * MHz}}) {
        const auto rs = spurious_responses(vhf_query(lo));
        const Response* h = find_kind(rs, ProductKind::half_if);
        ASSERT_TRUE(h);
        EXPECT_EQ(h->label, "half-IF");
        EXPECT_EQ(h->m, 2);
        EXPECT_EQ(std::abs(h->n), 2);
        EXPECT_NEAR(h->rf_hz, expect, 1e-3);
        EXPECT_NEAR(std::abs(2 * lo - 2 * h->rf_hz), 10.7 * MHz, 1e-3);
        EXPECT_TRUE(h->in_rf_band);
        // The IF passband (200 kHz) maps back through |n| = 2 to 100 kHz of RF.
        EXPECT_NEAR(h->rf_high_hz - h->rf_low_hz, 100e3, 1e-3);
        // Exactly one response named half-IF; the other 2x2 band (the far side of the LO) keeps its expression.
        EXPECT_EQ(std::count_if(rs.begin(), rs.end(), [](const Response& r) { return r.kind == ProductKind::half_if; }),
                  1);
        const Response* f = find_kind(rs, ProductKind::if_feedthrough);
        ASSERT_TRUE(f);
        EXPECT_EQ(f->label, "IF");
        EXPECT_EQ(f->m, 0);
        EXPECT_EQ(f->n, 1);
        EXPECT_NEAR(f->rf_hz, 10.7 * MHz, 1e-6);
    }
}

// reference-values M5: all inputs with |m·LO − n·f| = IF for m, n <= 3, LO 110.7 MHz, IF 10.7 MHz
// (brute-force loop, exact to 1e-9). M5 lists the (0, 1) IF feedthrough and m >= 1; the (0, 2) and (0, 3)
// RF harmonics at IF/2 and IF/3 are responses too (derivable) and are checked separately.
TEST(Responses, FullListOfWorkedExample) {
    ResponseQuery q;
    q.lo_hz = 110.7 * MHz;
    q.max_order = 6;                // m <= 3 and |n| <= 3 reach order 6; filtered below
    q.if_band = {10.7 * MHz, 1.0};  // a 1 Hz IF: the centres are what M5 lists
    q.wanted_rf_hz = 100 * MHz;
    q.rf_low_hz = q.rf_high_hz = 100 * MHz;
    std::vector<Response> rs = spurious_responses(q);
    rs.erase(std::remove_if(rs.begin(), rs.end(), [](const Response& r) { return r.m > 3 || std::abs(r.n) > 3; }),
             rs.end());

    struct Row {
        int m, n;
        double table_mhz;  // as printed in M5 (3 decimals)
        double exact_mhz;  // the same response as an exact expression
    };
    const std::vector<Row> m5 = {
        {0, 1, 10.7, 10.7},         {1, 3, 33.333, 100.0 / 3}, {1, 3, 40.467, 121.4 / 3}, {1, 2, 50.0, 50.0},
        {1, 2, 60.7, 60.7},         {2, 3, 70.233, 210.7 / 3}, {2, 3, 77.367, 232.1 / 3}, {1, 1, 100.0, 100.0},
        {1, 1, 121.4, 121.4},       {2, 2, 105.35, 105.35},    {2, 2, 116.05, 116.05},    {3, 3, 107.133, 321.4 / 3},
        {3, 3, 114.267, 342.8 / 3}, {3, 2, 160.7, 160.7},      {3, 2, 171.4, 171.4},      {2, 1, 210.7, 210.7},
        {2, 1, 232.1, 232.1},       {3, 1, 321.4, 321.4},      {3, 1, 342.8, 342.8},
    };
    const std::vector<Row> extra = {{0, 2, 5.35, 5.35}, {0, 3, 3.567, 10.7 / 3}};
    ASSERT_EQ(rs.size(), m5.size() + extra.size());

    std::vector<bool> used(rs.size(), false);
    for (const auto& list : {m5, extra}) {
        for (const Row& row : list) {
            bool found = false;
            for (std::size_t i = 0; i < rs.size() && !found; ++i) {
                const Response& r = rs[i];
                if (used[i] || r.m != row.m || std::abs(r.n) != row.n) continue;
                if (std::abs(r.rf_hz - row.exact_mhz * MHz) > 1e-9 * r.rf_hz) continue;
                used[i] = found = true;
                EXPECT_NEAR(r.rf_hz / MHz, row.table_mhz, 0.0005) << "printed value";
                // The defining relation, to 1e-9 relative.
                EXPECT_NEAR(std::abs(r.m * q.lo_hz + r.n * r.rf_hz), 10.7 * MHz, 1e-9 * 10.7 * MHz);
            }
            EXPECT_TRUE(found) << "(" << row.m << ", " << row.n << ") at " << row.table_mhz << " MHz not reported";
        }
    }
    EXPECT_TRUE(std::all_of(used.begin(), used.end(), [](bool b) { return b; })) << "an unexpected response";
}

// Brute force: on random plans, scan f on a fine grid and test |m·f_LO ± n·f| against the IF passband
// straight from the definition. Every hit must lie in a reported band of the same (m, |n|), and every
// reported band must hold at least one hit.
TEST(Responses, BruteForceScanOnRandomPlans) {
    std::mt19937_64 rng(20240611);
    std::uniform_real_distribution<double> u01(0.0, 1.0);
    for (int plan = 0; plan < 100; ++plan) {
        const double if_hz = 1e6 * (1 + 49 * u01(rng));
        const double bw = if_hz * (0.02 + 0.5 * u01(rng));
        // LO from a fifth of the IF to 20 IFs (low LOs give sum conversions and LO harmonics in the IF band).
        double lo = if_hz * (0.2 + 19.8 * u01(rng));
        if (std::abs(lo - if_hz) <= bw / 2) lo += bw;          // keep the LO itself out of the passband
        const int order = 2 + static_cast<int>(u01(rng) * 6);  // 2..7
        ResponseQuery q;
        q.lo_hz = lo;
        q.max_order = order;
        q.if_band = {if_hz, bw};
        q.wanted_rf_hz = lo + if_hz;
        q.rf_low_hz = q.rf_high_hz = q.wanted_rf_hz;
        const auto rs = spurious_responses(q);
        ASSERT_FALSE(rs.empty());

        const double a = if_hz - bw / 2, b = if_hz + bw / 2;
        const double f_max = (order * lo + b) * 1.05;
        const double step = bw / (8.0 * order);  // at least 8 points across the narrowest band (B/N)
        const double tol = 1e-9 * f_max;
        std::vector<int> hits(rs.size(), 0);
        long total = 0;
        for (double f = step / 2; f < f_max; f += step) {
            for (int m = 0; m <= order; ++m)
                for (int k = 1; m + k <= order; ++k) {
                    const double d = std::abs(m * lo - k * f), s = m * lo + k * f;
                    const bool hit = (d >= a && d <= b) || (s >= a && s <= b);
                    if (!hit) continue;
                    ++total;
                    bool covered = false;
                    for (std::size_t i = 0; i < rs.size(); ++i) {
                        const Response& r = rs[i];
                        if (r.m == m && std::abs(r.n) == k && f >= r.rf_low_hz - tol && f <= r.rf_high_hz + tol) {
                            covered = true;
                            ++hits[i];
                        }
                    }
                    ASSERT_TRUE(covered) << "plan " << plan << ": f = " << f << " Hz hits (" << m << ", " << k
                                         << ") but no reported band holds it (LO " << lo << ", IF " << if_hz << ", B "
                                         << bw << ")";
                }
        }
        EXPECT_GT(total, 0);
        for (std::size_t i = 0; i < rs.size(); ++i) {
            const Response& r = rs[i];
            EXPECT_GT(hits[i], 0) << "plan " << plan << ": reported band (" << r.m << ", " << r.n << ") " << r.rf_low_hz
                                  << " to " << r.rf_high_hz << " Hz holds no hit";
            // The reported centre lands on the IF centre, on the side it says.
            EXPECT_NEAR(r.m * lo + r.n * r.rf_hz, r.if_signed_hz, 1e-9 * f_max);
            EXPECT_NEAR(std::abs(r.if_signed_hz), if_hz, 1e-9 * if_hz);
        }
    }
}

TEST(Responses, LoHarmonicInsidePassbandGivesBandFromZero) {
    // 2·LO = 10.7 MHz sits in the IF passband: inputs near 0 Hz reach the IF through (2, ±k).
    ResponseQuery q;
    q.lo_hz = 5.35 * MHz;
    q.max_order = 3;
    q.if_band = {10.7 * MHz, 200e3};
    q.wanted_rf_hz = 16.05 * MHz;  // high side: LO would be 26.75 MHz; here any positive wanted will do
    q.rf_low_hz = q.rf_high_hz = q.wanted_rf_hz;
    const auto rs = spurious_responses(q);
    int from_zero = 0;
    for (const Response& r : rs)
        if (r.m == 2 && r.rf_low_hz == 0.0) {
            ++from_zero;
            // |2·LO ± f| stays within ±100 kHz of 10.7 MHz for f up to 100 kHz (|n| = 1).
            EXPECT_NEAR(r.rf_high_hz, 100e3, 1e-3);
        }
    EXPECT_EQ(from_zero, 1);
}

TEST(Products, BadInputIsRefused) {
    ProductQuery q;
    q.lo_hz = 0;
    q.rf_hz = 100 * MHz;
    q.if_band = {10.7 * MHz, 200e3};
    EXPECT_THROW(enumerate_products(q), InputError);
    q.lo_hz = 110.7 * MHz;
    q.if_band = {10.7 * MHz, 30 * MHz};  // passband would reach below 0 Hz
    EXPECT_THROW(enumerate_products(q), InputError);
    q.if_band = {10.7 * MHz, 200e3};
    q.max_order = 0;
    EXPECT_THROW(enumerate_products(q), InputError);
    ResponseQuery r = vhf_query(-1.0);
    EXPECT_THROW(spurious_responses(r), InputError);
    r = vhf_query(110.7 * MHz);
    r.if_band.width_hz = std::nan("");
    EXPECT_THROW(spurious_responses(r), InputError);
}

}  // namespace
}  // namespace hb
