// Units: frequency text, number formatting and the thermal noise constant.
#include <gtest/gtest.h>

#include "dsp/units.hpp"

namespace hb {
namespace {

TEST(Units, ParseFrequencyWithSuffixes) {
    EXPECT_DOUBLE_EQ(*parse_frequency("98.3M"), 98.3e6);
    EXPECT_DOUBLE_EQ(*parse_frequency("455k"), 455e3);
    EXPECT_DOUBLE_EQ(*parse_frequency("10.7 MHz"), 10.7e6);
    EXPECT_DOUBLE_EQ(*parse_frequency("2.4e6"), 2.4e6);
    EXPECT_DOUBLE_EQ(*parse_frequency("1G"), 1e9);
    EXPECT_DOUBLE_EQ(*parse_frequency(" 12.5 kHz "), 12.5e3);
    EXPECT_DOUBLE_EQ(*parse_frequency("-3k"), -3e3);
    EXPECT_DOUBLE_EQ(*parse_frequency("100 Hz"), 100.0);
}

TEST(Units, ParseFrequencyRejectsJunk) {
    EXPECT_FALSE(parse_frequency(""));
    EXPECT_FALSE(parse_frequency("MHz"));
    EXPECT_FALSE(parse_frequency("10 parsecs"));
    EXPECT_FALSE(parse_frequency("nan"));
    EXPECT_FALSE(parse_frequency("1e400"));
    EXPECT_FALSE(parse_frequency("10 MM"));
}

TEST(Units, FormatNumberRoundTrips) {
    for (double v : {0.1, 10.7e6, 1.0 / 3.0, -173.975, 1e-300, 6.02214076e23}) {
        EXPECT_EQ(std::stod(format_number(v)), v);
    }
    EXPECT_EQ(format_number(10.7e6), "10700000");
}

TEST(Units, FormatFrequency) {
    EXPECT_EQ(format_frequency(10.7e6), "10.7 MHz");
    EXPECT_EQ(format_frequency(455e3), "455 kHz");
    EXPECT_EQ(format_frequency(-3200), "-3.2 kHz");
    EXPECT_EQ(format_frequency(0), "0 Hz");
}

// kT at 290 K = -173.975 dBm/Hz; at 300 K -173.828 (reference-values N1; Boltzmann constant exact
// since the 2019 SI redefinition).
TEST(Units, ThermalNoise) {
    EXPECT_NEAR(thermal_noise_dbm_per_hz(), -173.975, 0.005);
    EXPECT_NEAR(thermal_noise_dbm_per_hz(300.0), -173.828, 0.005);
}

}  // namespace
}  // namespace hb
