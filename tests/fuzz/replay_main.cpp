// Replays fuzz inputs through a target without libFuzzer: the committed corpus (seeds and every input that
// once found a bug) runs as a regression test in the ordinary build, with any compiler.
//   fuzz_<target>_replay DIR|FILE...   exit 0 when every input ran; a finding crashes or throws as in fuzzing.
#include <algorithm>
#include <cstdio>
#include <exception>
#include <filesystem>
#include <fstream>
#include <iterator>
#include <vector>

#include "fuzz/fuzz_support.hpp"

namespace {

int replay(const std::filesystem::path& file) {
    std::ifstream in(file, std::ios::binary);
    if (!in) {
        std::fprintf(stderr, "%s: cannot read\n", file.c_str());
        return 1;
    }
    const std::vector<char> bytes((std::istreambuf_iterator<char>(in)), std::istreambuf_iterator<char>());
    std::fprintf(stderr, "%s (%zu bytes)\n", file.c_str(), bytes.size());
    try {
        LLVMFuzzerTestOneInput(reinterpret_cast<const std::uint8_t*>(bytes.data()), bytes.size());
    } catch (const std::exception& e) {  // the target lets only non-InputError exceptions out: a finding
        std::fprintf(stderr, "%s: FINDING: uncaught exception: %s\n", file.c_str(), e.what());
        return 1;
    }
    return 0;
}

}  // namespace

int main(int argc, char** argv) {
    if (argc < 2) {
        std::fprintf(stderr, "usage: %s DIR|FILE...\n", argv[0]);
        return 2;
    }
    std::vector<std::filesystem::path> files;
    for (int i = 1; i < argc; ++i) {
        const std::filesystem::path p = argv[i];
        if (std::filesystem::is_directory(p)) {
            for (const auto& e : std::filesystem::recursive_directory_iterator(p))
                if (e.is_regular_file()) files.push_back(e.path());
        } else {
            files.push_back(p);
        }
    }
    std::sort(files.begin(), files.end());  // a stable order, so a failure is easy to reproduce
    if (files.empty()) {
        std::fprintf(stderr, "no inputs found\n");
        return 1;
    }
    int failed = 0;
    for (const auto& f : files) failed += replay(f);
    std::printf("%zu inputs replayed, %d failed\n", files.size(), failed);
    return failed ? 1 : 0;
}
