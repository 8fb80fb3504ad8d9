#pragma once
// [damping]: aerodynamic pitch damping per cycle from the Cm-alpha loop about
// the pitch axis. The work done on the airfoil per cycle is the closed
// integral of Cm d(alpha); Carta's damping factor is
//   Xi = - closed integral Cm d(alpha) / (pi alpha1^2)   (alpha, alpha1 in rad),
// positive when the loop runs counter-clockwise (damped), negative for a
// clockwise loop: the air feeds the motion, a stall-flutter risk (Carta 1967,
// J. American Helicopter Society 12(4)). Also the lift-loop integral and the
// first-harmonic lift and moment response to the angle.
#include <span>

#include "pipeline/stage.hpp"

namespace stallscope {

namespace damping {
// Closed trapezoid integral of y dx around the polygon (x_i, y_i), last point
// joined to the first. Positive for a clockwise loop in the (x, y) plane.
double loop_integral(std::span<const double> x, std::span<const double> y);
// The same cycle work as a time integral, closed integral of y (dx/dt) dt over
// [t_start, t_end] by the trapezoid rule, the integrand g = y dx/dt given at
// increasing times t and interpolated linearly at both ends (samples just
// outside the interval are used for that). Over one period of a periodic g on
// an even grid this is the periodic trapezoid rule: exact for harmonics below
// the Nyquist frequency, where the polygon above is low by a factor
// N sin(2 pi/N) / (2 pi) for N samples a period.
double time_integral(std::span<const double> t, std::span<const double> g, double t_start, double t_end);
// Xi = -loop / (pi alpha1^2); loop in Cm rad, alpha1 in rad.
double carta_damping_factor(double cm_alpha_loop, double alpha_amp_rad);
}  // namespace damping

class DampingStage final : public Stage {
 public:
  static constexpr std::string_view kName = "damping";
  static constexpr std::string_view kSummary =
      "per-cycle pitch damping (Carta's factor) and lift-loop integral, negative damping flagged";

  struct Options {
    // fitted: Cm times the fitted pitch rate, integrated in time (exact for
    // harmonic loops); measured: the polygon of Cm against the encoder angle.
    std::string angle = "fitted";
  };

  std::string_view name() const override { return kName; }
  std::string_view summary() const override { return kSummary; }
  void configure(ConfigSection& section) override;
  std::vector<std::string> inputs() const override;
  std::vector<std::string> outputs() const override { return {"cycles/damping"}; }
  void run(RunContext& context) override;

 private:
  Options options_;
};

}  // namespace stallscope
