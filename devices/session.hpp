// TOML session files: load, validate and save a Setup.
//
// Every problem is reported with the file, the line, the key path (e.g. mixer.lo.level_dbm), the bad
// value and what is allowed; unknown keys are errors so typos never pass silently. All problems of a
// file are collected and reported together in one InputError.
#pragma once

#include <string>
#include <string_view>

#include "dsp/errors.hpp"
#include "dsp/setup.hpp"

namespace hb {

// Parses session text; `name` is used in messages and its folder becomes Setup::base_dir.
Setup parse_session(std::string_view text, const std::string& name);

// Reads and parses a session file. Throws InputError.
Setup load_session(const std::string& path);

// The session as normalised TOML text: fixed section and key order, unset optional keys left out.
// parse_session(session_to_toml(s)) == s for any valid s.
std::string session_to_toml(const Setup& s);

// Writes the session atomically (temporary file, then rename). Throws InputError.
void save_session(const Setup& s, const std::string& path);

// TOML basic-string quoting, shared with the scenario writer.
std::string toml_quote(std::string_view s);

}  // namespace hb
