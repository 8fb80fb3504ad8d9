#include "stages/conditions.hpp"

#include <gtest/gtest.h>

#include "calib/air/air.hpp"
#include "pipeline/errors.hpp"

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

TEST(ConditionsStage, NeedsExactlyOneOfSpeedAndDynamicPressure) {
  ConfigFile f = ConfigFile::parse("[conditions]\nvelocity_m_s = 20\ndynamic_pressure_pa = 245.0\n", "run.toml");
  ConfigSection s(f, "conditions");
  ConditionsStage stage;
  EXPECT_THROW(stage.configure(s), InputError);
}

}  // namespace
}  // namespace stallscope
