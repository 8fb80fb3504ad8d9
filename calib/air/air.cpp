#include "calib/air/air.hpp"

#include <cmath>
#include <stdexcept>

namespace stallscope::air {

static void check_temperature(double t) {
  if (!(t > 0)) throw std::logic_error("air temperature must be above 0 K");
}

double density(double pressure_pa, double temperature_k) {
  check_temperature(temperature_k);
  return pressure_pa / (kGasConstant * temperature_k);
}

double viscosity(double temperature_k) {
  check_temperature(temperature_k);
  return kSutherlandBeta * std::pow(temperature_k, 1.5) / (temperature_k + kSutherlandS);
}

double speed_of_sound(double temperature_k) {
  check_temperature(temperature_k);
  return std::sqrt(kGamma * kGasConstant * temperature_k);
}

}  // namespace stallscope::air
