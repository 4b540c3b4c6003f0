// FFTW wisdom kept between runs of the long-running commands (gui, soak, bench), so that their FFTW_MEASURE plans
// (the live analyzer's 65536-point FFT, the bench chain's Welch) come at once and the same each run instead of
// being timed again in every process. The cache is a text file per build target:
//   $HETBENCH_FFTW_WISDOM     a file path, or "off" for no cache
//   $XDG_CACHE_HOME/hetbench/fftw-wisdom-<target>.txt, else ~/.cache/hetbench/fftw-wisdom-<target>.txt
// A missing file is normal (the first run); an unreadable or corrupt one is reported, named, and ignored (the
// plans are then measured as before); a cache that cannot be written is reported once. Never fatal.
// Report commands (verify, sweep, plan, ...) do not use it: wisdom would steer their FFTW_ESTIMATE plans and
// their reports must be bit-identical across processes.
#pragma once

#include <ostream>
#include <string>

namespace hb::cli {

// The cache file for this build ("" when the cache is off or no home folder is known).
std::string fft_wisdom_path();

// Imports the wisdom in `path`; false, with a line on `note` naming the file, when it exists but is not
// readable FFTW wisdom. True when imported or when the file does not exist yet.
bool load_fft_wisdom(const std::string& path, std::ostream& note);
// Writes this process's wisdom to `path` (folders created, written to a temporary file then renamed so that a
// reader never sees half a file); false, with a note, when it cannot.
bool save_fft_wisdom(const std::string& path, std::ostream& note);

// Loads on construction and saves on destruction: one per command run.
class ScopedFftWisdom {
  public:
    explicit ScopedFftWisdom(std::ostream& note);
    ~ScopedFftWisdom();
    ScopedFftWisdom(const ScopedFftWisdom&) = delete;
    ScopedFftWisdom& operator=(const ScopedFftWisdom&) = delete;

  private:
    std::string path_;
    std::ostream& note_;
};

}  // namespace hb::cli
