#include "devices/toml_reader.hpp"

#include <algorithm>
#include <cmath>
#include <cstdio>
#include <limits>
#include <sstream>

#include "devices/session.hpp"
#include "devices/utf8.hpp"
#include "dsp/errors.hpp"
#include "dsp/units.hpp"

namespace hb::toml_reader {

void Problems::add(int line, const std::string& key, const std::string& message) {
    items.emplace_back(line, key.empty() ? message : key + ": " + message);
}

void Problems::add_validation(const std::vector<SetupProblem>& problems) {
    for (const SetupProblem& p : problems) {
        auto it = key_lines.find(p.key);
        add(it == key_lines.end() ? 0 : it->second, p.key, p.message);
    }
}

void Problems::throw_if_any() const {
    if (items.empty()) return;
    auto sorted = items;
    std::stable_sort(sorted.begin(), sorted.end(), [](const auto& a, const auto& b) { return a.first < b.first; });
    std::string msg = file + ": " + std::to_string(sorted.size()) + " problem" + (sorted.size() == 1 ? "" : "s");
    for (const auto& [line, text] : sorted)
        msg += "\n  " + file + (line > 0 ? ":" + std::to_string(line) : "") + ": " + text;
    throw InputError(msg);
}

int line_of(const toml::value& v) {
    const auto loc = v.location();
    return loc.line() > 0 ? static_cast<int>(loc.line()) : 0;
}

std::string describe(const toml::value& v) {
    switch (v.type()) {
        case toml::value_t::boolean: return v.as_boolean() ? "true (a boolean)" : "false (a boolean)";
        case toml::value_t::integer: return std::to_string(v.as_integer()) + " (an integer)";
        case toml::value_t::floating: return format_number(v.as_floating()) + " (a number)";
        case toml::value_t::string: return toml_quote(v.as_string().str) + " (a string)";
        case toml::value_t::array: return "an array";
        case toml::value_t::table: return "a table";
        default: return "a date/time";
    }
}

namespace {
[[noreturn]] void refuse_at(std::string_view text, std::size_t at, const std::string& name, const std::string& what,
                            const std::string& why) {
    const std::string_view before = text.substr(0, at);
    const auto line = 1 + std::count(before.begin(), before.end(), '\n');
    const auto line_start = before.rfind('\n');
    const std::size_t column = at - (line_start == std::string_view::npos ? 0 : line_start + 1) + 1;
    throw InputError(name + ":" + std::to_string(line) + ": not valid TOML: " + what + " at column " +
                     std::to_string(column) + " " + why);
}

// The deepest nesting of [ and { in values, skipping strings and comments (a lexer's view, no more: what is
// not TOML is left to the parser). Table headers ([a], [[a]]) nest at most 2.
void check_nesting(std::string_view t, const std::string& name) {
    int depth = 0;
    for (std::size_t i = 0; i < t.size(); ++i) {
        const char c = t[i];
        if (c == '#') {
            while (i < t.size() && t[i] != '\n') ++i;
        } else if (c == '"' || c == '\'') {
            const bool multi = t.compare(i, 3, std::string(3, c)) == 0;
            const std::string_view close =
                multi ? std::string_view(c == '"' ? "\"\"\"" : "\'\'\'") : std::string_view(c == '"' ? "\"" : "'");
            std::size_t j = i + close.size();
            for (; j < t.size(); ++j) {
                if (c == '"' && t[j] == '\\') {  // basic strings: an escape hides the next character
                    ++j;
                    continue;
                }
                if (!multi && t[j] == '\n') break;
                if (t.compare(j, close.size(), close) == 0) break;
            }
            i = j + close.size() - 1;
        } else if (c == '[' || c == '{') {
            if (++depth > kMaxTomlNesting)
                refuse_at(t, i, name, "the bracket",
                          "nests arrays and inline tables deeper than " + std::to_string(kMaxTomlNesting));
        } else if (c == ']' || c == '}') {
            if (depth > 0) --depth;
        }
    }
}
}  // namespace

void require_parsable(std::string_view text, const std::string& name) {
    if (const auto bad = first_invalid_utf8(text)) {
        char hex[8];
        std::snprintf(hex, sizeof hex, "0x%02X", static_cast<unsigned char>(text[*bad]));
        refuse_at(text, *bad, name, std::string("the byte ") + hex,
                  "is not UTF-8 (a TOML file must be UTF-8 text; save it as UTF-8)");
    }
    check_nesting(text, name);
}

toml::value parse_text(std::string_view text, const std::string& name) {
    require_parsable(text, name);
    try {
        std::istringstream in{std::string(text)};
        return toml::parse(in, name);
    } catch (const std::exception& e) {
        throw InputError(name + ": not valid TOML:\n" + e.what());
    }
}

const toml::value* Table::find(const std::string& key) {
    used.insert(key);
    const auto& t = table.as_table();
    auto it = t.find(key);
    if (it == t.end()) return nullptr;
    problems.key_lines[key_path(key)] = line_of(it->second);
    return &it->second;
}

void Table::bad(const toml::value& v, const std::string& key, const std::string& expected) {
    problems.add(line_of(v), key_path(key), "got " + describe(v) + ", expected " + expected);
}

void Table::missing(const std::string& key, const std::string& what) {
    problems.add(line_of(table), key_path(key), "missing required key (" + what + ")");
}

void Table::finish(const std::string& allowed) {
    std::vector<std::pair<std::string, int>> unknown;
    for (const auto& [k, v] : table.as_table())
        if (!used.count(k)) unknown.emplace_back(k, line_of(v));
    std::sort(unknown.begin(), unknown.end());
    for (const auto& [k, line] : unknown) problems.add(line, key_path(k), "unknown key; allowed here: " + allowed);
}

namespace {
bool read_number(Table& t, const std::string& key, double& out, std::string_view unit, bool frequency) {
    const toml::value* v = t.find(key);
    if (!v) return false;
    const std::string what = std::string("a finite number") + (unit.empty() ? "" : " in " + std::string(unit));
    double x = 0;
    if (v->is_integer()) {
        x = static_cast<double>(v->as_integer());
    } else if (v->is_floating()) {
        x = v->as_floating();
    } else if (v->is_string() && frequency) {
        auto f = parse_frequency(v->as_string().str);
        if (!f) {
            t.bad(*v, key, "a frequency in Hz (a number, or text such as \"10.7M\" or \"455 kHz\")");
            return false;
        }
        x = *f;
    } else {
        t.bad(*v, key, frequency ? what + " (or text such as \"10.7M\")" : what);
        return false;
    }
    if (!std::isfinite(x)) {
        t.bad(*v, key, what);
        return false;
    }
    out = x;
    return true;
}
}  // namespace

bool Table::number(const std::string& key, double& out, std::string_view unit) {
    return read_number(*this, key, out, unit, false);
}
bool Table::frequency(const std::string& key, double& out) { return read_number(*this, key, out, "Hz", true); }

bool Table::integer(const std::string& key, long long& out) {
    const toml::value* v = find(key);
    if (!v) return false;
    if (!v->is_integer()) {
        bad(*v, key, "an integer");
        return false;
    }
    out = v->as_integer();
    return true;
}

bool Table::integer(const std::string& key, int& out) {
    long long x = 0;
    if (!integer(key, x)) return false;
    if (x < std::numeric_limits<int>::min() || x > std::numeric_limits<int>::max()) {
        problems.add(problems.key_lines[key_path(key)], key_path(key),
                     "got " + std::to_string(x) + ", which is far outside the allowed range");
        return false;
    }
    out = static_cast<int>(x);
    return true;
}

bool Table::boolean(const std::string& key, bool& out) {
    const toml::value* v = find(key);
    if (!v) return false;
    if (!v->is_boolean()) {
        bad(*v, key, "true or false");
        return false;
    }
    out = v->as_boolean();
    return true;
}

bool Table::string(const std::string& key, std::string& out) {
    const toml::value* v = find(key);
    if (!v) return false;
    if (!v->is_string()) {
        bad(*v, key, "a string");
        return false;
    }
    out = v->as_string().str;
    return true;
}

const toml::value* sub_table(Table& t, const std::string& key) {
    const toml::value* v = t.find(key);
    if (!v) return nullptr;
    if (!v->is_table()) {
        t.bad(*v, key, "a table ([" + t.key_path(key) + "])");
        return nullptr;
    }
    return v;
}

std::vector<const toml::value*> table_array(Table& t, const std::string& key) {
    std::vector<const toml::value*> out;
    const toml::value* v = t.find(key);
    if (!v) return out;
    if (!v->is_array()) {
        t.bad(*v, key, "an array of tables: write [[" + key + "]]");
        return out;
    }
    for (const auto& item : v->as_array()) {
        if (!item.is_table()) {
            t.bad(item, key, "a table in the [[" + key + "]] array");
            continue;
        }
        out.push_back(&item);
    }
    return out;
}

}  // namespace hb::toml_reader
