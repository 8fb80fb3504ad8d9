#pragma once
// The vortex lift of Leishman & Beddoes (1989, "A semi-empirical model for
// dynamic stall", J. American Helicopter Society 34(3)), as an optional term of
// the Goman-Khrabrov loop model. The circulation that trailing-edge separation
// takes from the attached lift feeds a leading-edge vortex,
//   C_v = Cn_attached (1 - ((1 + sqrt x)/2)^2),
// and the vortex normal force Cn_v takes up the increments of C_v while the
// vortex is over the chord, from stall onset for T_vl convective times, and
// decays with the time constant T_v all the while:
//   dCn_v/dt* = gate(t*) dC_v/dt* - Cn_v / T_v,  gate = 1 for 0 <= t* - t*_onset <= T_vl.
// After T_vl (the vortex has left the chord) it only decays. Times in c/U.
//
// Their discrete form is Cn_v[n] = E Cn_v[n-1] + (C_v[n] - C_v[n-1]) E^(1/2),
// E = exp(-dt/T_v) (from memory). Here each step is integrated exactly for C_v
// linear between samples, the gate edges included where they fall inside a step:
// a ramp in C_v then comes out exact, and Cn_v is continuous in the onset and in
// T_vl, which a least-squares fit of T_vl needs. The published E^(1/2) weight
// agrees with the exact one, T_v (1 - E)/dt, to (dt/T_v)^2/24.
#include <Eigen/Core>

namespace stallscope::fit {

struct VortexLiftTimes {
  double t_v = 1.0;   // decay time constant, c/U (> 0)
  double t_vl = 1.0;  // time the vortex stays on the chord after onset, c/U (>= 0)
};

// C_v: the attached-flow force lost to separation at separation point x
// (x clipped to [0, 1]).
double shed_vortex_force(double cn_attached, double x);

// Cn_v(t) for samples of C_v on a strictly increasing t, from Cn_v(t[0]) = initial,
// one gate [onset, onset + T_vl]. Throws std::invalid_argument for T_v <= 0,
// T_vl < 0, unequal sizes or a t that does not increase.
Eigen::VectorXd integrate_vortex_lift(const Eigen::VectorXd& t, const Eigen::VectorXd& shed, double onset,
                                      const VortexLiftTimes& times, double initial = 0.0);

// The periodic steady state for one period of samples (t[n-1] - t[0] < period):
// the record is closed back to its first sample one period on, a gate opens at
// onset every period (lasting at most one period), and, the equation being
// linear, the start that makes the response repeat is added as its free decay
// (as theory::periodic_goman_khrabrov).
Eigen::VectorXd periodic_vortex_lift(const Eigen::VectorXd& t, const Eigen::VectorXd& shed, double period,
                                     double onset, const VortexLiftTimes& times);

}  // namespace stallscope::fit
