#pragma once
// Sample statistics used for cycle-to-cycle spread and confidence intervals.
#include <span>
#include <utility>
#include <vector>

namespace stallscope::numerics {

double mean(std::span<const double> x);
// Sample standard deviation, n - 1 divisor; 0 for fewer than two values.
double sample_std(std::span<const double> x);

// The p-quantile (0 <= p <= 1) with linear interpolation between order
// statistics (position p (n - 1), numpy's default). Reorders x. Throws
// std::invalid_argument for an empty x or p outside [0, 1].
double percentile(std::span<double> x, double p);

// The k-th and (k+1)-th smallest of x (k < x.size(); the k-th twice when it
// is the largest), the two order statistics a percentile interpolates between.
// Reorders x; values must be comparable (no NaN).
std::pair<double, double> order_pair(std::span<double> x, std::size_t k);

// The median of the finite values of x and their median absolute deviation
// about it (an even count averages the middle two, in both), exactly as
// sorting would give them; x is left as it is. NaN (n = 0) when none is finite.
// Over a large set each is found in one read of x: two values from a sample
// bracket it, and only the values between them are ordered.
struct MedianSpread {
  double median, mad;
  std::size_t n;  // finite values
};
MedianSpread median_and_mad(std::span<const double> x);

// Quantile of Student's t distribution with nu > 0 degrees of freedom, from
// the regularised incomplete beta function (CDF inverted by bisection).
double student_t_quantile(double p, double nu);

struct MeanInterval {
  double mean = 0, std = 0, lo = 0, hi = 0;  // 95 % interval of the mean: mean -+ t s / sqrt(n)
  std::size_t n = 0;
};
// NaN bounds for n < 2.
MeanInterval mean_interval95(std::span<const double> x);

}  // namespace stallscope::numerics
