#include "stages/numerics/statistics.hpp"

#include "pipeline/allocator.hpp"
#include "stages/numerics/bracket_gather.hpp"

#include <unsupported/Eigen/SpecialFunctions>

#include <algorithm>
#include <array>
#include <cmath>
#include <limits>
#include <numeric>
#include <stdexcept>
#include <tuple>

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

namespace {

// Moves the elements of [lo, hi) that satisfy `in_front` to its front and
// returns where the rest begin. Branch-free (Lomuto's scheme with the swap
// always done): on noisy data a branch per element would mispredict half the time.
template <typename Pred>
std::size_t partition_front(double* a, std::size_t lo, std::size_t hi, Pred in_front) {
  std::size_t i = lo;
  for (std::size_t j = lo; j < hi; ++j) {
    const double v = a[j];
    const bool front = in_front(v);
    a[j] = a[i];
    a[i] = v;
    i += front ? 1 : 0;
  }
  return i;
}

// Narrows [lo, hi) around k in two branch-free passes, after Floyd & Rivest
// (1975, CACM 18:165): two pivots taken from an evenly spread sample bracket
// the k-th value, the range is split into below, between and above them, and
// k's part is kept; k lands between them (a range some 10 % as long) all but
// a few percent of the time.
void bracket_kth(double* a, std::size_t& lo, std::size_t& hi, std::size_t k) {
  constexpr std::size_t kSample = 512, kMargin = 24;  // the margin is about 2 sigma of the sample rank
  const std::size_t n = hi - lo;
  std::array<double, kSample> s;
  for (std::size_t m = 0; m < kSample; ++m) s[m] = a[lo + m * n / kSample];
  const std::size_t rank = (k - lo) * kSample / n;
  const std::size_t r_lo = rank > kMargin ? rank - kMargin : 0, r_hi = std::min(kSample - 1, rank + kMargin);
  std::nth_element(s.begin(), s.begin() + static_cast<std::ptrdiff_t>(r_lo), s.end());
  const double p_lo = s[r_lo];
  std::nth_element(s.begin() + static_cast<std::ptrdiff_t>(r_lo), s.begin() + static_cast<std::ptrdiff_t>(r_hi), s.end());
  const double p_hi = s[r_hi];
  const std::size_t less = partition_front(a, lo, hi, [p_lo](double v) { return v < p_lo; });
  if (k < less) {
    hi = less;
    return;
  }
  const std::size_t upto = partition_front(a, less, hi, [p_hi](double v) { return v <= p_hi; });
  lo = k < upto ? less : upto;
  if (k < upto) hi = upto;
}

// Reorders a[0, n) so that a[k] is its k-th smallest, nothing before it larger
// and nothing after it smaller (what std::nth_element does), by quickselect
// with a median-of-three pivot, a large range first bracketed around k.
// Values must be comparable (no NaN).
void select_kth(double* a, std::size_t n, std::size_t k) {
  std::size_t lo = 0, hi = n;
  if (n >= 4096) bracket_kth(a, lo, hi, k);
  while (hi - lo > 16) {
    const double x = a[lo], y = a[lo + (hi - lo) / 2], z = a[hi - 1];
    const double pivot = std::max(std::min(x, y), std::min(std::max(x, y), z));
    const std::size_t less = partition_front(a, lo, hi, [pivot](double v) { return v < pivot; });
    if (k < less) {
      hi = less;
    } else if (less > lo) {
      lo = less;
    } else {
      // Nothing below the pivot: split off its copies (at least one, it is an element) so the range shrinks.
      const std::size_t equal = partition_front(a, lo, hi, [pivot](double v) { return v <= pivot; });
      if (k < equal) return;
      lo = equal;
    }
  }
  for (std::size_t i = lo + 1; i < hi; ++i) {  // insertion sort of the small rest, shifting (not swapping)
    const double v = a[i];
    std::size_t j = i;
    for (; j > lo && v < a[j - 1]; --j) a[j] = a[j - 1];
    a[j] = v;
  }
}

// The middle one or two of the finite values of x (or of their deviations
// from *centre), counted n, averaged: over a large x, the values between two
// sampled values that bracket the middle are gathered in one read and only
// they are ordered.
double middle_of(std::span<const double> x, const double* centre, std::vector<double, UnsetOnResize<double>>& band,
                 std::size_t* count = nullptr) {
  auto middle = [](std::span<double> a, std::size_t below, std::size_t n) {
    const std::size_t k = (n - 1) / 2;  // the lower middle; n even: with the next
    const auto [lower, upper] = order_pair(a, k - below);
    return n % 2 ? lower : 0.5 * (lower + upper);
  };
  band.resize(x.size() + 4);
  constexpr std::size_t kSample = 512, kMargin = 24;  // about 2 sigma of the sample rank
  if (x.size() >= 4096) {
    std::array<double, kSample> s;
    std::size_t m = 0;
    for (std::size_t j = 0; j < kSample; ++j) {
      const double xj = x[j * x.size() / kSample], v = centre ? std::abs(xj - *centre) : xj;
      if (std::isfinite(v)) s[m++] = v;
    }
    if (m > 4 * kMargin) {
      const std::size_t r_lo = m / 2 - kMargin, r_hi = m / 2 + kMargin;
      select_kth(s.data(), m, r_lo);
      const double p_lo = s[r_lo];
      select_kth(s.data() + r_lo, m - r_lo, r_hi - r_lo);
      const double p_hi = s[r_hi];
      const BracketCount c = gather_bracket(x, centre, p_lo, p_hi, band.data());
      if (count) *count = c.finite;
      const std::size_t n = c.finite, k = n ? (n - 1) / 2 : 0, last = n % 2 ? k : k + 1;
      if (n && c.below <= k && last < c.below + c.between)
        return middle(std::span(band.data(), c.between), c.below, n);
      // The sample missed the middle (rare): order every finite value.
    }
  }
  const double largest = std::numeric_limits<double>::max();
  const BracketCount c = gather_bracket(x, centre, -largest, largest, band.data());
  if (count) *count = c.finite;
  return c.finite ? middle(std::span(band.data(), c.finite), 0, c.finite) : std::numeric_limits<double>::quiet_NaN();
}

}  // namespace

MedianSpread median_and_mad(std::span<const double> x) {
  std::vector<double, UnsetOnResize<double>> band;  // every value read is written first
  MedianSpread out{0, 0, 0};
  out.median = middle_of(x, nullptr, band, &out.n);
  if (!out.n) return {std::numeric_limits<double>::quiet_NaN(), std::numeric_limits<double>::quiet_NaN(), 0};
  const double m = out.median;
  out.mad = middle_of(x, &m, band);
  return out;
}

double percentile(std::span<double> x, double p) {
  if (x.empty()) throw std::invalid_argument("percentile of an empty set");
  if (!(p >= 0 && p <= 1)) throw std::invalid_argument("percentile: p must be in [0, 1]");
  const double h = p * static_cast<double>(x.size() - 1);
  const auto lo = static_cast<std::size_t>(std::floor(h));
  double v_lo, v_hi;
  if (std::any_of(x.begin(), x.end(), [](double v) { return std::isnan(v); })) {
    std::nth_element(x.begin(), x.begin() + static_cast<std::ptrdiff_t>(lo), x.end());
    v_lo = x[lo];
    v_hi = lo + 1 < x.size() ? *std::min_element(x.begin() + static_cast<std::ptrdiff_t>(lo) + 1, x.end()) : v_lo;
  } else {
    std::tie(v_lo, v_hi) = order_pair(x, lo);
  }
  if (lo + 1 >= x.size() || h == static_cast<double>(lo)) return v_lo;
  return v_lo + (h - static_cast<double>(lo)) * (v_hi - v_lo);
}

std::pair<double, double> order_pair(std::span<double> x, std::size_t k) {
  if (k >= x.size()) throw std::invalid_argument("order_pair: k beyond the values");
  select_kth(x.data(), x.size(), k);
  if (k + 1 == x.size()) return {x[k], x[k]};
  // The next order statistic is the smallest of the upper part.
  double next = x[k + 1];
  for (std::size_t i = k + 2; i < x.size(); ++i) next = std::min(next, x[i]);
  return {x[k], next};
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
