#include "stages/numerics/statistics.hpp"

#include <unsupported/Eigen/SpecialFunctions>

#include <algorithm>
#include <cmath>
#include <limits>
#include <numeric>
#include <stdexcept>

namespace stallscope::numerics {

double mean(std::span<const double> x) {
  if (x.empty()) return std::numeric_limits<double>::quiet_NaN();
  return std::accumulate(x.begin(), x.end(), 0.0) / static_cast<double>(x.size());
}

double sample_std(std::span<const double> x) {
  if (x.size() < 2) return 0;
  const double m = mean(x);
  double ss = 0;
  for (double v : x) ss += (v - m) * (v - m);
  return std::sqrt(ss / static_cast<double>(x.size() - 1));
}

double percentile(std::span<double> x, double p) {
  if (x.empty()) throw std::invalid_argument("percentile of an empty set");
  if (!(p >= 0 && p <= 1)) throw std::invalid_argument("percentile: p must be in [0, 1]");
  const double h = p * static_cast<double>(x.size() - 1);
  const auto lo = static_cast<std::size_t>(std::floor(h));
  std::nth_element(x.begin(), x.begin() + static_cast<std::ptrdiff_t>(lo), x.end());
  const double v_lo = x[lo];
  if (lo + 1 >= x.size() || h == static_cast<double>(lo)) return v_lo;
  // The next order statistic is the smallest of the upper part.
  const double v_hi = *std::min_element(x.begin() + static_cast<std::ptrdiff_t>(lo) + 1, x.end());
  return v_lo + (h - static_cast<double>(lo)) * (v_hi - v_lo);
}

double student_t_quantile(double p, double nu) {
  if (!(p > 0 && p < 1)) throw std::invalid_argument("student_t_quantile: p must be in (0, 1)");
  if (!(nu > 0)) throw std::invalid_argument("student_t_quantile: nu must be > 0");
  if (p < 0.5) return -student_t_quantile(1 - p, nu);
  if (p == 0.5) return 0;
  // Upper tail for t >= 0: P(T > t) = I_{nu/(nu+t^2)}(nu/2, 1/2) / 2.
  const double tail = 1 - p;
  auto upper = [&](double t) { return 0.5 * Eigen::numext::betainc(0.5 * nu, 0.5, nu / (nu + t * t)); };
  double lo = 0, hi = 1;
  while (upper(hi) > tail) hi *= 2;
  for (int i = 0; i < 200 && hi - lo > 1e-13 * hi; ++i) {
    const double mid = 0.5 * (lo + hi);
    (upper(mid) > tail ? lo : hi) = mid;
  }
  return 0.5 * (lo + hi);
}

MeanInterval mean_interval95(std::span<const double> x) {
  MeanInterval r;
  r.n = x.size();
  r.mean = mean(x);
  r.std = sample_std(x);
  if (x.size() < 2) {
    r.lo = r.hi = std::numeric_limits<double>::quiet_NaN();
    return r;
  }
  const double half = student_t_quantile(0.975, static_cast<double>(x.size() - 1)) * r.std /
                      std::sqrt(static_cast<double>(x.size()));
  r.lo = r.mean - half;
  r.hi = r.mean + half;
  return r;
}

}  // namespace stallscope::numerics
