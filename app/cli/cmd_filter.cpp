// hetbench filter SESSION.toml [--csv FILE]: the summary figures of the RF filter, of each IF filter and of the IF
// cascade, and how each is realised on its window when the session gives one; --csv writes the responses.
// hetbench filter --presets [--csv FILE]: the same for every named preset.
#include <algorithm>
#include <cmath>
#include <cstdio>
#include <fstream>
#include <iostream>
#include <sstream>

#include "cli/commands.hpp"
#include "devices/filter_setup.hpp"
#include "devices/session.hpp"
#include "dsp/errors.hpp"
#include "dsp/filter_presets.hpp"
#include "dsp/filter_summary.hpp"
#include "dsp/units.hpp"

namespace hb::cli {
namespace {

std::string db(double v, int decimals = 2) {
    if (!std::isfinite(v)) return "not reached";
    if (std::abs(v) < 0.5 * std::pow(10.0, -decimals)) v = 0.0;  // no "-0.00 dB"
    char b[64];
    std::snprintf(b, sizeof b, "%.*f dB", decimals, v);
    return b;
}

std::string freq(double hz) {
    return std::isfinite(hz) ? format_frequency(hz, 7) : "not reached";
}

std::string describe(const FilterModel& m) {
    const FilterSpec& f = m.spec;
    std::ostringstream o;
    o << to_string(f.type);
    if (!f.preset.empty()) o << " (preset " << f.preset << ")";
    if (m.kind == ModelKind::measured) {
        o << ", " << f.path << ", " << m.measured.freq_hz.size() << " points from " << freq(m.measured.freq_hz.front())
          << " to " << freq(m.measured.freq_hz.back());
    } else {
        o << " " << to_string(f.response);
        if (f.response == FilterResponse::bandpass) o << ", centre " << freq(f.center_hz);
        o << ", " << (f.response == FilterResponse::bandpass ? "width " : "edge ") << freq(f.bandwidth_hz);
        if (m.kind == ModelKind::analog) o << ", order " << f.order;
        if (f.type == FilterType::chebyshev1 || f.type == FilterType::elliptic) o << ", ripple " << db(f.ripple_db);
        if (f.type == FilterType::chebyshev2 || f.type == FilterType::elliptic || f.type == FilterType::fir)
            o << ", stop-band " << db(f.stop_atten_db, 1);
        if (m.kind == ModelKind::fir)
            o << ", " << to_string(f.fir_method) << ", " << m.fir.taps.size() << " taps at "
              << freq(m.fir_window.sample_rate_hz);
    }
    if (f.insertion_loss_db > 0) o << ", loss " << db(f.insertion_loss_db) << " per section";
    if (f.sections > 1) o << ", " << f.sections << " sections in series";
    return o.str();
}

void print_summary(std::ostringstream& o, const FilterSummary& s) {
    o << "  insertion loss        " << db(s.insertion_loss_db) << " at " << freq(s.peak_hz) << "\n";
    o << "  -3 dB bandwidth       " << freq(s.bw3_hz);
    if (std::isfinite(s.bw3_hz)) o << "  (" << freq(s.lo3_hz) << " to " << freq(s.hi3_hz) << ")";
    o << "\n  -60 dB bandwidth      " << freq(s.bw60_hz);
    if (std::isfinite(s.bw60_hz)) o << "  (" << freq(s.lo60_hz) << " to " << freq(s.hi60_hz) << ")";
    o << "\n  shape factor          ";
    if (std::isfinite(s.shape_factor)) {
        char b[32];
        std::snprintf(b, sizeof b, "%.3f", s.shape_factor);
        o << b << " (-60 dB / -3 dB bandwidth)";
    } else {
        o << "not reached (no -60 dB bandwidth)";
    }
    o << "\n  pass-band ripple      " << db(s.ripple_db, 3) << "\n";
    o << "  stop-band rejection   " << db(s.stop_rejection_db, 1);
    if (std::isfinite(s.stop_rejection_db))
        o << " (least, beyond " << freq(s.stop_offset_hz) << " from the centre; at " << freq(s.stop_worst_hz) << ")";
    o << "\n";
}

void print_chain(std::ostringstream& o, const FilterChain& c, const char* what) {
    o << "  realised on the " << what << " window " << freq(c.input.center_hz) << " +- "
      << freq(0.5 * c.input.sample_rate_hz) << " (" << freq(c.input.sample_rate_hz) << " sample rate):\n";
    for (const ChainStage& st : c.stages) {
        o << "    " << st.label << ": " << st.realisation.why;
        if (st.label != "anti-alias" && st.realisation.form != RealisationForm::identity) {
            o << "; fit " << db(st.realisation.fit_error_db, 3) << " where the response is within 60 dB of its peak";
            if (st.realisation.delay_samples) o << "; adds " << st.realisation.delay_samples << " samples of delay";
            if (st.realisation.edge_guard > kRealiseEdgeGuard)
                o << "; checked over the inner " << 100 - 200 * st.realisation.edge_guard
                  << " % of the window (the response is above -80 dB at its edges)";
        }
        if (st.decimates) o << "; decimates by " << c.decimation << " to " << freq(c.output.sample_rate_hz);
        o << "\n";
    }
}

// The frequencies of the CSV: dense around every filter's pass-band and skirts, out to 3x its -60 dB width.
std::vector<double> csv_grid(const std::vector<std::pair<const FilterModel*, FilterSummary>>& fs, int points) {
    std::vector<double> g;
    for (const auto& [m, s] : fs) {
        const double c = s.lowpass ? 0.0 : 0.5 * (s.lo3_hz + s.hi3_hz);
        double half = std::isfinite(s.bw60_hz) ? (s.lowpass ? s.bw60_hz : 0.5 * s.bw60_hz) : 0.0;
        const double w3 = std::isfinite(s.bw3_hz) ? s.bw3_hz : m->spec.bandwidth_hz;
        half = std::max(half, 5.0 * w3);
        double a = s.lowpass ? 0.0 : c - 3.0 * half, b = c + 3.0 * half;
        a = std::max({a, m->valid_lo_hz(), s.lowpass ? 0.0 : 1e-3 * c});
        b = std::min(b, m->valid_hi_hz());
        for (int i = 0; i < points; ++i) g.push_back(a + (b - a) * i / (points - 1));
    }
    std::sort(g.begin(), g.end());
    g.erase(std::unique(g.begin(), g.end()), g.end());
    return g;
}

void write_csv(const std::string& path, const std::vector<double>& grid, const std::vector<std::string>& names,
               const std::vector<ResponseFn>& h, const std::vector<DelayFn>& gd) {
    std::ofstream out(path, std::ios::trunc);
    if (!out) throw InputError(path + ": cannot write the CSV file");
    out << "freq_hz";
    for (const auto& n : names) out << "," << n << "_db," << n << "_phase_deg," << n << "_group_delay_s";
    out << "\n";
    char b[64];
    for (double f : grid) {
        std::snprintf(b, sizeof b, "%.10g", f);
        out << b;
        for (std::size_t i = 0; i < names.size(); ++i) {
            const auto p = response_curve(h[i], gd[i], {f}).front();
            std::snprintf(b, sizeof b, ",%.6f,%.4f,%.6g", p.mag_db, p.phase_deg, p.group_delay_s);
            out << b;
        }
        out << "\n";
    }
    if (!out) throw InputError(path + ": write failed (disk full?)");
}

void show_presets(const std::string& csv, int points) {
    std::ostringstream o;
    o << "hetbench filter presets (values are common practice for each class, not the data of any one part)\n";
    std::vector<FilterModel> models;
    for (const FilterPreset& p : filter_presets()) models.push_back(make_filter_model(p.spec, std::string(p.name)));
    std::vector<std::pair<const FilterModel*, FilterSummary>> shown;
    std::vector<std::string> names;
    std::vector<ResponseFn> h;
    std::vector<DelayFn> gd;
    for (std::size_t i = 0; i < models.size(); ++i) {
        const FilterModel& m = models[i];
        o << "\n" << m.name << ": " << filter_presets()[i].description << "\n  " << describe(m) << "\n";
        const FilterSummary sm = summarise(m);
        print_summary(o, sm);
        shown.emplace_back(&m, sm);
        std::string n = m.name;
        std::replace(n.begin(), n.end(), '-', '_');
        names.push_back(n);
        h.push_back([&m](double f) { return m.response(f); });
        gd.push_back([&m](double f) { return m.group_delay(f); });
    }
    if (!csv.empty()) {
        write_csv(csv, csv_grid(shown, points), names, h, gd);
        o << "\nResponses written to " << csv << "\n";
    }
    std::cout << o.str();
}

}  // namespace

void register_filter(CLI::App& app, int& rc) {
    auto* cmd = app.add_subcommand("filter", "Summary figures and responses of the RF filter and the IF filter chain");
    auto path = std::make_shared<std::string>();
    auto csv = std::make_shared<std::string>();
    auto points = std::make_shared<int>(2001);
    auto presets = std::make_shared<bool>(false);
    cmd->add_option("session", *path, "Session file (TOML)");
    cmd->add_flag("--presets", *presets, "Show every filter preset (name, description, figures) instead of a session");
    cmd->add_option("--csv", *csv, "Write the responses to this CSV file (freq_hz, then dB, phase, group delay)");
    cmd->add_option("--points", *points, "CSV points per filter (default 2001)")->check(CLI::Range(11, 1000000));
    cmd->callback([path, csv, points, presets, &rc] {
        if (*presets) {
            show_presets(*csv, *points);
            rc = kExitOk;
            return;
        }
        if (path->empty()) throw InputError("filter: give a session file, or --presets");
        const Setup s = load_session(*path);
        std::ostringstream o;  // printed only once everything is built: an error leaves no half report
        o << "hetbench filter: " << *path << "\n";
        o << "Levels relative to the response's peak unless stated; frequencies are absolute.\n\n";

        std::vector<std::pair<const FilterModel*, FilterSummary>> shown;
        std::vector<std::string> names;
        std::vector<ResponseFn> h;
        std::vector<DelayFn> gd;

        const FilterModel rf = rf_filter_model(s);
        o << "RF filter [rf_filter]: ";
        if (rf.kind == ModelKind::none) {
            o << "none\n";
        } else {
            o << describe(rf) << "\n";
            const FilterSummary sm = summarise(rf);
            print_summary(o, sm);
            if (const auto w = rf_window(s)) print_chain(o, make_rf_filter_chain(s, *w), "RF");
            shown.emplace_back(&rf, sm);
            names.push_back("rf_filter");
            h.push_back([&rf](double f) { return rf.response(f); });
            gd.push_back([&rf](double f) { return rf.group_delay(f); });
        }

        const std::vector<FilterModel> ifs = if_filter_models(s);
        std::vector<FilterModel> active;
        for (std::size_t i = 0; i < ifs.size(); ++i) {
            o << "\nIF filter " << i + 1 << " [if_filter[" << i << "]]: ";
            if (ifs[i].kind == ModelKind::none) {
                o << "none\n";
                continue;
            }
            o << describe(ifs[i]) << "\n";
            const FilterSummary sm = summarise(ifs[i]);
            print_summary(o, sm);
            shown.emplace_back(&ifs[i], sm);
            active.push_back(ifs[i]);
            if (ifs.size() > 1) {
                names.push_back("if_filter_" + std::to_string(i));
                const FilterModel* m = &ifs[i];
                h.push_back([m](double f) { return m->response(f); });
                gd.push_back([m](double f) { return m->group_delay(f); });
            }
        }
        const auto iw = if_window(s);
        if (active.empty()) {
            o << "\nIF chain: no IF filters";
            if (s.if_chain.decimation > 1)
                o << " (decimation by " << s.if_chain.decimation << " with its anti-alias filter)";
            o << ", gain " << db(s.if_chain.gain_db) << "\n";
        } else {
            o << "\nIF chain: " << active.size() << " filter" << (active.size() > 1 ? "s" : "") << " in series, gain "
              << db(s.if_chain.gain_db) << " (not in the figures below), decimation " << s.if_chain.decimation << "\n";
            print_summary(o, summarise(active));
            names.push_back("if_chain");
            h.push_back([&active](double f) { return cascade_response(active, f); });
            gd.push_back([&active](double f) { return cascade_group_delay(active, f); });
        }
        if (iw) {
            print_chain(o, make_if_chain(s, *iw), "IF");
        } else if (!active.empty()) {
            o << "  (no IF window: set if_chain.sample_rate_hz, or a source's frequency_hz and sample_rate_hz, to see"
                 " the digital realisation)\n";
        }
        if (!csv->empty()) {
            if (shown.empty()) throw InputError(*path + ": no filter to write to " + *csv);
            write_csv(*csv, csv_grid(shown, *points), names, h, gd);
            o << "\nResponses written to " << *csv << "\n";
        }
        std::cout << o.str();
        rc = kExitOk;
    });
}

}  // namespace hb::cli
