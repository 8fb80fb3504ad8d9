#pragma once
// [static_polar]: the static polar from a staircase run. Loads are averaged
// over each steady plateau (motion/plateaus) and split by sweep direction.
// Per direction: the lift slope over a stated linear range of angles, the
// zero-lift angle and the angle offset it implies, and the static stall angle
// by three named criteria -- maximum Cl, the static Cm break (Cm about c/4
// falling cm_break_delta below its running maximum) and departure from
// linearity (Cl falling a fraction below the linear fit) -- with the
// hysteresis between the sweep directions.
#include "pipeline/stage.hpp"

namespace stallscope {

class StaticPolarStage final : public Stage {
 public:
  static constexpr std::string_view kName = "static_polar";
  static constexpr std::string_view kSummary =
      "static polar from a staircase: lift slope, zero-lift angle, static stall angle by three criteria, hysteresis";

  struct Options {
    std::vector<double> linear_range_deg = {-5.0, 5.0};  // angles the lift slope is fitted over
    double cm_break_delta = 0.02;       // Cm drop below its running maximum that marks the break
    double linearity_tolerance = 0.1;   // Cl below (1 - this) x the linear fit marks the departure
    double expected_zero_lift_deg = 0;  // the section's zero-lift angle (0 for symmetric sections)
    std::string primary = "cl_max";     // cl_max | cm_break | linearity: the static stall angle reported
  };

  std::string_view name() const override { return kName; }
  std::string_view summary() const override { return kSummary; }
  void configure(ConfigSection& section) override;
  std::vector<std::string> inputs() const override {
    return {"motion/plateaus", "run/motion", "loads/time_s", "loads/cl", "loads/cn", "loads/cm", "loads/cd_p"};
  }
  std::vector<std::string> outputs() const override { return {"static_polar/points", "static_polar/summary"}; }
  void run(RunContext& context) override;

 private:
  Options options_;
};

}  // namespace stallscope
