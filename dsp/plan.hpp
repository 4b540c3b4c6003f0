// The frequency plan engine: the plan resolved from a Setup, predicted product levels, and the analysis
// across the tuning range (design.md §2). Products and responses themselves are in dsp/products.
//
//   FrequencyPlan plan = frequency_plan(setup);             // throws InputError on a bad plan
//   PlanModel model{default_spur_table(plan.max_order, plan.max_order, -10.0)};
//   PlanAnalysis report = analyze_plan(plan, model);          // products, responses, per-channel spurs
#pragma once

#include <functional>
#include <optional>
#include <string>
#include <vector>

#include "dsp/products.hpp"
#include "dsp/setup.hpp"
#include "dsp/spur_table.hpp"

namespace hb {

// The receiver's plan in numbers, resolved from a Setup.
struct FrequencyPlan {
    double wanted_hz = 0.0;
    double lo_hz = 0.0;  // LO for the wanted channel
    Band if_band;        // IF passband of the wanted channel
    Injection injection = Injection::high;
    bool fixed_lo = false;    // mixer.lo.frequency_hz set: the LO stays put and the IF moves per channel
    bool complex_if = false;  // quadrature mixer: the sign of every output frequency matters
    int wanted_n = -1;        // (1, wanted_n) is the wanted conversion: −1 difference, +1 sum
    double rf_low_hz = 0.0;   // the receiver's RF band
    double rf_high_hz = 0.0;
    double channel_spacing_hz = 0.0;  // 0: the wanted channel alone
    int max_order = 7;
    std::optional<Band> window;  // analysis window: IF chain centre ± output rate / 2, when a rate is known
};

// Checks the Setup (validate(), which includes check_plan_channels) and resolves the plan.
// Throws InputError naming every problem by its key path.
FrequencyPlan frequency_plan(const Setup& s);

// The channel frequencies of a plan: rf_low_hz + k·channel_spacing_hz up to rf_high_hz, or the wanted
// channel alone when the spacing is 0.
std::vector<double> channel_frequencies(const PlanSpec& p);
std::vector<double> channel_frequencies(const FrequencyPlan& p);

// One channel tuned: its LO, the IF passband it lands in and its conversion.
struct ChannelTuning {
    double rf_hz = 0.0;
    double lo_hz = 0.0;
    Band if_band;
    int wanted_n = -1;
};
// Injection side: LO = f_ch ± IF, the IF passband stays. Fixed LO: the IF follows the channel, centred on
// its conversion |f_LO + wanted_n·f_ch|, with the plan's IF bandwidth (a wide IF tuned after the mixer).
ChannelTuning tune_channel(const FrequencyPlan& p, double rf_hz);

// The channel-by-channel plan checks validate() runs: the LO above 0 Hz and outside the IF passband for
// every channel; with a fixed LO, the wanted converted into the IF passband and no channel's IF at 0 Hz.
// Reports the first bad channel only (one message, not a million).
std::vector<SetupProblem> check_plan_channels(const Setup& s);

// ---- Predicted levels ----------------------------------------------------------------------------------

// What the level predictions need: the spur table of the mixer, the RF filter and a quadrature mixer's
// image rejection. Default: no table (levels unknown), no RF filter, a real mixer.
struct PlanModel {
    SpurTable spurs;                                       // empty (no entries): levels stay unknown (NaN)
    std::function<double(double f_hz)> rf_attenuation_db;  // RF filter attenuation at f (dB); empty: none
    double quadrature_irr_db = 0.0;       // IQ image rejection: lines on the far side of a complex IF lose this
    std::optional<double> rf_level_dbfs;  // wanted drive at the RF port; unset: spurs.ref_level_dbfs
};

// Figures of the default mixer model: a passive double-balanced switching mixer driven by an ideal 50 %
// square-wave LO. All figures are common practice for such a mixer, not measurements of any part.
struct DefaultSpurModel {
    double balance_db = 35.0;           // products with m or |n| even are suppressed by the port balance
    double iip2_margin_db = 35.0;       // second-order intercept above the reference drive
    double iip3_margin_db = 25.0;       // third-order intercept above the reference drive (used for |n| >= 3)
    double lo_feedthrough_dbc = -20.0;  // the LO (1, 0) at the IF port, relative to the wanted at the reference drive
};

// The default spur table, entry (m, |n|) in dBc at ref_level_dbfs:
//   LO weight: 1/m for the square-wave LO's harmonics (Fourier series of a ±1 square wave, odd m);
//   RF order:  (|n| − 1)·(drive − intercept): −iip2_margin for |n| = 2, −(|n| − 1)·iip3_margin for |n| >= 3;
//   balance:   −balance_db once when m or |n| is even (covers even LO harmonics, m = 0 RF feedthrough and
//              even RF orders of a double-balanced mixer);
//   n = 0:     lo_feedthrough_dbc · LO weight (· balance for even m). (0, 0) is DC: no entry.
SpurTable default_spur_table(int max_m, int max_n, double ref_level_dbfs);
SpurTable default_spur_table(int max_m, int max_n, double ref_level_dbfs, const DefaultSpurModel& model);

// Level of product (m, n) of one input at rf_hz relative to that input's own (1, ±1) output, from the spur
// table at the drive reaching the mixer (rf_level − RF filter attenuation). This is the line's own level;
// it does not subtract the quadrature image rejection. NaN where the table has no entry.
double predict_product_dbc(const PlanModel& model, int m, int n, double rf_hz);
void predict_products(std::vector<Product>& products, const PlanModel& model, double rf_hz);

// Level that reaches the IF passband through response (m, n) from an input at rf_hz as strong at the RF port
// as the wanted at wanted_rf_hz, relative to the wanted output:
//   (L_s − L_w) + table(m, n at L_s) − (quadrature_irr_db if the line is on the far side of a complex IF)
// with L = drive − RF filter attenuation, so an order-|n| response loses |n| dB per dB of preselection
// (the image: wanted − filter attenuation at the image − IRR). wanted_side is the sign of the wanted's IF.
double predict_response_dbc(const PlanModel& model, int m, int n, double rf_hz, double if_signed_hz,
                            double wanted_rf_hz, int wanted_side);
void predict_responses(std::vector<Response>& responses, const PlanModel& model, double wanted_rf_hz);

// ---- Tuning range ----------------------------------------------------------------------------------------

// One spur of one channel: a product of the channel's own signal landing in its IF passband (response =
// false), or a spurious response band overlapping the RF band (response = true; responses whose band holds
// the channel itself are the same thing as its own products and are listed once, as products).
struct ChannelSpur {
    int m = 0;
    int n = 0;
    int order = 0;
    std::string label;
    ProductKind kind = ProductKind::spur;
    bool response = false;
    double if_hz = 0.0;      // signed output frequency (product: m·f_LO + n·f_ch; response: ±IF centre)
    double rf_hz = 0.0;      // the RF input: the channel itself, or the response's centre
    double rf_low_hz = 0.0;  // response band (products: the channel frequency)
    double rf_high_hz = 0.0;
    double predicted_dbc = kUnknownDbc;  // in the IF passband, relative to the wanted
};

// Ranking: a known level beats an unknown one; among known levels the higher is worse; among unknown ones
// the lower order is worse. True when a is worse than b.
bool worse(const ChannelSpur& a, const ChannelSpur& b);

struct ChannelResult {
    double wanted_hz = 0.0;
    double lo_hz = 0.0;
    double if_hz = 0.0;              // IF centre for this channel
    std::vector<ChannelSpur> spurs;  // sorted worst first
};

// The (m, |n|) pairs that cause spurs anywhere in the tuning range.
struct MnSummary {
    int m = 0;
    int n = 0;  // |n|
    int order = 0;
    int channels = 0;        // channels where it appears
    ChannelSpur worst;       // its worst appearance
    int worst_channel = -1;  // index into TuningAnalysis::channels
};

struct TuningAnalysis {
    std::vector<ChannelResult> channels;
    int channels_with_spurs = 0;
    int worst_channel = -1;        // index of the channel whose worst spur is the worst (ties: more spurs)
    std::vector<MnSummary> by_mn;  // sorted worst first; by_mn[0] is the worst (m, n)
};

TuningAnalysis analyze_tuning_range(const FrequencyPlan& p, const PlanModel& model);

// ---- One plan, everything -------------------------------------------------------------------------------

struct PlanAnalysis {
    FrequencyPlan plan;
    std::vector<Product> products;    // of the wanted signal, levels filled when the model has a table
    std::vector<Response> responses;  // of the wanted channel's tuning
    TuningAnalysis tuning;
};

PlanAnalysis analyze_plan(const FrequencyPlan& p, const PlanModel& model);

}  // namespace hb
