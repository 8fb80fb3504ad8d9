#pragma once
// Transducer calibration files (TOML, our own format; interfaces.md):
//   id = "press-2026-11"   date = 2026-11-20   kind = "pressure_transducers"
//   [channels.p01]
//   coefficients = [c0, c1, ...]          # physical = c0 + c1 V + c2 V^2 + ...
//   temperature_coefficient_per_k = 0.0   # optional: p *= 1/(1 + tc (T - Tref))
//   reference_temperature_c = 20.0        # optional
//   residual_pa = 0.8                     # optional: rms residual of the fit
// Units of the physical value: Pa for pressures, degrees for the encoder,
// degrees Celsius for temperature.
#include <Eigen/Core>
#include <filesystem>
#include <map>
#include <string>
#include <vector>

namespace stallscope::calib {

enum class CalibrationKind { kPressureTransducers, kAngleEncoder, kReferencePressure, kTemperature };

// "pressure_transducers" ... ; the word a file uses for its kind.
std::string_view kind_name(CalibrationKind kind);

struct ChannelCalibration {
  std::vector<double> coefficients;  // c0 + c1 V + c2 V^2 ...
  double temperature_coefficient_per_k = 0.0;
  double reference_temperature_c = 20.0;
  double residual = -1.0;  // rms residual in physical units; < 0: not given
  int line = 0;            // line of [channels.<name>] in the file, for messages

  // c0 + c1 v + ... (Horner).
  double evaluate(double volts) const;
  Eigen::VectorXd evaluate(Eigen::Ref<const Eigen::VectorXd> volts) const;
  // The thermal sensitivity correction factor 1/(1 + tc (T - Tref)).
  double temperature_factor(double temperature_c) const;
};

struct CalibrationFile {
  std::string id;
  std::string date;  // ISO yyyy-mm-dd
  CalibrationKind kind = CalibrationKind::kPressureTransducers;
  std::map<std::string, ChannelCalibration> channels;  // by DAQ channel name
  std::filesystem::path source;

  // "file:line: channels.<name>" for messages about one channel.
  std::string where(const std::string& channel) const;
};

// Throws InputError naming the file, line and key for anything not in the format.
CalibrationFile read_calibration_file(const std::filesystem::path& path);
CalibrationFile parse_calibration(const std::string& text, const std::filesystem::path& path);

// TOML text of a calibration file (channels in name order, coefficients to 17 digits).
std::string format_calibration(const CalibrationFile& file);

}  // namespace stallscope::calib
