// Setup <-> JSON: the JSON form reads back to the same Setup, and bad embedded setups are refused.
#include <gtest/gtest.h>

#include "devices/session.hpp"
#include "devices/setup_json.hpp"

namespace hb {
namespace {

TEST(SetupJson, RoundTrip) {
    hb::Setup s = parse_session(R"(
[bench]
name = "json round trip"
seed = 7
[[source]]
kind = "generator"
frequency_hz = 100e6
[mixer]
model = "unipolar"
duty_cycle = 0.45
[mixer.lo]
phase_noise = [[1e3, -85.5], [1e4, -100]]
[[if_filter]]
type = "elliptic"
center_hz = 10.7e6
bandwidth_hz = 180e3
[plan]
wanted_hz = 100e6
if_hz = 10.7e6
if_bandwidth_hz = 200e3
)", "/x/s.toml");
    const nlohmann::json j = setup_to_json(s);
    EXPECT_EQ(j["plan"]["wanted_hz"].get<double>(), 100e6);
    EXPECT_EQ(j["mixer"]["model"], "unipolar");
    EXPECT_EQ(j["mixer"]["lo"]["phase_noise"][0][1].get<double>(), -85.5);
    const hb::Setup back = setup_from_json(nlohmann::json::parse(j.dump()), "/x/s.toml");
    EXPECT_EQ(s, back);
}

TEST(SetupJson, BadEmbeddedSetupIsNamed) {
    nlohmann::json j = {{"plan", {{"wanted_hz", 1e6}, {"if_hz", 455e3}, {"if_bandwidth_hz", 10e3}}},
                        {"mixer", {{"model", "warp"}}}};
    try {
        setup_from_json(j, "rec.sigmf-meta");
        FAIL();
    } catch (const InputError& e) {
        EXPECT_NE(std::string(e.what()).find("rec.sigmf-meta"), std::string::npos);
        EXPECT_NE(std::string(e.what()).find("mixer.model"), std::string::npos);
    }
}

}  // namespace
}  // namespace hb
