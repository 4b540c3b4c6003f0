// The [[source]] gains key (named device gains): read, sorted, saved, and bad values refused by key path.
#include <gtest/gtest.h>

#include "devices/session.hpp"

namespace hb {
namespace {

const std::string kPlan = "[plan]\nwanted_hz = 100e6\nif_hz = 10.7e6\nif_bandwidth_hz = 200e3\n";

std::string error_of(const std::string& text) {
    try {
        parse_session(text, "bench.toml");
    } catch (const InputError& e) {
        return e.what();
    }
    return "";
}

TEST(SessionGains, ReadSortedAndRoundTripped) {
    const hb::Setup s = parse_session("[[source]]\nkind = \"device\"\nargs = \"driver=x\"\ngains = { LNA = 12, IF = 4.5 }\n" + kPlan,
                                  "bench.toml");
    ASSERT_EQ(s.sources.size(), 1u);
    ASSERT_EQ(s.sources[0].gains.size(), 2u);
    EXPECT_EQ(s.sources[0].gains[0], (NamedGain{"IF", 4.5}));
    EXPECT_EQ(s.sources[0].gains[1], (NamedGain{"LNA", 12}));
    EXPECT_EQ(parse_session(session_to_toml(s), "again.toml").sources, s.sources);
}

TEST(SessionGains, BadValuesNameTheKeyPath) {
    const std::string base = "[[source]]\nkind = \"device\"\nargs = \"driver=x\"\n";
    std::string m = error_of(base + "gains = { LNA = \"high\" }\n" + kPlan);
    EXPECT_NE(m.find("bench.toml:4: source[0].gains.LNA: got \"high\" (a string), expected a finite number in dB"),
              std::string::npos) << m;
    m = error_of(base + "gains = 12\n" + kPlan);
    EXPECT_NE(m.find("source[0].gains: got 12 (an integer), expected a table"), std::string::npos) << m;
    m = error_of(base + "gains = { VGA = 500 }\n" + kPlan);
    EXPECT_NE(m.find("source[0].gains.VGA: got 500, expected a finite number from -100 to 200 dB"),
              std::string::npos) << m;
}

}  // namespace
}  // namespace hb
