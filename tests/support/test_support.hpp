// Helpers shared by the tests: where things are, temporary folders, running the real command line.
#pragma once

#include <filesystem>
#include <optional>
#include <string>
#include <vector>

namespace hb::test {

std::filesystem::path source_dir();  // the project root
std::filesystem::path binary_dir();  // the build tree
std::filesystem::path hetbench_exe();
// ../shared next to the project, or nothing where it is absent (a user's fresh clone).
std::optional<std::filesystem::path> shared_dir();

// A fresh temporary folder, removed when the object dies.
struct TempDir {
    std::filesystem::path path;
    TempDir();
    ~TempDir();
    TempDir(const TempDir&) = delete;
    TempDir& operator=(const TempDir&) = delete;
    std::filesystem::path file(const std::string& name) const { return path / name; }
};

void write_file(const std::filesystem::path& p, const std::string& text);
std::string read_file(const std::filesystem::path& p);

struct RunResult {
    int exit_code = -1;
    std::string out;
    std::string err;
};
// Runs a program with arguments (no shell), capturing stdout and stderr.
RunResult run(const std::vector<std::string>& argv, const std::vector<std::string>& env = {});
// Runs hetbench with arguments.
RunResult run_hetbench(const std::vector<std::string>& args, const std::vector<std::string>& env = {});

// A python3 that has numpy and scipy (Debian's /usr/bin/python3), or nothing.
std::optional<std::string> python_with_scipy();

}  // namespace hb::test
