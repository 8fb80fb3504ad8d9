#pragma once
// The physical state of a synthetic run, stepped sample by sample on the DAQ
// clock: the run timeline (wind-off tares, wind ramps, settling, motion), the
// pitch motion, the attached-flow unsteady aerodynamics (Theodorsen 1935), the
// separation point (Goman & Khrabrov 1994) and the dynamic-stall vortices.
// Everything the ground truth reports comes from this state, never from the
// criteria the pipeline applies to the measured signals.
#include <complex>
#include <cstdint>
#include <vector>

#include "tools/synth/random.hpp"
#include "tools/synth/scenario.hpp"

namespace stallscope::synth {

// One dynamic-stall vortex, positions in the airfoil frame (chords from the
// leading edge along the chord; height above the local upper surface).
struct Vortex {
  int track = 0;       // 1, 2, ... in release order over the run
  int cycle = 0;
  int generation = 1;  // 1: the leading-edge (dynamic-stall) vortex, 2: the secondary one
  double t_release = 0.0;
  double x_over_c = 0.0;
  double height_over_c = 0.0;
  double speed_over_u = 0.0;
  double circulation = 0.0;   // m^2/s, counter-clockwise positive (a leading-edge vortex is negative)
  double core_radius_m = 0.0;
  double cp_bump = 0.0;       // peak -Delta Cp it induces on the upper surface
  bool detached = false;      // feeding has stopped
  bool passed_te = false;
};

enum class Phase { kTareStart, kWindUp, kSettleStart, kMotion, kSettleEnd, kWindDown, kTareEnd };

struct FlowSample {
  std::int64_t index = 0;
  double t = 0.0;
  Phase phase = Phase::kTareStart;
  double wind = 0.0;          // q / q_nominal from the wind ramp (0 wind off, 1 on)
  double q_pa = 0.0;          // free-stream dynamic pressure, with its fluctuation
  double alpha = 0.0;         // rad
  double alpha_rate = 0.0;    // rad/s
  int cycle = 0;              // 1..cycles during the motion, 0 otherwise
  double phase_deg = 0.0;     // 0 at the cycle's minimum angle
  double alpha_effective = 0.0;  // rad: Theodorsen circulatory angle (3/4-chord downwash through C(k))
  double cn_noncirculatory = 0.0;
  double cm_noncirculatory = 0.0;  // about c/4
  double separation_x = 1.0;       // Goman-Khrabrov x (1 attached)
  double cn_circulatory_target = 0.0;  // Kirchhoff: Cl_alpha ((1 + sqrt x)/2)^2 alpha_E
  std::vector<Vortex> vortices;        // active ones (on or near the chord)
};

// What happened in the physical state, for truth_events.csv.
struct PhysicalEvent {
  int cycle = 0;
  std::string event;
  double t = 0.0;
  double value = 0.0;
};

class FlowModel {
 public:
  explicit FlowModel(const Scenario& scenario);

  std::int64_t samples() const { return samples_; }
  double sample_rate() const { return fs_; }
  double velocity() const { return velocity_; }
  double q_nominal() const { return q_nominal_; }
  double frequency_hz() const { return frequency_; }
  double motion_start() const { return t_motion_; }
  double motion_end() const { return t_motion_end_; }
  double cycle_period() const { return period_; }
  // Time windows of the wind-off tares, [start, end) in s.
  std::pair<double, double> first_tare() const { return {0.0, scenario_.tare_s}; }
  std::pair<double, double> last_tare() const;

  // The next sample (index 0, 1, ...). Throws std::logic_error past the end.
  const FlowSample& next();
  // Events found while stepping; drained by the caller.
  std::vector<PhysicalEvent> take_events();

  // Pure functions of time (exposed for tests).
  Phase phase_at(double t) const;
  double wind_at(double t) const;
  void motion_at(double t, double& alpha, double& alpha_rate, int& cycle, double& phase_deg) const;

 private:
  void start_cycle(int cycle);
  void step_aerodynamics(FlowSample& s);
  void step_vortices(FlowSample& s, double dt);

  Scenario scenario_;
  double fs_, velocity_, rho_, q_nominal_, frequency_, period_, omega_, k_, a_;
  double t_motion_, t_motion_end_;
  std::int64_t samples_;
  std::int64_t next_index_ = 0;
  Random cycle_random_, q_random_;
  FlowSample sample_;
  // Goman-Khrabrov step state.
  double prev_t_ = 0.0, prev_alpha_ = 0.0, prev_rate_ = 0.0;
  bool have_prev_ = false;
  double cycle_alpha_star_ = 0.0;  // rad
  int current_cycle_ = -1;
  double cycle_speed_[2] = {0.3, 0.3};
  bool released_ = false, reattached_ = false;
  int tracks_ = 0;
  // Wagner (R.T. Jones) deficiency states for non-harmonic motion.
  double wagner_x1_ = 0.0, wagner_x2_ = 0.0, prev_downwash_ = 0.0;
  // q fluctuation: first-order Gauss-Markov state.
  double q_state_ = 0.0;
  std::vector<PhysicalEvent> events_;
};

}  // namespace stallscope::synth
