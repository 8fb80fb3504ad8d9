#pragma once
// [motion]: what the model did. A periodic pitch is fitted as a sinusoid with
// harmonics (frequency from the FFT peak, refined by nonlinear least squares);
// a constant-rate ramp by its start, end and rate; a static run by its steady
// angle or its staircase of steady angles (a static polar). The fitted motion
// gives the angle, the pitch rate (never differenced from the encoder), the
// phase and the cycle of every sample.
//
// Phase convention: phase 0 is the minimum angle of the fundamental (a cycle
// starts there), 180 deg the maximum, so 0-180 is the upstroke. With phase =
// "per_cycle" (the default) the phase is measured at every mean crossing of
// the angle (motion/phase_nodes) and runs linearly between them, so each cycle
// keeps its own period when the pitch frequency drifts.
#include <cstdint>
#include <span>
#include <string>
#include <vector>

#include "pipeline/stage.hpp"

namespace stallscope {

// The fitted periodic motion, as later stages use it, read back from the
// store (motion/fit and its attributes) so any time base can be placed in it.
struct MotionFit {
  double freq_hz = 0;
  double alpha_mean_deg = 0;
  double alpha_amp_deg = 0;
  double sine_phase_rad = 0;   // alpha = mean + amp sin(2 pi f t + sine_phase_rad) + harmonics
  double cycle_origin_s = 0;   // start (minimum angle) of cycle 0, the first complete cycle
  std::int64_t cycles = 0;     // complete cycles in the record: 0 .. cycles-1
  std::vector<double> harmonic_sin_deg, harmonic_cos_deg;  // h = 2.. on the fundamental's phase variable
  // The fundamental's phase variable measured at its mean crossings (times
  // increasing, theta a multiple of pi); empty: the fitted line 2 pi f t + phase.
  std::vector<double> node_t_s, node_theta_rad;

  double theta(double t) const;             // the fundamental's phase variable, rad
  double theta_rate(double t) const;        // its rate, rad/s
  double time_at_theta(double theta) const;  // the inverse of theta(t)

  struct CyclePhase {
    std::int64_t cycle;  // -1 outside the complete cycles
    double phase_deg;    // [0, 360), 0 at the minimum angle
  };
  CyclePhase at(double t) const;               // both at once (one phase evaluation)
  // at() of every sample of a time base, in one walk over the nodes when the
  // times ascend (a record's do), the same values as at() sample by sample.
  std::vector<CyclePhase> at(std::span<const double> t) const;
  double phase_deg(double t) const { return at(t).phase_deg; }
  std::int64_t cycle(double t) const { return at(t).cycle; }
  double cycle_start_s(std::int64_t c) const;  // where theta has advanced c turns from cycle_origin_s
  double alpha_deg(double t) const;            // fundamental + harmonics
  double alpha_rate_deg_s(double t) const;
  double period_s() const { return 1.0 / freq_hz; }  // the mean period

  // Reads motion/fit; throws InputError naming `needed_by` when the run's
  // motion is not periodic (no motion/fit in the store).
  static MotionFit from_store(const RunStore& store, const std::string& needed_by);

 private:
  double theta_near(double t, std::size_t& k) const;
  CyclePhase from_turns(double turns) const;
};

class MotionStage final : public Stage {
 public:
  static constexpr std::string_view kName = "motion";
  static constexpr std::string_view kSummary =
      "fit the pitch motion (sine, ramp, static angle or staircase): angle, rate, phase, cycle, k";

  struct Options {
    std::string type = "auto";          // auto | sine | ramp | static | staircase
    std::int64_t harmonics = 5;         // terms of the periodic fit, fundamental included
    double max_residual_fraction = 0.1; // rms misfit / amplitude (sine) or / excursion (ramp)
    double plateau_tolerance_deg = 0.2; // a steady angle stays within +- this of its mean
    double plateau_min_duration_s = 1.0;
    double plateau_settle_s = 0.0;      // left out at the start of each plateau
    std::string phase = "per_cycle";    // per_cycle (measured at each mean crossing) | fitted (one frequency)
  };

  std::string_view name() const override { return kName; }
  std::string_view summary() const override { return kSummary; }
  void configure(ConfigSection& section) override;
  std::vector<std::string> inputs() const override;
  std::vector<std::string> outputs() const override;
  void run(RunContext& context) override;

  const Options& options() const { return options_; }

 private:
  Options options_;
  std::string type_where_;
};

}  // namespace stallscope
