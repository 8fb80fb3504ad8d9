#pragma once
// [loads]: Cn, Cc, Cl, Cd_p, Cm about c/4 and about the pitch axis from Cp,
// by integrating round the closed contour of taps (published-checks 1):
//   Cn = (1/c) oint Cp dx,  Cc = -(1/c) oint Cp dy,
//   Cm_P = -(1/c^2) oint Cp [(x - x_P) dx + (y - y_P) dy]   (nose-up positive),
// taps ordered counter-clockwise (TE -> upper -> LE -> lower -> TE), Cp taken
// linear between neighbours (trapezoid, with the exact product for moments).
// Closures: at the leading edge, unless a tap sits at x/c = 0, a point at x/c = 0
// midway between the two foremost taps carrying their mean Cp; at the trailing
// edge a point at x/c = 1 whose Cp is the mean of the two surfaces' values there,
// each extrapolated linearly from its last two taps ("extrapolate", default) or
// the last tap's value ("mean"): the Kutta condition makes them equal.
// Then Cl = Cn cos a - Cc sin a, Cd_p = Cn sin a + Cc cos a with the encoder angle.
#include <Eigen/Core>
#include <vector>

#include "pipeline/stage.hpp"
#include "stages/cp.hpp"

namespace stallscope {

enum class TrailingEdgeClosure { kExtrapolate, kMean };

// Each load is a fixed linear combination of the taps' Cp: load = cp_row . weights.
struct LoadWeights {
  Eigen::VectorXd cn, cc, cm_quarter_chord, cm_pivot;
};
// Throws std::invalid_argument with fewer than 2 taps per surface.
LoadWeights contour_weights(const std::vector<ContourPoint>& taps, TrailingEdgeClosure closure, double pivot_x_over_c);

struct TapLoads {
  double cn = 0, cc = 0, cl = 0, cd_p = 0, cm_quarter_chord = 0, cm_pivot = 0;
};
// One Cp distribution (per tap, in the order of `taps`) at angle alpha (degrees).
TapLoads integrate_taps(const std::vector<ContourPoint>& taps, const Eigen::VectorXd& cp, double alpha_deg,
                        TrailingEdgeClosure closure = TrailingEdgeClosure::kExtrapolate, double pivot_x_over_c = 0.25);

class LoadsStage final : public Stage {
 public:
  static constexpr std::string_view kName = "loads";
  static constexpr std::string_view kSummary = "Cn, Cc, Cl, Cd_p and Cm by integrating Cp round the tap contour";

  struct Options {
    std::string te_closure = "extrapolate";  // "extrapolate" | "mean"
  };

  std::string_view name() const override { return kName; }
  std::string_view summary() const override { return kSummary; }
  void configure(ConfigSection& section) override;
  std::vector<std::string> inputs() const override {
    return {"pressure/time_s", "pressure/cp", "pressure/taps", "signals/alpha_deg", "run/pivot_x_over_c"};
  }
  std::vector<std::string> outputs() const override {
    return {"loads/time_s", "loads/alpha_deg", "loads/cn", "loads/cc", "loads/cl", "loads/cd_p", "loads/cm", "loads/cm_pivot", "loads/discretisation"};
  }
  void run(RunContext& context) override;

 private:
  Options options_;
};

}  // namespace stallscope
