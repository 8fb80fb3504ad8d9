#include "stages/piv/swirl.hpp"

#include <Eigen/Dense>
#include <algorithm>
#include <array>
#include <cmath>
#include <cstring>
#include <limits>
#include <numbers>

#include "stages/numerics/cpu_clones.hpp"

namespace stallscope::piv {

namespace {

constexpr double kNaN = std::numeric_limits<double>::quiet_NaN();
constexpr double kPi = std::numbers::pi;

// Derivative weights along one axis: the Lagrange three-point formula at
// interior points (second order on uneven spacing), and the two one-sided
// differences used where a neighbour is missing.
struct AxisWeights {
  std::vector<double> minus, centre, plus;  // three-point weights of f[k-1], f[k], f[k+1]
  std::vector<double> forward;              // 1 / (s[k+1] - s[k])
  explicit AxisWeights(const std::vector<double>& s)
      : minus(s.size()), centre(s.size()), plus(s.size()), forward(s.size(), kNaN) {
    for (std::size_t k = 0; k + 1 < s.size(); ++k) forward[k] = 1.0 / (s[k + 1] - s[k]);
    for (std::size_t k = 1; k + 1 < s.size(); ++k) {
      const double h1 = s[k] - s[k - 1], h2 = s[k + 1] - s[k], d = h1 * h2 * (h1 + h2);
      minus[k] = -h2 * h2 / d;
      centre[k] = (h2 * h2 - h1 * h1) / d;
      plus[k] = h1 * h1 / d;
    }
  }
  // d/ds at k of the line f[k0 + k stride], using valid points only.
  template <typename T>
  double derivative(const T* f, const std::uint8_t* ok, std::size_t k, std::size_t n, std::size_t stride) const {
    const bool has_m = k > 0 && ok[(k - 1) * stride], has_p = k + 1 < n && ok[(k + 1) * stride];
    if (has_m && has_p) return minus[k] * f[(k - 1) * stride] + centre[k] * f[k * stride] + plus[k] * f[(k + 1) * stride];
    if (has_p) return (f[(k + 1) * stride] - f[k * stride]) * forward[k];
    if (has_m) return (f[k * stride] - f[(k - 1) * stride]) * forward[k - 1];
    return kNaN;
  }
};

// Points 1 to nx - 2 of row j, every neighbour valid: the same sums as
// AxisWeights::derivative and swirl_strength, in the same order, so the
// result is the point-by-point one to the bit (a zero vorticity may lose its sign).
// Built for AVX2 too: twice the doubles a step on most machines.
STALLSCOPE_AVX2_CLONES
void central_row(const AxisWeights& wx, const AxisWeights& wy, const Frame& f, std::size_t j, std::size_t nx,
                 SwirlField& out) {
  const float *u = f.u.data() + j * nx, *v = f.v.data() + j * nx;
  const float *u_below = u - nx, *v_below = v - nx, *u_above = u + nx, *v_above = v + nx;
  double* vorticity = out.vorticity.data() + j * nx;
  double* swirl = out.swirl.data() + j * nx;
  const double ym = wy.minus[j], yc = wy.centre[j], yp = wy.plus[j];
  const double *xm = wx.minus.data(), *xc = wx.centre.data(), *xp = wx.plus.data();
  const std::size_t last = nx - 1;
  for (std::size_t i = 1; i < last; ++i) {
    const double ux = xm[i] * u[i - 1] + xc[i] * u[i] + xp[i] * u[i + 1];
    const double vx = xm[i] * v[i - 1] + xc[i] * v[i] + xp[i] * v[i + 1];
    const double uy = ym * u_below[i] + yc * u[i] + yp * u_above[i];
    const double vy = ym * v_below[i] + yc * v[i] + yp * v_above[i];
    // +0 for finite gradients, NaN for a non-finite value marked valid: added
    // to both results, it leaves them as they are or makes them NaN, without
    // the branch that would stop the loop vectorising.
    const double sum = ux + uy + vx + vy, nan_unless_finite = sum - sum;
    const double half_trace = 0.5 * (ux + vy);
    const double disc = (ux * vy - uy * vx) - half_trace * half_trace;
    vorticity[i] = (vx - uy) + nan_unless_finite;
    swirl[i] = std::sqrt(disc > 0 ? disc : 0.0) + nan_unless_finite;  // vectorises: built without math errno
  }
}

}  // namespace

double swirl_strength(double ux, double uy, double vx, double vy) {
  const double half_trace = 0.5 * (ux + vy);
  const double disc = (ux * vy - uy * vx) - half_trace * half_trace;
  return disc > 0 ? std::sqrt(disc) : 0.0;
}

SwirlField swirl_field(const Grid& grid, const Frame& f, GradientScheme scheme) {
  const std::size_t nx = grid.nx(), ny = grid.ny(), n = grid.size();
  SwirlField out;  // every point is written once below: NaN where it has no gradient
  out.vorticity.resize(n);
  out.swirl.resize(n);
  auto valid = [&](std::size_t p) { return f.valid[p] != 0; };
  const AxisWeights wx(grid.x_m), wy(grid.y_m);
  // Rows with no invalid point.
  std::vector<std::uint8_t> full(ny);
  for (std::size_t j = 0; j < ny; ++j) full[j] = std::memchr(f.valid.data() + j * nx, 0, nx) == nullptr;
  for (std::size_t j = 0; j < ny; ++j) {
    // A row whose neighbours above and below are all valid as well (most of
    // a field) takes the three-point formula straight, in a loop the compiler
    // vectorises; its ends, and every other row, go point by point.
    const bool whole = scheme == GradientScheme::kCentral && j > 0 && j + 1 < ny && nx > 2 && full[j - 1] &&
                       full[j] && full[j + 1];
    if (whole) central_row(wx, wy, f, j, nx, out);
    for (std::size_t i = 0; i < nx; i += whole && i == 0 ? nx - 1 : 1) {
      const std::size_t p = j * nx + i;
      out.vorticity[p] = out.swirl[p] = kNaN;
      if (!valid(p)) continue;
      double ux = kNaN, uy = kNaN, vx = kNaN, vy = kNaN;
      if (scheme == GradientScheme::kCentral) {
        const std::size_t row = j * nx;
        ux = wx.derivative(f.u.data() + row, f.valid.data() + row, i, nx, 1);
        vx = wx.derivative(f.v.data() + row, f.valid.data() + row, i, nx, 1);
        uy = wy.derivative(f.u.data() + i, f.valid.data() + i, j, ny, nx);
        vy = wy.derivative(f.v.data() + i, f.valid.data() + i, j, ny, nx);
      } else {
        // u ~ a + b dx + c dy over the valid 3x3 neighbourhood (normal equations).
        Eigen::Matrix3d m = Eigen::Matrix3d::Zero();
        Eigen::Vector3d ru = Eigen::Vector3d::Zero(), rv = Eigen::Vector3d::Zero();
        int count = 0;
        for (std::size_t jj = j ? j - 1 : 0; jj <= std::min(j + 1, ny - 1); ++jj)
          for (std::size_t ii = i ? i - 1 : 0; ii <= std::min(i + 1, nx - 1); ++ii) {
            const std::size_t q = jj * nx + ii;
            if (!valid(q)) continue;
            const Eigen::Vector3d row(1.0, grid.x_m[ii] - grid.x_m[i], grid.y_m[jj] - grid.y_m[j]);
            m += row * row.transpose();
            ru += row * f.u[q];
            rv += row * f.v[q];
            ++count;
          }
        if (count >= 4) {
          Eigen::LDLT<Eigen::Matrix3d> ldlt(m);
          if (ldlt.info() == Eigen::Success && std::abs(m.determinant()) > 1e-12 * std::pow(m.trace(), 3)) {
            const Eigen::Vector3d gu = ldlt.solve(ru), gv = ldlt.solve(rv);
            ux = gu[1], uy = gu[2], vx = gv[1], vy = gv[2];
          }
        }
      }
      if (!std::isfinite(ux) || !std::isfinite(uy) || !std::isfinite(vx) || !std::isfinite(vy)) continue;
      out.vorticity[p] = vx - uy;
      out.swirl[p] = swirl_strength(ux, uy, vx, vy);
    }
  }
  return out;
}

double gamma2_at(const Grid& grid, const Frame& f, std::size_t j, std::size_t i, int half_width) {
  const std::size_t nx = grid.nx(), ny = grid.ny();
  const std::size_t h = static_cast<std::size_t>(half_width);
  const std::size_t j0 = j > h ? j - h : 0, j1 = std::min(j + h, ny - 1);
  const std::size_t i0 = i > h ? i - h : 0, i1 = std::min(i + h, nx - 1);
  double mu = 0, mv = 0;
  int count = 0;
  for (std::size_t jj = j0; jj <= j1; ++jj)
    for (std::size_t ii = i0; ii <= i1; ++ii)
      if (f.valid[jj * nx + ii]) mu += f.u[jj * nx + ii], mv += f.v[jj * nx + ii], ++count;
  if (count < 4) return kNaN;
  mu /= count;
  mv /= count;
  double sum = 0;
  int terms = 0;
  for (std::size_t jj = j0; jj <= j1; ++jj)
    for (std::size_t ii = i0; ii <= i1; ++ii) {
      const std::size_t q = jj * nx + ii;
      if ((jj == j && ii == i) || !f.valid[q]) continue;
      const double px = grid.x_m[ii] - grid.x_m[i], py = grid.y_m[jj] - grid.y_m[j];
      const double du = f.u[q] - mu, dv = f.v[q] - mv;
      const double norm = std::hypot(px, py) * std::hypot(du, dv);
      ++terms;
      if (norm > 0) sum += (px * dv - py * du) / norm;
    }
  return terms >= 3 ? sum / terms : kNaN;
}

double gamma2_shear_ceiling(int half_width) {
  // A shear u = (p . n) t, t normal to n, turns each point's relative velocity
  // at |sin| = |p . n| / |p| to its position: Gamma2 is the mean of that.
  static const std::array<double, 21> ceiling = [] {
    std::array<double, 21> c{};
    for (int h = 1; h <= 20; ++h) {
      double worst = kGamma2Core;
      for (int k = 0; k < 180; ++k) {
        const double nx = std::cos(kPi * k / 180), ny = std::sin(kPi * k / 180);
        double sum = 0;
        int terms = 0;
        for (int y = -h; y <= h; ++y)
          for (int x = -h; x <= h; ++x)
            if (x || y) sum += std::abs(x * nx + y * ny) / std::hypot(x, y), ++terms;
        worst = std::max(worst, sum / terms);
      }
      c[static_cast<std::size_t>(h)] = worst;
    }
    return c;
  }();
  return ceiling[static_cast<std::size_t>(std::clamp(half_width, 1, 20))];
}

int gamma2_half_width_for(const Grid& grid, double area_m2) {
  if (grid.nx() < 2 || grid.ny() < 2 || !(area_m2 > 0)) return 1;
  const double dx = std::abs(grid.x_m.back() - grid.x_m.front()) / static_cast<double>(grid.nx() - 1);
  const double dy = std::abs(grid.y_m.back() - grid.y_m.front()) / static_cast<double>(grid.ny() - 1);
  const double radius_cells = std::sqrt(area_m2 / kPi) / (0.5 * (dx + dy));
  return static_cast<int>(std::clamp(std::lround(radius_cells), 1L, 20L));
}

}  // namespace stallscope::piv
