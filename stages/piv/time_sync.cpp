#include "stages/piv/time_sync.hpp"

#include <algorithm>
#include <cmath>

#include "pipeline/errors.hpp"

namespace stallscope::piv {

std::vector<double> rising_edges(const Eigen::VectorXd& t, const Eigen::VectorXd& v) {
  const Eigen::Index n = v.size();
  if (n < 2 || t.size() != n) return {};
  std::vector<double> sorted(v.data(), v.data() + n);
  std::sort(sorted.begin(), sorted.end());
  const double lo = sorted[static_cast<std::size_t>(0.01 * static_cast<double>(n - 1))];
  const double hi = sorted[static_cast<std::size_t>(0.99 * static_cast<double>(n - 1))];
  // A TTL line that never switches (or a dead channel) has no edges.
  if (!(hi - lo > 1e-3 * std::max(1.0, std::abs(hi)))) return {};
  const double level = 0.5 * (lo + hi);
  std::vector<double> edges;
  for (Eigen::Index k = 1; k < n; ++k)
    if (v[k - 1] < level && v[k] >= level)
      edges.push_back(t[k - 1] + (level - v[k - 1]) / (v[k] - v[k - 1]) * (t[k] - t[k - 1]));
  return edges;
}

namespace {

// Least squares y = a + b x, accumulated pair by pair (x, y centred by the caller).
struct LineFit {
  double n = 0, sx = 0, sy = 0, sxx = 0, sxy = 0;
  void add(double x, double y) { n += 1, sx += x, sy += y, sxx += x * x, sxy += x * y; }
  double slope() const {
    const double d = n * sxx - sx * sx;
    return n >= 2 && d > 0 ? (n * sxy - sx * sy) / d : 1.0;
  }
  double intercept() const { return (sy - slope() * sx) / n; }
};

double median_step(const std::vector<double>& t) {
  std::vector<double> d(t.size() - 1);
  for (std::size_t k = 1; k < t.size(); ++k) d[k - 1] = t[k] - t[k - 1];
  std::nth_element(d.begin(), d.begin() + static_cast<std::ptrdiff_t>(d.size() / 2), d.end());
  return d[d.size() / 2];
}

}  // namespace

TimeSync sync_to_trigger(const std::vector<double>& cam, const std::vector<double>& edges, std::size_t first_pulse,
                         const std::string& where) {
  if (cam.size() < 2) throw InputError(where, "time sync needs at least 2 frames");
  if (edges.size() < 2) throw InputError(where, "the camera trigger channel has " + std::to_string(edges.size()) +
                                                    " pulses; at least 2 are needed to place the frames");
  if (first_pulse >= edges.size())
    throw InputError(where, "first_pulse = " + std::to_string(first_pulse) + " but the trigger channel has only " +
                                std::to_string(edges.size()) + " pulses");
  const double period = median_step(cam);
  const double c0 = cam[0], e0 = edges[first_pulse];
  TimeSync s;
  s.method = "camera trigger";
  s.pulse.assign(cam.size(), -1);
  LineFit fit;
  fit.add(0.0, 0.0);
  s.pulse[0] = static_cast<std::int64_t>(first_pulse);
  std::size_t last = first_pulse;
  for (std::size_t f = 1; f < cam.size(); ++f) {
    const double x = cam[f] - c0;
    const double predicted = e0 + (fit.n >= 2 ? fit.intercept() + fit.slope() * x : x);
    auto it = std::lower_bound(edges.begin() + static_cast<std::ptrdiff_t>(last) + 1, edges.end(), predicted);
    std::size_t best = edges.size();
    for (auto cand : {it, it == edges.begin() + static_cast<std::ptrdiff_t>(last) + 1 ? edges.end() : it - 1}) {
      if (cand == edges.end()) continue;
      const auto k = static_cast<std::size_t>(cand - edges.begin());
      if (best == edges.size() || std::abs(edges[k] - predicted) < std::abs(edges[best] - predicted)) best = k;
    }
    // A pulse more than 30 % of a frame interval from the prediction belongs to another frame.
    if (best == edges.size() || std::abs(edges[best] - predicted) > 0.3 * period) continue;
    s.pulse[f] = static_cast<std::int64_t>(best);
    fit.add(x, edges[best] - e0);
    last = best;
  }
  const double a = fit.intercept(), b = fit.slope();
  double sq = 0;
  std::size_t first_matched = edges.size(), last_matched = 0;
  for (std::size_t f = 0; f < cam.size(); ++f) {
    if (s.pulse[f] < 0) continue;
    const auto k = static_cast<std::size_t>(s.pulse[f]);
    const double r = edges[k] - (e0 + a + b * (cam[f] - c0));
    sq += r * r;
    ++s.matched;
    first_matched = std::min(first_matched, k);
    last_matched = std::max(last_matched, k);
  }
  if (s.matched < 2) throw InputError(where, "no camera frame after the first matches a trigger pulse");
  s.residual_s = std::sqrt(sq / static_cast<double>(s.matched));
  const double n = static_cast<double>(s.matched), mean_x = fit.sx / fit.n;
  const double sxx = fit.sxx - fit.sx * mean_x;
  if (s.matched > 2 && sxx > 0) {
    const double sigma = std::sqrt(sq / (n - 2));
    s.offset_uncertainty_s = sigma / std::sqrt(n);
    s.drift_uncertainty = sigma / std::sqrt(sxx);
  }
  s.centre_s = e0 + a + b * mean_x;
  s.missing_frames = (last_matched - first_matched + 1) - s.matched;
  s.drift = b - 1.0;
  s.offset_s = e0 + a - b * c0;
  s.daq_time_s.resize(cam.size());
  for (std::size_t f = 0; f < cam.size(); ++f) s.daq_time_s[f] = e0 + a + b * (cam[f] - c0);
  return s;
}

TimeSync sync_constant_delay(const std::vector<double>& cam, double delay_s) {
  TimeSync s;
  s.method = "constant delay";
  s.offset_s = delay_s;
  s.pulse.assign(cam.size(), -1);
  s.daq_time_s.resize(cam.size());
  for (std::size_t f = 0; f < cam.size(); ++f) s.daq_time_s[f] = cam[f] + delay_s;
  return s;
}

}  // namespace stallscope::piv
