// The plan engine (dsp/plan) and `hetbench plan`: the default spur table, predicted levels, the
// tuning-range analysis on a hand-checked case, plan checks, and the command's text, JSON and CSV.
#include "dsp/plan.hpp"

#include <gtest/gtest.h>

#include <algorithm>
#include <cmath>
#include <filesystem>
#include <nlohmann/json.hpp>
#include <random>
#include <sstream>
#include <tuple>

#include "devices/session.hpp"
#include "dsp/errors.hpp"
#include "support/test_support.hpp"

namespace hb {
namespace {

constexpr double MHz = 1e6;

// ---- default spur table ----------------------------------------------------------------------------------

TEST(SpurModel, SquareWaveLoHarmonics) {
    // Harmonic n of a ±1 square wave is 4/(πn): 3rd −9.542 dB, 5th −13.979 dB, 7th −16.902 dB re the
    // fundamental (reference-values F1; Fourier series, derivable). Odd m with |n| = 1 carry exactly that.
    const SpurTable t = default_spur_table(7, 7, -10.0);
    EXPECT_DOUBLE_EQ(t.entry(1, 1), 0.0);
    EXPECT_NEAR(t.entry(3, 1), -9.542, 0.001);
    EXPECT_NEAR(t.entry(5, 1), -13.979, 0.001);
    EXPECT_NEAR(t.entry(7, 1), -16.902, 0.001);
    EXPECT_TRUE(std::isnan(t.entry(0, 0)));  // DC: no product
    // Even harmonics of a 50 % square wave are zero; the balance figure stands in for their residue.
    const DefaultSpurModel d;
    EXPECT_NEAR(t.entry(2, 1), -20 * std::log10(2.0) - d.balance_db, 1e-9);
    EXPECT_NEAR(t.entry(0, 1), -d.balance_db, 1e-9);  // RF feedthrough
    EXPECT_NEAR(t.entry(1, 0), d.lo_feedthrough_dbc, 1e-9);
    EXPECT_NEAR(t.entry(3, 0), d.lo_feedthrough_dbc - 9.542, 0.001);
}

TEST(SpurModel, RfOrderFollowsInterceptPoints) {
    // Log form of the polynomial model (reference-values I4, Razavi 2012 §2.2 from memory; ✓ by FFT there):
    // Pin −30 dBm, IIP3 +10 dBm: IM3 is 2·(IIP3 − Pin) = 80 dB below the wanted; IIP2 +40 dBm: the
    // second-order product is IIP2 − Pin = 70 dB below. As (m = 1, |n|) entries with the margins
    // IIP − Pin and no balance suppression:
    DefaultSpurModel d;
    d.balance_db = 0;
    d.iip2_margin_db = 40 - (-30);
    d.iip3_margin_db = 10 - (-30);
    const SpurTable t = default_spur_table(3, 5, -30.0, d);
    EXPECT_NEAR(t.entry(1, 2), -70.0, 1e-9);
    EXPECT_NEAR(t.entry(1, 3), -80.0, 1e-9);
    EXPECT_NEAR(t.entry(1, 5), -160.0, 1e-9);  // (|n| − 1)·margin with the IIP3 margin for |n| >= 3
    // The (|n| − 1) dB per dB rule (dsp/spur_table.hpp): 10 dB more drive, IM3 10·2 dB closer.
    EXPECT_NEAR(t.at(1, 3, -20.0), -60.0, 1e-9);
    EXPECT_NEAR(t.at(1, 0, -20.0), t.entry(1, 0) - 10.0, 1e-9);  // LO leakage stays put: −1 dB/dB relative
}

TEST(SpurModel, DoubleBalancedSuppressesEvenOrdersOnce) {
    const DefaultSpurModel d;
    const SpurTable t = default_spur_table(4, 4, -10.0);
    EXPECT_NEAR(t.entry(1, 2), -d.iip2_margin_db - d.balance_db, 1e-9);
    EXPECT_NEAR(t.entry(2, 2), -20 * std::log10(2.0) - d.iip2_margin_db - d.balance_db, 1e-9);
    EXPECT_NEAR(t.entry(3, 3), -20 * std::log10(3.0) - 2 * d.iip3_margin_db, 1e-9);
    EXPECT_THROW(default_spur_table(0, 3, -10), InputError);
}

// ---- predicted levels ------------------------------------------------------------------------------------

ResponseQuery vhf_high() {
    ResponseQuery q;
    q.lo_hz = 110.7 * MHz;
    q.max_order = 5;
    q.if_band = {10.7 * MHz, 200e3};
    q.wanted_rf_hz = 100 * MHz;
    q.rf_low_hz = 88 * MHz;
    q.rf_high_hz = 108 * MHz;
    return q;
}

const Response& find(const std::vector<Response>& rs, int m, int n, double near_hz) {
    for (const Response& r : rs)
        if (r.m == m && r.n == n && std::abs(r.rf_hz - near_hz) < 1e3) return r;
    throw std::runtime_error("response not found");
}

TEST(Predict, ImageLevelIsFilterAndQuadratureRejection) {
    auto rs = spurious_responses(vhf_high());
    PlanModel model;  // no table: only first-order levels are known
    model.rf_attenuation_db = [](double f) { return f > 115 * MHz ? 40.0 : 1.0; };  // 1 dB insertion loss
    predict_responses(rs, model, 100 * MHz);
    const Response& img = find(rs, 1, -1, 121.4 * MHz);
    ASSERT_EQ(img.kind, ProductKind::image);
    // Image = wanted − (attenuation at the image − attenuation at the wanted) = −39 dBc.
    EXPECT_NEAR(img.predicted_dbc, -39.0, 1e-9);
    EXPECT_DOUBLE_EQ(find(rs, 1, -1, 100 * MHz).predicted_dbc, 0.0);
    EXPECT_TRUE(std::isnan(find(rs, 2, -2, 105.35 * MHz).predicted_dbc));  // no table, no level

    // A quadrature mixer adds its image rejection: 1 dB / 5° gives 22.83 dB (reference-values R2).
    model.quadrature_irr_db = 22.83;
    predict_responses(rs, model, 100 * MHz);
    EXPECT_NEAR(find(rs, 1, -1, 121.4 * MHz).predicted_dbc, -39.0 - 22.83, 1e-9);
    // The half-IF lands on the wanted's side of the IF: no image rejection for it. The 1 dB insertion loss
    // lowers the drive at the mixer by 1 dB for both, so the 2x2 moves (|n| − 1) = 1 dB relative to the wanted.
    model.spurs = default_spur_table(5, 5, -10.0);
    predict_responses(rs, model, 100 * MHz);
    EXPECT_NEAR(find(rs, 2, -2, 105.35 * MHz).predicted_dbc, model.spurs.entry(2, 2) - 1.0, 1e-9);
}

TEST(Predict, HigherOrderResponseLosesOrderTimesPreselection) {
    // An interferer attenuated A dB by the RF filter reaches the mixer A dB weaker; a product of RF order |n|
    // then falls |n|·A dB (A from the level, (|n| − 1)·A from the spur-table scaling).
    auto rs = spurious_responses(vhf_high());
    PlanModel model;
    model.spurs = default_spur_table(5, 5, -10.0);
    model.rf_attenuation_db = [](double f) { return std::abs(f - 60.7 * MHz) < 1 * MHz ? 10.0 : 0.0; };
    predict_responses(rs, model, 100 * MHz);
    const Response& r = find(rs, 1, -2, 60.7 * MHz);  // 2RF − LO = 121.4 − 110.7 = 10.7 MHz
    EXPECT_EQ(r.expr, "2RF-LO");
    EXPECT_NEAR(r.predicted_dbc, model.spurs.entry(1, 2) - 2 * 10.0, 1e-9);
    // Drive 10 dB up: the (1, 2) response rises 10 dB relative to the wanted.
    model.rf_level_dbfs = 0.0;
    predict_responses(rs, model, 100 * MHz);
    EXPECT_NEAR(find(rs, 1, -2, 60.7 * MHz).predicted_dbc, model.spurs.entry(1, 2) - 20.0 + 10.0, 1e-9);
}

TEST(Predict, ProductsUseTableAtMixerDrive) {
    ProductQuery q;
    q.lo_hz = 110.7 * MHz;
    q.rf_hz = 100 * MHz;
    q.max_order = 4;
    q.if_band = {10.7 * MHz, 200e3};
    q.wanted_n = -1;
    auto ps = enumerate_products(q);
    PlanModel model;
    model.spurs = default_spur_table(4, 4, -10.0);
    model.rf_level_dbfs = -20.0;
    predict_products(ps, model, q.rf_hz);
    for (const Product& p : ps) {
        if (p.kind == ProductKind::wanted) {
            EXPECT_DOUBLE_EQ(p.predicted_dbc, 0.0);
            continue;
        }
        const double expect = model.spurs.entry(p.m, p.n) + (std::abs(p.n) - 1) * (-20.0 - -10.0);
        EXPECT_NEAR(p.predicted_dbc, expect, 1e-9) << p.expr;
    }
}

// ---- tuning range ----------------------------------------------------------------------------------------

// Hand-checked case: channels 20, 25, 30 MHz; IF 10 MHz wide 1 MHz; high side (LO 30, 35, 40 MHz); order 4.
//  20 MHz, LO 30: own product 2RF − LO = 40 − 30 = 10 MHz in the IF (1, −2); half-IF (2·30 − 2f = 10) at
//                 25 MHz, inside the band. (The (1, 2) band around 20 MHz is the channel itself.)
//  25 MHz, LO 35: 2f − LO = 10 at 22.5 MHz (1, −2); half-IF at 30 MHz (band 29.75..30.25, touches the edge).
//  30 MHz, LO 40: 2f − LO = 10 at 25 MHz (1, −2); the half-IF at 35 MHz is outside.
// Images (40, 45, 50 MHz), IF feedthrough (10 MHz) and the rest lie outside 20..30 MHz.
FrequencyPlan small_plan() {
    FrequencyPlan p;
    p.wanted_hz = 25 * MHz;
    p.lo_hz = 35 * MHz;
    p.if_band = {10 * MHz, 1 * MHz};
    p.injection = Injection::high;
    p.rf_low_hz = 20 * MHz;
    p.rf_high_hz = 30 * MHz;
    p.channel_spacing_hz = 5 * MHz;
    p.max_order = 4;
    return p;
}

struct Expect {
    int m, n;
    bool response;
    double rf_mhz;
};

void expect_spurs(const ChannelResult& c, std::vector<Expect> want) {
    ASSERT_EQ(c.spurs.size(), want.size()) << "channel " << c.wanted_hz;
    for (const Expect& e : want) {
        const bool found = std::any_of(c.spurs.begin(), c.spurs.end(), [&](const ChannelSpur& s) {
            return s.m == e.m && s.n == e.n && s.response == e.response && std::abs(s.rf_hz - e.rf_mhz * MHz) < 1;
        });
        EXPECT_TRUE(found) << "channel " << c.wanted_hz << ": (" << e.m << ", " << e.n << ") at " << e.rf_mhz;
    }
}

TEST(Tuning, HandCheckedSmallBand) {
    const FrequencyPlan p = small_plan();
    PlanModel model;
    model.spurs = SpurTable::make(4, 4, -10.0);
    model.spurs.entry(1, 2) = -50.0;
    model.spurs.entry(2, 2) = -40.0;
    const TuningAnalysis t = analyze_tuning_range(p, model);
    ASSERT_EQ(t.channels.size(), 3u);
    EXPECT_DOUBLE_EQ(t.channels[0].lo_hz, 30 * MHz);
    EXPECT_DOUBLE_EQ(t.channels[2].lo_hz, 40 * MHz);
    expect_spurs(t.channels[0], {{1, -2, false, 20}, {2, -2, true, 25}});
    expect_spurs(t.channels[1], {{1, -2, true, 22.5}, {2, -2, true, 30}});
    expect_spurs(t.channels[2], {{1, -2, true, 25}});
    EXPECT_EQ(t.channels[0].spurs.front().label, "half-IF");  // −40 dBc beats −50 dBc
    EXPECT_EQ(t.channels[0].spurs.back().label, "2RF-LO");
    EXPECT_NEAR(t.channels[0].spurs.back().if_hz, -10 * MHz, 1e-6);
    EXPECT_DOUBLE_EQ(t.channels[0].spurs.front().predicted_dbc, -40.0);
    EXPECT_EQ(t.channels_with_spurs, 3);
    EXPECT_EQ(t.worst_channel, 0);  // 20 and 25 MHz tie (−40 dBc, 2 spurs): the first
    ASSERT_EQ(t.by_mn.size(), 2u);
    EXPECT_EQ(t.by_mn[0].m, 2);
    EXPECT_EQ(t.by_mn[0].n, 2);
    EXPECT_EQ(t.by_mn[0].channels, 2);
    EXPECT_EQ(t.by_mn[1].m, 1);
    EXPECT_EQ(t.by_mn[1].n, 2);
    EXPECT_EQ(t.by_mn[1].channels, 3);

    // No table: ranked by order, the 3rd-order (1, 2) comes first.
    const TuningAnalysis u = analyze_tuning_range(p, PlanModel{});
    ASSERT_EQ(u.by_mn.size(), 2u);
    EXPECT_EQ(u.by_mn[0].m, 1);
    EXPECT_TRUE(std::isnan(u.by_mn[0].worst.predicted_dbc));
}

TEST(Tuning, SpursMatchDefinitionOnRandomBands) {
    // Every listed spur satisfies its definition, and every own product in the IF passband is listed
    // (checked by a direct loop over (m, n) here, independent of the engine).
    std::mt19937 rng(7);
    std::uniform_real_distribution<double> u(0, 1);
    for (int trial = 0; trial < 20; ++trial) {
        FrequencyPlan p;
        p.if_band = {MHz * (2 + 20 * u(rng)), 0};
        p.if_band.width_hz = p.if_band.center_hz * (0.01 + 0.1 * u(rng));
        p.rf_low_hz = MHz * (30 + 100 * u(rng));
        p.rf_high_hz = p.rf_low_hz * (1.05 + 0.3 * u(rng));
        p.channel_spacing_hz = (p.rf_high_hz - p.rf_low_hz) / 17;
        p.injection = u(rng) < 0.5 ? Injection::low : Injection::high;
        p.max_order = 3 + trial % 6;
        p.wanted_hz = p.rf_low_hz;
        const TuningAnalysis t = analyze_tuning_range(p, PlanModel{});
        ASSERT_EQ(t.channels.size(), 18u);
        const Band& ifb = p.if_band;
        for (const ChannelResult& c : t.channels) {
            const double lo = c.lo_hz, f = c.wanted_hz;
            EXPECT_DOUBLE_EQ(lo, p.injection == Injection::high ? f + ifb.center_hz : f - ifb.center_hz);
            int own = 0;
            for (int m = 0; m <= p.max_order; ++m)
                for (int n = -(p.max_order - m); n <= p.max_order - m; ++n) {
                    if ((m == 0 && n <= 0) || (m == 1 && n == -1)) continue;
                    if (ifb.contains(std::abs(m * lo + n * f))) ++own;
                }
            int listed_own = 0;
            for (const ChannelSpur& s : c.spurs) {
                if (!s.response) {
                    ++listed_own;
                    EXPECT_TRUE(ifb.contains(std::abs(s.m * lo + s.n * f)));
                } else {
                    EXPECT_NEAR(std::abs(s.m * lo + s.n * s.rf_hz), ifb.center_hz, 1e-6 * ifb.center_hz);
                    EXPECT_TRUE(s.rf_high_hz >= p.rf_low_hz && s.rf_low_hz <= p.rf_high_hz);
                    EXPECT_FALSE(f >= s.rf_low_hz && f <= s.rf_high_hz) << "the channel itself listed as a response";
                    EXPECT_NEAR(s.rf_high_hz - s.rf_low_hz, ifb.width_hz / std::abs(s.n), 1e-6 * ifb.width_hz)
                        << "B/|n|";
                }
            }
            EXPECT_EQ(listed_own, own);
        }
    }
}

TEST(Tuning, FixedLoMovesTheIf) {
    FrequencyPlan p = small_plan();
    p.fixed_lo = true;
    p.lo_hz = 40 * MHz;
    p.wanted_hz = 30 * MHz;
    p.wanted_n = -1;
    const TuningAnalysis t = analyze_tuning_range(p, PlanModel{});
    ASSERT_EQ(t.channels.size(), 3u);
    for (const ChannelResult& c : t.channels) {
        EXPECT_DOUBLE_EQ(c.lo_hz, 40 * MHz);
        EXPECT_DOUBLE_EQ(c.if_hz, 40 * MHz - c.wanted_hz);  // 20, 15, 10 MHz
        for (const ChannelSpur& s : c.spurs) EXPECT_FALSE(s.m == 1 && s.n == -1 && !s.response) << "the wanted itself";
    }
}

TEST(Tuning, ChannelGridKeepsTheUpperEdge) {
    PlanSpec s;
    s.rf_low_hz = 87.6 * MHz;
    s.rf_high_hz = 107.8 * MHz;
    s.channel_spacing_hz = 200e3;
    s.wanted_hz = 96.4 * MHz;
    const auto ch = channel_frequencies(s);
    ASSERT_EQ(ch.size(), 102u);
    EXPECT_NEAR(ch.back(), 107.8 * MHz, 1e-3);
    s.channel_spacing_hz = 0;
    ASSERT_EQ(channel_frequencies(s).size(), 1u);
    EXPECT_DOUBLE_EQ(channel_frequencies(s)[0], 96.4 * MHz);
}

// ---- plan checks -----------------------------------------------------------------------------------------

Setup base_setup() {
    Setup s;
    s.plan.wanted_hz = 100 * MHz;
    s.plan.rf_low_hz = 88 * MHz;
    s.plan.rf_high_hz = 108 * MHz;
    s.plan.channel_spacing_hz = 200e3;
    s.plan.if_hz = 10.7 * MHz;
    s.plan.if_bandwidth_hz = 200e3;
    return s;
}

bool has_problem(const std::vector<SetupProblem>& ps, const std::string& key, const std::string& text) {
    return std::any_of(ps.begin(), ps.end(), [&](const SetupProblem& p) {
        return p.key == key && p.message.find(text) != std::string::npos;
    });
}

TEST(PlanCheck, GoodPlanResolves) {
    hb::Setup s = base_setup();
    ASSERT_TRUE(validate(s).empty());
    s.sources.push_back({});
    s.sources[0].sample_rate_hz = 2.4e6;
    s.if_chain.decimation = 2;
    const FrequencyPlan p = frequency_plan(s);
    EXPECT_DOUBLE_EQ(p.lo_hz, 110.7 * MHz);
    EXPECT_EQ(p.wanted_n, -1);
    ASSERT_TRUE(p.window.has_value());
    EXPECT_DOUBLE_EQ(p.window->center_hz, 10.7 * MHz);
    EXPECT_DOUBLE_EQ(p.window->width_hz, 1.2e6);
    EXPECT_FALSE(p.complex_if);
}

TEST(PlanCheck, ImageRejectPresetGivesAComplexIf) {
    // The preset names an IQ (quadrature) mixer; with the default model "ideal" the preset's model applies.
    hb::Setup s = base_setup();
    s.mixer.preset = "image-reject";
    EXPECT_TRUE(frequency_plan(s).complex_if);
    s.mixer.model = MixerModel::bipolar;  // an explicit model overrides the preset's
    EXPECT_FALSE(frequency_plan(s).complex_if);
}

TEST(PlanCheck, LowSideLoBelowZeroForAChannel) {
    hb::Setup s = base_setup();
    s.plan.injection = Injection::low;
    s.plan.rf_low_hz = 5 * MHz;
    s.plan.wanted_hz = 20 * MHz;
    s.plan.rf_high_hz = 30 * MHz;
    const auto ps = validate(s);
    EXPECT_TRUE(has_problem(ps, "plan.rf_low_hz", "the channel at 5000000 Hz would need a low-side LO at -5700000 Hz"));
    try {
        frequency_plan(s);
        FAIL() << "expected InputError";
    } catch (const InputError& e) {
        EXPECT_NE(std::string(e.what()).find("plan.rf_low_hz"), std::string::npos) << e.what();
    }
}

TEST(PlanCheck, LoInsideIfPassbandForAChannel) {
    // Low side, IF 10.7 MHz: the channel at 21.4 MHz would put the LO at 10.7 MHz, in the IF passband.
    hb::Setup s = base_setup();
    s.plan.injection = Injection::low;
    s.plan.rf_low_hz = 15 * MHz;
    s.plan.rf_high_hz = 25 * MHz;
    s.plan.wanted_hz = 15 * MHz;
    s.plan.channel_spacing_hz = 100e3;
    EXPECT_TRUE(has_problem(validate(s), "plan.injection", "falls inside the IF passband"));
    // On a 1 MHz grid no channel lands there (21 and 22 MHz: LO 10.3 and 11.3 MHz).
    s.plan.channel_spacing_hz = 1 * MHz;
    EXPECT_TRUE(validate(s).empty());
}

TEST(PlanCheck, FixedLoMustConvertTheWanted) {
    hb::Setup s = base_setup();
    s.mixer.lo.frequency_hz = 120 * MHz;  // 100 MHz lands at 20 MHz
    EXPECT_TRUE(has_problem(validate(s), "mixer.lo.frequency_hz", "neither inside the IF passband"));
    s.mixer.lo.frequency_hz = 110.7 * MHz;
    s.plan.rf_high_hz = 112 * MHz;  // the channel at 110.7 MHz would convert to 0 Hz
    EXPECT_TRUE(has_problem(validate(s), "mixer.lo.frequency_hz", "would contain 0 Hz"));
    s.plan.rf_high_hz = 108 * MHz;
    EXPECT_TRUE(validate(s).empty());
    const FrequencyPlan p = frequency_plan(s);
    EXPECT_TRUE(p.fixed_lo);
    EXPECT_EQ(p.wanted_n, -1);
}

// ---- the command line ------------------------------------------------------------------------------------

const char* kMfSession = R"([bench]
name = "MF test plan"
[plan]
rf_low_hz = 0.5e6
rf_high_hz = 1.7e6
wanted_hz = 1.0e6
channel_spacing_hz = 10e3
if_hz = 455e3
if_bandwidth_hz = 10e3
injection = "high"
max_order = 5
[plan.limits]
image_rejection_db = 40
spur_dbc = -50
)";

nlohmann::json plan_json(const std::vector<std::string>& args) {
    const auto r = test::run_hetbench(args);
    EXPECT_EQ(r.exit_code, 0) << r.err;
    return nlohmann::json::parse(r.out);  // exactly one JSON document on stdout, or this throws
}

const nlohmann::json* find_label(const nlohmann::json& list, const std::string& label) {
    for (const auto& x : list)
        if (x["label"] == label) return &x;
    return nullptr;
}

TEST(PlanCommand, JsonFields) {
    test::TempDir tmp;
    test::write_file(tmp.file("mf.toml"), kMfSession);
    const auto j = plan_json({"plan", tmp.file("mf.toml").string(), "--json"});
    ASSERT_TRUE(j.contains("products") && j.contains("responses") && j.contains("channels"));
    for (const auto& p : j["products"])
        for (const char* k :
             {"m", "n", "order", "label", "freq_hz", "in_if_band", "kind", "signed_hz", "predicted_dbc"})
            ASSERT_TRUE(p.contains(k)) << k;
    for (const auto& r : j["responses"])
        for (const char* k : {"m", "n", "label", "rf_hz", "rf_low_hz", "rf_high_hz", "in_rf_band", "kind"})
            ASSERT_TRUE(r.contains(k)) << k;
    // order 5: N + N² products.
    EXPECT_EQ(j["products"].size(), 30u);
    // High side, 1 MHz wanted, 455 kHz IF: image at 1.91 MHz, half-IF at 1.2275 MHz (M3/M4 formulas).
    const auto* img = find_label(j["responses"], "image");
    ASSERT_TRUE(img);
    EXPECT_NEAR((*img)["rf_hz"].get<double>(), 1.91e6, 1e-6);
    EXPECT_FALSE((*img)["in_rf_band"].get<bool>());
    const auto* half = find_label(j["responses"], "half-IF");
    ASSERT_TRUE(half);
    EXPECT_NEAR((*half)["rf_hz"].get<double>(), 1.2275e6, 1e-6);
    EXPECT_TRUE((*half)["in_rf_band"].get<bool>());
    const auto* wanted = find_label(j["products"], "wanted");
    ASSERT_TRUE(wanted);
    EXPECT_NEAR((*wanted)["freq_hz"].get<double>(), 455e3, 1e-6);
    EXPECT_TRUE((*wanted)["in_if_band"].get<bool>());
    // 0.5 to 1.7 MHz every 10 kHz: 121 channels, LO = channel + IF.
    ASSERT_EQ(j["channels"].size(), 121u);
    for (const auto& c : j["channels"]) {
        EXPECT_NEAR(c["lo_hz"].get<double>() - c["wanted_hz"].get<double>(), 455e3, 1e-6);
        ASSERT_TRUE(c["spurs"].is_array());
        for (const auto& s : c["spurs"])
            ASSERT_TRUE(s.contains("m") && s.contains("label") && s.contains("predicted_dbc"));
    }
    EXPECT_TRUE(j["summary"]["worst_channel"].is_object());
    EXPECT_TRUE(j["summary"]["worst_mn"].is_object());
    EXPECT_EQ(j["spur_table"]["dbc"].size(), 6u);
    EXPECT_EQ(j["plan"]["max_order"], 5);
}

std::vector<std::vector<std::string>> read_csv(const std::filesystem::path& p) {
    std::vector<std::vector<std::string>> rows;
    std::istringstream in(test::read_file(p));
    std::string line;
    while (std::getline(in, line)) {
        std::vector<std::string> cells;
        std::string cell;
        std::istringstream ls(line);
        while (std::getline(ls, cell, ',')) cells.push_back(cell);
        if (!line.empty() && line.back() == ',') cells.push_back("");
        rows.push_back(cells);
    }
    return rows;
}

TEST(PlanCommand, CsvFilesMatchJson) {
    test::TempDir tmp;
    test::write_file(tmp.file("mf.toml"), kMfSession);
    const auto dir = tmp.file("csv");
    const auto j = plan_json({"plan", tmp.file("mf.toml").string(), "--json", "--csv", dir.string()});
    const auto products = read_csv(dir / "products.csv");
    const auto responses = read_csv(dir / "responses.csv");
    const auto channels = read_csv(dir / "channels.csv");
    const auto table = read_csv(dir / "spur_table.csv");
    ASSERT_FALSE(products.empty());
    auto col = [](const std::vector<std::string>& head, const std::string& name) {
        return std::find(head.begin(), head.end(), name) != head.end();
    };
    for (const char* k : {"m", "n", "order", "label", "freq_hz", "in_if_band"}) EXPECT_TRUE(col(products[0], k)) << k;
    for (const char* k : {"m", "n", "label", "rf_hz", "rf_low_hz", "rf_high_hz", "in_rf_band"})
        EXPECT_TRUE(col(responses[0], k)) << k;
    for (const char* k : {"wanted_hz", "lo_hz", "m", "n", "label", "predicted_dbc"})
        EXPECT_TRUE(col(channels[0], k)) << k;
    EXPECT_EQ(products.size() - 1, j["products"].size());
    EXPECT_EQ(responses.size() - 1, j["responses"].size());
    std::size_t channel_rows = 0;
    for (const auto& c : j["channels"]) channel_rows += std::max<std::size_t>(1, c["spurs"].size());
    EXPECT_EQ(channels.size() - 1, channel_rows);
    EXPECT_EQ(table.size() - 1, 36u);  // (5 + 1)²
    for (const auto& row : products) EXPECT_EQ(row.size(), products[0].size());
    for (const auto& row : channels) EXPECT_EQ(row.size(), channels[0].size());
}

TEST(PlanCommand, QuadratureImageRejection) {
    // IRR = (1 + 2g·cosθ + g²)/(1 − 2g·cosθ + g²): 1 dB / 5° → 22.83 dB, 0.1 dB / 1° → 39.61 dB
    // (reference-values R2/R1, Razavi 2012; simulated there).
    for (auto [gain, phase, irr] : {std::tuple{1.0, 5.0, 22.83}, std::tuple{0.1, 1.0, 39.61}}) {
        test::TempDir tmp;
        test::write_file(tmp.file("iq.toml"), std::string(kMfSession) + "[mixer]\nmodel = \"quadrature\"\n" +
                                                  "iq_gain_error_db = " + std::to_string(gain) + "\n" +
                                                  "iq_phase_error_deg = " + std::to_string(phase) + "\n");
        const auto j = plan_json({"plan", tmp.file("iq.toml").string(), "--json"});
        EXPECT_TRUE(j["plan"]["complex_if"].get<bool>());
        const auto* img = find_label(j["responses"], "image");
        ASSERT_TRUE(img);
        EXPECT_NEAR((*img)["predicted_dbc"].get<double>(), -irr, 0.01);
        EXPECT_NEAR(j["plan"]["quadrature_irr_db"].get<double>(), irr, 0.01);
    }
}

TEST(PlanCommand, BadSessionsExitTwoWithTheKey) {
    test::TempDir tmp;
    struct Case {
        std::string body, key;
    };
    const std::vector<Case> cases = {
        {"[plan]\nwanted_hz = 1e6\nif_hz = 455e3\nif_bandwidth_hz = 1e6\n", "plan.if_bandwidth_hz"},
        {"[plan]\nwanted_hz = 20e6\nrf_low_hz = 5e6\nrf_high_hz = 30e6\nchannel_spacing_hz = 1e6\nif_hz = 10.7e6\n"
         "if_bandwidth_hz = 200e3\ninjection = \"low\"\n",
         "plan.rf_low_hz"},
        {"[plan]\nwanted_hz = 5e6\nif_hz = 10.7e6\nif_bandwidth_hz = 200e3\ninjection = \"low\"\n", "plan.injection"},
        {"[plan]\nwanted_hz = 100e6\nif_hz = 10.7e6\nif_bandwidth_hz = 200e3\n[mixer.lo]\nfrequency_hz = 130e6\n",
         "mixer.lo.frequency_hz"},
    };
    for (const Case& c : cases) {
        test::write_file(tmp.file("bad.toml"), c.body);
        const auto r = test::run_hetbench({"plan", tmp.file("bad.toml").string(), "--json"});
        EXPECT_EQ(r.exit_code, 2) << c.key;
        EXPECT_NE(r.err.find(c.key), std::string::npos) << r.err;
        EXPECT_TRUE(r.out.empty()) << "no half JSON document on stdout";
    }
    test::write_file(tmp.file("mf.toml"), kMfSession);
    EXPECT_EQ(test::run_hetbench({"plan", tmp.file("mf.toml").string(), "--max-order", "40"}).exit_code, 2);
    EXPECT_EQ(test::run_hetbench({"plan", tmp.file("mf.toml").string(), "--level", "loud"}).exit_code, 2);
    EXPECT_EQ(test::run_hetbench({"plan", tmp.file("missing.toml").string()}).exit_code, 2);
    // A CSV folder that cannot be made (a file is in the way).
    test::write_file(tmp.file("in-the-way"), "x");
    const auto r = test::run_hetbench({"plan", tmp.file("mf.toml").string(), "--csv", tmp.file("in-the-way").string()});
    EXPECT_EQ(r.exit_code, 2);
    EXPECT_NE(r.err.find("in-the-way"), std::string::npos) << r.err;
}

TEST(PlanCommand, ExampleVhfSession) {
    const auto session = (test::source_dir() / "recordings" / "vhf-plan.toml").string();
    const auto text = test::run_hetbench({"plan", session});
    ASSERT_EQ(text.exit_code, 0) << text.err;
    for (const char* s : {"102 channels", "half-IF", "image", "Worst channel:", "Spur table:", "dBc", "MHz"})
        EXPECT_NE(text.out.find(s), std::string::npos) << s;

    const auto j = plan_json({"plan", session, "--json"});
    // Wanted 96.4 MHz, IF 10.7 MHz, high side: LO 107.1, image 117.8, half-IF 101.75 MHz (M3/M4 formulas).
    EXPECT_NEAR(j["plan"]["lo_hz"].get<double>(), 107.1e6, 1e-3);
    const auto* img = find_label(j["responses"], "image");
    const auto* half = find_label(j["responses"], "half-IF");
    ASSERT_TRUE(img && half);
    EXPECT_NEAR((*img)["rf_hz"].get<double>(), 117.8e6, 1e-3);
    EXPECT_NEAR((*half)["rf_hz"].get<double>(), 101.75e6, 1e-3);
    EXPECT_TRUE((*half)["in_rf_band"].get<bool>());
    EXPECT_EQ(j["channels"].size(), 102u);
    // The session sets a 2.4 MHz IF capture: 2LO − 2RF at 21.4 MHz lies outside it, the wanted inside.
    ASSERT_TRUE(j["plan"]["window"].is_object());
    EXPECT_NEAR(j["plan"]["window"]["low_hz"].get<double>(), 9.5e6, 1e-3);
    // The session also passes `hetbench check`.
    EXPECT_EQ(test::run_hetbench({"check", session}).exit_code, 0);
}

}  // namespace
}  // namespace hb
