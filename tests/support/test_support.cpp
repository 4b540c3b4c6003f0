#include "support/test_support.hpp"

#include <fcntl.h>
#include <sys/wait.h>
#include <unistd.h>

#include <array>
#include <cstdlib>
#include <fstream>
#include <random>
#include <sstream>
#include <stdexcept>

namespace hb::test {

std::filesystem::path source_dir() { return HETBENCH_SOURCE_DIR; }
std::filesystem::path binary_dir() { return HETBENCH_BINARY_DIR; }
std::filesystem::path hetbench_exe() { return HETBENCH_EXE; }

std::optional<std::filesystem::path> shared_dir() {
    const auto p = source_dir().parent_path() / "shared";
    if (std::filesystem::exists(p / "reference-values.md")) return p;
    return std::nullopt;
}

TempDir::TempDir() {
    std::random_device rd;
    const auto base = std::filesystem::temp_directory_path();
    for (int i = 0; i < 100; ++i) {
        auto p = base / ("hetbench-test-" + std::to_string(rd()));
        if (std::filesystem::create_directory(p)) {
            path = p;
            return;
        }
    }
    throw std::runtime_error("cannot create a temporary folder");
}

TempDir::~TempDir() {
    std::error_code ec;
    std::filesystem::remove_all(path, ec);
}

void write_file(const std::filesystem::path& p, const std::string& text) {
    std::ofstream out(p, std::ios::binary | std::ios::trunc);
    out << text;
    if (!out) throw std::runtime_error("cannot write " + p.string());
}

std::string read_file(const std::filesystem::path& p) {
    std::ifstream in(p, std::ios::binary);
    if (!in) throw std::runtime_error("cannot read " + p.string());
    std::ostringstream ss;
    ss << in.rdbuf();
    return ss.str();
}

namespace {
std::string slurp_fd(int fd) {
    std::string s;
    std::array<char, 65536> buf{};
    ssize_t n;
    while ((n = ::read(fd, buf.data(), buf.size())) > 0) s.append(buf.data(), static_cast<std::size_t>(n));
    return s;
}
}  // namespace

RunResult run(const std::vector<std::string>& argv, const std::vector<std::string>& env) {
    // stdout and stderr go to temporary files so a chatty child can never dead-lock on a full pipe.
    TempDir tmp;
    const auto out_path = tmp.file("out"), err_path = tmp.file("err");
    const pid_t pid = ::fork();
    if (pid < 0) throw std::runtime_error("fork failed");
    if (pid == 0) {
        const int o = ::open(out_path.c_str(), O_WRONLY | O_CREAT | O_TRUNC, 0600);
        const int e = ::open(err_path.c_str(), O_WRONLY | O_CREAT | O_TRUNC, 0600);
        ::dup2(o, 1);
        ::dup2(e, 2);
        for (const auto& kv : env) ::putenv(const_cast<char*>(kv.c_str()));
        std::vector<char*> args;
        for (const auto& a : argv) args.push_back(const_cast<char*>(a.c_str()));
        args.push_back(nullptr);
        ::execvp(args[0], args.data());
        ::_exit(127);
    }
    int status = 0;
    ::waitpid(pid, &status, 0);
    RunResult r;
    r.exit_code = WIFEXITED(status) ? WEXITSTATUS(status) : 128 + WTERMSIG(status);
    const int o = ::open(out_path.c_str(), O_RDONLY), e = ::open(err_path.c_str(), O_RDONLY);
    r.out = slurp_fd(o);
    r.err = slurp_fd(e);
    ::close(o);
    ::close(e);
    return r;
}

RunResult run_hetbench(const std::vector<std::string>& args, const std::vector<std::string>& env) {
    std::vector<std::string> argv{hetbench_exe().string()};
    argv.insert(argv.end(), args.begin(), args.end());
    return run(argv, env);
}

std::optional<std::string> python_with_scipy() {
    for (const char* py : {"/usr/bin/python3"}) {
        if (::access(py, X_OK) != 0) continue;
        const auto r = run({py, "-c", "import numpy, scipy.signal"});
        if (r.exit_code == 0) return std::string(py);
    }
    return std::nullopt;
}

}  // namespace hb::test
