#pragma once
// The synthetic instruments: linear transducer calibrations (physical = c0 + c1 V,
// written as the project's calibration TOML files and inverted to make volts),
// and the electrical noise on each channel (white, 1/f, mains pick-up).
#include <filesystem>
#include <string>
#include <vector>

#include "tools/synth/random.hpp"

namespace stallscope::synth {

struct ChannelCalibration {
  std::string channel;
  double offset = 0.0;  // c0, physical units
  double gain = 1.0;    // c1, physical units per volt
  // Thermal sensitivity shift: the transducer reads (1 + tc (T - Tref)) x the
  // true value, as the calibration file states (0: none, nothing written).
  double temperature_coefficient_per_k = 0.0;
  double reference_temperature_c = 20.0;
  double volts(double physical) const { return (physical - offset) / gain; }
  double physical(double volts) const { return offset + gain * volts; }
};

// kind: "pressure_transducers" | "angle_encoder" | "reference_pressure" | "temperature".
void write_calibration_file(const std::filesystem::path& path, const std::string& id, const std::string& date,
                            const std::string& kind, const std::vector<ChannelCalibration>& channels,
                            double residual = 0.0, const std::string& residual_key = "");

// Noise of one channel, in volts: white, 1/f (a bank of first-order Gauss-Markov
// processes with octave-spaced corners, equal variance each, which sums to a
// 1/f spectrum between the corners: common practice) and mains pick-up at the
// fundamental and a third harmonic of a third of its amplitude.
class ChannelNoise {
 public:
  ChannelNoise(Random random, double sample_rate_hz, double white_v, double pink_v, double mains_v, double mains_hz);
  double next(double t);

 private:
  static constexpr int kPoles = 10;
  Random random_;
  double white_, mains_, mains_hz_, mains_phase_;
  double decay_[kPoles], drive_[kPoles], state_[kPoles];
};

// Voltage the DAQ saturates at (+-).
inline constexpr double kDaqRangeVolts = 10.0;

}  // namespace stallscope::synth
