#include "stages/numerics/binned_statistics.hpp"

#include <algorithm>
#include <cmath>
#include <tuple>
#include <limits>
#include <stdexcept>
#include <vector>

#include "stages/numerics/statistics.hpp"

namespace stallscope::numerics {

namespace {

// Members grouped by bin (a counting sort): member m goes to slot[m], and the
// slots of bin b are offset[b] .. offset[b+1]. Members come in time order, so
// reading a column member by member and writing each value to its slot reads
// memory in order (one gather per member in bin order would miss the cache).
struct Groups {
  std::vector<std::size_t> slot;
  std::vector<std::size_t> offset;
};

Groups group(std::span<const Eigen::Index> sample, std::span<const int> bin, int bins, Eigen::Index rows) {
  if (sample.size() != bin.size()) throw std::logic_error("bin_statistics: sample and bin lengths differ");
  Groups g;
  g.offset.assign(static_cast<std::size_t>(bins) + 1, 0);
  for (std::size_t m = 0; m < bin.size(); ++m) {
    if (bin[m] < 0 || bin[m] >= bins || sample[m] < 0 || sample[m] >= rows)
      throw std::logic_error("bin_statistics: member out of range");
    ++g.offset[static_cast<std::size_t>(bin[m]) + 1];
  }
  for (int b = 0; b < bins; ++b) g.offset[b + 1] += g.offset[b];
  g.slot.resize(bin.size());
  std::vector<std::size_t> next(g.offset.begin(), g.offset.end() - 1);
  for (std::size_t m = 0; m < bin.size(); ++m) g.slot[m] = next[static_cast<std::size_t>(bin[m])]++;
  return g;
}

// The p05 and p95 of v (as percentile gives them), faster for a large bin:
// one pass copies the values below mean - 1.3 std and above mean + 1.3 std
// aside (about a tenth of a normal or a sinusoid's values each side), and
// each percentile is taken from its own tail alone when that tail holds the
// order statistics it needs (it does for any spread-out distribution; else the
// whole set is searched). `low` and `high` are scratch.
std::pair<double, double> tail_percentiles(std::span<double> v, double centre, double spread,
                                           std::vector<double>& low, std::vector<double>& high) {
  const std::size_t n = v.size();
  const double h05 = 0.05 * static_cast<double>(n - 1), h95 = 0.95 * static_cast<double>(n - 1);
  const auto k05 = static_cast<std::size_t>(std::floor(h05)), k95 = static_cast<std::size_t>(std::floor(h95));
  if (low.size() < n) low.resize(n);
  if (high.size() < n) high.resize(n);
  std::size_t nl = 0, nh = 0;
  const double below = centre - 1.3 * spread, above = centre + 1.3 * spread;
  for (double x : v) {  // branch-free: both stores always, the counts move on when they belong
    low[nl] = x;
    nl += x < below ? 1 : 0;
    high[nh] = x;
    nh += x > above ? 1 : 0;
  }
  // Order statistic r of the whole set is rank r in `low` when r < nl, and rank
  // r - (n - nh) in `high` when r >= n - nh.
  const bool low_holds = k05 + 1 < nl, high_holds = nh > 0 && k95 >= n - nh && k95 + 1 < n;
  if (!low_holds || !high_holds) {
    const double p95 = percentile(v, 0.95);
    return {percentile(v, 0.05), p95};
  }
  const auto [a05, b05] = order_pair(std::span(low.data(), nl), k05);
  const auto [a95, b95] = order_pair(std::span(high.data(), nh), k95 - (n - nh));
  return {a05 + (h05 - static_cast<double>(k05)) * (b05 - a05), a95 + (h95 - static_cast<double>(k95)) * (b95 - a95)};
}

}  // namespace

BinnedStatistics bin_statistics(const Eigen::Ref<const Eigen::MatrixXd>& y, std::span<const Eigen::Index> sample,
                                std::span<const int> bin, int bins, int threads) {
  const Groups g = group(sample, bin, bins, y.rows());
  const std::size_t members = sample.size();
  const Eigen::Index cols = y.cols();
  constexpr double kNaN = std::numeric_limits<double>::quiet_NaN();
  BinnedStatistics r;
  r.mean = r.std = r.p05 = r.p95 = Eigen::MatrixXd::Constant(bins, cols, kNaN);
  r.n = Eigen::MatrixXi::Zero(bins, cols);
  std::size_t largest = 0;
  for (int b = 0; b < bins; ++b) largest = std::max(largest, g.offset[b + 1] - g.offset[b]);
#pragma omp parallel num_threads(threads)
  {
    std::vector<double> by_bin(members), v, low(largest), high(largest);  // one set per thread
#pragma omp for schedule(dynamic)
    for (Eigen::Index j = 0; j < cols; ++j) {
      bool all_finite = true;
      for (std::size_t m = 0; m < members; ++m) {
        const double x = y(sample[m], j);
        by_bin[g.slot[m]] = x;
        all_finite = all_finite && std::isfinite(x);
      }
      for (int b = 0; b < bins; ++b) {
        std::span<double> values(by_bin.data() + g.offset[b], g.offset[b + 1] - g.offset[b]);
        if (!all_finite) {
          v.clear();
          for (double x : values)
            if (std::isfinite(x)) v.push_back(x);
          values = v;
        }
        const auto n = static_cast<Eigen::Index>(values.size());
        r.n(b, j) = static_cast<int>(n);
        if (n == 0) continue;
        // Eigen's sums run in several lanes: no add waits on the one before.
        const Eigen::Map<const Eigen::ArrayXd> a(values.data(), n);
        const double mean = a.sum() / static_cast<double>(n);
        r.mean(b, j) = mean;
        r.std(b, j) = n > 1 ? std::sqrt((a - mean).square().sum() / static_cast<double>(n - 1)) : kNaN;
        if (n >= 40 && r.std(b, j) > 0) {
          std::tie(r.p05(b, j), r.p95(b, j)) = tail_percentiles(values, mean, r.std(b, j), low, high);
        } else {
          r.p95(b, j) = percentile(values, 0.95);
          r.p05(b, j) = percentile(values, 0.05);
        }
      }
    }
  }
  return r;
}

Eigen::MatrixXd bin_means(const Eigen::Ref<const Eigen::MatrixXd>& y, std::span<const Eigen::Index> sample,
                          std::span<const int> bin, int bins) {
  if (sample.size() != bin.size()) throw std::logic_error("bin_means: sample and bin lengths differ");
  Eigen::MatrixXd sum = Eigen::MatrixXd::Zero(bins, y.cols());
  Eigen::MatrixXi count = Eigen::MatrixXi::Zero(bins, y.cols());
  for (std::size_t m = 0; m < bin.size(); ++m)
    for (Eigen::Index j = 0; j < y.cols(); ++j) {
      const double x = y(sample[m], j);
      if (!std::isfinite(x)) continue;
      sum(bin[m], j) += x;
      ++count(bin[m], j);
    }
  Eigen::MatrixXd out(bins, y.cols());
  for (int b = 0; b < bins; ++b)
    for (Eigen::Index j = 0; j < y.cols(); ++j)
      out(b, j) = count(b, j) ? sum(b, j) / count(b, j) : std::numeric_limits<double>::quiet_NaN();
  return out;
}

}  // namespace stallscope::numerics
