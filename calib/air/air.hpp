#pragma once
// Dry air as an ideal gas with Sutherland's viscosity law, with the constants
// of the ICAO Standard Atmosphere (ISO 2533:1975).
namespace stallscope::air {

inline constexpr double kGasConstant = 287.05287;       // J/(kg K), specific, dry air
inline constexpr double kGamma = 1.4;                   // ratio of specific heats
inline constexpr double kSutherlandBeta = 1.458e-6;     // kg/(m s K^0.5)
inline constexpr double kSutherlandS = 110.4;           // K
inline constexpr double kPrandtl = 0.71;                // near room temperature
inline constexpr double kCelsiusToKelvin = 273.15;

// rho = p / (R T)
double density(double pressure_pa, double temperature_k);
// mu = beta T^1.5 / (T + S)
double viscosity(double temperature_k);
// a = sqrt(gamma R T)
double speed_of_sound(double temperature_k);

}  // namespace stallscope::air
