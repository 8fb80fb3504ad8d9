// calibrate -> cp -> loads on a small invented run with exact Joukowski pressures.
#include <gtest/gtest.h>

#include <cmath>

#include "calib/air/air.hpp"
#include "pipeline/errors.hpp"
#include "stages/calibrate.hpp"
#include "stages/cp.hpp"
#include "stages/loads.hpp"
#include "tests/pressure/pressure_fixture.hpp"

namespace stallscope {
namespace {

using testing::PressureRun;
constexpr double kPi = std::numbers::pi;

// Linear calibrations invert exactly: only rounding is left (1e3 Pa/V x 1e-16 V).
constexpr double kRoundTripPa = 1e-8;

std::string message_of(const std::function<void()>& f) {
  try {
    f();
  } catch (const InputError& e) {
    return e.what();
  }
  return "(no InputError)";
}

TEST(PressurePath, LinearCalibrationWithDriftingZeroRoundTripsToThePressuresApplied) {
  PressureRun run;
  run.write();
  run.run_stage<CalibrateStage>();
  const Matrix& p = run.store.get<Matrix>("signals/p_taps_raw_pa");
  const Eigen::VectorXd& t = run.store.get<Series>("signals/time_s").values;
  ASSERT_EQ(p.values.cols(), static_cast<Eigen::Index>(run.taps()));
  double worst = 0;
  // The zero is interpolated between the window mid-times (0.45 s, 5.55 s) and held outside them.
  for (Eigen::Index k = 450; k <= 5550; k += 7)
    for (std::size_t i = 0; i < run.taps(); ++i) {
      const double truth = run.q_at(t[k]) * theory::joukowski_surface_cp(run.geometry, run.alpha_deg(t[k]) * kPi / 180, run.theta[i]);
      worst = std::max(worst, std::abs(p.values(k, static_cast<Eigen::Index>(i)) - truth));
    }
  EXPECT_LT(worst, kRoundTripPa);
  const Eigen::VectorXd& alpha = run.store.get<Series>("signals/alpha_deg").values;
  EXPECT_NEAR(alpha[1234], run.alpha_deg(t[1234]), 1e-12);
  EXPECT_NEAR(run.store.get<Series>("signals/q_pa").values[3000], run.q, 1e-9);
  // The encoder's fundamental (2 Hz) from its spectrum.
  EXPECT_NEAR(run.store.get<Scalar>("signals/pitch_frequency_hz").value, 2.0, 0.01);
  const Table& taps = run.store.get<Table>("signals/taps");
  EXPECT_NEAR(taps.numbers("zero_drift_pa")[0], PressureRun::gain(0) * run.drift_volts * (5.55 - 0.45) / 6.0, 1e-9);
  EXPECT_EQ(run.provenance.calibrations.size(), 3u);
}

TEST(PressurePath, LoadsOfExactJoukowskiPressuresMatchTheClosedFormThroughTheWholePath) {
  PressureRun run;
  run.write();
  run.run_stage<CalibrateStage>();
  run.run_stage<CpStage>("[cp]\n");
  run.run_stage<LoadsStage>("[loads]\n");
  const Eigen::VectorXd& t = run.store.get<Series>("loads/time_s").values;
  const Eigen::VectorXd& cl = run.store.get<Series>("loads/cl").values;
  const Eigen::VectorXd& cm = run.store.get<Series>("loads/cm").values;
  // Wind-on span only: q = 0 outside it.
  EXPECT_GE(t[0], run.wind_off);
  EXPECT_LE(t[t.size() - 1], run.duration - run.wind_off);
  // Same documented discretisation error as the unit test (loads_test.cpp): 0.2 % in Cl, 5e-4 in Cm.
  for (Eigen::Index k = 0; k < t.size(); k += 97) {
    const double a = run.alpha_deg(t[k]) * kPi / 180;
    const double exact = theory::joukowski_lift_coefficient(run.geometry, a);
    EXPECT_NEAR(cl[k] / exact, 1.0, 2e-3) << t[k];
    EXPECT_NEAR(cm[k], -0.0135182 * std::sin(2 * a), 5e-4) << t[k];  // published-checks 1.3
  }
  EXPECT_EQ(std::get<double>(run.store.entry("loads/cm").attributes.at("moment_ref_x_over_c")), 0.25);
}

TEST(PressurePath, DeadTapIsInterpolatedAlongTheArcAndFlagged) {
  PressureRun run;
  run.write();
  run.dir.write("taps.csv", run.tap_table([](std::size_t i) { return i == 12 ? "dead" : "ok"; }));
  run.run_stage<CalibrateStage>();
  run.run_stage<CpStage>("[cp]\n");
  const Table& taps = run.store.get<Table>("pressure/taps");
  EXPECT_EQ(taps.integers("interpolated")[12], 1);
  EXPECT_EQ(taps.texts("mask_reason")[12], "dead");
  EXPECT_EQ(taps.integers("interpolated")[11], 0);
  const Matrix& cp = run.store.get<Matrix>("pressure/cp");
  // Tap 13 (x/c 0.42, upper) lies between taps 12 and 14 on the arc.
  const double lo = std::min(cp.values(100, 11), cp.values(100, 13)), hi = std::max(cp.values(100, 11), cp.values(100, 13));
  EXPECT_GE(cp.values(100, 12), lo);
  EXPECT_LE(cp.values(100, 12), hi);
  EXPECT_EQ(std::get<std::int64_t>(run.store.entry("pressure/cp").attributes.at("cc_cm_valid")), 1);
}

TEST(PressurePath, DeadLeadingEdgeTapInvalidatesCcAndCmUnlessOverridden) {
  PressureRun run;
  run.write();
  run.dir.write("taps.csv", run.tap_table([](std::size_t i) { return i == 0 ? "dead" : "ok"; }));  // the x = 0 tap
  run.run_stage<CalibrateStage>();
  run.run_stage<CpStage>("[cp]\n");
  EXPECT_EQ(std::get<std::int64_t>(run.store.entry("pressure/cp").attributes.at("cc_cm_valid")), 0);
  run.run_stage<LoadsStage>("[cp]\n[loads]\n");
  EXPECT_TRUE(std::isnan(run.store.get<Series>("loads/cm").values[10]));
  EXPECT_TRUE(std::isnan(run.store.get<Series>("loads/cc").values[10]));
  EXPECT_TRUE(std::isfinite(run.store.get<Series>("loads/cn").values[10]));
  run.run_stage<CpStage>("[cp]\nallow_le_gap = true\n");
  EXPECT_EQ(std::get<std::int64_t>(run.store.entry("pressure/cp").attributes.at("cc_cm_valid")), 1);
}

TEST(PressurePath, FlatAndClippedTapsAreDetectedAndMasked) {
  PressureRun run;
  run.write();
  Matrix& v = run.store.get_mutable<Matrix>("daq/volts");
  v.values.col(2 + 5).setConstant(0.1);  // stuck transducer
  const double rail = v.values.col(2 + 30).maxCoeff() - 0.02;
  v.values.col(2 + 30) = v.values.col(2 + 30).cwiseMin(rail);  // saturated
  run.run_stage<CalibrateStage>();
  run.run_stage<CpStage>("[cp]\n");
  const Table& taps = run.store.get<Table>("pressure/taps");
  EXPECT_EQ(taps.texts("mask_reason")[5], "flat");
  EXPECT_EQ(taps.texts("mask_reason")[30], "clipped");
  EXPECT_EQ(taps.texts("mask_reason")[6], "");
}

TEST(PressurePath, ZeroDriftBeyondTheGateIsAnErrorOrAFlag) {
  PressureRun run;
  run.drift_volts = 0.02;  // ~17 Pa over the record
  run.write();
  const std::string m = message_of([&] { run.run_stage<CalibrateStage>(); });
  EXPECT_NE(m.find("max_zero_drift_pa"), std::string::npos) << m;
  EXPECT_NE(m.find("zero drifted"), std::string::npos) << m;
  run.set_calibrate_keys("on_zero_drift = \"flag\"");
  run.run_stage<CalibrateStage>();
  const Table& taps = run.store.get<Table>("signals/taps");
  EXPECT_EQ(taps.integers("zero_flagged")[0], 1);
  EXPECT_EQ(taps.texts("status")[0], "suspect");
}

TEST(PressurePath, ContractionDropTimesTunnelFactorGivesQ) {
  PressureRun run;
  run.write();
  run.store.put("daq/roles/contraction_dp", Text{"q_pitot"});
  run.set_calibrate_keys("q_source = \"contraction\"\ncontraction_factor = 1.08");
  run.run_stage<CalibrateStage>();
  EXPECT_NEAR(run.store.get<Series>("signals/q_pa").values[3000], 1.08 * run.q, 1e-9);
}

TEST(PressurePath, CycleAveragedQRemovesThePeriodicBlockageSignal) {
  PressureRun run;
  run.write();
  Matrix& v = run.store.get_mutable<Matrix>("daq/volts");
  const Eigen::VectorXd& t = run.store.get<Series>("daq/time_s").values;
  for (Eigen::Index k = 0; k < t.size(); ++k)
    if (run.q_at(t[k]) > 0) v.values(k, 1) += 8.0 / 250.0 * std::sin(2 * kPi * 2.0 * t[k]);  // 8 Pa at the pitch frequency
  run.set_calibrate_keys("q_average = \"cycle\"\npitch_frequency_hz = 2.0");
  run.run_stage<CalibrateStage>();
  const Eigen::VectorXd& q = run.store.get<Series>("signals/q_pa").values;
  for (Eigen::Index k = 1500; k < 4500; k += 111) EXPECT_NEAR(q[k], run.q, 1e-9) << k;
}

// ISA sea level (ICAO Doc 7488 / ISO 2533): 101325 Pa, 15 C -> 1.225 kg/m^3,
// 1.789e-5 Pa s (table values to 4 digits).
TEST(PressurePath, MeasuredStaticPressureAndTemperatureGiveTheStandardAtmosphereDensity) {
  PressureRun run;
  run.write();
  Matrix& v = run.store.get_mutable<Matrix>("daq/volts");
  v.values.conservativeResize(Eigen::NoChange, v.values.cols() + 2);
  v.values.col(v.values.cols() - 2).setConstant(101325.0 / 20000.0);
  v.values.col(v.values.cols() - 1).setConstant(1.5);
  v.columns.push_back("p_static");
  v.columns.push_back("t_air");
  run.store.put("daq/roles/p_static", Text{"p_static"});
  run.store.put("daq/roles/temperature", Text{"t_air"});
  run.dir.write("cal/env.toml", "id = \"env\"\ndate = 2026-11-01\nkind = \"reference_pressure\"\n[channels.p_static]\ncoefficients = [0.0, 20000.0]\n");
  run.dir.write("cal/temp.toml", "id = \"thermo\"\ndate = 2026-11-01\nkind = \"temperature\"\n[channels.t_air]\ncoefficients = [0.0, 10.0]\n");
  run.set_calibrate_keys("", "env = \"cal/env.toml\"\ntemp = \"cal/temp.toml\"\n");
  run.run_stage<CalibrateStage>();
  EXPECT_NEAR(run.store.get<Series>("signals/T_K").values[0], 288.15, 1e-12);
  EXPECT_NEAR(run.store.get<Series>("signals/rho_kg_m3").values[0], 1.225, 5e-4);
  EXPECT_NEAR(air::viscosity(288.15), 1.789e-5, 5e-9);
}

TEST(PressurePath, SkewedChannelIsPutBackOnTheDaqClock) {
  // A channel whose sample at t was taken at t + d: cubic interpolation by -d/dt samples.
  const double rate = 1000, d = 0.37e-3, f = 7.0;
  Eigen::VectorXd recorded(400), truth(400);
  for (int k = 0; k < 400; ++k) {
    recorded[k] = std::sin(2 * kPi * f * (k / rate + d));
    truth[k] = std::sin(2 * kPi * f * (k / rate));
  }
  const Eigen::VectorXd fixed = shift_samples(recorded, -d * rate);
  // Catmull-Rom error ~ (2 pi f dt)^3 / 16 ~ 1e-6 at 7 Hz, 1 kHz [common practice estimate].
  EXPECT_LT((fixed - truth).segment(3, 394).cwiseAbs().maxCoeff(), 2e-6);
  EXPECT_GT((recorded - truth).segment(3, 394).cwiseAbs().maxCoeff(), 1e-2);
}

TEST(PressurePath, BadCalibrationsAndChannelsNameTheFileAndKey) {
  {
    PressureRun run;
    run.write();
    run.dir.write("cal/taps.toml", run.tap_calibration(1000, "[channels.p99]\ncoefficients = [0.0, 1000.0]\n"));
    const std::string m = message_of([&] { run.run_stage<CalibrateStage>(); });
    EXPECT_NE(m.find("taps.toml:"), std::string::npos) << m;
    EXPECT_NE(m.find("channels.p99"), std::string::npos) << m;
    EXPECT_NE(m.find("not in the DAQ file"), std::string::npos) << m;
  }
  {
    PressureRun run;
    run.write();
    run.dir.write("cal/taps.toml", run.tap_calibration(7));
    const std::string m = message_of([&] { run.run_stage<CalibrateStage>(); });
    EXPECT_NE(m.find("taps.csv:9: tap p08"), std::string::npos) << m;
    EXPECT_NE(m.find("no calibration file"), std::string::npos) << m;
  }
  {
    PressureRun run;
    run.write();
    const std::string m = message_of([&] { run.run_stage<CalibrateStage>("[calibrate.time_offsets]\nalpha_encoder = 1e-4\n"); });
    EXPECT_NE(m.find("time_offsets.alpha_encoder"), std::string::npos) << m;
    EXPECT_NE(m.find("not in the DAQ file"), std::string::npos) << m;
  }
  {
    PressureRun run;
    run.write();
    run.store.put("daq/roles/angle", Text{"q_pitot"});  // the Pitot's calibration is not an encoder's
    const std::string m = message_of([&] { run.run_stage<CalibrateStage>(); });
    EXPECT_NE(m.find("pitot.toml"), std::string::npos) << m;
    EXPECT_NE(m.find("angle_encoder"), std::string::npos) << m;
  }
}

TEST(PressurePath, ZeroOrNegativeQIsAnInputError) {
  PressureRun run;
  run.q = 0.0;
  run.write();
  run.run_stage<CalibrateStage>();
  std::string m = message_of([&] { run.run_stage<CpStage>("[cp]\n"); });
  EXPECT_NE(m.find("run.toml"), std::string::npos) << m;
  EXPECT_NE(m.find("never rises above 0"), std::string::npos) << m;
  PressureRun windy;
  windy.write();
  windy.run_stage<CalibrateStage>();
  m = message_of([&] { windy.run_stage<CpStage>("[cp]\nwindow_s = [0.5, 3.0]\n"); });
  EXPECT_NE(m.find("cp.window_s"), std::string::npos) << m;
  EXPECT_NE(m.find("q > 0"), std::string::npos) << m;
  // A Pitot drop-out inside the automatically found wind-on span.
  PressureRun dropout;
  dropout.write();
  dropout.run_stage<CalibrateStage>();
  dropout.store.get_mutable<Series>("signals/q_pa").values[3000] = -0.5;
  m = message_of([&] { dropout.run_stage<CpStage>("[cp]\n"); });
  EXPECT_NE(m.find("t = 3 s inside the wind-on span found automatically"), std::string::npos) << m;
  EXPECT_NE(m.find("q > 0"), std::string::npos) << m;
}

TEST(PressurePath, ATapTableWithNoTapsIsAnInputErrorNotACrash) {
  PressureRun run;
  run.write();
  run.run_stage<CalibrateStage>();
  Table& taps = run.store.get_mutable<Table>("signals/taps");
  Table empty;
  for (const Column& c : taps.columns) {
    Column none = c;
    std::visit([](auto& v) { v.clear(); }, none.data);
    empty.add(std::move(none));
  }
  taps = std::move(empty);
  const std::string m = message_of([&] { run.run_stage<CpStage>("[cp]\n"); });
  EXPECT_NE(m.find("no taps"), std::string::npos) << m;
}

}  // namespace
}  // namespace stallscope
