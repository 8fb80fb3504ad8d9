#include "calib/transducers/wind_off_zero.hpp"

#include <stdexcept>

namespace stallscope::calib {

double WindOffZero::at(double t) const {
  if (!has_after || t <= t_before) return before;
  if (t >= t_after) return after;
  return before + (after - before) * (t - t_before) / (t_after - t_before);
}

Eigen::VectorXd WindOffZero::at(const Eigen::VectorXd& t) const {
  Eigen::VectorXd z(t.size());
  for (Eigen::Index i = 0; i < t.size(); ++i) z[i] = at(t[i]);
  return z;
}

Eigen::Index window_samples(const Eigen::VectorXd& t, const TimeWindow& w) {
  return ((t.array() >= w.start_s) && (t.array() <= w.end_s)).count();
}

double window_mean(const Eigen::VectorXd& t, const Eigen::VectorXd& x, const TimeWindow& w) {
  double sum = 0.0;
  Eigen::Index n = 0;
  for (Eigen::Index i = 0; i < t.size(); ++i)
    if (t[i] >= w.start_s && t[i] <= w.end_s) sum += x[i], ++n;
  if (n == 0) throw std::invalid_argument("the window holds no sample");
  return sum / static_cast<double>(n);
}

WindOffZero wind_off_zero(const Eigen::VectorXd& t, const Eigen::VectorXd& x, const TimeWindow& before,
                          const std::optional<TimeWindow>& after) {
  WindOffZero z;
  z.before = window_mean(t, x, before);
  z.t_before = 0.5 * (before.start_s + before.end_s);
  if (after) {
    z.after = window_mean(t, x, *after);
    z.t_after = 0.5 * (after->start_s + after->end_s);
    z.has_after = true;
  }
  return z;
}

}  // namespace stallscope::calib
