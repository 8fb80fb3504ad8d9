#include "stages/fit/vortex_lift.hpp"

#include <algorithm>
#include <cmath>
#include <stdexcept>
#include <vector>

namespace stallscope::fit {

namespace {

struct Gate {
  double open, close;
};

void check(const Eigen::VectorXd& t, const Eigen::VectorXd& shed, const VortexLiftTimes& times) {
  if (t.size() != shed.size()) throw std::invalid_argument("vortex lift: t and C_v differ in length");
  for (Eigen::Index i = 1; i < t.size(); ++i)
    if (!(t[i] > t[i - 1])) throw std::invalid_argument("vortex lift: t must be strictly increasing");
  if (!(times.t_v > 0) || !(times.t_vl >= 0) || !std::isfinite(times.t_vl))
    throw std::invalid_argument("vortex lift: needs T_v > 0 and a finite T_vl >= 0");
}

// Steps from t[0], y[0] = initial. Over a step [t0, t1] with C_v rising at the
// constant rate rho, the part of the step inside a gate, [s0, s1], adds
// int_{s0}^{s1} rho e^{-(t1 - s)/T_v} ds = rho T_v e^{-(t1 - s1)/T_v} (1 - e^{-(s1 - s0)/T_v}).
Eigen::VectorXd integrate(const Eigen::VectorXd& t, const Eigen::VectorXd& shed, const std::vector<Gate>& gates,
                          double t_v, double initial) {
  const Eigen::Index n = t.size();
  Eigen::VectorXd y(n);
  if (n == 0) return y;
  y[0] = initial;
  for (Eigen::Index i = 1; i < n; ++i) {
    const double t0 = t[i - 1], t1 = t[i], h = t1 - t0;
    const double rate = (shed[i] - shed[i - 1]) / h;
    double fed = 0.0;
    for (const Gate& g : gates) {
      const double s0 = std::max(t0, g.open), s1 = std::min(t1, g.close);
      if (s1 > s0) fed += std::exp(-(t1 - s1) / t_v) * -std::expm1(-(s1 - s0) / t_v);
    }
    y[i] = std::exp(-h / t_v) * y[i - 1] + rate * t_v * fed;
  }
  return y;
}

}  // namespace

double shed_vortex_force(double cn_attached, double x) {
  const double f = 0.5 * (1.0 + std::sqrt(std::clamp(x, 0.0, 1.0)));
  return cn_attached * (1.0 - f * f);
}

Eigen::VectorXd integrate_vortex_lift(const Eigen::VectorXd& t, const Eigen::VectorXd& shed, double onset,
                                      const VortexLiftTimes& times, double initial) {
  check(t, shed, times);
  if (!std::isfinite(onset)) throw std::invalid_argument("vortex lift: the onset time is not finite");
  return integrate(t, shed, {{onset, onset + times.t_vl}}, times.t_v, initial);
}

Eigen::VectorXd periodic_vortex_lift(const Eigen::VectorXd& t, const Eigen::VectorXd& shed, double period,
                                     double onset, const VortexLiftTimes& times) {
  check(t, shed, times);
  const Eigen::Index n = t.size();
  if (n == 0) return {};
  if (!(period > t[n - 1] - t[0])) throw std::invalid_argument("vortex lift: the period must exceed the record");
  if (!std::isfinite(onset)) throw std::invalid_argument("vortex lift: the onset time is not finite");
  Eigen::VectorXd tc(n + 1), sc(n + 1);
  tc << t, t[0] + period;
  sc << shed, shed[0];
  // The gates that meet [t0, t0 + period]: the onset brought into that period, and the one before.
  const double first = t[0] + std::fmod(std::fmod(onset - t[0], period) + period, period);
  const double length = std::min(times.t_vl, period);
  const std::vector<Gate> gates{{first - period, first - period + length}, {first, first + length}};
  Eigen::VectorXd y = integrate(tc, sc, gates, times.t_v, 0.0);
  // Linear in the start: y(t0) = y_end / (1 - e^{-period/T_v}) repeats.
  const double start = y[n] / -std::expm1(-period / times.t_v);
  for (Eigen::Index i = 0; i < n; ++i) y[i] += start * std::exp(-(t[i] - t[0]) / times.t_v);
  return y.head(n);
}

}  // namespace stallscope::fit
