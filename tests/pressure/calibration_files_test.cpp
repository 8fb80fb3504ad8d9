// The tap table, calibration, lines and measured-response readers.
#include <gtest/gtest.h>

#include <cmath>

#include "calib/lines/lines_file.hpp"
#include "calib/lines/tap_table.hpp"
#include "calib/transducers/calibration_file.hpp"
#include "calib/transducers/wind_off_zero.hpp"
#include "pipeline/errors.hpp"

namespace stallscope::calib {
namespace {

const std::string kHeader =
    "tap,channel,x_over_c,y_over_c,surface,tube_length_m,tube_diameter_m,volume_m3,time_offset_s,line,status\n";
const std::string kGoodRows =
    "p01,s01,0.0,,upper,0.4,0.001,1e-8,,,ok\n"
    "p02,s02,0.3,,upper,0.4,0.001,1e-8,2.5e-4,,suspect\n"
    "p03,s03,0.05,-0.02,lower,,,,,long,ok\n"
    "p04,s04,0.6,,lower,0.4,0.001,,,,dead\n";

std::string error_of(const std::string& text) {
  try {
    parse_tap_table(text, "taps.csv");
  } catch (const InputError& e) {
    return e.what();
  }
  return "(no InputError)";
}

TEST(TapTable, ReadsEveryColumnAndFillsOrdinatesFromTheNacaSection) {
  TapTable t = parse_tap_table("# a comment\n" + kHeader + kGoodRows, "taps.csv");
  ASSERT_EQ(t.taps.size(), 4u);
  EXPECT_EQ(t.taps[1].status, TapStatus::kSuspect);
  EXPECT_DOUBLE_EQ(t.taps[1].time_offset_s, 2.5e-4);
  EXPECT_EQ(t.taps[2].line, "long");
  EXPECT_TRUE(std::isnan(t.taps[2].tube_length_m));
  EXPECT_TRUE(std::isnan(t.taps[0].y_over_c));
  EXPECT_EQ(t.where(1), "taps.csv:4: tap p02");
  fill_naca4_ordinates(t, theory::parse_naca4("0012"));
  // NACA 0012 half thickness at x = 30 %c: 6.002 %c (Abbott & von Doenhoff App. I; published-checks 2).
  EXPECT_NEAR(t.taps[1].y_over_c, 0.06002, 5e-6);
  EXPECT_NEAR(t.taps[0].y_over_c, 0.0, 1e-12);
  EXPECT_DOUBLE_EQ(t.taps[2].y_over_c, -0.02);  // given: kept
  EXPECT_NEAR(t.taps[3].y_over_c, -0.04563, 5e-6);  // 60 %c: 4.563 %c, lower surface
}

TEST(TapTable, CamberedSectionTapSitsAtItsOwnSurfaceX) {
  TapTable t = parse_tap_table(kHeader + kGoodRows, "taps.csv");
  const auto s = theory::parse_naca4("2412");
  fill_naca4_ordinates(t, s);
  // The filled point is on the surface, at the tap's x (not at the mean-line station x).
  double lo = 0, hi = 1;
  for (int i = 0; i < 80; ++i) ((theory::naca4_upper_surface(s, 0.5 * (lo + hi)).x < 0.3) ? lo : hi) = 0.5 * (lo + hi);
  EXPECT_NEAR(t.taps[1].y_over_c, theory::naca4_upper_surface(s, lo).y, 1e-12);
  EXPECT_NEAR(theory::naca4_upper_surface(s, lo).x, 0.3, 1e-12);
}

TEST(TapTable, RejectsBadRowsNamingTheLine) {
  EXPECT_NE(error_of(kHeader + kGoodRows + "p05,s05,0.5,,side,,,,,,ok\n").find("taps.csv:6"), std::string::npos);
  EXPECT_NE(error_of(kHeader + kGoodRows + "p05,s05,0.5,,side,,,,,,ok\n").find("surface must be 'upper' or 'lower'"),
            std::string::npos);
  EXPECT_NE(error_of(kHeader + kGoodRows + "p02,s09,0.5,,upper,,,,,,ok\n").find("tap 'p02' appears twice"), std::string::npos);
  EXPECT_NE(error_of(kHeader + kGoodRows + "p05,s01,0.5,,upper,,,,,,ok\n").find("channel 's01' is given to two taps"),
            std::string::npos);
  EXPECT_NE(error_of(kHeader + kGoodRows + "p05,s05,1.2,,upper,,,,,,ok\n").find("outside [0, 1]"), std::string::npos);
  EXPECT_NE(error_of(kHeader + kGoodRows + "p05,s05,-0.1,,upper,,,,,,ok\n").find("taps.csv:6: tap p05: x_over_c"),
            std::string::npos);
  EXPECT_NE(error_of(kHeader + kGoodRows + "p05,s05,0.5,,upper,,,,,,broken\n").find("status must be"), std::string::npos);
  EXPECT_NE(error_of(kHeader + kGoodRows + "p05,s05,0.5,,upper,,,\n").find("expected 11 fields"), std::string::npos);
  EXPECT_NE(error_of(kHeader + kGoodRows + "p05,s05,abc,,upper,,,,,,ok\n").find("expected a finite number"), std::string::npos);
  EXPECT_NE(error_of("tap,channel,x\n").find("expected the tap table header"), std::string::npos);
  EXPECT_NE(error_of(kHeader + "p01,s01,0.1,,upper,,,,,,ok\np02,s02,0.2,,upper,,,,,,ok\n").find("at least 2 taps on each"),
            std::string::npos);
}

TEST(TapTable, SurvivesTheRunStoreUnchanged) {
  const TapTable t = parse_tap_table(kHeader + kGoodRows, "taps.csv");
  const TapTable back = from_store_table(to_store_table(t), "taps.csv");
  ASSERT_EQ(back.taps.size(), t.taps.size());
  for (std::size_t i = 0; i < t.taps.size(); ++i) {
    EXPECT_EQ(back.taps[i].name, t.taps[i].name);
    EXPECT_EQ(back.taps[i].status, t.taps[i].status);
    EXPECT_EQ(back.taps[i].surface, t.taps[i].surface);
    EXPECT_EQ(back.taps[i].row, t.taps[i].row);
    EXPECT_EQ(back.taps[i].line, t.taps[i].line);
  }
}

const std::string kCalibration =
    "id = \"scanner-A\"\ndate = 2026-11-20\nkind = \"pressure_transducers\"\n"
    "[channels.p01]\ncoefficients = [1.5, 1000.0, -2.0]\ntemperature_coefficient_per_k = 0.001\n"
    "reference_temperature_c = 20.0\nresidual_pa = 0.4\n"
    "[channels.p02]\ncoefficients = [0, 998]\n";

std::string calibration_error(const std::string& text) {
  try {
    parse_calibration(text, "cal.toml");
  } catch (const InputError& e) {
    return e.what();
  }
  return "(no InputError)";
}

TEST(CalibrationFile, EvaluatesPolynomialsAndTheThermalSensitivity) {
  const CalibrationFile f = parse_calibration(kCalibration, "cal.toml");
  EXPECT_EQ(f.id, "scanner-A");
  EXPECT_EQ(f.date, "2026-11-20");
  const ChannelCalibration& c = f.channels.at("p01");
  EXPECT_DOUBLE_EQ(c.evaluate(0.5), 1.5 + 500.0 - 0.5);
  Eigen::VectorXd v(2);
  v << 0.5, -1.0;
  EXPECT_DOUBLE_EQ(c.evaluate(v)[1], 1.5 - 1000.0 - 2.0);
  EXPECT_DOUBLE_EQ(c.temperature_factor(30.0), 1.0 / 1.01);
  EXPECT_DOUBLE_EQ(f.channels.at("p02").coefficients[1], 998.0);
  EXPECT_EQ(f.where("p02"), "cal.toml:9: channels.p02");
}

TEST(CalibrationFile, WritesWhatItReads) {
  const CalibrationFile f = parse_calibration(kCalibration, "cal.toml");
  const CalibrationFile g = parse_calibration(format_calibration(f), "again.toml");
  EXPECT_EQ(g.id, f.id);
  EXPECT_EQ(g.date, f.date);
  EXPECT_EQ(g.channels.at("p01").coefficients, f.channels.at("p01").coefficients);
  EXPECT_DOUBLE_EQ(g.channels.at("p01").temperature_coefficient_per_k, 0.001);
}

TEST(CalibrationFile, RejectsWhatIsNotTheFormat) {
  EXPECT_NE(calibration_error("date = 2026-11-20\nkind = \"temperature\"\n").find("id"), std::string::npos);
  EXPECT_NE(calibration_error("id = \"a\"\ndate = \"yesterday\"\nkind = \"temperature\"\n").find("cal.toml:2: date"),
            std::string::npos);
  EXPECT_NE(calibration_error("id = \"a\"\ndate = 2026-11-20\nkind = \"volts\"\n").find("kind"), std::string::npos);
  EXPECT_NE(calibration_error("id = \"a\"\ndate = 2026-11-20\nkind = \"temperature\"\n[channels.t]\ncoefficients = [1.0]\n")
                .find("non-zero sensitivity"),
            std::string::npos);
  EXPECT_NE(calibration_error(kCalibration + "gain = 3\n").find("channels.p02.gain"), std::string::npos);
  EXPECT_NE(calibration_error("id = \"a\"\n[[broken").find("not valid TOML"), std::string::npos);
}

TEST(WindOffZero, InterpolatesTheZeroBetweenTheWindowsAndHoldsItOutside) {
  Eigen::VectorXd t = Eigen::VectorXd::LinSpaced(101, 0.0, 10.0);
  Eigen::VectorXd x = 2.0 + 0.3 * t.array();  // a linearly drifting zero
  const WindOffZero z = wind_off_zero(t, x, {0.0, 1.0}, TimeWindow{9.0, 10.0});
  EXPECT_NEAR(z.before, 2.15, 1e-12);
  EXPECT_NEAR(z.after, 2.0 + 0.3 * 9.5, 1e-12);
  EXPECT_NEAR(z.at(4.0), 2.0 + 1.2, 1e-12);
  EXPECT_NEAR(z.at(0.0), z.before, 1e-15);
  EXPECT_NEAR(z.drift(), 2.7, 1e-12);
  EXPECT_THROW(wind_off_zero(t, x, {20.0, 21.0}, std::nullopt), std::invalid_argument);
  // The record's zero, sample by sample, is the scalar form exactly, at and beyond both window centres.
  const Eigen::VectorXd record = z.at(t);
  for (Eigen::Index i = 0; i < t.size(); ++i) EXPECT_EQ(record[i], z.at(t[i])) << "t = " << t[i];
  // Window means over exactly the samples inside [start, end], ends included.
  EXPECT_EQ(window_samples(t, {0.0, 1.0}), 11);
  EXPECT_EQ(window_samples(t, {0.05, 0.15}), 1);
  EXPECT_DOUBLE_EQ(window_mean(t, x, {0.95, 1.25}), 2.0 + 0.3 * 1.1);
}

TEST(CalibrationFile, EvaluatesEveryDegreeAsTheScalarForm) {
  ChannelCalibration c;
  Eigen::VectorXd v = Eigen::VectorXd::LinSpaced(7, -2.0, 3.0);
  for (const auto& coefficients : std::vector<std::vector<double>>{{}, {4.0}, {-1.0, 250.0}, {0.5, -3.0, 0.25, 1e-3}}) {
    c.coefficients = coefficients;
    const Eigen::VectorXd p = c.evaluate(v);
    for (Eigen::Index i = 0; i < v.size(); ++i) EXPECT_EQ(p[i], c.evaluate(v[i])) << coefficients.size();
  }
}

TEST(LinesFile, ReadsSegmentsAndMeasuredLines) {
  const LinesFile f = parse_lines_file(
      "[lines.long]\nsegments = [{length_m = 0.3, diameter_m = 1.0e-3}, {length_m = 0.2, diameter_m = 1.5e-3, volume_m3 = 2e-8}]\n"
      "[lines.probe]\nmeasured = \"probe.csv\"\n",
      "cfg/lines.toml");
  ASSERT_EQ(f.lines.at("long").segments.size(), 2u);
  EXPECT_DOUBLE_EQ(f.lines.at("long").segments[1].radius, 0.75e-3);
  EXPECT_DOUBLE_EQ(f.lines.at("long").segments[1].end_volume, 2e-8);
  EXPECT_EQ(f.lines.at("probe").measured, std::filesystem::path("cfg/probe.csv"));
  EXPECT_THROW(parse_lines_file("[lines.x]\nsegments = [{length_m = 0.3}]\n", "l.toml"), InputError);
  EXPECT_THROW(parse_lines_file("[lines.x]\nmeasured = \"a.csv\"\nsegments = []\n", "l.toml"), InputError);
}

TEST(MeasuredResponse, InterpolatesGainAndUnwrappedPhase) {
  const MeasuredResponse r = parse_measured_response(
      "frequency_hz,gain,phase_deg\n10,1.1,-20\n20,1.3,-170\n30,1.0,170\n", "probe.csv");
  EXPECT_NEAR(std::abs(r.at(15)), 1.2, 1e-12);
  EXPECT_NEAR(std::arg(r.at(5)) * 180 / M_PI, -10.0, 1e-9);  // runs to gain 1, phase 0 at f = 0
  EXPECT_NEAR(r.phase_deg[2], -190.0, 1e-12);                 // unwrapped
  EXPECT_NEAR(std::arg(r.at(25)) * 180 / M_PI, -180.0, 1e-9);
  EXPECT_THROW(r.at(31), std::invalid_argument);
  EXPECT_THROW(parse_measured_response("frequency_hz,gain,phase_deg\n10,1,0\n5,1,0\n", "p.csv"), InputError);
}

TEST(MeasuredResponse, CarriesItsCalibrationsScatterIntoAReplicaRowByRow) {
  const MeasuredResponse r = parse_measured_response(
      "frequency_hz,gain,phase_deg,gain_std,phase_std_deg\n10,1.1,-20,0.02,1.5\n20,1.3,-170,0,0\n", "probe.csv");
  ASSERT_EQ(r.gain_std.size(), 2u);
  // Draws z = +1 for the first row's gain, -2 for its phase: exactly sigma times z.
  const MeasuredResponse p = r.perturbed([](std::size_t k) { return k == 0 ? 1.0 : k == 1 ? -2.0 : 3.0; });
  EXPECT_DOUBLE_EQ(p.gain[0], 1.12);
  EXPECT_DOUBLE_EQ(p.phase_deg[0], -23.0);
  EXPECT_EQ(p.gain[1], 1.3);  // no scatter stated, no change
  EXPECT_EQ(p.phase_deg[1], -170.0);
  EXPECT_TRUE(parse_measured_response("frequency_hz,gain,phase_deg\n10,1,0\n", "p.csv").gain_std.empty());
  try {
    parse_measured_response("frequency_hz,gain,phase_deg,gain_std,phase_std_deg\n10,1,0,-0.1,0\n", "probe.csv");
    ADD_FAILURE() << "no error";
  } catch (const InputError& e) {
    EXPECT_NE(std::string(e.what()).find("probe.csv:2"), std::string::npos) << e.what();
  }
  EXPECT_THROW(parse_measured_response("frequency_hz,gain,phase_deg,gain_std,phase_std_deg\n10,1,0\n", "p.csv"),
               InputError);
}

}  // namespace
}  // namespace stallscope::calib
