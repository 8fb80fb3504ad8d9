#pragma once
// Locating events on a filtered, sampled trace: extrema to sub-sample
// precision, threshold crossings that must persist, and the time uncertainty
// of each. Pure functions on index ranges [begin, end) of one time base.
#include <Eigen/Core>
#include <optional>
#include <string>
#include <vector>

namespace stallscope::events {

// A filtered signal on its time base, with the standard deviation of the noise
// left in it (the raw noise times the filter's white-noise gain).
struct Trace {
  const Eigen::VectorXd& t;
  const Eigen::VectorXd& y;
  double noise = 0;
  double dt() const { return t.size() > 1 ? (t[t.size() - 1] - t[0]) / static_cast<double>(t.size() - 1) : 0.0; }
};

// One located event, or the reason it was not found.
struct Detection {
  bool found = false;
  std::string reason;   // why not found, or a note when found
  double t_s = 0;       // event time
  double sigma_s = 0;   // its standard uncertainty
  double value = 0;     // the signal (or derived quantity) at the event
  static Detection missing(std::string why) { return {false, std::move(why), 0, 0, 0}; }
};

// First sample index with t >= time (t.size() if none).
Eigen::Index index_at(const Eigen::VectorXd& t, double time);

// The largest (maximum = true) or smallest sample in [begin, end), refined by
// the parabola through it and its neighbours. Uncertainty: the sample interval
// (dt / sqrt 12) and the half-width over which the parabola stays within the
// noise of its vertex, sqrt(2 noise / |y''|). Missing when the extreme lies on
// the window's edge (the trace is still rising or falling there).
Detection locate_extremum(const Trace& trace, Eigen::Index begin, Eigen::Index end, bool maximum);

// The first time in [begin, end) at which d = trace.y - threshold goes below
// zero and stays below for at least persistence_s (to the end of the window if
// shorter), interpolated linearly between the samples either side. Uncertainty:
// dt / sqrt 12 and the noise over the slope of d there. value: trace.y there.
// Missing when d never stays below zero.
Detection first_sustained_drop(const Trace& trace, const Eigen::VectorXd& threshold, Eigen::Index begin,
                               Eigen::Index end, double persistence_s);

// Local maxima of trace.y in [begin, end) whose prominence (height above the
// higher of the lowest points between them and the next higher ground on each
// side, or the window's edges) is at least min_prominence. In time order; value = y.
std::vector<Detection> prominent_peaks(const Trace& trace, Eigen::Index begin, Eigen::Index end,
                                       double min_prominence);

// A straight line x = x0 + s (t - t_mean) through points (t_i, x_i) by least
// squares, with the standard error of the slope and of the line at any t.
struct LineFit {
  bool ok = false;
  double t_mean = 0, x0 = 0, slope = 0, slope_error = 0, residual_rms = 0;
  double s_xx = 0;  // sum (t - t_mean)^2
  std::size_t n = 0;
  // Time at which the line reaches x, and its standard uncertainty.
  double time_at(double x) const { return t_mean + (x - x0) / slope; }
  double time_at_error(double x) const;
};
LineFit fit_line(const std::vector<double>& t, const std::vector<double>& x);

}  // namespace stallscope::events
