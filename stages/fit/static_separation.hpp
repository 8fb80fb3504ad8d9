#pragma once
// The static separation curve x0(alpha) of the Goman-Khrabrov model, from a
// static Cn polar through the Kirchhoff relation Cn = Cn_alpha ((1 + sqrt x)/2)^2 g(alpha - alpha_0),
// with g = sin (the published form) or g = identity (Leishman & Beddoes 1989).
//
// Cn_alpha and alpha_0 come from a least-squares line of Cn on alpha (rad) over
// the linear range, unless given. Each static point is inverted and clipped to
// [0, 1]; points inside the linear range are attached by definition (x0 = 1:
// the inversion is ill-conditioned near alpha_0). Noisy data are smoothed by a
// running mean over `smoothing_points` neighbours (sorted by alpha) and made
// monotone away from alpha_0 (pool-adjacent-violators: separation only grows
// with |alpha - alpha_0| in a static polar). Between points x0 is a monotone
// cubic (Fritsch-Carlson); beyond the ends, constant. The parametric alternative x0 = (1 - tanh(s (alpha - alpha*)))/2
// is always fitted to the same points and may be chosen instead.
#include <limits>
#include <string>
#include <vector>

#include "stages/theory/goman_khrabrov.hpp"

namespace stallscope::fit {

enum class KirchhoffAngle { kSine, kLinear };
enum class SeparationCurve { kTable, kTanh };

struct StaticCurveOptions {
  KirchhoffAngle angle = KirchhoffAngle::kSine;
  SeparationCurve curve = SeparationCurve::kTable;
  std::vector<double> linear_range_deg = {-5.0, 5.0};
  double lift_slope_per_rad = std::numeric_limits<double>::quiet_NaN();    // else from the line
  double zero_lift_angle_deg = std::numeric_limits<double>::quiet_NaN();   // else from the line
  int smoothing_points = 3;  // 1: none
};

class StaticSeparation {
 public:
  // Throws std::invalid_argument (with a reason a user can act on) when the
  // polar has too few points, or none in the linear range to fix the slope.
  static StaticSeparation from_polar(const std::vector<double>& alpha_deg, const std::vector<double>& cn,
                                     const StaticCurveOptions& options);

  // x0 at alpha (rad).
  double operator()(double alpha) const;
  // The attached-flow angle function g(alpha - alpha_0) and the Kirchhoff Cn.
  double attached_angle(double alpha) const;
  double normal_force(double alpha, double x) const;
  // ((1 + sqrt x)/2)^2, x clipped to [0, 1]: Cn over its attached value.
  static double kirchhoff_factor(double x);

  double lift_slope_per_rad() const { return cn_alpha_; }
  double zero_lift_angle_rad() const { return alpha0_; }
  const theory::SeparationFit& tanh_fit() const { return tanh_; }
  const StaticCurveOptions& options() const { return options_; }
  std::string description() const;

  // The points as used: sorted by alpha, raw inversion and the curve's x0.
  const std::vector<double>& alpha_deg() const { return alpha_deg_; }
  const std::vector<double>& cn() const { return cn_; }
  const std::vector<double>& x0_raw() const { return raw_; }
  const std::vector<double>& x0_smoothed() const { return smooth_; }

 private:
  StaticCurveOptions options_;
  double cn_alpha_ = 0, alpha0_ = 0;
  std::vector<double> alpha_deg_, cn_, raw_, smooth_;
  theory::SeparationFit tanh_;
  // Uniform lookup of the chosen curve (fast inside the fit's inner loop).
  double grid_start_ = 0, grid_step_ = 1;
  std::vector<double> grid_;
};

}  // namespace stallscope::fit
