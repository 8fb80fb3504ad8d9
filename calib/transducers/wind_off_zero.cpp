#include "calib/transducers/wind_off_zero.hpp"

#include <algorithm>
#include <stdexcept>
#include <utility>

namespace stallscope::calib {

double WindOffZero::at(double t) const {
  if (!has_after || t <= t_before) return before;
  if (t >= t_after) return after;
  return before + (after - before) * (t - t_before) / (t_after - t_before);
}

Eigen::VectorXd WindOffZero::at(const Eigen::VectorXd& t) const {
  if (!has_after) return Eigen::VectorXd::Constant(t.size(), before);
  // The scalar at() for every sample, in Eigen's lanes.
  const Eigen::ArrayXd ramp = before + (after - before) * (t.array() - t_before) / (t_after - t_before);
  return (t.array() <= t_before).select(before, (t.array() >= t_after).select(after, ramp)).matrix();
}

namespace {

// The samples [first, last) of an increasing time base inside the window.
std::pair<Eigen::Index, Eigen::Index> window_span(const Eigen::VectorXd& t, const TimeWindow& w) {
  const double* begin = t.data();
  const double* end = begin + t.size();
  const double* first = std::lower_bound(begin, end, w.start_s);
  const double* last = std::upper_bound(first, end, w.end_s);
  return {first - begin, last - begin};
}

}  // namespace

Eigen::Index window_samples(const Eigen::VectorXd& t, const TimeWindow& w) {
  const auto [first, last] = window_span(t, w);
  return last - first;
}

double window_mean(const Eigen::VectorXd& t, const Eigen::VectorXd& x, const TimeWindow& w) {
  const auto [first, last] = window_span(t, w);
  if (last == first) throw std::invalid_argument("the window holds no sample");
  double sum = 0.0;  // in time order, as a plain loop adds them
  for (Eigen::Index i = first; i < last; ++i) sum += x[i];
  return sum / static_cast<double>(last - first);
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
