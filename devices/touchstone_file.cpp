#include "devices/touchstone_file.hpp"

#include <fstream>
#include <sstream>

#include "dsp/errors.hpp"

namespace hb {

TouchstoneData read_touchstone_file(const std::string& path) {
    std::ifstream in(path, std::ios::binary);
    if (!in) throw InputError(path + ": cannot open the Touchstone file (does it exist and is it readable?)");
    std::ostringstream ss;
    ss << in.rdbuf();
    if (in.bad()) throw InputError(path + ": read error");
    return parse_touchstone(ss.str(), path);
}

}  // namespace hb
