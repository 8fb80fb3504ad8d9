#pragma once
// Truth rows for the events that are criteria on the loads and taps rather
// than facts of the physical state: each criterion applied to the undistorted
// state (true loads, true tap Cp before tubing, skew and noise, the exact
// angle), so that a reduction's error against them is the error of measuring,
// filtering and detecting alone. Definitions as in stages/events:
//   static_stall_crossing  upstroke time alpha passes static_stall_angle (value: pitch rate, deg/s)
//   moment_stall           first drop of Cm (c/4) moment_stall_delta below its running maximum from the
//                          cycle start, after the crossing (value: that running maximum)
//   le_suction_collapse    the peak of the strongest suction at the leading-edge taps, where it then
//                          falls by le_collapse_fraction within the cycle (value: Cp at the peak)
// One cycle is held at a time, so memory does not grow with the run.
#include <string>
#include <vector>

#include "tools/synth/scenario.hpp"

namespace stallscope::synth {

// The angle of the static maximum of Cn = Cn_alpha ((1 + sqrt x0)/2)^2 alpha
// (Kirchhoff with the static Goman-Khrabrov separation x0 at the nominal
// alpha_star), in degrees to 1e-6: the scenario's static stall angle.
double static_stall_angle_deg(const Scenario& s);

struct CriterionEvent {
  int cycle = 0;
  std::string event;
  double t = 0, value = 0, alpha_deg = 0;
};

class TruthCriteria {
 public:
  struct Settings {
    double static_stall_angle_deg = 14;
    double moment_stall_delta = 0.05;
    double le_collapse_fraction = 0.3;
  };
  explicit TruthCriteria(Settings settings) : settings_(settings) {}
  // One sample of the motion (cycle 0: not in the motion).
  void add(int cycle, double t, double alpha_deg, double rate_deg_s, double cm, double le_suction);
  // Ends the last cycle; the events found, in cycle order.
  std::vector<CriterionEvent> finish();

 private:
  void close_cycle();
  Settings settings_;
  int cycle_ = 0;
  std::vector<double> t_, alpha_, rate_, cm_, suction_;
  std::vector<CriterionEvent> found_;
};

}  // namespace stallscope::synth
