#include "stages/numerics/distribution.hpp"

#include <algorithm>
#include <cmath>
#include <limits>
#include <numeric>
#include <random>
#include <stdexcept>

#include "stages/numerics/statistics.hpp"

namespace stallscope::numerics {

namespace {

constexpr double kNaN = std::numeric_limits<double>::quiet_NaN();

// Central moments m2, m3, m4 with the 1/n divisor.
struct Moments {
  double m2 = 0, m3 = 0, m4 = 0;
};
Moments central_moments(std::span<const double> x) {
  const double m = mean(x);
  Moments r;
  for (double v : x) {
    const double d = v - m, d2 = d * d;
    r.m2 += d2;
    r.m3 += d2 * d;
    r.m4 += d2 * d2;
  }
  const double n = static_cast<double>(x.size());
  r.m2 /= n;
  r.m3 /= n;
  r.m4 /= n;
  return r;
}

}  // namespace

double median(std::span<const double> x) {
  if (x.empty()) return kNaN;
  std::vector<double> v(x.begin(), x.end());
  return percentile(v, 0.5);
}

Interval bootstrap_mean_interval(std::span<const double> x, double level, int resamples, std::uint64_t seed) {
  if (!(level > 0 && level < 1)) throw std::invalid_argument("bootstrap_mean_interval: level must be in (0, 1)");
  if (resamples < 1) throw std::invalid_argument("bootstrap_mean_interval: resamples must be >= 1");
  if (x.size() < 2) return {kNaN, kNaN};
  std::mt19937_64 gen(seed);
  std::uniform_int_distribution<std::size_t> pick(0, x.size() - 1);
  std::vector<double> means(static_cast<std::size_t>(resamples));
  for (double& m : means) {
    double sum = 0;
    for (std::size_t i = 0; i < x.size(); ++i) sum += x[pick(gen)];
    m = sum / static_cast<double>(x.size());
  }
  const double tail = 0.5 * (1 - level);
  std::vector<double> copy = means;
  return {percentile(means, tail), percentile(copy, 1 - tail)};
}

RunningMean running_mean(std::span<const double> x) {
  RunningMean r;
  r.mean.resize(x.size());
  r.half_width95.resize(x.size());
  // Welford's update keeps the running variance accurate.
  double m = 0, s = 0;
  for (std::size_t i = 0; i < x.size(); ++i) {
    const double n = static_cast<double>(i + 1), d = x[i] - m;
    m += d / n;
    s += d * (x[i] - m);
    r.mean[i] = m;
    r.half_width95[i] = i == 0 ? kNaN : student_t_quantile(0.975, n - 1) * std::sqrt(s / (n - 1)) / std::sqrt(n);
  }
  return r;
}

double skewness(std::span<const double> x) {
  const std::size_t n = x.size();
  if (n < 3) return kNaN;
  const Moments m = central_moments(x);
  if (m.m2 == 0) return kNaN;
  const double g1 = m.m3 / std::pow(m.m2, 1.5), nn = static_cast<double>(n);
  return g1 * std::sqrt(nn * (nn - 1)) / (nn - 2);
}

double excess_kurtosis(std::span<const double> x) {
  const std::size_t n = x.size();
  if (n < 4) return kNaN;
  const Moments m = central_moments(x);
  if (m.m2 == 0) return kNaN;
  const double g2 = m.m4 / (m.m2 * m.m2) - 3, nn = static_cast<double>(n);
  return (nn - 1) / ((nn - 2) * (nn - 3)) * ((nn + 1) * g2 + 6);
}

double bimodality_coefficient(std::span<const double> x) {
  const std::size_t n = x.size();
  if (n < 4) return kNaN;
  const double g1 = skewness(x), g2 = excess_kurtosis(x), nn = static_cast<double>(n);
  return (g1 * g1 + 1) / (g2 + 3 * (nn - 1) * (nn - 1) / ((nn - 2) * (nn - 3)));
}

double ashman_d(std::span<const double> x) {
  const std::size_t n = x.size();
  if (n < 4) return kNaN;
  std::vector<double> v(x.begin(), x.end());
  std::sort(v.begin(), v.end());
  // Prefix sums give each split's within-group sum of squares in O(1).
  std::vector<double> s(n + 1, 0), q(n + 1, 0);
  for (std::size_t i = 0; i < n; ++i) {
    s[i + 1] = s[i] + v[i];
    q[i + 1] = q[i] + v[i] * v[i];
  }
  auto ss = [&](std::size_t a, std::size_t b) {  // [a, b)
    const double k = static_cast<double>(b - a), sum = s[b] - s[a];
    return q[b] - q[a] - sum * sum / k;
  };
  std::size_t best = 2;
  double best_ss = std::numeric_limits<double>::infinity();
  for (std::size_t k = 2; k + 2 <= n; ++k) {  // at least two values per group
    const double w = ss(0, k) + ss(k, n);
    if (w < best_ss) best_ss = w, best = k;
  }
  const double k1 = static_cast<double>(best), k2 = static_cast<double>(n - best);
  const double m1 = s[best] / k1, m2 = (s[n] - s[best]) / k2;
  const double v1 = ss(0, best) / (k1 - 1), v2 = ss(best, n) / (k2 - 1);
  if (v1 + v2 == 0) return m1 == m2 ? 0.0 : std::numeric_limits<double>::infinity();
  return std::sqrt(2.0) * std::abs(m1 - m2) / std::sqrt(v1 + v2);
}

double lag1_autocorrelation(std::span<const double> x) {
  const std::size_t n = x.size();
  if (n < 3) return kNaN;
  const double m = mean(x);
  double num = 0, den = 0;
  for (std::size_t i = 0; i < n; ++i) {
    den += (x[i] - m) * (x[i] - m);
    if (i + 1 < n) num += (x[i] - m) * (x[i + 1] - m);
  }
  return den == 0 ? kNaN : num / den;
}

SampleSummary summarise(std::span<const double> x, const SummaryOptions& o) {
  for (double v : x)
    if (!std::isfinite(v)) throw std::invalid_argument("summarise: non-finite value");
  SampleSummary r;
  r.n = x.size();
  if (x.empty()) {
    r.mean = r.std = r.median = r.min = r.max = r.p05 = r.p95 = kNaN;
    r.ci95_lo = r.ci95_hi = r.boot95_lo = r.boot95_hi = r.lag1 = r.bimodality = r.ashman = kNaN;
    return r;
  }
  const MeanInterval ci = mean_interval95(x);
  r.mean = ci.mean;
  r.std = x.size() < 2 ? kNaN : ci.std;
  r.ci95_lo = ci.lo;
  r.ci95_hi = ci.hi;
  std::vector<double> v(x.begin(), x.end());
  r.median = percentile(v, 0.5);
  r.p05 = percentile(v, 0.05);
  r.p95 = percentile(v, 0.95);
  const auto [lo, hi] = std::minmax_element(x.begin(), x.end());
  r.min = *lo;
  r.max = *hi;
  const Interval boot = bootstrap_mean_interval(x, 0.95, o.bootstrap_resamples, o.bootstrap_seed);
  r.boot95_lo = boot.lo;
  r.boot95_hi = boot.hi;
  r.lag1 = lag1_autocorrelation(x);
  r.bimodality = bimodality_coefficient(x);
  r.ashman = ashman_d(x);
  const double nn = static_cast<double>(x.size());
  if (x.size() >= o.min_for_shape) {
    r.autocorrelated = std::isfinite(r.lag1) && std::abs(r.lag1) > 1.96 / std::sqrt(nn);
    r.bimodal = std::isfinite(r.bimodality) && r.bimodality > 5.0 / 9.0 && r.ashman > 2;
  }
  if (x.size() >= 4) {
    const RunningMean run = running_mean(x);
    r.converged = true;
    for (std::size_t i = x.size() / 2; i < x.size(); ++i)
      if (run.mean[i] < r.ci95_lo || run.mean[i] > r.ci95_hi) r.converged = false;
  }
  return r;
}

}  // namespace stallscope::numerics
