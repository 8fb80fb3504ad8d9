#pragma once
// [cycles]: the run cut into pitch cycles by the fitted phase, each starting
// at the minimum angle so one cycle's stall and reattachment stay together.
// Partial cycles at the ends are dropped. A cycle is flagged invalid, with its
// reasons, for an angle drop-out, a dynamic-pressure drift or too many dead
// taps; invalid cycles stay in the archive but out of every statistic. Per
// cycle: mean q, U, rho, T, Re and k, with a k drift beyond tolerance flagged.
#include "pipeline/stage.hpp"

namespace stallscope {

class CyclesStage final : public Stage {
 public:
  static constexpr std::string_view kName = "cycles";
  static constexpr std::string_view kSummary =
      "cut the run into pitch cycles at the minimum angle, flag invalid ones, per-cycle U, Re and k";

  struct Options {
    std::int64_t min_cycles = 2;
    double angle_dropout_deg = 1.0;   // a sample this far off the fitted motion is a drop-out
    double q_drift_tolerance = 0.03;  // |q_cycle / median - 1| beyond this invalidates a cycle
    double k_drift_tolerance = 0.01;  // |k_cycle / median - 1| beyond this is flagged
    std::int64_t max_dead_taps = 2;   // taps flat or non-finite within a cycle, allowed
  };

  std::string_view name() const override { return kName; }
  std::string_view summary() const override { return kSummary; }
  void configure(ConfigSection& section) override;
  std::vector<std::string> inputs() const override;
  std::vector<std::string> optional_inputs() const override;
  std::vector<std::string> outputs() const override { return {"cycles"}; }
  void run(RunContext& context) override;

 private:
  Options options_;
  std::string min_cycles_where_;
};

}  // namespace stallscope
