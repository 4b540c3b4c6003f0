#include "devices/setup_json.hpp"

#include <cmath>
#include <toml.hpp>

#include "devices/session.hpp"
#include "dsp/errors.hpp"

namespace hb {
namespace {

// The session text is the one serialisation of a Setup; JSON is a faithful re-encoding of it, so the
// two can never disagree about keys, defaults or validation.
nlohmann::json to_json(const toml::value& v) {
    switch (v.type()) {
        case toml::value_t::boolean: return v.as_boolean();
        case toml::value_t::integer: return v.as_integer();
        case toml::value_t::floating: return v.as_floating();
        case toml::value_t::string: return v.as_string().str;
        case toml::value_t::array: {
            nlohmann::json a = nlohmann::json::array();
            for (const auto& x : v.as_array()) a.push_back(to_json(x));
            return a;
        }
        case toml::value_t::table: {
            nlohmann::json o = nlohmann::json::object();
            for (const auto& [k, x] : v.as_table()) o[k] = to_json(x);
            return o;
        }
        default: return nullptr;
    }
}

toml::value to_toml(const nlohmann::json& j, const std::string& where) {
    switch (j.type()) {
        case nlohmann::json::value_t::boolean: return toml::value(j.get<bool>());
        case nlohmann::json::value_t::number_integer: return toml::value(j.get<std::int64_t>());
        case nlohmann::json::value_t::number_unsigned: return toml::value(static_cast<std::int64_t>(j.get<std::uint64_t>()));
        case nlohmann::json::value_t::number_float: return toml::value(j.get<double>());
        case nlohmann::json::value_t::string: return toml::value(j.get<std::string>());
        case nlohmann::json::value_t::array: {
            toml::array a;
            for (const auto& x : j) a.push_back(to_toml(x, where));
            return toml::value(a);
        }
        case nlohmann::json::value_t::object: {
            toml::table t;
            for (const auto& [k, x] : j.items()) t.emplace(k, to_toml(x, where + "." + k));
            return toml::value(t);
        }
        default: throw InputError(where + ": null or unsupported value in an embedded hetbench setup");
    }
}

}  // namespace

nlohmann::json setup_to_json(const Setup& s) {
    std::istringstream in(session_to_toml(s));
    return to_json(toml::parse(in, "setup"));
}

Setup setup_from_json(const nlohmann::json& j, const std::string& name) {
    if (!j.is_object()) throw InputError(name + ": the embedded hetbench setup is not a JSON object");
    std::ostringstream text;
    text << toml::value(to_toml(j, name).as_table());
    Setup s = parse_session(text.str(), name);
    return s;
}

}  // namespace hb
