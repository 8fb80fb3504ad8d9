#include "stages/numerics/plateaus.hpp"

#include <algorithm>
#include <cmath>
#include <deque>
#include <stdexcept>

#include "stages/numerics/statistics.hpp"

namespace stallscope::numerics {

namespace {

// Range of y over the centred window [i - h, i + h], by monotonic queues (O(n)).
Eigen::VectorXd rolling_range(const Eigen::VectorXd& y, Eigen::Index h) {
  const Eigen::Index n = y.size();
  Eigen::VectorXd range(n);
  std::deque<Eigen::Index> maxq, minq;
  Eigen::Index next = 0;  // next sample to enter the window
  for (Eigen::Index i = 0; i < n; ++i) {
    for (; next < n && next <= i + h; ++next) {
      while (!maxq.empty() && y[maxq.back()] <= y[next]) maxq.pop_back();
      maxq.push_back(next);
      while (!minq.empty() && y[minq.back()] >= y[next]) minq.pop_back();
      minq.push_back(next);
    }
    while (maxq.front() < i - h) maxq.pop_front();
    while (minq.front() < i - h) minq.pop_front();
    range[i] = y[maxq.front()] - y[minq.front()];
  }
  return range;
}

Plateau summarise(const Eigen::VectorXd& t, const Eigen::VectorXd& y, Eigen::Index first, Eigen::Index last,
                  double settle) {
  // The window test lets a few samples of the neighbouring moves in; trim the
  // ends that sit more than 3 robust standard deviations off the median.
  std::vector<double> v0(y.data() + first, y.data() + last);
  const double med = percentile(v0, 0.5);
  for (double& x : v0) x = std::abs(x - med);
  const double sigma = 1.4826 * percentile(v0, 0.5);
  const double band = std::max(3 * sigma, 1e-12 * (1 + std::abs(med)));
  while (last - first > 2 && std::abs(y[first] - med) > band) ++first;
  while (last - first > 2 && std::abs(y[last - 1] - med) > band) --last;
  Plateau p;
  p.t_start = t[first];
  p.t_end = t[last - 1];
  p.begin = first;
  while (p.begin + 1 < last && t[p.begin] < p.t_start + settle) ++p.begin;
  p.end = last;
  std::vector<double> v(y.data() + p.begin, y.data() + p.end);
  p.level = mean(v);
  p.std = sample_std(v);
  return p;
}

}  // namespace

std::vector<Plateau> find_plateaus(const Eigen::VectorXd& t, const Eigen::VectorXd& y, double tolerance,
                                   double min_duration, double settle, bool join_split) {
  const Eigen::Index n = y.size();
  if (n < 2 || t.size() != n) return {};
  const double dt = (t[n - 1] - t[0]) / static_cast<double>(n - 1);
  const auto h = std::max<Eigen::Index>(1, static_cast<Eigen::Index>(std::lround(0.05 * min_duration / dt)));
  // Non-finite samples are replaced by a huge value so no window holding one is steady.
  Eigen::VectorXd clean = y.unaryExpr([](double v) { return std::isfinite(v) ? v : 1e300; });
  const Eigen::VectorXd range = rolling_range(clean, h);

  // Steady runs long enough, as sample spans [first, last).
  std::vector<std::pair<Eigen::Index, Eigen::Index>> runs;
  for (Eigen::Index i = 0; i < n;) {
    if (!(range[i] <= 2 * tolerance)) {
      ++i;
      continue;
    }
    Eigen::Index j = i;
    while (j < n && range[j] <= 2 * tolerance) ++j;
    // Locally steady is not enough: a slow drift is steady over any short
    // window. The whole stretch must stay within the band.
    if (t[j - 1] - t[i] >= min_duration) {
      std::vector<double> v(clean.data() + i, clean.data() + j);
      const double spread = percentile(v, 0.99) - percentile(v, 0.01);
      if (spread <= 2 * tolerance) runs.emplace_back(i, j);
    }
    i = j;
  }
  std::vector<Plateau> found;
  for (const auto& [first, last] : runs) {
    Plateau p = summarise(t, clean, first, last, settle);
    // A short disturbance splits one plateau in two: join them again.
    // The disturbance itself stays out of the average.
    if (join_split && !found.empty() && std::abs(found.back().level - p.level) <= tolerance &&
        t[first] - found.back().t_end < min_duration) {
      Plateau& q = found.back();
      std::vector<double> v(clean.data() + q.begin, clean.data() + q.end);
      v.insert(v.end(), clean.data() + first, clean.data() + last);
      q.level = mean(v);
      q.std = sample_std(v);
      q.t_end = t[last - 1];
      q.end = last;
      continue;
    }
    found.push_back(p);
  }
  return found;
}

double RampFit::value(double t) const {
  if (t <= t_start) return level_start;
  if (t >= t_end) return level_end;
  return level_start + rate * (t - t_start);
}

double RampFit::derivative(double t) const { return (t > t_start && t < t_end) ? rate : 0.0; }

RampFit fit_ramp(const Eigen::VectorXd& t, const Eigen::VectorXd& y) {
  std::vector<Eigen::Index> keep;
  for (Eigen::Index i = 0; i < y.size(); ++i)
    if (std::isfinite(y[i])) keep.push_back(i);
  if (keep.size() < 20) throw std::invalid_argument("ramp fit: fewer than 20 finite samples");
  const std::size_t edge = std::max<std::size_t>(1, keep.size() / 20);
  std::vector<double> head, tail;
  for (std::size_t j = 0; j < edge; ++j) {
    head.push_back(y[keep[j]]);
    tail.push_back(y[keep[keep.size() - 1 - j]]);
  }
  RampFit r;
  r.level_start = percentile(head, 0.5);
  r.level_end = percentile(tail, 0.5);
  const double excursion = r.level_end - r.level_start;
  if (excursion == 0) throw std::invalid_argument("ramp fit: the signal starts and ends at the same level");
  std::size_t a = 0;
  while (a < keep.size() && (y[keep[a]] - r.level_start) / excursion < 0.1) ++a;
  std::size_t b = a;
  while (b < keep.size() && (y[keep[b]] - r.level_start) / excursion < 0.9) ++b;
  if (b < a + 3) throw std::invalid_argument("ramp fit: the excursion happens within 3 samples");
  // Least-squares line over the 10-90 % part.
  double st = 0, sy = 0, stt = 0, sty = 0;
  const double m = static_cast<double>(b - a), t0 = t[keep[a]];
  for (std::size_t j = a; j < b; ++j) {
    const double tj = t[keep[j]] - t0, yj = y[keep[j]];
    st += tj; sy += yj; stt += tj * tj; sty += tj * yj;
  }
  r.rate = (m * sty - st * sy) / (m * stt - st * st);
  const double intercept = (sy - r.rate * st) / m;  // value at t0
  r.t_start = t0 + (r.level_start - intercept) / r.rate;
  r.t_end = t0 + (r.level_end - intercept) / r.rate;
  double ss = 0;
  for (Eigen::Index i : keep) ss += std::pow(y[i] - r.value(t[i]), 2);
  r.rms_residual = std::sqrt(ss / static_cast<double>(keep.size()));
  return r;
}

}  // namespace stallscope::numerics
