#include "stages/theory/goman_khrabrov.hpp"

#include <algorithm>
#include <cmath>
#include <stdexcept>

namespace stallscope::theory {
namespace {

void check_samples(const Eigen::VectorXd& t, const Eigen::VectorXd& alpha) {
  if (t.size() != alpha.size()) throw std::invalid_argument("Goman-Khrabrov: t and alpha differ in length");
  for (Eigen::Index i = 1; i < t.size(); ++i) {
    if (!(t[i] > t[i - 1])) throw std::invalid_argument("Goman-Khrabrov: t must be strictly increasing");
  }
}

// Second-order three-point derivative on a non-uniform grid (one-sided at the ends).
Eigen::VectorXd derivative(const Eigen::VectorXd& t, const Eigen::VectorXd& y) {
  const Eigen::Index n = t.size();
  Eigen::VectorXd d = Eigen::VectorXd::Zero(n);
  if (n == 2) d.setConstant((y[1] - y[0]) / (t[1] - t[0]));
  if (n < 3) return d;
  auto three_point = [&](Eigen::Index i0, double at) {
    // Derivative at `at` of the parabola through samples i0, i0+1, i0+2.
    const double t0 = t[i0], t1 = t[i0 + 1], t2 = t[i0 + 2];
    return y[i0] * (2 * at - t1 - t2) / ((t0 - t1) * (t0 - t2)) +
           y[i0 + 1] * (2 * at - t0 - t2) / ((t1 - t0) * (t1 - t2)) +
           y[i0 + 2] * (2 * at - t0 - t1) / ((t2 - t0) * (t2 - t1));
  };
  d[0] = three_point(0, t[0]);
  for (Eigen::Index i = 1; i + 1 < n; ++i) d[i] = three_point(i - 1, t[i]);
  d[n - 1] = three_point(n - 3, t[n - 1]);
  return d;
}

}  // namespace

double kirchhoff_normal_force(double cn_alpha, double alpha, double x) {
  const double f = 0.5 * (1.0 + std::sqrt(x));
  return cn_alpha * f * f * std::sin(alpha);
}

std::optional<double> kirchhoff_separation(double cn, double cn_alpha, double alpha) {
  const double attached = cn_alpha * std::sin(alpha);
  if (attached == 0.0) return std::nullopt;
  return kirchhoff_separation(cn / attached);
}

double kirchhoff_separation(double ratio) {
  if (ratio <= 0.25) return 0.0;  // at or below the fully separated force (and of the wrong sign)
  const double root = 2.0 * std::sqrt(ratio) - 1.0;
  return std::min(1.0, root * root);
}

double static_separation(const SeparationFit& fit, double alpha) {
  return 0.5 * (1.0 - std::tanh(fit.steepness * (alpha - fit.alpha_star)));
}

Eigen::VectorXd integrate_goman_khrabrov(const Eigen::VectorXd& t, const Eigen::VectorXd& alpha,
                                         const Eigen::VectorXd& alpha_rate,
                                         const std::function<double(double)>& x0, const GomanKhrabrovTimes& times,
                                         std::optional<double> x_initial) {
  check_samples(t, alpha);
  if (alpha_rate.size() != t.size()) throw std::invalid_argument("Goman-Khrabrov: alpha_rate differs in length");
  if (!(times.tau1 >= 0.0) || !std::isfinite(times.tau2)) {
    throw std::invalid_argument("Goman-Khrabrov: needs tau1 >= 0 and a finite tau2");
  }
  const Eigen::Index n = t.size();
  Eigen::VectorXd x(n);
  if (n == 0) return x;
  auto forcing = [&](Eigen::Index i) { return x0(alpha[i] - times.tau2 * alpha_rate[i]); };
  double u_prev = forcing(0);
  x[0] = x_initial.value_or(u_prev);
  double h_prev = -1.0, decay = 0.0, ramp_weight = 0.0;
  for (Eigen::Index i = 1; i < n; ++i) {
    const double u = forcing(i);
    if (times.tau1 == 0.0) {
      x[i] = u;  // no lag: the state follows the forcing
    } else {
      const double h = t[i] - t[i - 1];
      if (h != h_prev) {  // uniform sampling: the weights of one step serve them all
        const double r = h / times.tau1;
        decay = -std::expm1(-r);        // 1 - E
        ramp_weight = 1.0 - decay / r;  // about r/2 for small r
        h_prev = h;
      }
      x[i] = (1.0 - decay) * x[i - 1] + decay * u_prev + (u - u_prev) * ramp_weight;
    }
    u_prev = u;
  }
  return x;
}

Eigen::VectorXd integrate_goman_khrabrov(const Eigen::VectorXd& t, const Eigen::VectorXd& alpha,
                                         const std::function<double(double)>& x0, const GomanKhrabrovTimes& times,
                                         std::optional<double> x_initial) {
  check_samples(t, alpha);
  return integrate_goman_khrabrov(t, alpha, derivative(t, alpha), x0, times, x_initial);
}

Eigen::VectorXd periodic_goman_khrabrov(const Eigen::VectorXd& t, const Eigen::VectorXd& alpha,
                                        const Eigen::VectorXd& alpha_rate, double period,
                                        const std::function<double(double)>& x0, const GomanKhrabrovTimes& times) {
  const Eigen::Index n = t.size();
  if (n == 0) return {};
  if (!(period > t[n - 1] - t[0])) throw std::invalid_argument("Goman-Khrabrov: the period must exceed the record");
  if (alpha.size() != n || alpha_rate.size() != n)
    throw std::invalid_argument("Goman-Khrabrov: alpha and alpha_rate differ in length from t");
  Eigen::VectorXd tc(n + 1), ac(n + 1), rc(n + 1);
  tc << t, t[0] + period;
  ac << alpha, alpha[0];
  rc << alpha_rate, alpha_rate[0];
  if (times.tau1 == 0.0) return integrate_goman_khrabrov(tc, ac, rc, x0, times).head(n);
  // Linear in the initial value: the response from x = 0 plus start e^{-(t - t0)/tau1}.
  Eigen::VectorXd x = integrate_goman_khrabrov(tc, ac, rc, x0, times, 0.0);
  const double start = x[n] / -std::expm1(-period / times.tau1);
  for (Eigen::Index i = 0; i < n; ++i) x[i] += start * std::exp(-(t[i] - t[0]) / times.tau1);
  return x.head(n);
}

std::complex<double> goman_khrabrov_harmonic_response(double omega, const GomanKhrabrovTimes& times) {
  const std::complex<double> i{0.0, 1.0};
  return (1.0 - i * omega * times.tau2) / (1.0 + i * omega * times.tau1);
}

}  // namespace stallscope::theory
