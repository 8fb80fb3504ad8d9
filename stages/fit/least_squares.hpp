#pragma once
// Bounded nonlinear least squares for a few parameters: Levenberg-Marquardt
// (Marquardt 1963, diagonal scaling) with the step projected onto the box, a
// central-difference Jacobian (one-sided at a bound), and a coarse grid start
// so that a loop with several local minima starts in the right basin.
#include <Eigen/Core>
#include <functional>
#include <vector>

namespace stallscope::fit {

using Residuals = std::function<Eigen::VectorXd(const Eigen::VectorXd& parameters)>;

struct Box {
  Eigen::VectorXd lower, upper;
  Eigen::VectorXd clamp(const Eigen::VectorXd& p) const { return p.cwiseMax(lower).cwiseMin(upper); }
};

struct LeastSquaresResult {
  Eigen::VectorXd parameters;
  double cost = 0.0;  // sum of squared residuals
  int iterations = 0;
  bool converged = false;
};

// Minimises |r(p)|^2 over the box from p0 (clamped into it). Non-finite
// residuals count as an infinite cost.
LeastSquaresResult bounded_least_squares(const Residuals& r, const Eigen::VectorXd& p0, const Box& box,
                                         int max_iterations = 100);

// The best of a uniform grid (points per parameter) over the box, then refined.
LeastSquaresResult grid_started_least_squares(const Residuals& r, const Box& box, int grid_points,
                                              int max_iterations = 100);
// The same with its own number of grid points for each parameter.
LeastSquaresResult grid_started_least_squares(const Residuals& r, const Box& box, const std::vector<int>& grid_points,
                                              int max_iterations = 100);

double sum_of_squares(const Eigen::VectorXd& r);

}  // namespace stallscope::fit
