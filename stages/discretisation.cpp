#include "stages/discretisation.hpp"

#include <algorithm>
#include <cmath>
#include <numbers>

namespace stallscope {

namespace {

constexpr double kAlpha = 0.1;      // rad, flat plate
constexpr double kBumpWidth = 0.05; // Gaussian sigma, x/c
constexpr double kBumpPeak = 2.0;   // suction peak, -Cp

double bump(double x, double x0) { return std::exp(-0.5 * std::pow((x - x0) / kBumpWidth, 2)); }

}  // namespace

std::vector<DiscretisationCase> discretisation_cases(const std::vector<ContourPoint>& taps,
                                                     TrailingEdgeClosure closure) {
  std::vector<ContourPoint> chord_line = taps;
  for (auto& p : chord_line) p.y = 0.0;
  const LoadWeights w = contour_weights(chord_line, closure, 0.25);
  const auto n = static_cast<Eigen::Index>(taps.size());
  std::vector<DiscretisationCase> out;

  // Flat plate: upper -dCp/2, lower +dCp/2.
  Eigen::VectorXd cp(n);
  for (Eigen::Index i = 0; i < n; ++i) {
    const double x = std::clamp(taps[static_cast<std::size_t>(i)].x, 1e-9, 1.0);
    const double half = 2.0 * kAlpha * std::sqrt((1.0 - x) / x);
    cp[i] = taps[static_cast<std::size_t>(i)].upper ? -half : half;
  }
  out.push_back({"flat_plate", NAN, 2.0 * std::numbers::pi * kAlpha, cp.dot(w.cn), 0.0, cp.dot(w.cm_quarter_chord)});

  // Suction bumps: Cn = A int g, Cm = -A int g (x - 1/4).
  const double root2 = std::sqrt(2.0);
  for (int k = 1; k <= 9; ++k) {
    const double x0 = 0.1 * k;
    for (Eigen::Index i = 0; i < n; ++i)
      cp[i] = taps[static_cast<std::size_t>(i)].upper ? -kBumpPeak * bump(taps[static_cast<std::size_t>(i)].x, x0) : 0.0;
    const double s = kBumpWidth;
    const double i0 = s * std::sqrt(0.5 * std::numbers::pi) *
                      (std::erf((1.0 - x0) / (s * root2)) + std::erf(x0 / (s * root2)));
    const double i1 = s * s * (bump(0.0, x0) - bump(1.0, x0));  // int (x - x0) g
    out.push_back({"suction_bump", x0, kBumpPeak * i0, cp.dot(w.cn), -kBumpPeak * ((x0 - 0.25) * i0 + i1),
                   cp.dot(w.cm_quarter_chord)});
  }
  return out;
}

Table discretisation_table(const std::vector<DiscretisationCase>& cases, Attributes& bounds) {
  std::vector<std::string> name;
  std::vector<double> x0, cn_e, cn_l, cn_err, cm_e, cm_l, cm_err;
  double cn_bound = 0, cm_bound = 0;
  for (const auto& c : cases) {
    name.push_back(c.distribution);
    x0.push_back(c.x_centre);
    cn_e.push_back(c.cn_exact);
    cn_l.push_back(c.cn_layout);
    cn_err.push_back(c.cn_layout - c.cn_exact);
    cm_e.push_back(c.cm_exact);
    cm_l.push_back(c.cm_layout);
    cm_err.push_back(c.cm_layout - c.cm_exact);
    cn_bound = std::max(cn_bound, std::abs(cn_err.back() / c.cn_exact));
    cm_bound = std::max(cm_bound, std::abs(cm_err.back() / c.cn_exact));
  }
  bounds["cn_bias_bound_relative"] = cn_bound;
  bounds["cm_bias_bound_per_cn"] = cm_bound;
  Table t;
  t.add({"distribution", "", name})
      .add({"x_centre_over_c", "1", x0})
      .add({"cn_exact", "1", cn_e})
      .add({"cn_layout", "1", cn_l})
      .add({"cn_error", "1", cn_err})
      .add({"cm_exact", "1", cm_e})
      .add({"cm_layout", "1", cm_l})
      .add({"cm_error", "1", cm_err});
  return t;
}

}  // namespace stallscope
