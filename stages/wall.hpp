#pragma once
// [wall]: closed-test-section 2-D wall corrections (Allen & Vincenti 1944, NACA
// Report 782; Barlow, Rae & Pope, Low-Speed Wind Tunnel Testing, 3rd ed.):
//   sigma = (pi^2/48)(c/h)^2, eps_sb = K1 V_model / C^1.5 (V_model = 0.7 t c b,
//   C = h b), eps_wb = (c/4h) cd_u, eps = eps_sb + eps_wb,
//   alpha = alpha_u + (180/pi)(sigma/2pi)(cl_u + 4 cm_u),
//   cl = cl_u(1 - sigma - 2 eps), cm = cm_u(1 - 2 eps) + sigma cl/4,
//   cd = cd_u(1 - 3 eps_sb - 2 eps_wb), q = q_u(1 + 2 eps), Re = Re_u(1 + eps).
// They are quasi-steady: applied only to samples where the flow counts as
// attached (|alpha| <= attached_alpha_max_deg), never to the motion angle.
// Off unless [wall] is present. The loads stage's loads/cn, cc, cl, cd_p, cm,
// cm_pivot are replaced by the corrected series and the uncorrected ones kept
// under loads/uncorrected/; the corrected angle goes to loads/wall/alpha_deg.
#include "pipeline/stage.hpp"

namespace stallscope {

namespace wall {

struct Geometry {
  double chord_m = 0, height_m = 0, width_m = 0;  // width: the model's span across the tunnel
  double thickness_over_c = 0.12;
  double k1 = 0.74;                 // 0.74 spanning the tunnel width, 0.52 spanning its height
  bool wake_over_2h = false;        // (c/2h) cd_u instead of (c/4h) cd_u (some printings)
};

struct Factors {
  double sigma = 0, solid_blockage = 0, wake_blockage = 0, blockage = 0;
};
Factors factors(const Geometry& g, double cd_uncorrected);

struct Coefficients {
  double alpha_deg = 0, cl = 0, cd = 0, cm_quarter_chord = 0;
};
Coefficients correct(const Geometry& g, const Coefficients& uncorrected);

}  // namespace wall

class WallStage final : public Stage {
 public:
  static constexpr std::string_view kName = "wall";
  static constexpr std::string_view kSummary = "closed-test-section 2-D wall corrections while the flow is attached";

  struct Options {
    double tunnel_height_m = 0;          // required
    double tunnel_width_m = 0;           // 0: run/span_m
    double thickness_over_c = 0;         // 0: from a NACA 4-digit [run] airfoil
    std::string model_spans = "width";   // "width" (K1 = 0.74) | "height" (K1 = 0.52)
    std::string wake_blockage = "c_over_4h";  // "c_over_4h" | "c_over_2h"
    double wake_cd = -1;                 // < 0: each sample's Cd_p
    double attached_alpha_max_deg = 0;   // required
  };

  std::string_view name() const override { return kName; }
  std::string_view summary() const override { return kSummary; }
  void configure(ConfigSection& section) override;
  std::vector<std::string> inputs() const override {
    return {"loads/alpha_deg", "loads/cn", "loads/cc", "loads/cl", "loads/cd_p", "loads/cm", "loads/cm_pivot",
            "run/chord_m", "run/span_m", "run/airfoil", "run/pivot_x_over_c"};
  }
  std::vector<std::string> outputs() const override {
    return {"loads/uncorrected/cn", "loads/uncorrected/cc", "loads/uncorrected/cl", "loads/uncorrected/cd_p",
            "loads/uncorrected/cm", "loads/uncorrected/cm_pivot", "loads/wall/alpha_deg", "loads/wall/attached",
            "loads/wall/blockage"};
  }
  void run(RunContext& context) override;

 private:
  Options options_;
  std::string where_width_, where_thickness_;
};

}  // namespace stallscope
