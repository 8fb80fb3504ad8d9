#include "stages/fit/least_squares.hpp"

#include <Eigen/Dense>
#include <cmath>
#include <limits>
#include <stdexcept>

namespace stallscope::fit {

double sum_of_squares(const Eigen::VectorXd& r) {
  const double c = r.squaredNorm();
  return std::isfinite(c) ? c : std::numeric_limits<double>::infinity();
}

namespace {

Eigen::MatrixXd jacobian(const Residuals& r, const Eigen::VectorXd& p, const Eigen::VectorXd& r0, const Box& box) {
  Eigen::MatrixXd j(r0.size(), p.size());
  for (Eigen::Index k = 0; k < p.size(); ++k) {
    const double h = 1e-5 * std::max(1.0, std::abs(p[k]));
    Eigen::VectorXd up = p, down = p;
    up[k] = std::min(p[k] + h, box.upper[k]);
    down[k] = std::max(p[k] - h, box.lower[k]);
    const double span = up[k] - down[k];
    if (span <= 0) {
      j.col(k).setZero();
      continue;
    }
    const Eigen::VectorXd ru = up[k] == p[k] ? r0 : r(up), rd = down[k] == p[k] ? r0 : r(down);
    j.col(k) = (ru - rd) / span;
  }
  return j;
}

}  // namespace

LeastSquaresResult bounded_least_squares(const Residuals& r, const Eigen::VectorXd& p0, const Box& box,
                                         int max_iterations) {
  LeastSquaresResult out;
  out.parameters = box.clamp(p0);
  Eigen::VectorXd res = r(out.parameters);
  out.cost = sum_of_squares(res);
  if (!std::isfinite(out.cost)) return out;
  double lambda = 1e-3;
  for (out.iterations = 0; out.iterations < max_iterations; ++out.iterations) {
    const Eigen::MatrixXd j = jacobian(r, out.parameters, res, box);
    const Eigen::MatrixXd jtj = j.transpose() * j;
    const Eigen::VectorXd g = j.transpose() * res;
    bool improved = false;
    while (lambda < 1e12) {
      Eigen::MatrixXd a = jtj;
      for (Eigen::Index k = 0; k < a.rows(); ++k) a(k, k) += lambda * std::max(jtj(k, k), 1e-12);
      const Eigen::VectorXd step = a.ldlt().solve(-g);
      const Eigen::VectorXd trial = box.clamp(out.parameters + step);
      const Eigen::VectorXd trial_res = r(trial);
      const double trial_cost = sum_of_squares(trial_res);
      if (trial_cost < out.cost) {
        const double moved = (trial - out.parameters).norm();
        out.parameters = trial;
        res = trial_res;
        out.cost = trial_cost;
        lambda = std::max(lambda / 3.0, 1e-12);
        improved = true;
        // A step test only: along a flat valley (tau1 and tau2 trade off) each
        // step lowers the cost very little yet still moves far.
        if (moved < 1e-9 * (1.0 + out.parameters.norm())) out.converged = true;
        break;
      }
      lambda *= 4.0;
    }
    if (!improved) out.converged = true;  // no downhill step left at any damping: a (bounded) minimum
    if (out.converged) break;
  }
  return out;
}

LeastSquaresResult grid_started_least_squares(const Residuals& r, const Box& box, int grid_points,
                                              int max_iterations) {
  return grid_started_least_squares(r, box, std::vector<int>(static_cast<std::size_t>(box.lower.size()), grid_points),
                                    max_iterations);
}

LeastSquaresResult grid_started_least_squares(const Residuals& r, const Box& box, const std::vector<int>& grid_points,
                                              int max_iterations) {
  const Eigen::Index n = box.lower.size();
  if (grid_points.size() != static_cast<std::size_t>(n))
    throw std::invalid_argument("grid_started_least_squares: one grid size per parameter");
  for (int g : grid_points)
    if (g < 2) throw std::invalid_argument("grid_started_least_squares: needs 2 or more grid points");
  Eigen::VectorXd best = box.lower, p(n);
  double best_cost = std::numeric_limits<double>::infinity();
  std::vector<int> index(static_cast<std::size_t>(n), 0);
  while (true) {
    for (Eigen::Index k = 0; k < n; ++k) {
      const auto j = static_cast<std::size_t>(k);
      p[k] = box.lower[k] + (box.upper[k] - box.lower[k]) * index[j] / (grid_points[j] - 1);
    }
    const double c = sum_of_squares(r(p));
    if (c < best_cost) {
      best_cost = c;
      best = p;
    }
    Eigen::Index k = 0;
    while (k < n && ++index[static_cast<std::size_t>(k)] == grid_points[static_cast<std::size_t>(k)])
      index[static_cast<std::size_t>(k++)] = 0;
    if (k == n) break;
  }
  return bounded_least_squares(r, best, box, max_iterations);
}

}  // namespace stallscope::fit
