#pragma once
// The shape of a sample across cycles, beyond its mean and spread: median,
// bootstrap interval of the mean, running mean (has it converged?),
// bimodality and serial correlation. Complements statistics.hpp (mean, std,
// percentiles, Student-t interval).
#include <cstdint>
#include <span>
#include <vector>

namespace stallscope::numerics {

// Median (numpy's: mean of the middle two for even n); NaN for an empty x.
double median(std::span<const double> x);

struct Interval {
  double lo = 0, hi = 0;
};
// Percentile bootstrap interval of the mean (Efron & Tibshirani 1993, ch. 13):
// `resamples` resamples of x with replacement from a fixed seed, so a
// reduction is reproducible. NaN bounds for fewer than 2 values.
Interval bootstrap_mean_interval(std::span<const double> x, double level, int resamples, std::uint64_t seed);

// Mean and Student-t 95 % half-width of the first 1, 2, ..., n values.
struct RunningMean {
  std::vector<double> mean, half_width95;  // half_width95[0] is NaN
};
RunningMean running_mean(std::span<const double> x);

// Bias-corrected sample skewness G1 and excess kurtosis G2 (the estimators of
// scipy.stats.skew / kurtosis with bias=False). NaN for n < 3 (skew), n < 4 (kurtosis).
double skewness(std::span<const double> x);
double excess_kurtosis(std::span<const double> x);

// Sarle's bimodality coefficient (G1^2 + 1) / (G2 + 3 (n-1)^2 / ((n-2)(n-3))).
// 5/9 for a uniform distribution; larger values suggest two modes. NaN for n < 4.
double bimodality_coefficient(std::span<const double> x);

// Ashman's D = sqrt(2) |m1 - m2| / sqrt(s1^2 + s2^2) for the split of the
// sorted sample into two groups that minimises the within-group sum of squares
// (Otsu's criterion). D > 2 separates two modes cleanly. NaN for n < 4.
double ashman_d(std::span<const double> x);

// Lag-1 sample autocorrelation in the order given (cycle order); NaN for n < 3
// or a constant sample.
double lag1_autocorrelation(std::span<const double> x);

// Everything the events summary reports for one quantity.
struct SampleSummary {
  std::size_t n = 0;
  double mean = 0, std = 0, median = 0, min = 0, max = 0, p05 = 0, p95 = 0;
  double ci95_lo = 0, ci95_hi = 0;      // Student-t interval of the mean
  double boot95_lo = 0, boot95_hi = 0;  // percentile bootstrap interval of the mean
  double lag1 = 0, bimodality = 0, ashman = 0;
  bool autocorrelated = false, bimodal = false, converged = false;
};
struct SummaryOptions {
  int bootstrap_resamples = 2000;
  std::uint64_t bootstrap_seed = 1;
  std::size_t min_for_shape = 10;  // fewer values: bimodal and autocorrelated stay false
};
// Non-finite values must be removed first (std::invalid_argument otherwise).
// autocorrelated: |lag-1 r| > 1.96 / sqrt(n), the large-sample bound for
// white noise. bimodal: bimodality coefficient > 5/9 and Ashman's D > 2.
// converged: n >= 4 and the running mean over the last half of the values
// stays inside the final Student-t 95 % interval.
SampleSummary summarise(std::span<const double> x, const SummaryOptions& options = {});

}  // namespace stallscope::numerics
