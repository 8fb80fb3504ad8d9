#include "stages/events/features.hpp"

#include <algorithm>
#include <cmath>

namespace stallscope::events {

namespace {

const double kSqrt12 = std::sqrt(12.0);

// Vertex of the parabola through samples i-1, i, i+1 (uniform spacing about i).
Detection parabola_vertex(const Trace& tr, Eigen::Index i) {
  const double ym = tr.y[i - 1], y0 = tr.y[i], yp = tr.y[i + 1];
  const double h = 0.5 * (tr.t[i + 1] - tr.t[i - 1]);
  const double curve = ym - 2 * y0 + yp;
  Detection d;
  d.found = true;
  double offset = curve != 0 ? 0.5 * (ym - yp) / curve : 0.0;
  offset = std::clamp(offset, -0.5, 0.5);
  d.t_s = tr.t[i] + offset * h;
  d.value = y0 - 0.25 * (ym - yp) * offset;
  const double second = std::abs(curve) / (h * h);
  const double width = second > 0 ? std::sqrt(2 * tr.noise / second) : h;
  d.sigma_s = std::hypot(h / kSqrt12, width);
  return d;
}

}  // namespace

Eigen::Index index_at(const Eigen::VectorXd& t, double time) {
  return std::lower_bound(t.data(), t.data() + t.size(), time) - t.data();
}

Detection locate_extremum(const Trace& tr, Eigen::Index begin, Eigen::Index end, bool maximum) {
  begin = std::max<Eigen::Index>(begin, 0);
  end = std::min<Eigen::Index>(end, tr.y.size());
  if (end - begin < 3) return Detection::missing("fewer than 3 samples in the search window");
  Eigen::Index best = begin;
  for (Eigen::Index i = begin + 1; i < end; ++i)
    if (maximum ? tr.y[i] > tr.y[best] : tr.y[i] < tr.y[best]) best = i;
  if (best == begin || best == end - 1)
    return Detection::missing(std::string("the ") + (maximum ? "maximum" : "minimum") +
                              " lies on the edge of the search window (still " +
                              (maximum ? "rising" : "falling") + " there)");
  return parabola_vertex(tr, best);
}

Detection first_sustained_drop(const Trace& tr, const Eigen::VectorXd& threshold, Eigen::Index begin,
                               Eigen::Index end, double persistence_s) {
  begin = std::max<Eigen::Index>(begin, 0);
  end = std::min<Eigen::Index>(end, tr.y.size());
  auto d = [&](Eigen::Index i) { return tr.y[i] - threshold[i]; };
  for (Eigen::Index i = begin; i < end; ++i) {
    if (!(d(i) < 0)) continue;
    Eigen::Index j = i;
    while (j < end && d(j) < 0 && tr.t[j] - tr.t[i] < persistence_s) ++j;
    if (j < end && !(d(j) < 0)) {
      i = j;  // came back above: not sustained
      continue;
    }
    if (j == end && tr.t[end - 1] - tr.t[i] < persistence_s)
      return Detection::missing("below the threshold only for the last " +
                                std::to_string(tr.t[end - 1] - tr.t[i]) + " s of the data, shorter than the " +
                                std::to_string(persistence_s) + " s it must persist");
    if (i == 0 || (i == begin && !(d(i - 1) >= 0)))
      return Detection::missing("already below the threshold where the search starts");
    const double d0 = d(i - 1), d1 = d(i), t0 = tr.t[i - 1], t1 = tr.t[i];
    Detection r;
    r.found = true;
    const double w = d0 / (d0 - d1);
    r.t_s = t0 + w * (t1 - t0);
    r.value = tr.y[i - 1] + w * (tr.y[i] - tr.y[i - 1]);
    const double slope = std::abs(d1 - d0) / (t1 - t0);
    r.sigma_s = std::hypot((t1 - t0) / kSqrt12, tr.noise / slope);
    return r;
  }
  return Detection::missing("never below the threshold");
}

std::vector<Detection> prominent_peaks(const Trace& tr, Eigen::Index begin, Eigen::Index end,
                                       double min_prominence) {
  begin = std::max<Eigen::Index>(begin, 0);
  end = std::min<Eigen::Index>(end, tr.y.size());
  std::vector<Detection> out;
  for (Eigen::Index i = begin + 1; i + 1 < end; ++i) {
    if (!(tr.y[i] > tr.y[i - 1] && tr.y[i] >= tr.y[i + 1])) continue;
    double left = tr.y[i], right = tr.y[i];
    for (Eigen::Index j = i - 1; j >= begin && tr.y[j] <= tr.y[i]; --j) left = std::min(left, tr.y[j]);
    for (Eigen::Index j = i + 1; j < end && tr.y[j] <= tr.y[i]; ++j) right = std::min(right, tr.y[j]);
    const double prominence = tr.y[i] - std::max(left, right);
    if (prominence >= min_prominence) {
      Detection p = parabola_vertex(tr, i);
      p.reason = "prominence " + std::to_string(prominence);
      out.push_back(std::move(p));
    }
  }
  return out;
}

double LineFit::time_at_error(double x) const {
  if (!ok || n < 3) return std::numeric_limits<double>::quiet_NaN();
  const double var = residual_rms * residual_rms * static_cast<double>(n) / static_cast<double>(n - 2);
  const double dx = x - x0;
  return std::sqrt(var / static_cast<double>(n) / (slope * slope) + dx * dx * slope_error * slope_error /
                                                                          (slope * slope * slope * slope));
}

LineFit fit_line(const std::vector<double>& t, const std::vector<double>& x) {
  LineFit f;
  f.n = t.size();
  if (t.size() != x.size() || t.size() < 3) return f;
  const double n = static_cast<double>(t.size());
  double tm = 0, xm = 0;
  for (std::size_t i = 0; i < t.size(); ++i) tm += t[i], xm += x[i];
  tm /= n;
  xm /= n;
  double sxx = 0, sxy = 0;
  for (std::size_t i = 0; i < t.size(); ++i) {
    sxx += (t[i] - tm) * (t[i] - tm);
    sxy += (t[i] - tm) * (x[i] - xm);
  }
  if (sxx == 0) return f;
  f.t_mean = tm;
  f.x0 = xm;
  f.slope = sxy / sxx;
  f.s_xx = sxx;
  double ss = 0;
  for (std::size_t i = 0; i < t.size(); ++i) {
    const double r = x[i] - (xm + f.slope * (t[i] - tm));
    ss += r * r;
  }
  f.residual_rms = std::sqrt(ss / n);
  f.slope_error = std::sqrt(ss / (n - 2) / sxx);
  f.ok = f.slope != 0;
  return f;
}

}  // namespace stallscope::events
