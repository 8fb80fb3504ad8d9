#pragma once
// Goman-Khrabrov state-space model of unsteady separation (Goman & Khrabrov 1994,
// J. Aircraft 31(5)): tau1 dx/dt + x = x0(alpha - tau2 alpha_dot), with x in [0, 1]
// the separation-point position (1 = attached), and the Kirchhoff relation
// Cn = Cn_alpha ((1 + sqrt x)/2)^2 sin(alpha) (sin form as in Leishman & Beddoes
// 1989, who use alpha). Times tau1, tau2 share the time base of t (seconds or c/U).
#include <Eigen/Core>
#include <complex>
#include <functional>
#include <optional>

namespace stallscope::theory {

// Cn from the separation point x.
double kirchhoff_normal_force(double cn_alpha, double alpha, double x);

// Separation point from a normal force: x = (2 sqrt(Cn / (Cn_alpha sin alpha)) - 1)^2,
// clipped to [0, 1] (forces below the fully separated value give 0). Empty where
// Cn_alpha sin(alpha) = 0, since Cn then carries no information about x.
std::optional<double> kirchhoff_separation(double cn, double cn_alpha, double alpha);
// The same from the ratio of the force to its attached value, Cn / (Cn_alpha sin alpha)
// (or any other attached form, such as Cn_alpha alpha).
double kirchhoff_separation(double force_ratio);

// Static separation fit x0 = (1 - tanh(steepness (alpha - alpha_star))) / 2.
struct SeparationFit {
  double steepness = 1.0;   // per radian
  double alpha_star = 0.0;  // rad, where x0 = 1/2
};
double static_separation(const SeparationFit& fit, double alpha);

struct GomanKhrabrovTimes {
  double tau1 = 0.0;  // relaxation time (>= 0)
  double tau2 = 0.0;  // separation delay
};

// x(t) for sampled alpha(t), alpha_dot(t). Integrator: exact exponential step with
// the forcing u = x0(alpha - tau2 alpha_dot) linear over each step,
//   x1 = E x0 + (1 - E) u0 + (u1 - u0)(1 - (1 - E) tau1/h),  E = exp(-h/tau1).
// Chosen over RK4 because sampled data define u only at the samples (linear is the
// honest interpolant, and the step is exact for it, so a constant pitch rate with
// linear x0 comes out exact), and because it is stable for any h/tau1, where RK4
// diverges beyond h = 2.79 tau1. x0 is used as given (not clipped). x_initial
// defaults to the steady value u(t_0). Throws std::invalid_argument unless t is
// strictly increasing and the sizes agree.
Eigen::VectorXd integrate_goman_khrabrov(const Eigen::VectorXd& t, const Eigen::VectorXd& alpha,
                                         const Eigen::VectorXd& alpha_rate,
                                         const std::function<double(double)>& x0, const GomanKhrabrovTimes& times,
                                         std::optional<double> x_initial = std::nullopt);

// The same with alpha_dot from second-order finite differences of the samples.
Eigen::VectorXd integrate_goman_khrabrov(const Eigen::VectorXd& t, const Eigen::VectorXd& alpha,
                                         const std::function<double(double)>& x0, const GomanKhrabrovTimes& times,
                                         std::optional<double> x_initial = std::nullopt);

// The periodic steady state of the same equation for one period of samples
// t[0..n-1] (t[n-1] - t[0] < period; the motion repeats with that period): the
// record is closed back to its first sample one period on and integrated once
// from x = 0; the equation being linear, the initial value that makes the
// response repeat, x(0) = x_end / (1 - exp(-period/tau1)), is then added as its
// free decay x(0) exp(-(t - t0)/tau1).
Eigen::VectorXd periodic_goman_khrabrov(const Eigen::VectorXd& t, const Eigen::VectorXd& alpha,
                                        const Eigen::VectorXd& alpha_rate, double period,
                                        const std::function<double(double)>& x0, const GomanKhrabrovTimes& times);

// Small-amplitude harmonic response about a linear part of x0:
// x_hat / x0_hat(alpha_hat) = (1 - i omega tau2) / (1 + i omega tau1).
std::complex<double> goman_khrabrov_harmonic_response(double omega, const GomanKhrabrovTimes& times);

}  // namespace stallscope::theory
