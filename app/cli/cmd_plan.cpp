// hetbench plan SESSION.toml: the frequency plan of a session: every product of the wanted signal, every
// spurious response, the in-band spurs of every channel across the tuning range, and the spur table, with
// predicted levels. Text tables by default, one JSON document with --json, CSV files with --csv DIR.
#include <cmath>
#include <cstdio>
#include <filesystem>
#include <fstream>
#include <iostream>
#include <nlohmann/json.hpp>

#include "cli/commands.hpp"
#include "devices/filter_setup.hpp"
#include "devices/session.hpp"
#include "dsp/bench_model.hpp"
#include "dsp/errors.hpp"
#include "dsp/plan.hpp"
#include "dsp/units.hpp"

namespace hb::cli {
namespace {

// The default spur table's figures are stated for this RF drive (the SpurTable convention).
constexpr double kDefaultTableRefDbfs = -10.0;
// An IQ mixer without gain or phase error rejects the image completely; 300 dB stands for that.

struct Options {
    std::string session;
    bool json = false;
    std::string csv_dir;
    std::optional<double> level_dbfs;
    std::optional<int> max_order;
};

// The limit each kind of line is held to, from [plan.limits], in dBc (NaN: none, the wanted itself).
double product_limit_dbc(const PlanLimits& l, ProductKind k) {
    switch (k) {
        case ProductKind::wanted:
            return kUnknownDbc;
        case ProductKind::lo_feedthrough:
            return l.lo_feedthrough_dbc;
        default:
            return l.spur_dbc;
    }
}
double response_limit_dbc(const PlanLimits& l, ProductKind k) {
    switch (k) {
        case ProductKind::wanted:
            return kUnknownDbc;
        case ProductKind::image:
            return -l.image_rejection_db;
        default:
            return -l.spur_rejection_db;
    }
}
double spur_limit_dbc(const PlanLimits& l, const ChannelSpur& s) {
    return s.response ? response_limit_dbc(l, s.kind) : product_limit_dbc(l, s.kind);
}
bool over_limit(double dbc, double limit) {
    return !std::isnan(dbc) && !std::isnan(limit) && dbc > limit;
}

// ---- text ----------------------------------------------------------------------------------------------

// One unit for a whole table, chosen from the plan, with every Hz shown.
struct FreqUnit {
    double scale;
    const char* name;
    int decimals;
};
FreqUnit unit_for(double hz) {
    if (hz >= 1e9) return {1e9, "GHz", 9};
    if (hz >= 1e6) return {1e6, "MHz", 6};
    if (hz >= 1e3) return {1e3, "kHz", 3};
    return {1.0, "Hz", 0};
}

std::string fixed(double v, int decimals) {
    char buf[64];
    std::snprintf(buf, sizeof buf, "%.*f", decimals, v);
    return buf;
}
std::string freq(const FreqUnit& u, double hz) {
    return fixed(hz / u.scale, u.decimals);
}
std::string dbc_text(double v) {
    return std::isnan(v) ? "n/a" : fixed(v, 1);
}

std::string pad(std::string s, std::size_t w, bool right = false) {
    if (s.size() >= w) return s;
    return right ? std::string(w - s.size(), ' ') + s : s + std::string(w - s.size(), ' ');
}

std::string mn_text(int m, int n) {
    return std::to_string(m) + "x" + std::to_string(std::abs(n));
}

void print_text(std::ostream& o, const Setup& s, const PlanAnalysis& r, const PlanModel& model, const FreqUnit& u,
                const std::string& model_note) {
    const FrequencyPlan& p = r.plan;
    const PlanLimits& lim = s.plan.limits;
    o << "Frequency plan: " << s.bench.name << "\n";
    o << "  wanted            " << format_frequency(p.wanted_hz) << "\n";
    o << "  LO                " << format_frequency(p.lo_hz)
      << (p.fixed_lo                       ? " (fixed)"
          : p.injection == Injection::high ? " (high-side injection)"
                                           : " (low-side injection)")
      << "\n";
    o << "  IF passband       " << format_frequency(p.if_band.center_hz) << " wide "
      << format_frequency(p.if_band.width_hz) << " (" << format_frequency(p.if_band.low_hz()) << " to "
      << format_frequency(p.if_band.high_hz()) << ")\n";
    const auto chans = channel_frequencies(p);
    o << "  RF band           " << format_frequency(p.rf_low_hz) << " to " << format_frequency(p.rf_high_hz) << ", "
      << chans.size() << (chans.size() == 1 ? " channel" : " channels");
    if (p.channel_spacing_hz > 0) o << " at " << format_frequency(p.channel_spacing_hz) << " spacing";
    o << "\n";
    o << "  mixer             " << to_string(s.mixer.model)
      << (p.complex_if ? " (complex IF, image rejection " + fixed(model.quadrature_irr_db, 2) + " dB)" : " (real IF)")
      << "\n";
    if (p.window)
        o << "  analysis window   " << format_frequency(p.window->low_hz()) << " to "
          << format_frequency(p.window->high_hz()) << "\n";
    o << "  max order         " << p.max_order << " (m + |n|)\n";
    o << "  RF drive          " << fixed(model.rf_level_dbfs.value_or(model.spurs.ref_level_dbfs), 1)
      << " dBFS at the RF port (wanted, and each interferer for the responses)\n";
    o << "  levels            " << model_note << "\n";
    if (s.rf_filter.type != FilterType::none && model.rf_attenuation_db)
        o << "  RF filter         " << to_string(s.rf_filter.type) << ", " << format_frequency(s.rf_filter.center_hz)
          << " centre, " << format_frequency(s.rf_filter.bandwidth_hz) << " wide: image attenuated "
          << fixed(model.rf_attenuation_db(2 * p.lo_hz - p.wanted_hz), 1) << " dB\n";

    o << "\nProducts of the wanted signal at " << format_frequency(p.wanted_hz) << " (" << r.products.size()
      << " lines; predicted relative to the wanted output)\n";
    o << "    m    n  ord  " << pad("label", 12) << pad("kind", 16)
      << pad(std::string("freq (") + u.name + ")", 18, true) << pad(std::string("signed (") + u.name + ")", 19, true)
      << "  " << pad("placement", 10) << pad("dBc", 8, true) << pad("limit", 8, true) << "\n";
    for (const Product& x : r.products) {
        const double limit = product_limit_dbc(lim, x.kind);
        o << pad(std::to_string(x.m), 5, true) << pad(std::to_string(x.n), 5, true)
          << pad(std::to_string(x.order), 5, true) << "  " << pad(x.label, 12)
          << pad(std::string(to_string(x.kind)), 16) << pad(freq(u, x.freq_hz), 18, true)
          << pad(freq(u, x.signed_hz), 19, true) << "  " << pad(std::string(to_string(x.where)), 10)
          << pad(dbc_text(x.predicted_dbc), 8, true) << pad(dbc_text(limit), 8, true)
          << (over_limit(x.predicted_dbc, limit) && x.where == Placement::if_band ? "  OVER" : "") << "\n";
    }

    o << "\nSpurious responses of the channel at " << format_frequency(p.wanted_hz) << " (" << r.responses.size()
      << " RF bands reaching the IF passband; dBc for an input as strong as the wanted)\n";
    o << "    m    n  ord  " << pad("label", 12) << pad("kind", 16) << pad(std::string("RF (") + u.name + ")", 18, true)
      << pad(std::string("band low (") + u.name + ")", 20, true)
      << pad(std::string("band high (") + u.name + ")", 20, true) << pad("IF side", 9, true) << pad("RF band", 9, true)
      << pad("dBc", 8, true) << pad("limit", 8, true) << "\n";
    for (const Response& x : r.responses) {
        const double limit = response_limit_dbc(lim, x.kind);
        o << pad(std::to_string(x.m), 5, true) << pad(std::to_string(x.n), 5, true)
          << pad(std::to_string(x.order), 5, true) << "  " << pad(x.label, 12)
          << pad(std::string(to_string(x.kind)), 16) << pad(freq(u, x.rf_hz), 18, true)
          << pad(freq(u, x.rf_low_hz), 20, true) << pad(freq(u, x.rf_high_hz), 20, true)
          << pad(x.if_signed_hz < 0 ? "-IF" : "+IF", 9, true) << pad(x.in_rf_band ? "in" : "out", 9, true)
          << pad(dbc_text(x.predicted_dbc), 8, true) << pad(dbc_text(limit), 8, true)
          << (x.in_rf_band && over_limit(x.predicted_dbc, limit) ? "  OVER" : "") << "\n";
    }

    const TuningAnalysis& t = r.tuning;
    o << "\nTuning range: " << t.channels.size() << " channels, " << t.channels_with_spurs
      << " with in-band spurs (own products in the IF passband, responses inside the RF band)\n";
    o << pad(std::string("channel (") + u.name + ")", 17, true) << pad(std::string("LO (") + u.name + ")", 18, true)
      << pad(std::string("IF (") + u.name + ")", 18, true) << pad("spurs", 7, true) << pad("over", 6, true) << "  "
      << pad("worst", 18) << pad("dBc", 8, true) << "\n";
    for (const ChannelResult& c : t.channels) {
        int over = 0;
        for (const ChannelSpur& sp : c.spurs) over += over_limit(sp.predicted_dbc, spur_limit_dbc(lim, sp)) ? 1 : 0;
        o << pad(freq(u, c.wanted_hz), 17, true) << pad(freq(u, c.lo_hz), 18, true) << pad(freq(u, c.if_hz), 18, true)
          << pad(std::to_string(c.spurs.size()), 7, true) << pad(std::to_string(over), 6, true) << "  ";
        if (c.spurs.empty())
            o << pad("-", 18) << pad("", 8, true) << "\n";
        else
            o << pad(c.spurs.front().label + " (" + mn_text(c.spurs.front().m, c.spurs.front().n) + ")", 18)
              << pad(dbc_text(c.spurs.front().predicted_dbc), 8, true) << "\n";
    }
    if (t.worst_channel >= 0) {
        const ChannelResult& w = t.channels[static_cast<std::size_t>(t.worst_channel)];
        const ChannelSpur& sp = w.spurs.front();
        o << "Worst channel: " << format_frequency(w.wanted_hz) << " (LO " << format_frequency(w.lo_hz)
          << "): " << sp.label << " (m=" << sp.m << ", n=" << sp.n << ") "
          << (sp.response ? "response at " : "product at IF ") << format_frequency(sp.response ? sp.rf_hz : sp.if_hz)
          << ", " << dbc_text(sp.predicted_dbc) << " dBc, " << w.spurs.size() << " spurs in this channel\n";
        o << "Worst (m, n) across the range:\n";
        const std::size_t shown = std::min<std::size_t>(t.by_mn.size(), 10);
        for (std::size_t i = 0; i < shown; ++i) {
            const MnSummary& e = t.by_mn[i];
            o << "  " << pad(mn_text(e.m, e.n), 6) << pad(e.worst.label, 14)
              << pad(dbc_text(e.worst.predicted_dbc), 8, true) << " dBc, in " << e.channels << " channel"
              << (e.channels == 1 ? "" : "s") << ", worst at "
              << format_frequency(t.channels[static_cast<std::size_t>(e.worst_channel)].wanted_hz) << "\n";
        }
        if (t.by_mn.size() > shown) o << "  ... " << (t.by_mn.size() - shown) << " more (see --json or --csv)\n";
    } else {
        o << "No in-band spurs up to order " << p.max_order << ".\n";
    }

    const SpurTable& st = model.spurs;
    if (!st.dbc.empty()) {
        o << "\nSpur table: dBc relative to the wanted at " << fixed(st.ref_level_dbfs, 1)
          << " dBFS RF drive (rows m = LO harmonic, columns |n| = RF order; |n| - 1 dB per dB of drive)\n";
        o << pad("m \\ |n|", 8);
        for (int n = 0; n <= st.max_n; ++n) o << pad(std::to_string(n), 8, true);
        o << "\n";
        for (int m = 0; m <= st.max_m; ++m) {
            o << pad(std::to_string(m), 8);
            for (int n = 0; n <= st.max_n; ++n)
                o << pad(std::isnan(st.entry(m, n)) ? "-" : fixed(st.entry(m, n), 1), 8, true);
            o << "\n";
        }
    }
}

// ---- JSON ----------------------------------------------------------------------------------------------

nlohmann::json num(double v) {
    return std::isfinite(v) ? nlohmann::json(v) : nlohmann::json(nullptr);
}

nlohmann::json spur_json(const ChannelSpur& sp, const PlanLimits& lim) {
    return {{"m", sp.m},
            {"n", sp.n},
            {"order", sp.order},
            {"label", sp.label},
            {"kind", to_string(sp.kind)},
            {"source", sp.response ? "response" : "product"},
            {"if_hz", sp.if_hz},
            {"rf_hz", sp.rf_hz},
            {"rf_low_hz", sp.rf_low_hz},
            {"rf_high_hz", sp.rf_high_hz},
            {"predicted_dbc", num(sp.predicted_dbc)},
            {"limit_dbc", num(spur_limit_dbc(lim, sp))}};
}

nlohmann::json to_json(const Setup& s, const PlanAnalysis& r, const PlanModel& model, const std::string& model_note) {
    const FrequencyPlan& p = r.plan;
    const PlanLimits& lim = s.plan.limits;
    nlohmann::json j;
    j["plan"] = {{"bench", s.bench.name},
                 {"wanted_hz", p.wanted_hz},
                 {"lo_hz", p.lo_hz},
                 {"if_hz", p.if_band.center_hz},
                 {"if_bandwidth_hz", p.if_band.width_hz},
                 {"if_low_hz", p.if_band.low_hz()},
                 {"if_high_hz", p.if_band.high_hz()},
                 {"injection", p.fixed_lo ? "fixed" : std::string(to_string(p.injection))},
                 {"wanted_n", p.wanted_n},
                 {"complex_if", p.complex_if},
                 {"rf_low_hz", p.rf_low_hz},
                 {"rf_high_hz", p.rf_high_hz},
                 {"channel_spacing_hz", p.channel_spacing_hz},
                 {"max_order", p.max_order},
                 {"window", p.window ? nlohmann::json{{"low_hz", p.window->low_hz()},
                                                      {"high_hz", p.window->high_hz()},
                                                      {"center_hz", p.window->center_hz},
                                                      {"width_hz", p.window->width_hz}}
                                     : nlohmann::json(nullptr)},
                 {"rf_level_dbfs", model.rf_level_dbfs.value_or(model.spurs.ref_level_dbfs)},
                 {"quadrature_irr_db", p.complex_if ? num(model.quadrature_irr_db) : nlohmann::json(nullptr)},
                 {"rf_filter_applied", false},
                 {"level_model", model_note},
                 {"limits",
                  {{"image_rejection_db", lim.image_rejection_db},
                   {"spur_dbc", lim.spur_dbc},
                   {"lo_feedthrough_dbc", lim.lo_feedthrough_dbc},
                   {"spur_rejection_db", lim.spur_rejection_db}}}};
    auto& products = j["products"] = nlohmann::json::array();
    for (const Product& x : r.products)
        products.push_back({{"m", x.m},
                            {"n", x.n},
                            {"order", x.order},
                            {"label", x.label},
                            {"expr", x.expr},
                            {"kind", to_string(x.kind)},
                            {"freq_hz", x.freq_hz},
                            {"signed_hz", x.signed_hz},
                            {"placement", to_string(x.where)},
                            {"in_if_band", x.where == Placement::if_band},
                            {"in_window", x.where != Placement::outside},
                            {"predicted_dbc", num(x.predicted_dbc)},
                            {"limit_dbc", num(product_limit_dbc(lim, x.kind))}});
    auto& responses = j["responses"] = nlohmann::json::array();
    for (const Response& x : r.responses)
        responses.push_back({{"m", x.m},
                             {"n", x.n},
                             {"order", x.order},
                             {"label", x.label},
                             {"expr", x.expr},
                             {"kind", to_string(x.kind)},
                             {"rf_hz", x.rf_hz},
                             {"rf_low_hz", x.rf_low_hz},
                             {"rf_high_hz", x.rf_high_hz},
                             {"if_signed_hz", x.if_signed_hz},
                             {"in_rf_band", x.in_rf_band},
                             {"predicted_dbc", num(x.predicted_dbc)},
                             {"rejection_db", num(-x.predicted_dbc)},
                             {"limit_dbc", num(response_limit_dbc(lim, x.kind))}});
    const TuningAnalysis& t = r.tuning;
    auto& channels = j["channels"] = nlohmann::json::array();
    for (const ChannelResult& c : t.channels) {
        nlohmann::json spurs = nlohmann::json::array();
        for (const ChannelSpur& sp : c.spurs) spurs.push_back(spur_json(sp, lim));
        channels.push_back({{"wanted_hz", c.wanted_hz},
                            {"lo_hz", c.lo_hz},
                            {"if_hz", c.if_hz},
                            {"spur_count", c.spurs.size()},
                            {"spurs", std::move(spurs)}});
    }
    nlohmann::json summary = {{"channels", t.channels.size()}, {"channels_with_spurs", t.channels_with_spurs}};
    if (t.worst_channel >= 0) {
        const ChannelResult& w = t.channels[static_cast<std::size_t>(t.worst_channel)];
        summary["worst_channel"] = {{"index", t.worst_channel},
                                    {"wanted_hz", w.wanted_hz},
                                    {"lo_hz", w.lo_hz},
                                    {"spur_count", w.spurs.size()},
                                    {"worst", spur_json(w.spurs.front(), lim)}};
    } else {
        summary["worst_channel"] = nullptr;
    }
    auto& by_mn = summary["by_mn"] = nlohmann::json::array();
    for (const MnSummary& e : t.by_mn)
        by_mn.push_back({{"m", e.m},
                         {"n", e.n},
                         {"order", e.order},
                         {"channels", e.channels},
                         {"worst_label", e.worst.label},
                         {"worst_dbc", num(e.worst.predicted_dbc)},
                         {"worst_channel_hz", t.channels[static_cast<std::size_t>(e.worst_channel)].wanted_hz}});
    summary["worst_mn"] = t.by_mn.empty() ? nlohmann::json(nullptr) : by_mn.front();
    j["summary"] = std::move(summary);

    const SpurTable& st = model.spurs;
    nlohmann::json rows = nlohmann::json::array();
    for (int m = 0; m <= st.max_m && !st.dbc.empty(); ++m) {
        nlohmann::json row = nlohmann::json::array();
        for (int n = 0; n <= st.max_n; ++n) row.push_back(num(st.entry(m, n)));
        rows.push_back(std::move(row));
    }
    j["spur_table"] = {{"ref_level_dbfs", st.ref_level_dbfs}, {"max_m", st.max_m}, {"max_n", st.max_n}, {"dbc", rows}};
    return j;
}

// ---- CSV -----------------------------------------------------------------------------------------------

std::string csv_num(double v) {
    return std::isfinite(v) ? format_number(v) : "";
}

struct CsvFile {
    std::filesystem::path path;
    std::ofstream out;
    explicit CsvFile(std::filesystem::path p) : path(std::move(p)), out(path, std::ios::binary | std::ios::trunc) {
        if (!out) throw InputError(path.string() + ": cannot write the CSV file");
    }
    void close() {
        out.close();
        if (!out) throw InputError(path.string() + ": write error");
    }
};

void write_csv(const std::string& dir, const PlanAnalysis& r, const PlanModel& model, const PlanLimits& lim) {
    std::error_code ec;
    std::filesystem::create_directories(dir, ec);
    if (ec || !std::filesystem::is_directory(dir))
        throw InputError(dir + ": cannot create the CSV folder (" + (ec ? ec.message() : "not a folder") + ")");
    const std::filesystem::path d(dir);
    {
        CsvFile f(d / "products.csv");
        f.out << "m,n,order,label,expr,kind,freq_hz,signed_hz,placement,in_if_band,predicted_dbc,limit_dbc\n";
        for (const Product& x : r.products)
            f.out << x.m << ',' << x.n << ',' << x.order << ',' << x.label << ',' << x.expr << ',' << to_string(x.kind)
                  << ',' << format_number(x.freq_hz) << ',' << format_number(x.signed_hz) << ',' << to_string(x.where)
                  << ',' << (x.where == Placement::if_band ? "true" : "false") << ',' << csv_num(x.predicted_dbc) << ','
                  << csv_num(product_limit_dbc(lim, x.kind)) << '\n';
        f.close();
    }
    {
        CsvFile f(d / "responses.csv");
        f.out
            << "m,n,order,label,expr,kind,rf_hz,rf_low_hz,rf_high_hz,if_signed_hz,in_rf_band,predicted_dbc,limit_dbc\n";
        for (const Response& x : r.responses)
            f.out << x.m << ',' << x.n << ',' << x.order << ',' << x.label << ',' << x.expr << ',' << to_string(x.kind)
                  << ',' << format_number(x.rf_hz) << ',' << format_number(x.rf_low_hz) << ','
                  << format_number(x.rf_high_hz) << ',' << format_number(x.if_signed_hz) << ','
                  << (x.in_rf_band ? "true" : "false") << ',' << csv_num(x.predicted_dbc) << ','
                  << csv_num(response_limit_dbc(lim, x.kind)) << '\n';
        f.close();
    }
    {
        // One row per channel spur; a channel without spurs gets one row with the spur columns empty.
        CsvFile f(d / "channels.csv");
        f.out << "wanted_hz,lo_hz,if_hz,spur_count,m,n,order,label,kind,source,spur_if_hz,spur_rf_hz,spur_rf_low_hz,"
                 "spur_rf_high_hz,predicted_dbc,limit_dbc\n";
        for (const ChannelResult& c : r.tuning.channels) {
            const std::string head = format_number(c.wanted_hz) + ',' + format_number(c.lo_hz) + ',' +
                                     format_number(c.if_hz) + ',' + std::to_string(c.spurs.size()) + ',';
            if (c.spurs.empty()) f.out << head << ",,,,,,,,,,,\n";
            for (const ChannelSpur& sp : c.spurs)
                f.out << head << sp.m << ',' << sp.n << ',' << sp.order << ',' << sp.label << ',' << to_string(sp.kind)
                      << ',' << (sp.response ? "response" : "product") << ',' << format_number(sp.if_hz) << ','
                      << format_number(sp.rf_hz) << ',' << format_number(sp.rf_low_hz) << ','
                      << format_number(sp.rf_high_hz) << ',' << csv_num(sp.predicted_dbc) << ','
                      << csv_num(spur_limit_dbc(lim, sp)) << '\n';
        }
        f.close();
    }
    {
        CsvFile f(d / "spur_table.csv");
        f.out << "m,n,predicted_dbc,ref_level_dbfs\n";
        const SpurTable& st = model.spurs;
        for (int m = 0; m <= st.max_m && !st.dbc.empty(); ++m)
            for (int n = 0; n <= st.max_n; ++n)
                f.out << m << ',' << n << ',' << csv_num(st.entry(m, n)) << ',' << format_number(st.ref_level_dbfs)
                      << '\n';
        f.close();
    }
}

void run(const Options& opt) {
    Setup s = load_session(opt.session);
    if (opt.max_order) {
        if (*opt.max_order < 1 || *opt.max_order > kMaxOrderLimit)
            throw InputError("--max-order: got " + std::to_string(*opt.max_order) + ", expected an integer from 1 to " +
                             std::to_string(kMaxOrderLimit));
        s.plan.max_order = *opt.max_order;
    }
    if (opt.level_dbfs && !(std::isfinite(*opt.level_dbfs) && *opt.level_dbfs >= -300 && *opt.level_dbfs <= 40))
        throw InputError("--level: got " + format_number(*opt.level_dbfs) +
                         ", expected an RF drive from -300 to 40 dBFS");
    const FrequencyPlan plan = frequency_plan(s);

    const double level = opt.level_dbfs.value_or(kDefaultTableRefDbfs);
    std::optional<FilterModel> rf_filter;
    if (s.rf_filter.type != FilterType::none) rf_filter = rf_filter_model(s);
    const BenchModel bench = make_bench_model(s, rf_filter ? &*rf_filter : nullptr, level);
    const PlanModel& model = bench.plan;
    const std::string& model_note = bench.note;

    const PlanAnalysis report = analyze_plan(plan, model);
    if (!opt.csv_dir.empty()) write_csv(opt.csv_dir, report, model, s.plan.limits);
    if (opt.json)
        std::cout << to_json(s, report, model, model_note).dump(1) << "\n";
    else
        print_text(std::cout, s, report, model, unit_for(std::max(plan.wanted_hz, plan.lo_hz)), model_note);
}

}  // namespace

void register_plan(CLI::App& app, int& rc) {
    auto* cmd = app.add_subcommand(
        "plan", "Frequency plan of a session: products, spurious responses, per-channel spurs and the spur table");
    auto opt = std::make_shared<Options>();
    cmd->add_option("session", opt->session, "Session file (TOML)")->required();
    cmd->add_flag("--json", opt->json, "Print one JSON document instead of the tables");
    cmd->add_option("--csv", opt->csv_dir,
                    "Also write products.csv, responses.csv, channels.csv and spur_table.csv into this folder");
    cmd->add_option("--level", opt->level_dbfs,
                    "RF drive of the wanted (and of each interferer) in dBFS (default -10)");
    cmd->add_option("--max-order", opt->max_order, "Highest order m + |n| (default: plan.max_order of the session)");
    cmd->callback([opt, &rc] {
        run(*opt);
        rc = kExitOk;
    });
}

}  // namespace hb::cli
