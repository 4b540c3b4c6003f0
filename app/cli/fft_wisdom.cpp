#include "cli/fft_wisdom.hpp"

#include <unistd.h>

#include <cstdlib>
#include <filesystem>
#include <fstream>
#include <sstream>
#include <system_error>

#include "dsp/fft.hpp"
#include "dsp/simd.hpp"

namespace hb::cli {

std::string fft_wisdom_path() {
    if (const char* p = std::getenv("HETBENCH_FFTW_WISDOM"); p && *p) return std::string(p) == "off" ? "" : p;
    std::filesystem::path dir;
    if (const char* x = std::getenv("XDG_CACHE_HOME"); x && *x)
        dir = x;
    else if (const char* h = std::getenv("HOME"); h && *h)
        dir = std::filesystem::path(h) / ".cache";
    else
        return "";
    return (dir / "hetbench" / (std::string("fftw-wisdom-") + simd::kTarget.tag + ".txt")).string();
}

bool load_fft_wisdom(const std::string& path, std::ostream& note) {
    if (path.empty()) return true;
    std::error_code ec;
    if (!std::filesystem::exists(path, ec)) return true;  // first run
    std::ifstream f(path, std::ios::binary);
    std::ostringstream text;
    if (f) text << f.rdbuf();
    if (!f || !fft_import_wisdom(text.str())) {
        note << "hetbench: FFT wisdom cache " << path
             << " is not readable FFTW wisdom; ignored (plans are measured again and the file rewritten)\n";
        return false;
    }
    return true;
}

bool save_fft_wisdom(const std::string& path, std::ostream& note) {
    if (path.empty()) return true;
    const std::string text = fft_export_wisdom();
    if (text.empty()) return true;
    const std::filesystem::path p(path);
    std::error_code ec;
    if (p.has_parent_path()) std::filesystem::create_directories(p.parent_path(), ec);
    const std::string tmp = path + ".tmp." + std::to_string(::getpid());  // one per writer: runs may overlap
    {
        std::ofstream f(tmp, std::ios::binary | std::ios::trunc);
        f << text;
        f.flush();
        if (!f) {
            note << "hetbench: cannot write the FFT wisdom cache " << tmp << " (set HETBENCH_FFTW_WISDOM to another "
                 << "file, or to off)\n";
            std::filesystem::remove(tmp, ec);
            return false;
        }
    }
    std::filesystem::rename(tmp, p, ec);
    if (ec) {
        note << "hetbench: cannot replace the FFT wisdom cache " << path << ": " << ec.message() << "\n";
        std::filesystem::remove(tmp, ec);
        return false;
    }
    return true;
}

ScopedFftWisdom::ScopedFftWisdom(std::ostream& note) : path_(fft_wisdom_path()), note_(note) {
    load_fft_wisdom(path_, note_);
}

ScopedFftWisdom::~ScopedFftWisdom() {
    try {
        save_fft_wisdom(path_, note_);
    } catch (...) {
        // A destructor must not throw; the cache is only an optimisation.
    }
}

}  // namespace hb::cli
