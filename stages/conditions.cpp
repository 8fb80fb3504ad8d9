#include "stages/conditions.hpp"

#include <cmath>
#include <fmt/format.h>

#include "calib/air/air.hpp"
#include "pipeline/errors.hpp"
#include "stages/cp.hpp"
#include "stages/numerics/statistics.hpp"

namespace stallscope {

void ConditionsStage::configure(ConfigSection& s) {
  options_.temperature_c = s.number("temperature_c", options_.temperature_c);
  s.require(options_.temperature_c > -100 && options_.temperature_c < 200, "temperature_c",
            "expected the air temperature in degrees Celsius, between -100 and 200");
  options_.static_pressure_pa = s.number("static_pressure_pa", options_.static_pressure_pa);
  s.require(options_.static_pressure_pa > 1000 && options_.static_pressure_pa < 1e7, "static_pressure_pa",
            "expected an absolute static pressure in Pa");
  const bool has_u = s.has("velocity_m_s"), has_q = s.has("dynamic_pressure_pa");
  s.require(!(has_u && has_q), "dynamic_pressure_pa", "give at most one of velocity_m_s and dynamic_pressure_pa");
  where_speed_ = s.where("velocity_m_s");
  options_.velocity_m_s = s.number("velocity_m_s", 0.0);
  options_.dynamic_pressure_pa = s.number("dynamic_pressure_pa", 0.0);
  // isfinite: TOML spells inf and nan, and either would run silently into Re, q and every coefficient.
  if (has_u)
    s.require(options_.velocity_m_s > 0 && std::isfinite(options_.velocity_m_s), "velocity_m_s",
              "expected a finite speed > 0");
  if (has_q)
    s.require(options_.dynamic_pressure_pa > 0 && std::isfinite(options_.dynamic_pressure_pa), "dynamic_pressure_pa",
              "expected a finite pressure > 0");
  options_.use_signals = s.boolean("use_signals", options_.use_signals);
  options_.wind_on_fraction = s.number("wind_on_fraction", options_.wind_on_fraction);
  s.require(options_.wind_on_fraction > 0 && options_.wind_on_fraction < 1, "wind_on_fraction",
            "expected a fraction between 0 and 1");
}

std::vector<std::string> ConditionsStage::optional_inputs() const {
  if (!options_.use_signals) return {};
  return {"signals/time_s", "signals/q_pa", "signals/p_static_pa", "signals/T_K"};
}

std::vector<std::string> ConditionsStage::outputs() const {
  return {"run/T_K", "run/p_static_pa", "run/rho_kg_m3", "run/mu_pa_s", "run/U_inf_m_s",
          "run/q_pa", "run/Re",          "run/Mach",  "run/conditions_source"};
}

void ConditionsStage::run(RunContext& context) {
  RunStore& s = context.store();
  const bool measured_q = options_.use_signals && s.contains("signals/q_pa");
  const bool given = options_.velocity_m_s > 0 || options_.dynamic_pressure_pa > 0;
  if (!measured_q && !given)
    throw InputError(where_speed_, "no measured dynamic pressure (signals/q_pa from [calibrate] with a q channel): "
                                   "give velocity_m_s or dynamic_pressure_pa");

  // The wind-on span of the measured q (the whole record without one). Medians
  // over it: the wind ramps at its ends, a periodic blockage and noise move them little.
  Eigen::Index first = 0, count = -1;
  if (measured_q) {
    const auto span = wind_on_span(s.get<Series>("signals/q_pa").values, options_.wind_on_fraction);
    if (!span)
      throw InputError("signals/q_pa", "the measured dynamic pressure never rises above 0 Pa: no wind-on data "
                                       "(check the q channel, its calibration and wind-off zero)");
    first = span->first;
    count = span->second - span->first + 1;
  }
  auto mean_of = [&](const char* key, double fallback, std::string& source) {
    if (!options_.use_signals || !s.contains(key)) {
      source = "config";
      return fallback;
    }
    const Eigen::VectorXd& v = s.get<Series>(key).values;
    const Eigen::Index n = count < 0 ? v.size() : count;
    std::vector<double> finite;
    for (Eigen::Index i = first; i < first + n; ++i)
      if (std::isfinite(v[i])) finite.push_back(v[i]);
    if (finite.empty()) throw InputError(key, "no finite sample in the wind-on span");
    const Eigen::VectorXd& t = s.get<Series>("signals/time_s").values;
    source = fmt::format("{}, median over the wind-on span {:g} to {:g} s", key, t[first], t[first + n - 1]);
    return numerics::percentile(finite, 0.5);
  };
  std::string t_source, p_source, q_source;
  const double t = mean_of("signals/T_K", options_.temperature_c + air::kCelsiusToKelvin, t_source);
  const double p = mean_of("signals/p_static_pa", options_.static_pressure_pa, p_source);
  if (!(t > 0) || !(p > 0))
    throw InputError(p_source == "config" ? t_source : p_source,
                     fmt::format("T = {:g} K and p = {:g} Pa: expected both > 0", t, p));
  const double rho = air::density(p, t);
  const double mu = air::viscosity(t);
  const double q_config = options_.dynamic_pressure_pa > 0 ? options_.dynamic_pressure_pa
                                                           : 0.5 * rho * options_.velocity_m_s * options_.velocity_m_s;
  const double q = mean_of("signals/q_pa", q_config, q_source);
  if (!(q > 0)) throw InputError(q_source, fmt::format("mean dynamic pressure {:g} Pa; expected > 0", q));
  const double u = std::sqrt(2.0 * q / rho);
  if (measured_q && given && std::abs(q / q_config - 1) > 0.02)
    context.progress().note(fmt::format("conditions: measured q = {:.4g} Pa differs by {:+.1f} % from the config's "
                                        "{:.4g} Pa; the measured value is used (use_signals = false keeps the config's)",
                                        q, 100 * (q / q_config - 1), q_config));
  const double chord = s.get<Scalar>("run/chord_m").value;
  s.put("run/T_K", Scalar{t, "K"});
  s.put("run/p_static_pa", Scalar{p, "Pa"});
  s.put("run/rho_kg_m3", Scalar{rho, "kg/m^3"});
  s.put("run/mu_pa_s", Scalar{mu, "Pa s"});
  s.put("run/U_inf_m_s", Scalar{u, "m/s"});
  s.put("run/q_pa", Scalar{q, "Pa"});
  s.put("run/conditions_source", Text{"T: " + t_source + "; p: " + p_source + "; q: " + q_source +
                                      "; rho = p / (R T), mu by Sutherland's law, U = sqrt(2 q / rho)"});
  s.put("run/Re", Scalar{rho * u * chord / mu, "1"});
  s.put("run/Mach", Scalar{u / air::speed_of_sound(t), "1"});
}

}  // namespace stallscope
