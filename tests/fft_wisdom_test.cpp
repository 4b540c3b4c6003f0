// FFTW wisdom kept between runs (dsp/fft.hpp, app/cli/fft_wisdom.hpp). FFTW itself is the oracle: a plan asked
// for with FFTW_WISDOM_ONLY exists exactly when the wisdom holds a measured plan for that size (FFTW 3.3 manual,
// §4.3.2 "Planner Flags" and §4.7 "Wisdom").
#include "cli/fft_wisdom.hpp"

#include <gtest/gtest.h>

#include <cstdlib>
#include <sstream>

#include "dsp/fft.hpp"
#include "support/test_support.hpp"

namespace hb {
namespace {

TEST(FftWisdom, ExportImportRoundTrip) {
    fft_forget_wisdom();
    EXPECT_FALSE(fft_plan_in_wisdom(2048));
    { const Fft f(2048, Fft::Effort::measure); }
    EXPECT_TRUE(fft_plan_in_wisdom(2048));
    const std::string text = fft_export_wisdom();
    EXPECT_NE(text.find("fftw"), std::string::npos) << text.substr(0, 80);
    fft_forget_wisdom();
    EXPECT_FALSE(fft_plan_in_wisdom(2048));
    EXPECT_TRUE(fft_import_wisdom(text));
    EXPECT_TRUE(fft_plan_in_wisdom(2048));
    EXPECT_FALSE(fft_plan_in_wisdom(3000));  // never planned
    EXPECT_FALSE(fft_import_wisdom("(not wisdom at all"));
}

TEST(FftWisdom, CacheFileSavedLoadedAndCorruptOneIgnored) {
    const test::TempDir dir;
    const std::string path = dir.file("sub/wisdom.txt").string();
    std::ostringstream note;
    EXPECT_TRUE(cli::load_fft_wisdom(path, note));  // no file yet: the first run
    EXPECT_EQ(note.str(), "");
    fft_forget_wisdom();
    { const Fft f(1024, Fft::Effort::measure); }
    ASSERT_TRUE(cli::save_fft_wisdom(path, note)) << note.str();
    EXPECT_NE(test::read_file(path).find("fftw"), std::string::npos);
    fft_forget_wisdom();
    ASSERT_TRUE(cli::load_fft_wisdom(path, note)) << note.str();
    EXPECT_TRUE(fft_plan_in_wisdom(1024));

    // Corrupt (truncated) cache: named in the note, ignored, nothing imported.
    const std::string whole = test::read_file(path);
    test::write_file(path, whole.substr(0, whole.size() / 2));
    fft_forget_wisdom();
    EXPECT_FALSE(cli::load_fft_wisdom(path, note));
    EXPECT_NE(note.str().find(path), std::string::npos) << note.str();
    EXPECT_FALSE(fft_plan_in_wisdom(1024));

    // A cache that cannot be written (its folder is a file): a note naming it, no exception.
    std::ostringstream note2;
    { const Fft f(1024, Fft::Effort::measure); }
    const std::string bad = dir.file("wisdom.txt").string() + "/x.txt";
    test::write_file(dir.file("wisdom.txt"), "a file, not a folder");
    EXPECT_FALSE(cli::save_fft_wisdom(bad, note2));
    EXPECT_NE(note2.str().find("x.txt"), std::string::npos) << note2.str();
}

TEST(FftWisdom, CachePathFromTheEnvironment) {
    ::setenv("HETBENCH_FFTW_WISDOM", "off", 1);
    EXPECT_EQ(cli::fft_wisdom_path(), "");
    ::setenv("HETBENCH_FFTW_WISDOM", "/tmp/w.txt", 1);
    EXPECT_EQ(cli::fft_wisdom_path(), "/tmp/w.txt");
    ::unsetenv("HETBENCH_FFTW_WISDOM");
    ::setenv("XDG_CACHE_HOME", "/var/cache/someone", 1);
    const std::string p = cli::fft_wisdom_path();
    EXPECT_EQ(p.rfind("/var/cache/someone/hetbench/fftw-wisdom-", 0), 0u) << p;
    EXPECT_EQ(p.substr(p.size() - 4), ".txt");
}

TEST(FftWisdom, BenchCommandKeepsItsPlans) {
    // The bench measures its Welch plans once; the next run finds them in the cache. A corrupt cache is named
    // on stderr and rewritten.
    const test::TempDir dir;
    const std::string path = dir.file("w.txt").string();
    const std::vector<std::string> args = {"bench", "--runs",     "1",     "--samples", "65536", "--reference-samples",
                                           "65536", "--no-numpy", "--json"};
    const auto r = test::run_hetbench(args, {"HETBENCH_FFTW_WISDOM=" + path});
    ASSERT_EQ(r.exit_code, 0) << r.err;
    const std::string saved = test::read_file(path);
    ASSERT_NE(saved.find("fftw"), std::string::npos);
    fft_forget_wisdom();
    ASSERT_TRUE(fft_import_wisdom(saved));
    EXPECT_TRUE(fft_plan_in_wisdom(4096));  // the chain's Welch

    test::write_file(path, "garbage");
    const auto r2 = test::run_hetbench(args, {"HETBENCH_FFTW_WISDOM=" + path});
    ASSERT_EQ(r2.exit_code, 0) << r2.err;
    EXPECT_NE(r2.err.find(path), std::string::npos) << r2.err;
    EXPECT_NE(test::read_file(path).find("fftw"), std::string::npos);
}

}  // namespace
}  // namespace hb
