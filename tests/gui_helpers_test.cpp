// The bench window's pure helpers and view model (no display needed): the per-pixel-column min/max reduction
// against a brute-force reference, the waterfall colour map's lightness, frequency entry with unit suffixes,
// the worked arithmetic of the marker tooltips, and the markers the plan puts at the RF and IF probes.
#include "gui/gui_helpers.hpp"

#include <gtest/gtest.h>

#include <cmath>
#include <limits>
#include <random>

#include "devices/session.hpp"
#include "dsp/units.hpp"
#include "gui/bench_view.hpp"

namespace hb::gui {
namespace {

// ---- column reduction ----------------------------------------------------------------------------------

// The reference: every bin k (covering [k, k + 1)) that overlaps a column's interval [a, b), plus the bin that
// holds a, checked one by one.
void brute_force(const std::vector<float>& v, double first, double last, int cols, std::vector<float>& mn,
                 std::vector<float>& mx) {
    mn.assign(static_cast<std::size_t>(cols), std::numeric_limits<float>::quiet_NaN());
    mx = mn;
    const double w = (last - first) / cols;
    for (int c = 0; c < cols; ++c) {
        const double a = first + c * w, b = a + w;
        for (std::size_t k = 0; k < v.size(); ++k) {
            const double kd = static_cast<double>(k);
            const bool overlaps = kd < b && kd + 1 > a;
            const bool holds_left_edge = kd == std::floor(a);
            if (!(overlaps || holds_left_edge) || std::isnan(v[k])) continue;
            auto& lo = mn[static_cast<std::size_t>(c)];
            auto& hi = mx[static_cast<std::size_t>(c)];
            if (std::isnan(lo) || v[k] < lo) lo = v[k];
            if (std::isnan(hi) || v[k] > hi) hi = v[k];
        }
    }
}

TEST(GuiColumns, MinMaxMatchesBruteForce) {
    std::mt19937 rng(7);
    std::normal_distribution<float> g(-100.0f, 10.0f);
    struct Case {
        std::size_t bins;
        double first, last;
        int cols;
    };
    const Case cases[] = {
        {4096, 0, 4096, 800},         // zoomed out: ~5 bins per column
        {65536, 0, 65536, 1000},      // 65,536 bins on a screen
        {1000, 0, 1000, 1000},        // one bin per column
        {100, 10.25, 30.75, 640},     // zoomed in: several columns per bin
        {4096, -300.5, 5000.2, 777},  // view wider than the data: columns outside get NaN
        {4096, 1234.4, 1240.9, 13},   // a narrow fractional view
    };
    for (const Case& c : cases) {
        std::vector<float> v(c.bins);
        for (float& x : v) x = g(rng);
        v[c.bins / 3] = std::numeric_limits<float>::quiet_NaN();  // a missing bin is skipped, not propagated
        std::vector<float> mn(static_cast<std::size_t>(c.cols)), mx(mn.size()), rmn, rmx;
        reduce_columns(v, c.first, c.last, mn, mx);
        brute_force(v, c.first, c.last, c.cols, rmn, rmx);
        for (int i = 0; i < c.cols; ++i) {
            const auto k = static_cast<std::size_t>(i);
            if (std::isnan(rmn[k])) {
                EXPECT_TRUE(std::isnan(mn[k])) << "bins " << c.bins << " column " << i;
                continue;
            }
            EXPECT_EQ(mn[k], rmn[k]) << "bins " << c.bins << " column " << i;
            EXPECT_EQ(mx[k], rmx[k]) << "bins " << c.bins << " column " << i;
        }
    }
}

TEST(GuiColumns, NarrowSpurSurvivesReduction) {
    // A one-bin spur in a 65,536-bin floor must reach the screen. Keeping every 82nd bin (decimating to 800
    // columns) would show it only if it happened to sit on a kept bin.
    std::vector<float> v(65536, -120.0f);
    v[40001] = -30.0f;
    std::vector<float> mn(800), mx(800);
    reduce_columns(v, 0, 65536, mn, mx);
    int hits = 0;
    for (std::size_t c = 0; c < mx.size(); ++c) hits += mx[c] == -30.0f;
    EXPECT_EQ(hits, 1);
    EXPECT_EQ(mx[static_cast<std::size_t>(40001 * 800 / 65536)], -30.0f);
    for (float x : mn) EXPECT_EQ(x, -120.0f);
}

TEST(GuiColumns, MaxGroupsMatchBruteForce) {
    std::mt19937 rng(3);
    std::uniform_real_distribution<float> u(-150.0f, 0.0f);
    for (std::size_t n : {4096u, 65536u, 1000u, 5000u}) {
        std::vector<float> v(n);
        for (float& x : v) x = u(rng);
        const std::size_t w = std::min<std::size_t>(n, 4096);
        std::vector<float> out(w);
        reduce_max_groups(v, out);
        std::vector<int> seen(n, 0);
        for (std::size_t c = 0; c < w; ++c) {
            float ref = -1e30f;
            for (std::size_t k = c * n / w; k < (c + 1) * n / w; ++k) {
                ref = std::max(ref, v[k]);
                ++seen[k];
            }
            EXPECT_EQ(out[c], ref) << n << " bins, group " << c;
        }
        for (std::size_t k = 0; k < n; ++k) ASSERT_EQ(seen[k], 1) << "bin " << k << " of " << n << " not in one group";
    }
}

// ---- colour map ------------------------------------------------------------------------------------------

// CIE 1976 L* of an 8-bit sRGB colour: the IEC 61966-2-1 transfer curve, Y from the sRGB (ITU-R BT.709) primaries
// with the D65 white, L* = 116·f(Y) − 16 with f(t) = t^(1/3) above (6/29)^3, else t/(3·(6/29)^2) + 4/29.
double cie_lightness(const Rgb8& c) {
    auto lin = [](int v) {
        const double x = v / 255.0;
        return x <= 0.04045 ? x / 12.92 : std::pow((x + 0.055) / 1.055, 2.4);
    };
    const double y = 0.2126 * lin(c.r) + 0.7152 * lin(c.g) + 0.0722 * lin(c.b);
    const double d = 6.0 / 29.0;
    const double f = y > d * d * d ? std::cbrt(y) : y / (3 * d * d) + 4.0 / 29.0;
    return 116 * f - 16;
}

TEST(GuiColourMap, LightnessRisesMonotonicallyAndEvenly) {
    const auto& lut = colormap_lut();
    std::vector<double> L;
    for (std::uint32_t p : lut)
        L.push_back(
            cie_lightness({std::uint8_t(p & 0xFF), std::uint8_t((p >> 8) & 0xFF), std::uint8_t((p >> 16) & 0xFF)}));
    EXPECT_LT(L.front(), 15.0) << "the quietest level should be dark";
    EXPECT_GT(L.back(), 90.0) << "the loudest level should be near white";
    for (std::size_t i = 1; i < L.size(); ++i) EXPECT_GE(L[i], L[i - 1] - 1e-9) << "lightness falls at entry " << i;
    for (std::size_t i = 4; i < L.size(); i += 4) EXPECT_GT(L[i], L[i - 4]) << "lightness flat around entry " << i;
    // Even steps: every sixteenth of the map adds a similar amount of lightness (within ±40 % of the mean).
    const double mean = (L.back() - L.front()) / 15.0;
    for (std::size_t i = 17; i < L.size(); i += 16) {
        const double step = L[i - 1] - L[i - 17];
        EXPECT_GT(step, 0.6 * mean) << "chunk ending at " << i;
        EXPECT_LT(step, 1.4 * mean) << "chunk ending at " << i;
    }
    // The alpha byte is opaque everywhere.
    for (std::uint32_t p : lut) EXPECT_EQ(p >> 24, 0xFFu);
}

TEST(GuiColourMap, OklabConversionMatchesPublishedValues) {
    // OKLab of sRGB white is (1, 0, 0) and of sRGB red (255, 0, 0) is (0.62796, 0.22486, 0.12585) (Ottosson 2020,
    // the table of the post introducing the space; from memory, to the 5 digits given).
    const Rgb8 w = oklab_to_srgb8(1.0, 0.0, 0.0);
    EXPECT_EQ(w.r, 255);
    EXPECT_EQ(w.g, 255);
    EXPECT_EQ(w.b, 255);
    const Rgb8 r = oklab_to_srgb8(0.62796, 0.22486, 0.12585);
    EXPECT_NEAR(r.r, 255, 1);
    EXPECT_NEAR(r.g, 0, 1);
    EXPECT_NEAR(r.b, 0, 1);
    const Rgb8 k = oklab_to_srgb8(0.0, 0.0, 0.0);
    EXPECT_EQ(k.r + k.g + k.b, 0);
}

// ---- frequency entry -------------------------------------------------------------------------------------

TEST(GuiEntry, FrequenciesWithUnitSuffixes) {
    EXPECT_DOUBLE_EQ(*parse_frequency_entry("98.3M"), 98.3e6);
    EXPECT_DOUBLE_EQ(*parse_frequency_entry("455k"), 455e3);
    EXPECT_DOUBLE_EQ(*parse_frequency_entry("10.7 MHz"), 10.7e6);
    EXPECT_DOUBLE_EQ(*parse_frequency_entry("  2.4e6 "), 2.4e6);
    EXPECT_DOUBLE_EQ(*parse_frequency_entry("1.2G"), 1.2e9);
    EXPECT_DOUBLE_EQ(*parse_frequency_entry("12.5 kHz"), 12.5e3);
    std::string err;
    EXPECT_FALSE(parse_frequency_entry("ninety", &err));
    EXPECT_NE(err.find("not a frequency"), std::string::npos) << err;
    EXPECT_FALSE(parse_frequency_entry("", &err));
    EXPECT_NE(err.find("type a frequency"), std::string::npos) << err;
    EXPECT_FALSE(parse_frequency_entry("-5k", &err));
    EXPECT_NE(err.find("below"), std::string::npos) << err;
    EXPECT_FALSE(parse_frequency_entry("2000G", &err));
    EXPECT_NE(err.find("above"), std::string::npos) << err;
    // What the window shows in a field reads back to the same value.
    for (double f : {455e3, 10.7e6, 98.3e6, 1.2345678e9, 12.5e3})
        EXPECT_DOUBLE_EQ(*parse_frequency_entry(format_frequency(f, 9)), f) << format_frequency(f, 9);
}

TEST(GuiEntry, NumbersCarryTheirUnits) {
    EXPECT_EQ(freq_text(1.455e6), "1.455 MHz");
    EXPECT_EQ(freq_text(455e3), "455 kHz");
    EXPECT_EQ(db_text(-52.34, "dBc"), "\u221252.3 dBc");
    EXPECT_EQ(db_text(-0.01, "dB"), "0.0 dB");  // no "−0.0"
    EXPECT_EQ(rate_text(2.4e6), "2.4 MS/s");
    EXPECT_EQ(time_text(12.5e-6), "12.5 \u00b5s");
}

TEST(GuiAxes, NiceTicks) {
    double step = 0;
    const auto t = nice_ticks(0.0, 1.0, 5, &step);
    EXPECT_DOUBLE_EQ(step, 0.2);
    ASSERT_EQ(t.size(), 6u);
    EXPECT_NEAR(t[3], 0.6, 1e-15);
    const auto f = nice_ticks(445e3, 465e3, 4, &step);
    EXPECT_DOUBLE_EQ(step, 5e3);
    EXPECT_DOUBLE_EQ(f.front(), 445e3);
    EXPECT_DOUBLE_EQ(f.back(), 465e3);
    EXPECT_EQ(decimals_for_step(5e3, 1e3), 0);
    EXPECT_EQ(decimals_for_step(0.2e6, 1e6), 1);
}

// ---- tooltips --------------------------------------------------------------------------------------------

TEST(GuiExplain, ProductArithmetic) {
    // 2·1.455 − 1 = 1.91 (by hand).
    EXPECT_EQ(explain_product(2, -1, 1.455e6, 1.0e6), "2\u00b7LO \u2212 RF = 2\u00d71.455 \u2212 1 = 1.91 MHz");
    // The difference written the way round that is positive: RF above the LO.
    EXPECT_EQ(explain_product(1, -1, 1.455e6, 1.91e6), "RF \u2212 LO = 1.91 \u2212 1.455 = 0.455 MHz");
    // A complex IF keeps the sign.
    EXPECT_EQ(explain_product(1, -1, 1.455e6, 1.0e6, true), "LO \u2212 RF = 1.455 \u2212 1 = 0.455 MHz");
    EXPECT_EQ(explain_product(0, 2, 1.455e6, 1.0e6), "2\u00b7RF = 2\u00d71 = 2 MHz");
    EXPECT_EQ(explain_product(1, 0, 1.455e6, 1.0e6), "LO = 1.455 MHz");
    EXPECT_EQ(explain_product(3, -2, 10.7e6, 96.4e6),
              "2\u00b7RF \u2212 3\u00b7LO = 2\u00d796.4 \u2212 3\u00d710.7 = 160.7 MHz");
}

TEST(GuiExplain, ResponseArithmetic) {
    // The half-IF response of a high-side plan: 2·LO − 2·RF = IF, RF = (2×1.455 − 0.455)/2 = 1.2275 MHz, which is
    // the wanted + IF/2 (1 MHz + 227.5 kHz), as the trade rule says.
    EXPECT_EQ(explain_response(2, -2, 1.455e6, 455e3),
              "2\u00b7LO \u2212 2\u00b7RF = IF \u2192 RF = (2\u00d71.455 \u2212 0.455)/2 = 1.2275 MHz");
    // The image: RF − LO = IF, RF = 0.455 + 1.455 = 1.91 MHz = wanted + 2·IF.
    EXPECT_NE(explain_response(1, -1, 1.455e6, -455e3).find("= 1.91 MHz"), std::string::npos)
        << explain_response(1, -1, 1.455e6, -455e3);
    // IF feedthrough: RF = IF.
    EXPECT_EQ(explain_response(0, 1, 1.455e6, 455e3), "RF = IF \u2192 RF = 0.455 = 0.455 MHz");
}

// ---- the view model ----------------------------------------------------------------------------------------

const char* kPlan = R"toml(
[mixer]
preset = "diode-ring"
[plan]
rf_low_hz = "530k"
rf_high_hz = "1.7M"
wanted_hz = "1M"
if_hz = "455k"
if_bandwidth_hz = "10k"
injection = "high"
max_order = 5
[plan.limits]
image_rejection_db = 40
spur_dbc = -50
lo_feedthrough_dbc = -30
spur_rejection_db = 60
)toml";

TEST(GuiViews, RfProbeShowsTheResponsesOfThePlan) {
    const hb::Setup s = parse_session(kPlan, "plan.toml");
    const PlanViews v = build_plan_views(s, -20.0);
    ASSERT_TRUE(v.ok) << v.error;
    EXPECT_NEAR(v.plan.lo_hz, 1.455e6, 1e-6);
    const MarkerSet m = markers_for_rf(v, v.plan.lo_hz, 0.0, 2.4e6, nullptr);
    auto find = [&](LineKind k) -> const Marker* {
        for (const Marker& x : m.markers)
            if (x.kind == k) return &x;
        return nullptr;
    };
    // Textbook geometry of a high-side superhet: the image at RF + 2·IF, the half-IF response at RF + IF/2, IF
    // feedthrough at the IF itself.
    const Marker* image = find(LineKind::image);
    ASSERT_NE(image, nullptr);
    EXPECT_NEAR(image->freq_hz, 1.0e6 + 2 * 455e3, 1e-3);
    EXPECT_NEAR(image->limit_dbc, -40.0, 1e-12);
    const Marker* half = find(LineKind::half_if);
    ASSERT_NE(half, nullptr);
    EXPECT_NEAR(half->freq_hz, 1.0e6 + 455e3 / 2, 1e-3);
    EXPECT_NEAR(half->limit_dbc, -60.0, 1e-12);
    const Marker* iff = find(LineKind::if_feedthrough);
    ASSERT_NE(iff, nullptr);
    EXPECT_NEAR(iff->freq_hz, 455e3, 1e-3);
    ASSERT_FALSE(m.markers.empty());
    EXPECT_EQ(m.markers.front().kind, LineKind::wanted);
    EXPECT_NEAR(m.markers.front().freq_hz, 1.0e6, 1e-3);
    // Every marker explains itself with the arithmetic, and its status follows prediction versus limit.
    for (const Marker& x : m.markers) {
        EXPECT_NE(x.explanation.find("RF = "), std::string::npos) << x.label;
        if (x.kind != LineKind::wanted && std::isfinite(x.predicted_dbc)) {
            EXPECT_EQ(x.status, x.predicted_dbc > x.limit_dbc ? LineStatus::fail : LineStatus::pass) << x.label;
        }
    }
}

TEST(GuiViews, PredictedLinesInTheIfWindow) {
    const hb::Setup s = parse_session(kPlan, "plan.toml");
    const PlanViews v = build_plan_views(s, -20.0);
    ASSERT_TRUE(v.ok) << v.error;
    const MarkerSet m = markers_predicted(v, 0.0, 2.0e6);
    ASSERT_FALSE(m.markers.empty());
    EXPECT_EQ(m.markers.front().kind, LineKind::wanted);
    EXPECT_NEAR(m.markers.front().freq_hz, 455e3, 1e-3);  // LO − RF
    bool lo = false, two_lo_minus_rf = false;
    for (const Marker& x : m.markers) {
        EXPECT_GE(x.freq_hz, 0.0);
        EXPECT_LE(x.freq_hz, 2.0e6);
        if (x.kind == LineKind::lo_feedthrough && x.m == 1) {
            lo = true;
            EXPECT_NEAR(x.freq_hz, 1.455e6, 1e-3);
            EXPECT_NEAR(x.limit_dbc, -30.0, 1e-12);
        }
        if (x.m == 2 && x.n == -1) {
            two_lo_minus_rf = true;
            EXPECT_NEAR(x.freq_hz, 1.91e6, 1e-3);  // 2·1.455 − 1
            EXPECT_NE(x.explanation.find("2\u00d71.455 \u2212 1 = 1.91 MHz"), std::string::npos) << x.explanation;
        }
    }
    EXPECT_TRUE(lo);
    EXPECT_TRUE(two_lo_minus_rf);
}

TEST(GuiViews, BadPlanIsReportedNotThrown) {
    hb::Setup s = parse_session(kPlan, "plan.toml");
    s.plan.if_bandwidth_hz = -1;
    const PlanViews v = build_plan_views(s, -10.0);
    EXPECT_FALSE(v.ok);
    EXPECT_NE(v.error.find("if_bandwidth_hz"), std::string::npos) << v.error;
    EXPECT_TRUE(markers_predicted(v, 0, 1e6).markers.empty());
}

TEST(GuiViews, LoViewOfABalancedSwitch) {
    hb::Setup s = parse_session(kPlan, "plan.toml");
    s.mixer.preset.clear();
    s.mixer.model = MixerModel::bipolar;
    s.mixer.duty_cycle = 0.5;
    const PlanViews v = build_plan_views(s, -10.0);
    ASSERT_TRUE(v.ok) << v.error;
    ASSERT_GE(v.lo_harm_db.size(), 6u);
    // A ±1 square wave has odd harmonics only, at 1/m of the fundamental (its Fourier series): −9.54 dB at m = 3,
    // −13.98 dB at m = 5; even ones vanish.
    EXPECT_NEAR(v.lo_harm_db[3], 20 * std::log10(1.0 / 3), 0.01);
    EXPECT_NEAR(v.lo_harm_db[5], 20 * std::log10(1.0 / 5), 0.01);
    EXPECT_TRUE(std::isinf(v.lo_harm_db[2]) || v.lo_harm_db[2] < -200);
    EXPECT_TRUE(std::isinf(v.lo_harm_db[0]) || v.lo_harm_db[0] < -200);
    // The waveform swings between −1 and +1.
    const auto [lo, hi] = std::minmax_element(v.lo_wave.begin(), v.lo_wave.end());
    EXPECT_NEAR(*lo, -1.0, 1e-6);
    EXPECT_NEAR(*hi, 1.0, 1e-6);
}

}  // namespace
}  // namespace hb::gui
