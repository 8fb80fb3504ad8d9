#include "stages/conditions.hpp"

#include <gtest/gtest.h>

#include <cmath>
#include <numbers>

#include "calib/air/air.hpp"
#include "pipeline/errors.hpp"
#include "pipeline/run_context.hpp"
#include "pipeline/config.hpp"

namespace stallscope {
namespace {

// ICAO Standard Atmosphere at sea level (ISO 2533:1975): 288.15 K, 101325 Pa,
// rho = 1.2250 kg/m^3, mu = 1.7894e-5 Pa s, a = 340.294 m/s.
TEST(Air, MatchesTheStandardAtmosphereAtSeaLevel) {
  EXPECT_NEAR(air::density(101325.0, 288.15), 1.2250, 5e-5);
  EXPECT_NEAR(air::viscosity(288.15), 1.7894e-5, 1e-9);
  EXPECT_NEAR(air::speed_of_sound(288.15), 340.294, 1e-3);
}

TEST(ConditionsStage, GivesReAndMachFromTheTunnelState) {
  ConfigFile f = ConfigFile::parse("[conditions]\ntemperature_c = 15.0\nstatic_pressure_pa = 101325\n"
                                   "dynamic_pressure_pa = 245.0\n",
                                   "run.toml");
  ConfigSection s(f, "conditions");
  ConditionsStage stage;
  stage.configure(s);
  s.reject_unknown_keys();
  RunStore store;
  Provenance p;
  Progress quiet(Progress::Mode::kQuiet);
  RunContext ctx(store, p, quiet);
  store.put("run/chord_m", Scalar{0.3, "m"});
  stage.run(ctx);
  const double rho = store.get<Scalar>("run/rho_kg_m3").value;
  const double u = store.get<Scalar>("run/U_inf_m_s").value;
  EXPECT_NEAR(u, std::sqrt(2 * 245.0 / rho), 1e-12);
  EXPECT_NEAR(store.get<Scalar>("run/q_pa").value, 245.0, 1e-9);
  EXPECT_NEAR(store.get<Scalar>("run/Re").value, rho * u * 0.3 / air::viscosity(288.15), 1e-6);
  EXPECT_NEAR(store.get<Scalar>("run/Mach").value, u / 340.294, 1e-6);
}

TEST(ConditionsStage, TakesAtMostOneOfSpeedAndDynamicPressure) {
  ConfigFile f = ConfigFile::parse("[conditions]\nvelocity_m_s = 20\ndynamic_pressure_pa = 245.0\n", "run.toml");
  ConfigSection s(f, "conditions");
  ConditionsStage stage;
  EXPECT_THROW(stage.configure(s), InputError);
}

// A record as [calibrate] leaves it: wind off for the first and last second,
// q, p and T measured, T rising through the run.
struct MeasuredRun {
  RunStore store;
  Provenance provenance;
  Progress quiet{Progress::Mode::kQuiet};
  RunContext context{store, provenance, quiet};
  ConditionsStage stage;

  explicit MeasuredRun(const std::string& toml, bool with_q = true, bool with_t = true) {
    const int n = 5000;  // 5 s at 1 kHz
    Eigen::VectorXd t(n), q(n), p(n), temp(n);
    for (int i = 0; i < n; ++i) {
      t[i] = i * 1e-3;
      const bool wind = t[i] >= 1.0 && t[i] < 4.0;
      q[i] = wind ? 300.0 + 20.0 * std::sin(2 * std::numbers::pi * 2.0 * t[i]) : 0.5;  // whole cycles only
      p[i] = 101325.0 - (wind ? 300.0 : 0.0);
      temp[i] = 288.15 + (wind ? 2.0 * (t[i] - 1.0) / 3.0 : 0.0);
    }
    store.put("signals/time_s", Series{t, "s"});
    if (with_q) store.put("signals/q_pa", Series{q, "Pa"});
    store.put("signals/p_static_pa", Series{p, "Pa"});
    if (with_t) store.put("signals/T_K", Series{temp, "K"});
    store.put("run/chord_m", Scalar{0.3, "m"});
    ConfigFile f = ConfigFile::parse("[conditions]\n" + toml, "run.toml");
    ConfigSection s(f, "conditions");
    stage.configure(s);
    s.reject_unknown_keys();
  }
  double value(const std::string& key) const { return store.get<Scalar>(key).value; }
};

TEST(ConditionsStage, TakesQPAndTFromTheMeasuredSignalsOverTheWindOnSpan) {
  MeasuredRun run("velocity_m_s = 25.0\n");  // the config's speed is only a fallback
  run.stage.run(run.context);
  // Wind-on medians: q = 300 Pa (a 2 Hz blockage ripple about it), p = 101025 Pa,
  // T = 288.15 + 1 K (the middle of a linear rise).
  EXPECT_NEAR(run.value("run/q_pa"), 300.0, 0.02);
  EXPECT_NEAR(run.value("run/p_static_pa"), 101025.0, 1e-6);
  EXPECT_NEAR(run.value("run/T_K"), 289.15, 1e-3);
  const double rho = 101025.0 / (air::kGasConstant * run.value("run/T_K"));
  EXPECT_NEAR(run.value("run/rho_kg_m3"), rho, 1e-9);
  EXPECT_NEAR(run.value("run/mu_pa_s"), air::viscosity(run.value("run/T_K")), 1e-15);
  const double u = std::sqrt(2 * run.value("run/q_pa") / rho);
  EXPECT_NEAR(run.value("run/U_inf_m_s"), u, 1e-12);
  EXPECT_NEAR(run.value("run/Re"), rho * u * 0.3 / run.value("run/mu_pa_s"), 1e-6);
  EXPECT_NEAR(run.value("run/Mach"), u / air::speed_of_sound(run.value("run/T_K")), 1e-12);
  const std::string& source = run.store.get<Text>("run/conditions_source").value;
  EXPECT_NE(source.find("signals/q_pa"), std::string::npos) << source;
}

// ICAO Standard Atmosphere at sea level (ISO 2533:1975) through measured channels.
TEST(ConditionsStage, MeasuredSeaLevelAirGivesTheStandardAtmosphereDensity) {
  MeasuredRun run("");
  auto& p = run.store.get_mutable<Series>("signals/p_static_pa").values;
  auto& temp = run.store.get_mutable<Series>("signals/T_K").values;
  p.setConstant(101325.0);
  temp.setConstant(288.15);
  run.stage.run(run.context);
  EXPECT_NEAR(run.value("run/rho_kg_m3"), 1.2250, 5e-5);
  EXPECT_NEAR(run.value("run/mu_pa_s"), 1.7894e-5, 1e-9);
}

TEST(ConditionsStage, FallsBackToTheConfigForWhatTheDaqDoesNotMeasure) {
  MeasuredRun run("dynamic_pressure_pa = 250.0\ntemperature_c = 15.0\n", false, false);
  run.stage.run(run.context);
  EXPECT_DOUBLE_EQ(run.value("run/q_pa"), 250.0);
  EXPECT_DOUBLE_EQ(run.value("run/T_K"), 288.15);
  EXPECT_DOUBLE_EQ(run.value("run/p_static_pa"), 101025.0);  // no q: the median of the whole record
  MeasuredRun off("use_signals = false\nvelocity_m_s = 20.0\n");
  off.stage.run(off.context);
  EXPECT_DOUBLE_EQ(off.value("run/T_K"), 293.15);
  EXPECT_DOUBLE_EQ(off.value("run/U_inf_m_s"), 20.0);
}

TEST(ConditionsStage, NeedsASpeedWhenNoDynamicPressureIsMeasured) {
  MeasuredRun run("", false);
  try {
    run.stage.run(run.context);
    FAIL() << "expected an InputError";
  } catch (const InputError& e) {
    EXPECT_NE(std::string(e.what()).find("velocity_m_s"), std::string::npos) << e.what();
  }
}

}  // namespace
}  // namespace stallscope
