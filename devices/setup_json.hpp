// The Setup as JSON, for reports and for the hetbench extension of SigMF metadata, and back.
// The JSON mirrors the session file: the same sections and keys (see devices/session.hpp).
#pragma once

#include <nlohmann/json.hpp>
#include <string>

#include "dsp/setup.hpp"

namespace hb {

nlohmann::json setup_to_json(const Setup& s);

// Reads a Setup back from setup_to_json's form (e.g. embedded in a recording). `name` is used in
// messages and gives base_dir. Throws InputError with the same messages as the session loader.
Setup setup_from_json(const nlohmann::json& j, const std::string& name);

}  // namespace hb
