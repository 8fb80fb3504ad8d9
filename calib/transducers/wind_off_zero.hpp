#pragma once
// Wind-off zeros (tares): the mean reading of a channel in a wind-off window
// before the run and, optionally, in one after it. The zero in between is
// interpolated linearly in time between the window mid-times, so a slow drift
// of the transducer's offset is removed; outside them it is held constant.
#include <Eigen/Core>
#include <optional>

namespace stallscope::calib {

struct TimeWindow {
  double start_s = 0.0;
  double end_s = 0.0;
};

struct WindOffZero {
  double before = 0.0, after = 0.0;      // mean readings (physical units)
  double t_before = 0.0, t_after = 0.0;  // window mid-times
  bool has_after = false;

  double drift() const { return has_after ? after - before : 0.0; }
  double at(double t) const;
  Eigen::VectorXd at(const Eigen::VectorXd& t) const;
};

// Mean of x over samples with t in [start, end] of an increasing time base (as
// every DAQ record is checked to be); throws std::invalid_argument if the
// window holds no sample (callers turn that into an InputError on their key).
double window_mean(const Eigen::VectorXd& t, const Eigen::VectorXd& x, const TimeWindow& w);
// Number of samples in the window.
Eigen::Index window_samples(const Eigen::VectorXd& t, const TimeWindow& w);

WindOffZero wind_off_zero(const Eigen::VectorXd& t, const Eigen::VectorXd& x, const TimeWindow& before,
                          const std::optional<TimeWindow>& after);

}  // namespace stallscope::calib
