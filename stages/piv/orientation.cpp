#include "stages/piv/orientation.hpp"

#include <algorithm>
#include <cmath>

namespace stallscope::piv {

namespace {

// Attached flow for any section in the trade's range (common practice): lift
// grows with angle there, so the suction side is the faster one.
constexpr double kMinAttachedDeg = 2.0, kMaxAttachedDeg = 12.0;
// Where the two sides are compared, in chords of the airfoil frame.
constexpr double kFromX = 0.1, kToX = 0.9, kNearY = 0.05, kFarY = 0.4;

double median(std::vector<double> v) {
  if (v.empty()) return NAN;
  const auto mid = v.begin() + static_cast<std::ptrdiff_t>(v.size() / 2);
  std::nth_element(v.begin(), mid, v.end());
  return *mid;
}

}  // namespace

Orientation check_orientation(const Grid& grid, const std::vector<OrientationSample>& frames,
                              const AirfoilPlacement& placement, double velocity_scale, double u_inf_m_s) {
  Orientation o;
  const std::size_t nx = grid.nx();
  std::vector<double> u_all, excess;
  for (const OrientationSample& s : frames) {
    const Frame& f = *s.frame;
    double above = 0, below = 0;
    std::size_t n_above = 0, n_below = 0;
    for (std::size_t p = 0; p < f.u.size(); ++p) {
      if (!f.valid[p] || !std::isfinite(f.u[p])) continue;
      const double u = f.u[p] * velocity_scale / u_inf_m_s;
      u_all.push_back(u);
      const AirfoilPoint a = to_airfoil_frame(placement, s.alpha_deg, grid.x_m[p % nx], grid.y_m[p / nx]);
      if (a.x_over_c < kFromX || a.x_over_c > kToX || std::abs(a.y_over_c) < kNearY || std::abs(a.y_over_c) > kFarY)
        continue;
      (a.y_over_c > 0 ? above : below) += u;
      ++(a.y_over_c > 0 ? n_above : n_below);
    }
    const double angle = std::abs(s.alpha_deg);
    if (n_above && n_below && angle >= kMinAttachedDeg && angle <= kMaxAttachedDeg)
      excess.push_back((above / static_cast<double>(n_above) - below / static_cast<double>(n_below)) *
                       (s.alpha_deg > 0 ? 1.0 : -1.0));
  }
  o.streamwise = median(u_all);
  o.frames_used = excess.size();
  if (!excess.empty()) {
    double mean = 0;
    for (double e : excess) mean += e;
    mean /= static_cast<double>(excess.size());
    double ss = 0;
    for (double e : excess) ss += (e - mean) * (e - mean);
    o.suction_excess = mean;
    o.suction_error = excess.size() > 1 ? std::sqrt(ss / static_cast<double>(excess.size() - 1) /
                                                    static_cast<double>(excess.size()))
                                        : INFINITY;
  }
  // Half the free stream the wrong way is no measurement error; a suction
  // excess below zero by three standard errors and 5 % of U is none either.
  o.x_reversed = o.streamwise < -0.5;
  o.y_reversed = o.frames_used >= 2 && o.suction_excess < -3 * o.suction_error && o.suction_excess < -0.05;
  if (o.x_reversed)
    o.verdict = "mirrored left to right (or turned half a turn): the free stream runs toward -x";
  else if (o.y_reversed)
    o.verdict = "mirrored top to bottom: the flow is slower over the suction side than under the pressure side";
  else if (!(o.streamwise > 0.5))
    o.verdict = "not told: the median u is not near the free stream";
  else if (o.frames_used < 2)
    o.verdict = "free stream as expected; the sides not compared (fewer than 2 frames at 2 to 12 deg)";
  else
    o.verdict = "as expected";
  return o;
}

}  // namespace stallscope::piv
