// Reading Touchstone v1 two-port files (.s2p) from disk; the parsing itself is dsp/touchstone.
#pragma once

#include <string>

#include "dsp/touchstone.hpp"

namespace hb {

// Reads and parses a .s2p file. Throws InputError naming the file (and the line, for bad content).
TouchstoneData read_touchstone_file(const std::string& path);

}  // namespace hb
