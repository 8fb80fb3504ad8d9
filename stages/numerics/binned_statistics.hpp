#pragma once
// Ensemble statistics of samples sorted into bins (phase bins, time bins):
// per bin and column the mean, sample std, 5th and 95th percentiles and count.
#include <Eigen/Core>
#include <span>

namespace stallscope::numerics {

struct BinnedStatistics {
  Eigen::MatrixXd mean, std, p05, p95;  // bins x columns; NaN where a bin is empty
  Eigen::MatrixXi n;                    // finite samples per bin and column
};

// Member m puts row sample[m] of y into bin[m] (0 <= bin < bins); a row may
// belong to several bins (overlapping windows). Non-finite values are left
// out. std uses the n - 1 divisor, percentiles interpolate linearly (numpy's
// default). Columns are processed in parallel on `threads` threads; the result
// does not depend on the thread count.
BinnedStatistics bin_statistics(const Eigen::Ref<const Eigen::MatrixXd>& y, std::span<const Eigen::Index> sample,
                                std::span<const int> bin, int bins, int threads = 1);

// Per-bin means only, e.g. one cycle's loop: bins x columns, NaN where empty.
Eigen::MatrixXd bin_means(const Eigen::Ref<const Eigen::MatrixXd>& y, std::span<const Eigen::Index> sample,
                          std::span<const int> bin, int bins);

}  // namespace stallscope::numerics
