// Scenario files: the bundled one loads; every bad file is refused with the file, the line, the key path and
// what was expected.
#include <gtest/gtest.h>

#include "devices/scenario_file.hpp"
#include "dsp/errors.hpp"
#include "support/test_support.hpp"

namespace hb {
namespace {

std::string error_of(const std::string& text, const std::string& name = "bench.toml") {
    try {
        parse_scenario(text, name);
    } catch (const InputError& e) {
        return e.what();
    }
    return "";
}

void expect_has(const std::string& msg, const std::string& part) {
    EXPECT_NE(msg.find(part), std::string::npos) << "expected \"" << part << "\" in:\n" << msg;
}

TEST(ScenarioFile, BundledScenarioLoads) {
    const auto sc = load_scenario((test::source_dir() / "recordings/scenarios/vhf-bench.toml").string());
    EXPECT_EQ(sc.full_scale_dbm, -10);
    EXPECT_TRUE(sc.has_adc_noise);
    ASSERT_EQ(sc.signals.size(), 7u);
    EXPECT_EQ(sc.signals[0].type, SignalType::cw);
    EXPECT_DOUBLE_EQ(sc.signals[0].frequency_hz, 100.1e6);  // "100.1M"
    EXPECT_EQ(sc.signals[3].modulation, ModSource::noise);
    EXPECT_EQ(sc.signals[4].station_modulation, ModKind::fm);
    EXPECT_EQ(sc.signals[4].count, 20);
}

TEST(ScenarioFile, DefaultsWithoutScenarioSection) {
    const auto sc = parse_scenario("[[signal]]\ntype = \"cw\"\nfrequency_hz = 1e6\nlevel_dbm = -30\n", "x.toml");
    EXPECT_EQ(sc.full_scale_dbm, 0.0);
    EXPECT_FALSE(sc.has_adc_noise);
    EXPECT_TRUE(sc.clip);
}

TEST(ScenarioFile, UnknownKeyForTheTypeNamesLineKeyAndAllowed) {
    const std::string msg = error_of("[[signal]]\ntype = \"cw\"\nfrequency_hz = 1e6\nlevel_dbm = -30\ndeviation_hz = 5\n");
    expect_has(msg, "bench.toml:5: signal[0].deviation_hz: unknown key");
    expect_has(msg, "frequency_hz, level_dbm (for type cw)");
}

TEST(ScenarioFile, BadValuesNameLineKeyValueAndExpectation) {
    const std::string msg = error_of(R"([scenario]
full_scale_dbm = "loud"

[[signal]]
type = "fm"
frequency_hz = "99.2 MHz"
level_dbm = -70
modulation = "speech"

[[signal]]
type = "stations"
first_hz = 95e6
spacing_hz = 200e3
count = 2.5
level_dbm = -70
)");
    expect_has(msg, "bench.toml:2: scenario.full_scale_dbm: got \"loud\" (a string), expected a finite number in dBm");
    expect_has(msg, "bench.toml:8: signal[0].modulation: got \"speech\" (a string), expected one of tone|noise");
    expect_has(msg, "bench.toml:14: signal[1].count: got 2.5 (a number), expected an integer");
    expect_has(msg, "3 problems");
}

TEST(ScenarioFile, RangeProblemsAreReportedAtTheirLine) {
    const std::string msg = error_of(R"([[signal]]
type = "am"
frequency_hz = 1e6
level_dbm = -30
depth = 1.5

[[signal]]
type = "noise"
low_hz = 2e6
high_hz = 1e6
density_dbm_per_hz = -120
)");
    expect_has(msg, "bench.toml:5: signal[0].depth: got 1.5, expected a finite number from 0 to 1");
    expect_has(msg, "bench.toml:10: signal[1].high_hz: got 1000000 Hz, expected more than low_hz");
}

TEST(ScenarioFile, MissingAndMistypedStructure) {
    expect_has(error_of("[[signal]]\nfrequency_hz = 1e6\n"), "signal[0].type: missing required key (one of cw|two-tone|am|fm|stations|noise)");
    expect_has(error_of("[[signal]]\ntype = \"cw\"\nlevel_dbm = -3\n"), "signal[0].frequency_hz: missing required key");
    expect_has(error_of("signal = 3\n"), "bench.toml:1: signal: got 3 (an integer), expected an array of tables: write [[signal]]");
    expect_has(error_of("[scenery]\nname = \"x\"\n"), "scenery: unknown key; allowed here: [scenario], [[signal]]");
    expect_has(error_of("[[signal]\n"), "bench.toml: not valid TOML");
}

TEST(ScenarioFile, MissingFileIsNamed) {
    try {
        load_scenario("/nonexistent/world.toml");
        FAIL();
    } catch (const InputError& e) {
        expect_has(e.what(), "/nonexistent/world.toml: cannot open the scenario file");
    }
}

}  // namespace
}  // namespace hb
