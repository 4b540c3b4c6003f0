// SigMF metadata (open standard v1.2.5): reading with clear messages for every problem, and writing
// atomically. What the schema allows but hetbench cannot use (no sample rate, several channels,
// metadata-only recordings, archives) is refused with the reason.
#include <fcntl.h>
#include <unistd.h>

#include <cerrno>
#include <cmath>
#include <cstring>
#include <ctime>
#include <filesystem>
#include <fstream>
#include <regex>
#include <sstream>

#include "devices/recording.hpp"
#include "dsp/errors.hpp"
#include "dsp/setup.hpp"
#include "dsp/units.hpp"

namespace hb {
namespace {

using json = nlohmann::json;

constexpr std::uintmax_t kMaxMetaBytes = 64u << 20;  // a metadata file is text; anything this big is not one

// A library message without its "[json.exception.parse_error.101] " tag: the rest says where and what.
std::string plain(const json::exception& e) {
    const std::string w = e.what();
    const auto p = w.rfind("] ", w.find(' '));
    return w.rfind("[json.exception.", 0) == 0 && p != std::string::npos ? w.substr(p + 2) : w;
}

std::string show(const json& v) {
    std::string s = v.dump();
    if (s.size() > 60) s = s.substr(0, 57) + "...";
    return s;
}

// Typed access to one JSON object, every message prefixed with the file and the key path.
struct ObjectReader {
    const json& obj;
    std::string where;  // "rec.sigmf-meta: global"

    [[noreturn]] void bad(const std::string& key, const json& v, const std::string& expected) const {
        throw InputError(where + "." + key + ": got " + show(v) + ", expected " + expected);
    }
    const json* find(const std::string& key) const {
        auto it = obj.find(key);
        return it == obj.end() ? nullptr : &*it;
    }
    std::optional<double> number(const std::string& key, double lo, double hi, const std::string& unit) const {
        const json* v = find(key);
        if (!v) return std::nullopt;
        const std::string expected =
            "a number from " + format_number(lo) + " to " + format_number(hi) + (unit.empty() ? "" : " " + unit);
        if (!v->is_number()) bad(key, *v, expected);
        const double d = v->get<double>();
        if (!std::isfinite(d) || d < lo || d > hi) bad(key, *v, expected);
        return d;
    }
    std::optional<std::uint64_t> count(const std::string& key) const {
        const json* v = find(key);
        if (!v) return std::nullopt;
        if (v->is_number_unsigned()) return v->get<std::uint64_t>();
        if (v->is_number_integer() && v->get<std::int64_t>() >= 0) return static_cast<std::uint64_t>(v->get<std::int64_t>());
        bad(key, *v, "a whole number of 0 or more");
    }
    std::string text(const std::string& key) const {
        const json* v = find(key);
        if (!v) return {};
        if (!v->is_string()) bad(key, *v, "a string");
        return v->get<std::string>();
    }
    std::optional<bool> boolean(const std::string& key) const {
        const json* v = find(key);
        if (!v) return std::nullopt;
        if (!v->is_boolean()) bad(key, *v, "true or false");
        return v->get<bool>();
    }
};

// RFC 3339 with the only offset "Z", as SigMF requires for core:datetime.
bool is_sigmf_datetime(const std::string& s) {
    static const std::regex re(R"(^\d{4}-(0[1-9]|1[0-2])-(0[1-9]|[12]\d|3[01])T([01]\d|2[0-3]):[0-5]\d:([0-5]\d|60)(\.\d+)?Z$)");
    return std::regex_match(s, re);
}

// A dataset name may only name a file beside the metadata: no folders, no way up.
bool is_plain_file_name(const std::string& s) {
    if (s.empty() || s == "." || s == "..") return false;
    for (char c : s)
        if (c == '/' || c == '\\' || c == '\0') return false;
    return true;
}

}  // namespace

SigmfPaths sigmf_paths(const std::string& path) {
    auto strip = [&](std::string_view suffix) -> std::optional<std::string> {
        if (path.size() > suffix.size() && path.compare(path.size() - suffix.size(), suffix.size(), suffix) == 0)
            return path.substr(0, path.size() - suffix.size());
        return std::nullopt;
    };
    if (strip(".sigmf"))
        throw InputError(path + ": SigMF archives (.sigmf, a tar file) are not read; extract the .sigmf-meta and "
                                ".sigmf-data pair and open one of them");
    if (strip(".sigmf-collection"))
        throw InputError(path + ": SigMF collections are not read; open one of its recordings (.sigmf-meta)");
    std::string base = path;
    if (auto b = strip(".sigmf-meta")) base = *b;
    else if (auto b2 = strip(".sigmf-data")) base = *b2;
    return {base + ".sigmf-meta", base + ".sigmf-data"};
}

namespace {
SigmfMeta parse_meta(const json& root, const std::string& name);
}

SigmfMeta parse_sigmf_meta(const std::string& text, const std::string& name) {
    json root;
    try {
        root = json::parse(text);
    } catch (const json::exception& e) {  // parse errors, and numbers too large for a double
        throw InputError(name + ": not valid JSON: " + plain(e));
    }
    try {
        return parse_meta(root, name);
    } catch (const json::exception& e) {  // a type check missed above: still bad input, never a crash
        throw InputError(name + ": " + plain(e));
    }
}

namespace {
SigmfMeta parse_meta(const json& root, const std::string& name) {
    if (!root.is_object()) throw InputError(name + ": expected a JSON object with global, captures and annotations");
    for (const char* k : {"global", "captures", "annotations"})
        if (!root.contains(k))
            throw InputError(name + ": missing required \"" + k + "\" (a SigMF metadata file holds global, captures "
                                    "and annotations)");
    for (const auto& [k, v] : root.items())
        if (k != "global" && k != "captures" && k != "annotations")
            throw InputError(name + ": unexpected top-level key \"" + k +
                             "\"; SigMF allows only global, captures and annotations there");
    const json& g = root["global"];
    if (!g.is_object()) throw InputError(name + ": global: got " + show(g) + ", expected an object");
    if (!root["captures"].is_array())
        throw InputError(name + ": captures: got " + show(root["captures"]) + ", expected an array");
    if (!root["annotations"].is_array())
        throw InputError(name + ": annotations: got " + show(root["annotations"]) + ", expected an array");

    SigmfMeta m;
    const ObjectReader gr{g, name + ": global"};
    if (!g.contains("core:datatype")) throw InputError(name + ": global: missing required core:datatype");
    if (!g.contains("core:version")) throw InputError(name + ": global: missing required core:version");
    if (!g["core:datatype"].is_string()) gr.bad("core:datatype", g["core:datatype"], "a string such as \"cf32_le\"");
    m.format = require_datatype(g["core:datatype"].get<std::string>(), name + ": global.core:datatype");

    m.version = gr.text("core:version");
    static const std::regex version_re(R"(^(\d+)\.(\d+)\.(\d+))");
    std::smatch vm;
    if (!std::regex_search(m.version, vm, version_re))
        gr.bad("core:version", g["core:version"], "a version X.Y.Z such as \"1.2.5\" (no leading v)");
    if (vm[1] != "1")
        gr.bad("core:version", g["core:version"], "a SigMF 1.x version (hetbench reads 1.0.0 to " +
                                                       std::string(kSigmfVersion) + " and later 1.x)");

    if (!g.contains("core:sample_rate"))
        throw InputError(name + ": global: missing core:sample_rate; hetbench needs the sample rate (Hz) to "
                                "read a recording");
    m.sample_rate_hz = *gr.number("core:sample_rate", 1.0, kMaxFrequencyHz, "samples per second");

    m.description = gr.text("core:description");
    m.hw = gr.text("core:hw");
    m.author = gr.text("core:author");
    m.recorder = gr.text("core:recorder");
    m.dataset = gr.text("core:dataset");
    if (g.contains("core:dataset") && !is_plain_file_name(m.dataset))
        gr.bad("core:dataset", g["core:dataset"],
               "the name of a file in the same folder as the metadata (no folders, no \"..\")");
    m.offset = gr.count("core:offset").value_or(0);
    m.trailing_bytes = gr.count("core:trailing_bytes").value_or(0);
    if (gr.boolean("core:metadata_only").value_or(false) && m.dataset.empty())
        throw InputError(name + ": global.core:metadata_only is true: this metadata comes without samples");
    if (const auto ch = gr.count("core:num_channels"); ch && *ch != 1)
        gr.bad("core:num_channels", g["core:num_channels"],
               "1 (hetbench reads single-channel recordings; split channels into separate recordings)");

    if (const json* ext = gr.find("core:extensions")) {
        if (!ext->is_array()) gr.bad("core:extensions", *ext, "an array of {name, version, optional} objects");
        for (std::size_t i = 0; i < ext->size(); ++i) {
            const json& e = (*ext)[i];
            const std::string at = "core:extensions[" + std::to_string(i) + "]";
            if (!e.is_object() || !e.contains("name") || !e["name"].is_string() || !e.contains("optional") ||
                !e["optional"].is_boolean())
                gr.bad(at, e, "an object with name (string), version (string) and optional (true/false)");
            if (!e["optional"].get<bool>() && e["name"].get<std::string>() != kHetbenchExtension)
                throw InputError(name + ": global." + at + ": the extension \"" + e["name"].get<std::string>() +
                                 "\" is marked required (optional: false) and hetbench does not know it");
        }
    }
    if (const json* s = gr.find("hetbench:setup")) {
        if (!s->is_object()) gr.bad("hetbench:setup", *s, "an object (a hetbench setup)");
        m.setup = *s;
    }

    m.sample_count = gr.count("hetbench:sample_count");

    const json& caps = root["captures"];
    for (std::size_t i = 0; i < caps.size(); ++i) {
        const json& c = caps[i];
        const std::string at = name + ": captures[" + std::to_string(i) + "]";
        if (!c.is_object()) throw InputError(at + ": got " + show(c) + ", expected an object");
        const ObjectReader cr{c, at};
        SigmfCapture cap;
        const auto start = cr.count("core:sample_start");
        if (!start) throw InputError(at + ": missing required core:sample_start");
        cap.sample_start = *start;
        if (!m.captures.empty() && cap.sample_start <= m.captures.back().sample_start)
            throw InputError(at + ".core:sample_start: got " + std::to_string(cap.sample_start) +
                             ", expected more than the previous capture's " +
                             std::to_string(m.captures.back().sample_start) +
                             " (captures must be in ascending order of core:sample_start)");
        cap.frequency_hz = cr.number("core:frequency", -kMaxFrequencyHz, kMaxFrequencyHz, "Hz");
        cap.global_index = cr.count("core:global_index");
        cap.header_bytes = cr.count("core:header_bytes").value_or(0);
        cap.datetime = cr.text("core:datetime");
        if (!cap.datetime.empty() && !is_sigmf_datetime(cap.datetime))
            m.warnings.push_back(at + ".core:datetime: \"" + cap.datetime +
                                 "\" is not an RFC 3339 UTC time (YYYY-MM-DDTHH:MM:SS[.fff]Z); kept as text");
        m.captures.push_back(std::move(cap));
    }
    if (m.captures.empty()) m.captures.push_back({});  // the spec: no captures means one at sample 0
    if (m.captures.front().sample_start != 0)
        m.warnings.push_back(name + ": the first capture starts at sample " +
                             std::to_string(m.captures.front().sample_start) +
                             "; the samples before it are read with its settings");

    const json& anns = root["annotations"];
    for (std::size_t i = 0; i < anns.size(); ++i) {
        const json& a = anns[i];
        const std::string at = name + ": annotations[" + std::to_string(i) + "]";
        if (!a.is_object()) throw InputError(at + ": got " + show(a) + ", expected an object");
        const ObjectReader ar{a, at};
        SigmfAnnotation an;
        const auto start = ar.count("core:sample_start");
        if (!start) throw InputError(at + ": missing required core:sample_start");
        an.sample_start = *start;
        an.sample_count = ar.count("core:sample_count");
        an.freq_lower_edge_hz = ar.number("core:freq_lower_edge", -kMaxFrequencyHz, kMaxFrequencyHz, "Hz");
        an.freq_upper_edge_hz = ar.number("core:freq_upper_edge", -kMaxFrequencyHz, kMaxFrequencyHz, "Hz");
        an.label = ar.text("core:label");
        an.comment = ar.text("core:comment");
        an.generator = ar.text("core:generator");
        an.lost_samples = ar.count("hetbench:lost_samples");
        m.annotations.push_back(std::move(an));
    }
    return m;
}
}  // namespace

SigmfMeta read_sigmf_meta(const std::string& meta_path) {
    std::error_code ec;
    const auto size = std::filesystem::file_size(meta_path, ec);
    if (ec) throw InputError(meta_path + ": cannot read the SigMF metadata: " + ec.message());
    if (size > kMaxMetaBytes)
        throw InputError(meta_path + ": " + std::to_string(size) + " bytes is too large for a SigMF metadata file");
    std::ifstream in(meta_path, std::ios::binary);
    if (!in) throw InputError(meta_path + ": cannot open the SigMF metadata");
    std::ostringstream ss;
    ss << in.rdbuf();
    return parse_sigmf_meta(ss.str(), meta_path);
}

nlohmann::json sigmf_meta_to_json(const SigmfMeta& m) {
    json g = json::object();
    g["core:datatype"] = datatype_name(m.format);
    g["core:version"] = m.version.empty() ? std::string(kSigmfVersion) : m.version;
    g["core:sample_rate"] = m.sample_rate_hz;
    if (!m.description.empty()) g["core:description"] = m.description;
    if (!m.hw.empty()) g["core:hw"] = m.hw;
    if (!m.author.empty()) g["core:author"] = m.author;
    g["core:recorder"] = m.recorder.empty() ? std::string("hetbench") : m.recorder;
    if (!m.dataset.empty()) g["core:dataset"] = m.dataset;
    if (m.offset) g["core:offset"] = m.offset;
    if (m.trailing_bytes) g["core:trailing_bytes"] = m.trailing_bytes;
    g["core:extensions"] = json::array(
        {{{"name", kHetbenchExtension}, {"version", kHetbenchExtensionVersion}, {"optional", true}}});
    if (m.sample_count) g["hetbench:sample_count"] = *m.sample_count;
    if (m.setup) g["hetbench:setup"] = *m.setup;

    json caps = json::array();
    for (const SigmfCapture& c : m.captures) {
        json o = {{"core:sample_start", c.sample_start}};
        if (c.frequency_hz) o["core:frequency"] = *c.frequency_hz;
        if (c.global_index) o["core:global_index"] = *c.global_index;
        if (!c.datetime.empty()) o["core:datetime"] = c.datetime;
        if (c.header_bytes) o["core:header_bytes"] = c.header_bytes;
        caps.push_back(std::move(o));
    }
    json anns = json::array();
    for (const SigmfAnnotation& a : m.annotations) {
        json o = {{"core:sample_start", a.sample_start}};
        if (a.sample_count) o["core:sample_count"] = *a.sample_count;
        if (a.freq_lower_edge_hz) o["core:freq_lower_edge"] = *a.freq_lower_edge_hz;
        if (a.freq_upper_edge_hz) o["core:freq_upper_edge"] = *a.freq_upper_edge_hz;
        if (!a.label.empty()) o["core:label"] = a.label;
        if (!a.comment.empty()) o["core:comment"] = a.comment;
        if (!a.generator.empty()) o["core:generator"] = a.generator;
        if (a.lost_samples) o["hetbench:lost_samples"] = *a.lost_samples;
        anns.push_back(std::move(o));
    }
    return {{"global", std::move(g)}, {"captures", std::move(caps)}, {"annotations", std::move(anns)}};
}

void write_sigmf_meta(const SigmfMeta& m, const std::string& meta_path) {
    // Text that is not UTF-8 (a source's file name in another encoding) is written as U+FFFD: JSON must be UTF-8.
    const std::string text = sigmf_meta_to_json(m).dump(2, ' ', false, json::error_handler_t::replace) + "\n";
    const std::string tmp = meta_path + ".tmp";
    const int fd = ::open(tmp.c_str(), O_WRONLY | O_CREAT | O_TRUNC | O_CLOEXEC, 0644);
    if (fd < 0) throw InputError(meta_path + ": cannot write the metadata (" + tmp + "): " + std::strerror(errno));
    std::size_t done = 0;
    while (done < text.size()) {
        const ssize_t k = ::write(fd, text.data() + done, text.size() - done);
        if (k < 0 && errno == EINTR) continue;
        if (k <= 0) {
            const int err = errno;
            ::close(fd);
            ::unlink(tmp.c_str());
            throw InputError(meta_path + ": cannot write the metadata: " + std::strerror(err) +
                             " (the previous metadata file is kept)");
        }
        done += static_cast<std::size_t>(k);
    }
    // The new file must be on disk before it replaces the old one, or a crash could leave an empty file.
    if (::fsync(fd) != 0) {
        const int err = errno;
        ::close(fd);
        ::unlink(tmp.c_str());
        throw InputError(meta_path + ": cannot write the metadata: " + std::strerror(err) +
                         " (the previous metadata file is kept)");
    }
    ::close(fd);
    if (::rename(tmp.c_str(), meta_path.c_str()) != 0) {
        const int err = errno;
        ::unlink(tmp.c_str());
        throw InputError(meta_path + ": cannot replace the metadata: " + std::strerror(err));
    }
}

std::string iso8601_utc(std::chrono::system_clock::time_point t) {
    const auto ms = std::chrono::duration_cast<std::chrono::milliseconds>(t.time_since_epoch()).count();
    const std::time_t secs = static_cast<std::time_t>(ms >= 0 ? ms / 1000 : (ms - 999) / 1000);
    const int frac = static_cast<int>(ms - static_cast<long long>(secs) * 1000);
    std::tm tm{};
    ::gmtime_r(&secs, &tm);
    char buf[96];
    std::snprintf(buf, sizeof buf, "%04d-%02d-%02dT%02d:%02d:%02d.%03dZ", tm.tm_year + 1900, tm.tm_mon + 1,
                  tm.tm_mday, tm.tm_hour, tm.tm_min, tm.tm_sec, frac);
    return buf;
}

}  // namespace hb
