// Scenario files: defaults, presets and the strict-config errors.
#include <gtest/gtest.h>

#include "pipeline/errors.hpp"
#include "tools/synth/scenario.hpp"

namespace stallscope::synth {
namespace {

Scenario parse(const std::string& text) { return read_scenario(ConfigFile::parse(text, "scenario.toml")); }

std::string error_of(const std::string& text) {
  try {
    parse(text);
  } catch (const InputError& e) {
    return e.what();
  }
  return "no error";
}

TEST(Scenario, AnEmptyFileTakesEveryDefault) {
  const Scenario s = parse("");
  EXPECT_EQ(s.preset, "realistic");
  EXPECT_EQ(s.airfoil, "NACA 0012");
  EXPECT_DOUBLE_EQ(s.reduced_frequency, 0.1);
  EXPECT_EQ(s.speed_range, (std::vector<double>{0.25, 0.45}));
  EXPECT_GT(s.white_v, 0.0);
  EXPECT_EQ(s.dead_tap, "p07");
  EXPECT_FALSE(s.piv.enabled);
}

TEST(Scenario, TheCleanPresetTurnsEveryNuisanceOff) {
  const Scenario s = parse("[scenario]\npreset = \"clean\"\n");
  EXPECT_EQ(s.white_v, 0.0);
  EXPECT_EQ(s.pink_v, 0.0);
  EXPECT_EQ(s.mains_v, 0.0);
  EXPECT_EQ(s.q_fluctuation, 0.0);
  EXPECT_EQ(s.zero_shift_pa, 0.0);
  EXPECT_EQ(s.zero_drift_pa, 0.0);
  EXPECT_EQ(s.gain_spread, 0.0);
  EXPECT_EQ(s.encoder_noise_deg, 0.0);
  EXPECT_EQ(s.skew_sweep, 0.0);
  EXPECT_EQ(s.tube_length_error, 0.0);
  EXPECT_TRUE(s.stepped_taps.empty());
  EXPECT_TRUE(s.dead_tap.empty());
  EXPECT_EQ(s.alpha_star_jitter_deg, 0.0);
  EXPECT_EQ(s.piv.noise_m_s, 0.0);
  EXPECT_EQ(s.piv.outlier_fraction, 0.0);
  EXPECT_EQ(s.piv.clock_drift_ppm, 0.0);
  EXPECT_EQ(s.piv.dropped_frames, 0);
  EXPECT_FALSE(s.piv.kh_blobs || s.piv.te_vortex || s.piv.secondary_vortex || s.piv.reflections ||
               s.piv.airfoil_field);
}

TEST(Scenario, AKeyGivenExplicitlyOverridesThePreset) {
  const Scenario s = parse("[scenario]\npreset = \"clean\"\n[noise]\nmains_v = 0.01\n[dead_tap]\ntap = \"p02\"\n");
  EXPECT_DOUBLE_EQ(s.mains_v, 0.01);
  EXPECT_EQ(s.dead_tap, "p02");
  EXPECT_EQ(s.white_v, 0.0);
}

TEST(Scenario, AnUnknownKeyIsNamedWithItsLineAndColumn) {
  const std::string e = error_of("[motion]\ncycles = 3\n  frequncy = 2.0\n");
  EXPECT_NE(e.find("scenario.toml:3:14"), std::string::npos) << e;
  EXPECT_NE(e.find("motion.frequncy"), std::string::npos) << e;
  EXPECT_NE(e.find("unknown key"), std::string::npos) << e;
}

TEST(Scenario, AnUnknownSectionIsNamed) {
  const std::string e = error_of("[motoin]\ncycles = 3\n");
  EXPECT_NE(e.find("scenario.toml:1:1"), std::string::npos) << e;
  EXPECT_NE(e.find("motoin"), std::string::npos) << e;
}

TEST(Scenario, AWrongTypeIsNamedWithItsLineAndColumn) {
  const std::string e = error_of("[daq]\nsample_rate_hz = \"fast\"\n");
  EXPECT_NE(e.find("scenario.toml:2:18"), std::string::npos) << e;
  EXPECT_NE(e.find("expected a number"), std::string::npos) << e;
  const std::string c = error_of("[motion]\ncycles = 2.5\n");
  EXPECT_NE(c.find("scenario.toml:2:10"), std::string::npos) << c;
  EXPECT_NE(c.find("whole number"), std::string::npos) << c;
}

TEST(Scenario, OutOfRangeValuesSayWhatWasExpected) {
  EXPECT_NE(error_of("[vortex]\nspeed_range = [0.5, 0.2]\n").find("speed_range"), std::string::npos);
  EXPECT_NE(error_of("[motion]\nkind = \"square\"\n").find("expected one of 'sine', 'ramp'"), std::string::npos);
  EXPECT_NE(error_of("[model]\nairfoil = \"Clark Y\"\n").find("NACA 4-digit"), std::string::npos);
  EXPECT_NE(error_of("[dead_tap]\ntap = \"p99\"\n").find("p01..p20"), std::string::npos);
  EXPECT_NE(error_of("[piv]\nenabled = true\nrate_hz = 900\n").find("quarter"), std::string::npos);
}

TEST(Scenario, ThePitchFrequencyFollowsFromTheReducedFrequency) {
  const Scenario s = parse("[motion]\nreduced_frequency = 0.1\n[model]\nchord_m = 0.2\n[flow]\nvelocity_m_s = 20\n");
  // k = pi f c / U  =>  f = k U / (pi c) (published-checks conventions).
  EXPECT_NEAR(pitch_frequency_hz(s, s.velocity_m_s), 0.1 * 20 / (3.14159265358979 * 0.2), 1e-12);
  EXPECT_NEAR(cycle_period_s(s) * pitch_frequency_hz(s, s.velocity_m_s), 1.0, 1e-12);
}

}  // namespace
}  // namespace stallscope::synth
