// Reading TOML tables with messages that name the file, the line, the key path, the bad value and what was
// expected; keys nobody read are reported as unknown. Used by the scenario loader (devices/scenario_file.cpp);
// the same habits as the session loader, in a form other loaders can share.
#pragma once

#include <map>
#include <optional>
#include <set>
#include <string>
#include <string_view>
#include <toml.hpp>
#include <utility>
#include <vector>

#include "dsp/setup.hpp"

namespace hb::toml_reader {

// All problems of one file, each with its line when known.
struct Problems {
    std::string file;
    std::vector<std::pair<int, std::string>> items;  // (line or 0, "key: message")
    std::map<std::string, int> key_lines;            // where each key path was read
    void add(int line, const std::string& key, const std::string& message);
    // Adds validator problems (key paths) at the lines where those keys were read.
    void add_validation(const std::vector<SetupProblem>& problems);
    // Throws InputError listing every problem, sorted by line, when there are any.
    void throw_if_any() const;
};

int line_of(const toml::value& v);
std::string describe(const toml::value& v);  // "-3 (an integer)", "\"x\" (a string)", ...

// Checks what toml11 3.7 cannot be trusted with, before it sees the text (both found by fuzzing, see
// tests/fuzz/corpus/*/crash-*): TOML documents must be UTF-8 (TOML v1.0.0, "Spec"), and toml11 reads past its
// buffer on a byte that is not inside a literal string; and it parses nested arrays and inline tables by
// recursion, so "x = [[[[...": deep enough overflows the stack. Throws InputError naming the file, line and column
// of the first byte that is not UTF-8, or of the bracket that nests deeper than kMaxTomlNesting.
inline constexpr int kMaxTomlNesting = 64;
void require_parsable(std::string_view text, const std::string& name);

// Parses TOML text; a syntax error becomes an InputError naming the file.
toml::value parse_text(std::string_view text, const std::string& name);

// One table being read: remembers the keys asked for so the rest can be reported as unknown.
struct Table {
    const toml::value& table;
    std::string path;  // key path prefix, e.g. "signal[2]"
    Problems& problems;
    std::set<std::string> used;

    std::string key_path(const std::string& key) const { return path.empty() ? key : path + "." + key; }
    bool has(const std::string& key) const { return table.as_table().count(key) != 0; }
    const toml::value* find(const std::string& key);
    void bad(const toml::value& v, const std::string& key, const std::string& expected);
    void missing(const std::string& key, const std::string& what);
    // Reports every key not asked for, naming the allowed ones.
    void finish(const std::string& allowed);

    // Each returns true when the key was present and valid (out is then set); problems are recorded.
    bool number(const std::string& key, double& out, std::string_view unit);
    bool frequency(const std::string& key, double& out);  // a number in Hz, or text such as "10.7M"
    bool integer(const std::string& key, long long& out);
    bool integer(const std::string& key, int& out);
    bool boolean(const std::string& key, bool& out);
    bool string(const std::string& key, std::string& out);
    template <class E>
    bool enumeration(const std::string& key, E& out) {
        const toml::value* v = find(key);
        if (!v) return false;
        if (!v->is_string() || !parse(v->as_string().str, out)) {
            bad(*v, key, "one of " + allowed_names<E>());
            return false;
        }
        return true;
    }
};

// A sub-table ("[a.b]"): nullptr when absent, a problem when present but not a table.
const toml::value* sub_table(Table& t, const std::string& key);
// An array of tables ("[[key]]"): a problem when the key holds something else.
std::vector<const toml::value*> table_array(Table& t, const std::string& key);

}  // namespace hb::toml_reader
