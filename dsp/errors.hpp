// The one error type for bad input: files, sessions, parameters, devices.
// Its message names the file (or setting) and what was expected; commands turn it into exit code 2.
#pragma once

#include <stdexcept>
#include <string>

namespace hb {

struct InputError : std::runtime_error {
    using std::runtime_error::runtime_error;
};

}  // namespace hb
