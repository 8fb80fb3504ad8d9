#include "tools/synth/surface_pressure.hpp"

#include <algorithm>
#include <cmath>
#include <numbers>
#include <stdexcept>

namespace stallscope::synth {

namespace {

constexpr int kThetaTable = 4000;
// t/c = 1.299 epsilon for the symmetric Joukowski family (published-checks section 1.3).
constexpr double kJoukowskiThicknessPerEpsilon = 1.299;
// The angle solve stops when Cn is matched to this (far below any noise).
constexpr double kCnTolerance = 1e-11;

}  // namespace

SurfacePressure::SurfacePressure(const theory::Naca4Section& section, const std::vector<theory::TapLocation>& taps,
                                 double pivot_x_over_c, int fine_stations)
    : section_(section),
      joukowski_(theory::make_joukowski({1.0, section.thickness / kJoukowskiThicknessPerEpsilon, 0.0})),
      pivot_(pivot_x_over_c) {
  if (fine_stations < 8) throw std::invalid_argument("SurfacePressure: need at least 8 fine stations a surface");
  theta_table_.resize(kThetaTable + 1);
  for (int j = 0; j <= kThetaTable; ++j)
    theta_table_[j] = theory::joukowski_theta_at(joukowski_, static_cast<double>(j) / kThetaTable,
                                                 theory::Surface::kUpper);

  // Fine contour: upper TE -> LE, then lower LE -> TE, cosine-clustered at the LE.
  const double x_first = 0.0002;
  std::vector<double> stations(fine_stations);
  for (int i = 0; i < fine_stations; ++i)
    stations[i] = x_first + (1.0 - x_first) * (1.0 - std::cos(std::numbers::pi * i / (2.0 * (fine_stations - 1))));
  for (int i = fine_stations - 1; i >= 0; --i) fine_.push_back(station(stations[i], true));
  for (int i = 0; i < fine_stations; ++i) fine_.push_back(station(stations[i], false));

  // Unit loadings: the ellipse E (unit Cn, no Cm about c/4) and E2 (unit Cm).
  auto loads_of = [this](bool moment_shape) {
    std::vector<double> cp(fine_.size());
    for (std::size_t i = 0; i < fine_.size(); ++i) {
      const double l = moment_shape ? fine_[i].ellipse_moment : fine_[i].ellipse;
      cp[i] = fine_[i].upper ? -0.5 * l : 0.5 * l;
    }
    return integrate(cp, 0.0);
  };
  const SectionLoads e = loads_of(false), e2 = loads_of(true);
  ellipse_scale_ = 1.0 / e.cn;
  ellipse_moment_scale_ = 1.0 / e2.cm_quarter_chord;
  ellipse_cm_ = e.cm_quarter_chord * ellipse_scale_;
  auto finish = [this](SurfaceStation& p) {
    const double em = p.ellipse_moment * ellipse_moment_scale_;
    p.ellipse = p.ellipse * ellipse_scale_ - ellipse_cm_ * em;
    p.ellipse_moment = em;
  };
  for (auto& p : fine_) finish(p);
  for (const auto& t : taps) {
    SurfaceStation p = station(t.x_over_c, t.surface == theory::Surface::kUpper);
    p.x = t.x_over_c;
    p.y = t.y_over_c;
    finish(p);
    taps_.push_back(p);
  }
}

SurfaceStation SurfacePressure::station(double mean_x, bool upper) const {
  SurfaceStation p;
  const auto geo = upper ? theory::naca4_upper_surface(section_, mean_x) : theory::naca4_lower_surface(section_, mean_x);
  p.x = geo.x;
  p.y = geo.y;
  p.upper = upper;
  p.mean_x = std::clamp(mean_x, 0.0, 1.0);
  // The symmetric circle: the lower surface's angle is the upper one's mirror.
  const double u = p.mean_x * kThetaTable;
  const int j = std::min(kThetaTable - 1, static_cast<int>(u));
  const double theta_upper = theta_table_[j] + (u - j) * (theta_table_[j + 1] - theta_table_[j]);
  p.theta = upper ? theta_upper : -theta_upper;
  p.joukowski = theory::joukowski_station(joukowski_, p.theta);
  const double e = std::sqrt(p.mean_x * (1.0 - p.mean_x));
  p.ellipse = e;
  p.ellipse_moment = e * (p.mean_x - 0.5);
  return p;
}

double SurfacePressure::attached_cp(const SurfaceStation& p, const Loading& l) const {
  const double load = l.apparent * p.ellipse + l.moment * p.ellipse_moment;
  const double cp = theory::joukowski_surface_cp(p.joukowski, l.cos_alpha_j, l.sin_alpha_j);
  return p.upper ? cp - 0.5 * load : cp + 0.5 * load;
}

double SurfacePressure::upper_plateau(const Loading& l) const {
  SurfaceStation p = station(l.separation, true);
  const double em = p.ellipse_moment * ellipse_moment_scale_;
  p.ellipse = p.ellipse * ellipse_scale_ - ellipse_cm_ * em;
  p.ellipse_moment = em;
  return attached_cp(p, l);
}

double SurfacePressure::cp_at(const SurfaceStation& p, const Loading& l, const FlowSample& s) const {
  if (!p.upper) return attached_cp(p, l);
  double cp = p.mean_x < l.separation ? attached_cp(p, l) : l.plateau;
  for (const auto& v : s.vortices) {
    const double dx = p.x - v.x_over_c, h = v.height_over_c;
    cp -= v.cp_bump * h * h / (dx * dx + h * h);
  }
  return cp;
}

SurfacePressure::Loading SurfacePressure::solve_loading(const FlowSample& s) {
  const double target = s.cn_circulatory_target + s.cn_noncirculatory;
  Loading l;
  l.apparent = s.cn_noncirculatory;
  l.separation = s.separation_x;
  std::vector<double> cp(fine_.size());
  // Cn(alpha_J) - target, with the moment fix that keeps the attached Cm_c/4 at Theodorsen's.
  auto residual = [&](double alpha_j) {
    l.alpha_j = alpha_j;
    l.cos_alpha_j = std::cos(alpha_j);
    l.sin_alpha_j = std::sin(alpha_j);
    for (std::size_t i = 0; i < fine_.size(); ++i)
      cp[i] = theory::joukowski_surface_cp(fine_[i].joukowski, l.cos_alpha_j, l.sin_alpha_j);
    l.moment = s.cm_noncirculatory - integrate(cp, 0.0).cm_quarter_chord;
    l.plateau = upper_plateau(l);
    double cn = 0.0;
    for (std::size_t i = 0; i < fine_.size(); ++i) {
      const auto& p = fine_[i];
      const double load = l.apparent * p.ellipse + l.moment * p.ellipse_moment;
      double c = p.upper ? cp[i] - 0.5 * load : cp[i] + 0.5 * load;
      if (p.upper && p.mean_x >= l.separation) c = l.plateau;
      cp[i] = c;
    }
    cn = integrate(cp, 0.0).cn;
    return cn - target;
  };
  // Secant from the last sample's angle; bisection if it stalls.
  double a0 = last_alpha_j_, a1 = last_alpha_j_ + 1e-3;
  double f0 = residual(a0), f1 = residual(a1);
  bool converged = std::abs(f0) < kCnTolerance;
  if (converged) a1 = a0;
  for (int it = 0; it < 30 && !converged; ++it) {
    if (std::abs(f1) < kCnTolerance) {
      converged = true;
      break;
    }
    if (f1 == f0) break;
    const double a2 = a1 - f1 * (a1 - a0) / (f1 - f0);
    if (!std::isfinite(a2) || std::abs(a2) > 1.4) break;
    a0 = a1;
    f0 = f1;
    a1 = a2;
    f1 = residual(a1);
  }
  if (!converged && std::abs(f1) >= kCnTolerance) {
    double lo = -1.4, hi = 1.4;
    double flo = residual(lo);
    for (int it = 0; it < 200 && hi - lo > 1e-14; ++it) {
      const double mid = 0.5 * (lo + hi), fm = residual(mid);
      if ((fm < 0) == (flo < 0)) lo = mid, flo = fm;
      else hi = mid;
    }
    a1 = 0.5 * (lo + hi);
  }
  residual(a1);  // leave l at the solution
  last_alpha_j_ = a1;
  return l;
}

SectionLoads SurfacePressure::integrate(const std::vector<double>& cp, double alpha) const {
  SectionLoads out;
  const std::size_t n = fine_.size();
  double cm_le = 0.0, cn = 0.0, cc = 0.0;
  for (std::size_t i = 0; i < n; ++i) {
    const std::size_t j = (i + 1) % n;  // closes the contour at the trailing edge
    const double dx = fine_[j].x - fine_[i].x, dy = fine_[j].y - fine_[i].y;
    const double p = 0.5 * (cp[i] + cp[j]);
    const double xm = 0.5 * (fine_[i].x + fine_[j].x), ym = 0.5 * (fine_[i].y + fine_[j].y);
    cn += p * dx;
    cc -= p * dy;
    cm_le -= p * (xm * dx + ym * dy);
  }
  out.cn = cn;
  out.cc = cc;
  // Transfer from the leading edge: Cm_P = Cm_LE + xP Cn (points on the chord line).
  out.cm_quarter_chord = cm_le + 0.25 * cn;
  out.cm_pivot = cm_le + pivot_ * cn;
  out.cl = cn * std::cos(alpha) - cc * std::sin(alpha);
  out.cd_pressure = cn * std::sin(alpha) + cc * std::cos(alpha);
  return out;
}

std::vector<double> SurfacePressure::fine_cp(const FlowSample& s) {
  const Loading l = solve_loading(s);
  std::vector<double> cp(fine_.size());
  for (std::size_t i = 0; i < fine_.size(); ++i) cp[i] = cp_at(fine_[i], l, s);
  return cp;
}

void SurfacePressure::evaluate(const FlowSample& s, std::vector<double>& tap_cp, SectionLoads& loads) {
  const Loading l = solve_loading(s);
  std::vector<double> cp(fine_.size());
  for (std::size_t i = 0; i < fine_.size(); ++i) cp[i] = cp_at(fine_[i], l, s);
  loads = integrate(cp, s.alpha);
  tap_cp.resize(taps_.size());
  for (std::size_t i = 0; i < taps_.size(); ++i) tap_cp[i] = cp_at(taps_[i], l, s);
}

}  // namespace stallscope::synth
