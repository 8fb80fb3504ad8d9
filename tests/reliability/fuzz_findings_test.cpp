// Regression tests for what tests/fuzz/run.sh found: each input kept in
// tests/reliability/fuzz_findings/ must now give the right answer.
#include <gtest/gtest.h>

#include <fstream>
#include <sstream>

#include "calib/lines/lines_file.hpp"
#include "calib/transducers/calibration_file.hpp"
#include "pipeline/errors.hpp"
#include "tests/support/test_support.hpp"

namespace stallscope {
namespace {

const std::filesystem::path kFindings = testing::kSourceDir / "tests/reliability/fuzz_findings";

std::string text_of(const std::filesystem::path& file) {
  std::ifstream in(file, std::ios::binary);
  std::ostringstream s;
  s << in.rdbuf();
  return s.str();
}

std::string input_error(const std::function<void()>& f) {
  try {
    f();
  } catch (const InputError& e) {
    return e.what();
  }
  return "(no InputError)";
}

// fuzz_calibration: an id holding backslashes was written back unescaped and read as another id.
TEST(FuzzFinding, CalibrationIdWithBackslashesIsWrittenBackAsTheSameId) {
  const auto file = kFindings / "calibration_id_escaping.toml";
  const calib::CalibrationFile f = calib::parse_calibration(text_of(file), file);
  EXPECT_EQ(f.id, "press-press-201ressX\\\\\\\\\\\\r2026-11");
  const calib::CalibrationFile g = calib::parse_calibration(calib::format_calibration(f), "again.toml");
  EXPECT_EQ(g.id, f.id);
  EXPECT_EQ(g.channels.at("p01").coefficients, f.channels.at("p01").coefficients);
}

TEST(FuzzFinding, CalibrationQuotesAndOddChannelNamesSurviveTheRoundTrip) {
  calib::CalibrationFile f;
  f.id = "scanner \"B\" \\ \t tab, line\nbreak";
  f.date = "2026-11-20";
  f.kind = calib::CalibrationKind::kPressureTransducers;
  calib::ChannelCalibration c;
  c.coefficients = {-11.0, 248.5, 0.1 + 0.2};  // 0.30000000000000004 needs 17 digits
  c.temperature_coefficient_per_k = 1e-3;
  c.residual = 0.25;
  f.channels.emplace("p.01 \"left\"", c);
  f.channels.emplace("p02", c);
  const std::string text = calib::format_calibration(f);
  const calib::CalibrationFile g = calib::parse_calibration(text, "again.toml");
  EXPECT_EQ(g.id, f.id) << text;
  EXPECT_EQ(g.date, f.date);
  EXPECT_EQ(g.kind, f.kind);
  ASSERT_EQ(g.channels.size(), 2u) << text;
  const calib::ChannelCalibration& back = g.channels.at("p.01 \"left\"");
  EXPECT_EQ(back.coefficients, c.coefficients);
  EXPECT_EQ(back.temperature_coefficient_per_k, c.temperature_coefficient_per_k);
  EXPECT_EQ(back.residual, c.residual);
}

// fuzz_measured_response: a phase of 1e300 degrees made the unwrap loop step 360 at a time forever.
TEST(FuzzFinding, AbsurdPhaseInAMeasuredResponseIsBadInputNamingTheLine) {
  const auto file = kFindings / "measured_response_phase_hang.csv";
  const std::string e =
      input_error([&] { calib::parse_measured_response(text_of(file), "line_probe.csv"); });
  EXPECT_NE(e.find("line_probe.csv:3"), std::string::npos) << e;
  EXPECT_NE(e.find("phase_deg"), std::string::npos) << e;
  for (const char* phase : {"1e300", "-1e7", "inf", "nan"}) {
    const std::string row = std::string("frequency_hz,gain,phase_deg\n0,1,0\n5,1,") + phase + "\n";
    EXPECT_NE(input_error([&] { calib::parse_measured_response(row, "p.csv"); }).find("p.csv:3"), std::string::npos)
        << phase;
  }
}

TEST(FuzzFinding, PhaseJumpsOfManyTurnsUnwrapInOneStep) {
  const calib::MeasuredResponse r = calib::parse_measured_response(
      "frequency_hz,gain,phase_deg\n0,1,0\n10,1,-350\n20,1,72010\n30,1,-190\n", "p.csv");
  ASSERT_EQ(r.phase_deg.size(), 4u);
  EXPECT_DOUBLE_EQ(r.phase_deg[1], 10.0);   // -350 + 360
  EXPECT_DOUBLE_EQ(r.phase_deg[2], 10.0);   // 72010 - 200 turns
  EXPECT_DOUBLE_EQ(r.phase_deg[3], 170.0);  // -190 + 360
}

}  // namespace
}  // namespace stallscope
