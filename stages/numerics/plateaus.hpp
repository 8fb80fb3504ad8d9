#pragma once
// Steady stretches of a signal (the plateaus of a static staircase) and the
// best constant-rate ramp between two holds.
#include <Eigen/Core>
#include <vector>

namespace stallscope::numerics {

struct Plateau {
  Eigen::Index begin = 0, end = 0;  // the plateau's samples after the settling time
  double t_start = 0, t_end = 0;    // the steady stretch, settling time included
  double level = 0, std = 0;        // mean and sample std of its steady samples
};

// Stretches at least min_duration long in which y stays within +- tolerance
// of its level. A sample counts as steady when the range of y over a window of
// a tenth of min_duration about it is at most 2 tolerance, and the whole
// stretch spans at most 2 tolerance (1st to 99th percentile). Two stretches at
// the same level (within tolerance) split by a disturbance shorter than
// min_duration are one plateau, the disturbance left out of its level (unless
// join_split is false: finding where a model rests around a short motion).
// Non-finite samples are never steady. t must be increasing.
std::vector<Plateau> find_plateaus(const Eigen::VectorXd& t, const Eigen::VectorXd& y, double tolerance,
                                   double min_duration, double settle = 0, bool join_split = true);

struct RampFit {
  double t_start = 0, t_end = 0;          // where the fitted line meets the holds
  double level_start = 0, level_end = 0;  // the holds (medians of the first and last 5 %)
  double rate = 0;                        // units of y per second
  double rms_residual = 0;                // of hold-line-hold against y over the whole record
  double value(double t) const;
  double derivative(double t) const;
};

// Fits hold-line-hold to y: the line by least squares between 10 % and 90 % of
// the excursion. Throws std::invalid_argument when y has no excursion.
RampFit fit_ramp(const Eigen::VectorXd& t, const Eigen::VectorXd& y);

}  // namespace stallscope::numerics
