#include "stages/conditions.hpp"

#include <cmath>

#include "calib/air/air.hpp"
#include "pipeline/errors.hpp"

namespace stallscope {

void ConditionsStage::configure(ConfigSection& s) {
  options_.temperature_c = s.number("temperature_c", options_.temperature_c);
  s.require(options_.temperature_c > -100 && options_.temperature_c < 200, "temperature_c",
            "expected the air temperature in degrees Celsius, between -100 and 200");
  options_.static_pressure_pa = s.number("static_pressure_pa", options_.static_pressure_pa);
  s.require(options_.static_pressure_pa > 1000 && options_.static_pressure_pa < 1e7, "static_pressure_pa",
            "expected an absolute static pressure in Pa");
  const bool has_u = s.has("velocity_m_s"), has_q = s.has("dynamic_pressure_pa");
  s.require(has_u != has_q, has_u ? "dynamic_pressure_pa" : "velocity_m_s",
            "give exactly one of velocity_m_s and dynamic_pressure_pa");
  options_.velocity_m_s = s.number("velocity_m_s", 0.0);
  options_.dynamic_pressure_pa = s.number("dynamic_pressure_pa", 0.0);
  // isfinite: TOML spells inf and nan, and either would run silently into Re, q and every coefficient.
  if (has_u)
    s.require(options_.velocity_m_s > 0 && std::isfinite(options_.velocity_m_s), "velocity_m_s",
              "expected a finite speed > 0");
  if (has_q)
    s.require(options_.dynamic_pressure_pa > 0 && std::isfinite(options_.dynamic_pressure_pa), "dynamic_pressure_pa",
              "expected a finite pressure > 0");
}

std::vector<std::string> ConditionsStage::outputs() const {
  return {"run/T_K", "run/p_static_pa", "run/rho_kg_m3", "run/mu_pa_s", "run/U_inf_m_s",
          "run/q_pa", "run/Re",          "run/Mach"};
}

void ConditionsStage::run(RunContext& context) {
  RunStore& s = context.store();
  const double t = options_.temperature_c + air::kCelsiusToKelvin;
  const double rho = air::density(options_.static_pressure_pa, t);
  const double mu = air::viscosity(t);
  const double u = options_.velocity_m_s > 0 ? options_.velocity_m_s
                                             : std::sqrt(2.0 * options_.dynamic_pressure_pa / rho);
  const double chord = s.get<Scalar>("run/chord_m").value;
  s.put("run/T_K", Scalar{t, "K"});
  s.put("run/p_static_pa", Scalar{options_.static_pressure_pa, "Pa"});
  s.put("run/rho_kg_m3", Scalar{rho, "kg/m^3"});
  s.put("run/mu_pa_s", Scalar{mu, "Pa s"});
  s.put("run/U_inf_m_s", Scalar{u, "m/s"});
  s.put("run/q_pa", Scalar{0.5 * rho * u * u, "Pa"});
  s.put("run/Re", Scalar{rho * u * chord / mu, "1"});
  s.put("run/Mach", Scalar{u / air::speed_of_sound(t), "1"});
}

}  // namespace stallscope
