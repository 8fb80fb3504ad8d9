#include "stages/fit/static_separation.hpp"

#include <fmt/format.h>

#include <algorithm>
#include <cmath>
#include <numbers>
#include <numeric>
#include <stdexcept>

#include "stages/fit/least_squares.hpp"

namespace stallscope::fit {

namespace {

constexpr double kDeg = std::numbers::pi / 180.0;
constexpr double kGridStepDeg = 0.02;

// Pool-adjacent-violators: the closest non-increasing sequence in least squares.
void make_non_increasing(std::vector<double>& y) {
  std::vector<double> level, weight;
  for (double v : y) {
    level.push_back(v);
    weight.push_back(1);
    while (level.size() > 1 && level[level.size() - 2] < level.back()) {
      const double w = weight[weight.size() - 2] + weight.back();
      const double l = (level[level.size() - 2] * weight[weight.size() - 2] + level.back() * weight.back()) / w;
      level.pop_back();
      weight.pop_back();
      level.back() = l;
      weight.back() = w;
    }
  }
  y.clear();
  for (std::size_t k = 0; k < level.size(); ++k) y.insert(y.end(), static_cast<std::size_t>(weight[k]), level[k]);
}

// Fritsch & Carlson (1980, SIAM J. Numer. Anal. 17(2)) slopes: the piecewise
// cubic Hermite through the points keeps their monotonicity (harmonic mean of
// neighbouring secants, zero at a local extremum).
std::vector<double> monotone_slopes(const std::vector<double>& x, const std::vector<double>& y) {
  const std::size_t n = x.size();
  std::vector<double> secant(n - 1), d(n, 0.0);
  for (std::size_t i = 0; i + 1 < n; ++i) secant[i] = (y[i + 1] - y[i]) / std::max(x[i + 1] - x[i], 1e-12);
  d[0] = secant[0];
  d[n - 1] = secant[n - 2];
  for (std::size_t i = 1; i + 1 < n; ++i)
    if (secant[i - 1] * secant[i] > 0) {
      const double w1 = 2 * (x[i + 1] - x[i]) + (x[i] - x[i - 1]), w2 = (x[i + 1] - x[i]) + 2 * (x[i] - x[i - 1]);
      d[i] = (w1 + w2) / (w1 / secant[i - 1] + w2 / secant[i]);
    }
  for (std::size_t i : {std::size_t{0}, n - 1})
    if (d[i] * secant[i == 0 ? 0 : n - 2] <= 0) d[i] = 0;
  return d;
}

double hermite(const std::vector<double>& x, const std::vector<double>& y, const std::vector<double>& d, std::size_t i,
               double at) {
  const double h = x[i + 1] - x[i];
  if (!(h > 0)) return y[i];
  const double t = (at - x[i]) / h, t2 = t * t, t3 = t2 * t;
  return (2 * t3 - 3 * t2 + 1) * y[i] + (t3 - 2 * t2 + t) * h * d[i] + (-2 * t3 + 3 * t2) * y[i + 1] +
         (t3 - t2) * h * d[i + 1];
}

}  // namespace

StaticSeparation StaticSeparation::from_polar(const std::vector<double>& alpha_deg, const std::vector<double>& cn,
                                              const StaticCurveOptions& o) {
  StaticSeparation s;
  s.options_ = o;
  std::vector<std::size_t> order;
  for (std::size_t i = 0; i < std::min(alpha_deg.size(), cn.size()); ++i)
    if (std::isfinite(alpha_deg[i]) && std::isfinite(cn[i])) order.push_back(i);
  if (order.size() < 4) throw std::invalid_argument(fmt::format("the static polar has {} finite points; at least 4 are needed", order.size()));
  std::sort(order.begin(), order.end(), [&](std::size_t a, std::size_t b) { return alpha_deg[a] < alpha_deg[b]; });
  for (std::size_t i : order) {
    s.alpha_deg_.push_back(alpha_deg[i]);
    s.cn_.push_back(cn[i]);
  }
  const std::size_t n = s.alpha_deg_.size();

  // Lift slope and zero-lift angle: the line over the linear range.
  const double lo = o.linear_range_deg[0], hi = o.linear_range_deg[1];
  double m = 0, sa = 0, sc = 0, saa = 0, sac = 0;
  for (std::size_t i = 0; i < n; ++i)
    if (s.alpha_deg_[i] >= lo && s.alpha_deg_[i] <= hi) {
      const double a = s.alpha_deg_[i] * kDeg;
      m += 1; sa += a; sc += s.cn_[i]; saa += a * a; sac += a * s.cn_[i];
    }
  const bool have_line = m >= 2 && m * saa - sa * sa > 0;
  const double slope = have_line ? (m * sac - sa * sc) / (m * saa - sa * sa) : NAN;
  const double intercept = have_line ? (sc - slope * sa) / m : NAN;
  s.cn_alpha_ = std::isfinite(o.lift_slope_per_rad) ? o.lift_slope_per_rad : slope;
  s.alpha0_ = std::isfinite(o.zero_lift_angle_deg) ? o.zero_lift_angle_deg * kDeg
              : have_line                          ? -intercept / slope
                                                   : 0.0;
  if (!(s.cn_alpha_ > 0))
    throw std::invalid_argument(fmt::format(
        "no positive lift slope: the static polar has {} point(s) between {} and {} deg (give lift_slope_per_rad, "
        "or widen linear_range_deg)", m, lo, hi));

  // Kirchhoff inversion, then smoothing and monotone sides.
  for (std::size_t i = 0; i < n; ++i) {
    const bool linear = s.alpha_deg_[i] >= lo && s.alpha_deg_[i] <= hi;
    const double g = s.attached_angle(s.alpha_deg_[i] * kDeg);
    s.raw_.push_back(linear || g == 0 ? 1.0 : theory::kirchhoff_separation(s.cn_[i] / (s.cn_alpha_ * g)));
  }
  const int half = std::max(0, o.smoothing_points / 2);
  for (std::size_t i = 0; i < n; ++i) {
    const std::size_t a = i >= static_cast<std::size_t>(half) ? i - half : 0, b = std::min(n - 1, i + half);
    s.smooth_.push_back(std::accumulate(s.raw_.begin() + a, s.raw_.begin() + b + 1, 0.0) / double(b - a + 1));
  }
  const auto split = static_cast<std::size_t>(
      std::lower_bound(s.alpha_deg_.begin(), s.alpha_deg_.end(), s.alpha0_ / kDeg) - s.alpha_deg_.begin());
  std::vector<double> above(s.smooth_.begin() + split, s.smooth_.end()), below(s.smooth_.begin(), s.smooth_.begin() + split);
  make_non_increasing(above);
  std::reverse(below.begin(), below.end());
  make_non_increasing(below);
  std::reverse(below.begin(), below.end());
  std::copy(below.begin(), below.end(), s.smooth_.begin());
  std::copy(above.begin(), above.end(), s.smooth_.begin() + split);

  // The tanh fit to the points above alpha_0 (where stall is).
  {
    std::vector<double> fa, fx;
    for (std::size_t i = split; i < n; ++i) {
      fa.push_back(s.alpha_deg_[i] * kDeg);
      fx.push_back(s.smooth_[i]);
    }
    double start_star = fa.empty() ? 0.3 : fa.back();
    for (std::size_t i = 0; i < fa.size(); ++i)
      if (fx[i] <= 0.5) {
        start_star = fa[i];
        break;
      }
    Box box{Eigen::Vector2d(0.1, -1.0), Eigen::Vector2d(200.0, 1.6)};
    const auto r = [&](const Eigen::VectorXd& p) {
      Eigen::VectorXd out(static_cast<Eigen::Index>(fa.size()));
      for (std::size_t i = 0; i < fa.size(); ++i)
        out[static_cast<Eigen::Index>(i)] = theory::static_separation({p[0], p[1]}, fa[i]) - fx[i];
      return out;
    };
    const auto best = bounded_least_squares(r, Eigen::Vector2d(10.0, start_star), box, 200);
    s.tanh_ = {best.parameters[0], best.parameters[1]};
  }

  // Uniform lookup table of the chosen curve (the points joined by a monotone
  // cubic, so the fit's cost has no kinks to stop in), 10 deg beyond the data each side.
  s.grid_start_ = (s.alpha_deg_.front() - 10.0) * kDeg;
  s.grid_step_ = kGridStepDeg * kDeg;
  const std::vector<double> slopes = monotone_slopes(s.alpha_deg_, s.smooth_);
  const auto cells = static_cast<std::size_t>(std::ceil((s.alpha_deg_.back() - s.alpha_deg_.front() + 20.0) / kGridStepDeg));
  for (std::size_t j = 0; j <= cells; ++j) {
    const double a = s.grid_start_ + double(j) * s.grid_step_;
    if (o.curve == SeparationCurve::kTanh) {
      s.grid_.push_back(a >= s.alpha0_ ? theory::static_separation(s.tanh_, a) : 1.0);
      continue;
    }
    const double ad = a / kDeg;
    const auto up = std::upper_bound(s.alpha_deg_.begin(), s.alpha_deg_.end(), ad) - s.alpha_deg_.begin();
    if (up == 0) s.grid_.push_back(s.smooth_.front());
    else if (static_cast<std::size_t>(up) == n) s.grid_.push_back(s.smooth_.back());
    else s.grid_.push_back(hermite(s.alpha_deg_, s.smooth_, slopes, static_cast<std::size_t>(up - 1), ad));
  }
  return s;
}

double StaticSeparation::operator()(double alpha) const {
  const double u = (alpha - grid_start_) / grid_step_;
  if (!(u > 0)) return grid_.front();
  const auto j = static_cast<std::size_t>(u);
  if (j + 1 >= grid_.size()) return grid_.back();
  const double w = u - double(j);
  return (1 - w) * grid_[j] + w * grid_[j + 1];
}

double StaticSeparation::attached_angle(double alpha) const {
  const double a = alpha - alpha0_;
  return options_.angle == KirchhoffAngle::kSine ? std::sin(a) : a;
}

double StaticSeparation::kirchhoff_factor(double x) {
  const double f = 0.5 * (1.0 + std::sqrt(std::clamp(x, 0.0, 1.0)));
  return f * f;
}

double StaticSeparation::normal_force(double alpha, double x) const {
  return cn_alpha_ * kirchhoff_factor(x) * attached_angle(alpha);
}

std::string StaticSeparation::description() const {
  return fmt::format(
      "Kirchhoff Cn = Cn_alpha ((1 + sqrt x)/2)^2 {}, Cn_alpha = {:.4f}/rad, alpha_0 = {:.3f} deg; x0 {} "
      "(running mean over {} point(s), monotone away from alpha_0); tanh fit alpha* = {:.3f} deg, s = {:.4f}/deg",
      options_.angle == KirchhoffAngle::kSine ? "sin(alpha - alpha_0)" : "(alpha - alpha_0)", cn_alpha_,
      alpha0_ / kDeg, options_.curve == SeparationCurve::kTable ? "tabulated from the static points" : "from the tanh fit",
      options_.smoothing_points, tanh_.alpha_star / kDeg, tanh_.steepness * kDeg);
}

}  // namespace stallscope::fit
