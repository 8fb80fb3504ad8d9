#pragma once
// Monte Carlo propagation of measurement uncertainty: what a perturbed
// replica of a run draws. The instrument uncertainties (one standard deviation
// each) come from [uncertainty] in the run config and from the calibration
// files themselves; every draw is a pure function of (seed, replica, what,
// index), so a replica is the same whichever stage asks first, on whatever
// thread, and the same seed gives the same uncertainty datasets.
#include <cstdint>
#include <string>
#include <string_view>

#include "pipeline/config.hpp"

namespace stallscope {

// One standard deviation of each input, as a user states it. Zero: not perturbed.
struct UncertaintyModel {
  // N perturbed reductions. The spread of N replicas is itself known to about
  // 1/sqrt(2(N - 1)) of its value: 18 % at the default 16.
  std::size_t replicas = 16;
  std::uint64_t seed = 1;
  // Transducers: each channel's calibration residual (residual_pa in its
  // calibration file) as a constant error over the run, and the wind-off zero
  // known to a uniform spread over its drift (sigma = |drift| / sqrt 12).
  bool calibration_residuals = true;
  bool zero_drift = true;
  double channel_gain_relative = 0.0;  // independent per pressure channel
  double taps_gain_relative = 0.0;     // one error shared by every tap transducer (same standard)
  double q_relative = 0.0;             // reference dynamic pressure beyond its transducer (probe factor)
  double p_static_pa = 0.0;
  double temperature_k = 0.0;
  double tap_position_over_c = 0.0;    // chordwise position of each tap
  double tube_length_relative = 0.0;   // each tap's line length
  double tube_diameter_relative = 0.0; // each tap's line diameter
  double encoder_offset_deg = 0.0;     // angle zero
  double encoder_gain_relative = 0.0;
  // PIV frame times on the DAQ clock: the camera-trigger fit's own standard
  // errors (offset and drift), and a latency beyond it (the constant delay
  // of delay sync, or an uncalibrated trigger latency).
  bool piv_clock_fit = true;
  double piv_delay_s = 0.0;

  // Reads [uncertainty]; InputError at the key for a value out of range.
  static UncertaintyModel from(ConfigSection& section);
};

class Perturbation {
 public:
  Perturbation(const UncertaintyModel& model, std::size_t replica) : model_(model), replica_(replica) {}
  const UncertaintyModel& model() const { return model_; }
  std::size_t replica() const { return replica_; }
  // A standard normal draw for (what, index) of this replica.
  double normal(std::string_view what, std::uint64_t index = 0) const;
  // sigma times a standard normal draw; 0 when sigma is 0.
  double error(double sigma, std::string_view what, std::uint64_t index = 0) const {
    return sigma == 0.0 ? 0.0 : sigma * normal(what, index);
  }

 private:
  const UncertaintyModel& model_;
  std::size_t replica_;
};

}  // namespace stallscope
