// Where the bundled demo session is: beside the build tree's executable (build/app/hetbench →
// ../../recordings/demo.toml), in HETBENCH_SOURCE_DIR from the environment, or in the source tree this binary
// was built from.
#include <cstdlib>
#include <filesystem>
#include <system_error>
#include <vector>

#include "gui/gui.hpp"

namespace hb::gui {

std::string find_demo_session(const char* argv0) {
    namespace fs = std::filesystem;
    std::vector<fs::path> roots;
    std::error_code ec;
    {
        fs::path exe = fs::canonical("/proc/self/exe", ec);
        if (ec && argv0 && *argv0) exe = fs::absolute(argv0, ec);
        if (!ec) {
            roots.push_back(exe.parent_path());                              // installed beside it
            roots.push_back(exe.parent_path().parent_path().parent_path());  // build/app/hetbench
        }
    }
    if (const char* env = std::getenv("HETBENCH_SOURCE_DIR"); env && *env) roots.emplace_back(env);
#ifdef HETBENCH_SOURCE_DIR
    roots.emplace_back(HETBENCH_SOURCE_DIR);
#endif
    for (const fs::path& r : roots) {
        for (const fs::path& p : {r / "recordings" / "demo.toml", r / "demo.toml"})
            if (fs::is_regular_file(p, ec)) return p.string();
    }
    return {};
}

}  // namespace hb::gui
