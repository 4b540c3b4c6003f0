// The bad-input corpus (tests/bad-inputs/, listed in cases.txt): every file made "by someone else" goes through the
// real command line, which must refuse it with exit code 2 and a message naming the file and the problem (or, for
// a truncated recording, read what is there and warn). Where strace can run, it also shows that hetbench opened
// no file outside the ones the case names (the case's folder, the output folder, and the system's libraries).
#include <gtest/gtest.h>

#include <algorithm>
#include <filesystem>
#include <fstream>
#include <set>
#include <sstream>
#include <string>
#include <vector>

#include "support/test_support.hpp"

namespace hb {
namespace {

namespace fs = std::filesystem;

struct Case {
    int line = 0;
    std::string file;   // relative to tests/bad-inputs
    bool warn = false;  // exit 0 with a warning instead of exit 2
    std::vector<std::string> args;
    std::vector<std::string> words;
    std::string what;
};

void PrintTo(const Case& c, std::ostream* os) {
    *os << c.file << " (cases.txt:" << c.line << ")";
}

fs::path corpus_dir() {
    return test::source_dir() / "tests" / "bad-inputs";
}

std::string trim(std::string s) {
    const auto b = s.find_first_not_of(" \t\r");
    const auto e = s.find_last_not_of(" \t\r");
    return b == std::string::npos ? std::string() : s.substr(b, e - b + 1);
}

std::vector<std::string> split(const std::string& s, char sep) {
    std::vector<std::string> out;
    std::string part;
    std::istringstream in(s);
    while (std::getline(in, part, sep)) out.push_back(trim(part));
    return out;
}

std::vector<Case> load_cases() {
    std::vector<Case> cases;
    std::ifstream in(corpus_dir() / "cases.txt");
    std::string line;
    for (int n = 1; std::getline(in, line); ++n) {
        if (trim(line).empty() || trim(line)[0] == '#') continue;
        const auto cols = split(line, '|');
        Case c;
        c.line = n;
        if (cols.size() != 5) {  // kept, so the malformed line fails its own test instead of vanishing
            c.file = "cases.txt line " + std::to_string(n) + " has " + std::to_string(cols.size()) + " columns";
            cases.push_back(c);
            continue;
        }
        c.file = cols[0];
        c.warn = cols[1] == "warn";
        for (const auto& a : split(cols[2], ' '))
            if (!a.empty()) c.args.push_back(a);
        for (const auto& w : split(cols[3], ';'))
            if (!w.empty()) c.words.push_back(w);
        c.what = cols[4];
        if (cols[1] != "2" && cols[1] != "warn") c.what = "bad EXIT column \"" + cols[1] + "\"";
        cases.push_back(c);
    }
    return cases;
}

const std::vector<Case>& all_cases() {
    static const std::vector<Case> cases = load_cases();
    return cases;
}

std::string replace_all(std::string s, const std::string& from, const std::string& to) {
    for (std::size_t p = s.find(from); p != std::string::npos; p = s.find(from, p + to.size()))
        s.replace(p, from.size(), to);
    return s;
}

bool under(const fs::path& p, const fs::path& dir) {
    const auto a = p.lexically_normal().string(), b = dir.lexically_normal().string();
    return a.size() >= b.size() && a.compare(0, b.size(), b) == 0 &&
           (a.size() == b.size() || a[b.size()] == '/' || b.back() == '/');
}

// strace that can trace here (ptrace may be refused in a container), or nothing.
const std::optional<std::string>& strace() {
    static const std::optional<std::string> s = []() -> std::optional<std::string> {
        for (const char* p : {"/usr/bin/strace", "/bin/strace"}) {
            if (!fs::exists(p)) continue;
            if (test::run({p, "-qq", "-e", "trace=openat", "-o", "/dev/null", "/bin/true"}).exit_code == 0)
                return std::string(p);
        }
        return std::nullopt;
    }();
    return s;
}

// Every path the traced process (and its threads) tried to open, from strace -ff logs "prefix.PID".
std::vector<std::string> opened_paths(const fs::path& dir, const std::string& prefix) {
    std::vector<std::string> out;
    for (const auto& e : fs::directory_iterator(dir)) {
        if (e.path().filename().string().rfind(prefix + ".", 0) != 0) continue;
        std::ifstream in(e.path());
        for (std::string l; std::getline(in, l);) {
            if (l.rfind("open", 0) != 0) continue;  // open(, openat(, openat2(
            const auto q = l.find('"');
            const auto q2 = q == std::string::npos ? q : l.find('"', q + 1);
            if (q2 != std::string::npos) out.push_back(l.substr(q + 1, q2 - q - 1));
        }
    }
    return out;
}

// What any run may open besides the case's own files: the loader, the C/C++ runtime, the libraries, the
// time zone, the kernel's files, and the executable's own folder (where the generator module would be).
bool system_path(const std::string& p) {
    static const std::vector<std::string> dirs = {"/usr/", "/lib/", "/lib64/",      "/proc/",
                                                  "/sys/", "/dev/", "/nonexistent/"};
    for (const auto& d : dirs)
        if (p.rfind(d, 0) == 0) return true;
    return p == "/etc/ld.so.cache" || p == "/etc/localtime" || p == "/nonexistent" ||
           under(p, test::hetbench_exe().parent_path()) || under(p, test::binary_dir());
}

class BadInput : public ::testing::TestWithParam<Case> {};

TEST_P(BadInput, RefusedWithAClearMessage) {
    const Case& c = GetParam();
    ASSERT_FALSE(c.args.empty()) << c.file;
    ASSERT_FALSE(c.what.rfind("bad EXIT", 0) == 0) << "cases.txt:" << c.line << ": " << c.what;
    const fs::path file = corpus_dir() / c.file;
    ASSERT_TRUE(fs::exists(file)) << "cases.txt:" << c.line << ": " << file << " is missing";
    test::TempDir out;
    const fs::path session = out.file("touchstone-session.toml");
    test::write_file(session,
                     "[plan]\nwanted_hz = 1.0e6\nif_hz = 10.7e6\nif_bandwidth_hz = 200e3\n"
                     "[[if_filter]]\ntype = \"touchstone\"\npath = \"" +
                         file.string() + "\"\n");
    std::vector<std::string> argv{test::hetbench_exe().string()};
    const fs::path work = out.path / "out";
    fs::create_directory(work);
    for (const auto& a : c.args)
        argv.push_back(replace_all(replace_all(replace_all(a, "{file}", file.string()), "{out}", work.string()),
                                   "{touchstone-session}", session.string()));
    const auto r = test::run(argv, {"SOAPY_SDR_ROOT=/nonexistent"});
    const std::string where = "cases.txt:" + std::to_string(c.line) + " (" + c.what + ")\nstderr:\n" + r.err;

    EXPECT_EQ(r.exit_code, c.warn ? 0 : 2) << where;
    EXPECT_NE(r.err.find(c.warn ? "hetbench: warning: " : "hetbench: error: "), std::string::npos) << where;
    // It names the file: its name, or for a SigMF pair the data file of the same stem.
    const std::string name = file.filename().string(), stem = file.stem().string();
    EXPECT_TRUE(r.err.find(name) != std::string::npos || r.err.find(stem + ".sigmf-data") != std::string::npos)
        << "the message does not name " << name << "\n"
        << where;
    for (const auto& w : c.words) EXPECT_NE(r.err.find(w), std::string::npos) << "missing \"" << w << "\"\n" << where;
    EXPECT_EQ(r.err.find("terminate called"), std::string::npos) << where;
    EXPECT_EQ(r.err.find("[json.exception"), std::string::npos) << "a library's raw message\n" << where;

    // The same run again under strace, for the files it opens. (A second run: LeakSanitizer, in the sanitizer
    // build, cannot stop a process that strace already traces, so it is off for this one.)
    if (strace()) {
        const fs::path trace_dir = out.path / "trace";
        fs::create_directory(trace_dir);
        fs::remove_all(work);
        fs::create_directory(work);
        std::vector<std::string> traced{
            *strace(), "-f", "-ff", "-qq", "-e", "trace=open,openat,openat2", "-o", (trace_dir / "t").string()};
        traced.insert(traced.end(), argv.begin(), argv.end());
        const auto t = test::run(traced, {"SOAPY_SDR_ROOT=/nonexistent", "ASAN_OPTIONS=detect_leaks=0"});
        EXPECT_EQ(t.exit_code, r.exit_code) << "under strace:\n" << t.err;
        for (const std::string& p : opened_paths(trace_dir, "t")) {
            if (system_path(p)) continue;
            EXPECT_TRUE(under(p, file.parent_path()) || under(p, out.path))
                << "opened " << p << ", outside the files the case names\n"
                << where;
        }
    }
}

std::string case_name(const ::testing::TestParamInfo<Case>& info) {
    std::string s = info.param.file;
    for (char& ch : s)
        if (!std::isalnum(static_cast<unsigned char>(ch))) ch = '_';
    return s + "_L" + std::to_string(info.param.line);
}

INSTANTIATE_TEST_SUITE_P(Corpus, BadInput, ::testing::ValuesIn(all_cases()), case_name);

TEST(BadInputCorpus, ListsEveryFileAndEnoughCases) {
    const auto& cases = all_cases();
    EXPECT_GE(cases.size(), 40u);
    std::set<std::string> listed;
    for (const Case& c : cases) listed.insert(c.file);
    std::set<std::string> kinds;
    for (const auto& e : fs::recursive_directory_iterator(corpus_dir())) {
        if (!e.is_regular_file()) continue;
        const std::string rel = fs::relative(e.path(), corpus_dir()).string();
        if (rel == "cases.txt" || rel == "README.md") continue;
        if (e.path().extension() == ".sigmf-data") {  // a case's data: its metadata must be listed
            auto meta = e.path();
            meta.replace_extension(".sigmf-meta");
            EXPECT_TRUE(listed.count(fs::relative(meta, corpus_dir()).string())) << rel << " belongs to no case";
            continue;
        }
        EXPECT_TRUE(listed.count(rel)) << rel << " is in tests/bad-inputs but not in cases.txt";
        kinds.insert(rel.substr(0, rel.find('/')));
    }
    for (const char* k : {"sigmf", "wav", "raw", "session", "scenario", "touchstone"})
        EXPECT_TRUE(kinds.count(k)) << "no " << k << " cases";
}

TEST(BadInputCorpus, NoReadOutsideTheNamedFilesIsCheckedWhereStraceRuns) {
    if (!strace()) GTEST_SKIP() << "strace is not installed or cannot trace here: the open() check is skipped";
    // The check itself works: a file a run opens is seen, and /etc/passwd would not pass as a system file.
    test::TempDir d;
    test::write_file(d.file("seen.txt"), "x");
    const auto r = test::run({*strace(), "-f", "-ff", "-qq", "-e", "trace=open,openat,openat2", "-o",
                              (d.path / "t").string(), "/bin/cat", d.file("seen.txt").string()});
    ASSERT_EQ(r.exit_code, 0) << r.err;
    const auto paths = opened_paths(d.path, "t");
    EXPECT_NE(std::find(paths.begin(), paths.end(), d.file("seen.txt").string()), paths.end());
    EXPECT_FALSE(system_path("/etc/passwd"));
    EXPECT_FALSE(system_path("/work/elsewhere/x.sigmf-data"));
}

}  // namespace
}  // namespace hb
