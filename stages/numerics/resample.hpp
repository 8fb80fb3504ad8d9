#pragma once
// Values of a sampled signal at other times.
#include <Eigen/Core>

namespace stallscope::numerics {

// Linear interpolation of (t_source, y_source) at t_target; t_source must be
// increasing. Targets outside the source span take NaN (never extrapolated).
// When both time bases are the same the values are returned unchanged.
Eigen::VectorXd interpolate_linear(const Eigen::VectorXd& t_source, const Eigen::VectorXd& y_source,
                                   const Eigen::VectorXd& t_target);

}  // namespace stallscope::numerics
