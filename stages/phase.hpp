#pragma once
// [phase]: phase averaging of every load, the angle and Cp at every tap into
// N bins of the fitted phase (bin 0 starts at the minimum angle), over the
// valid cycles only: mean, std, p05, p95 and n per bin; upstroke (0-180 deg)
// and downstroke (180-360 deg) marked; each cycle's own loop kept (its bin
// means) so all loops can be drawn. When the events stage gives a per-cycle
// alignment time (events/alignment: cycle, t_s), the cycles are also averaged
// aligned on it (conditional averaging), which keeps a jittered stall sharp.
#include "pipeline/stage.hpp"

namespace stallscope {

class PhaseStage final : public Stage {
 public:
  static constexpr std::string_view kName = "phase";
  static constexpr std::string_view kSummary =
      "phase-average loads, angle and Cp over valid cycles (mean, std, p05, p95, n), per-cycle loops, "
      "event-aligned averages";

  struct Options {
    std::int64_t bins = 72;
    std::vector<std::string> loads = {"cn", "cc", "cl", "cd_p", "cm", "cm_pivot"};
    bool cp = true;         // also Cp at every tap, when pressure/cp exists
    bool per_cycle = true;  // keep each cycle's loop (bin means)
    std::int64_t aligned_bins = 100;
    std::vector<double> aligned_window_periods = {-0.25, 0.25};  // about each alignment time
  };

  std::string_view name() const override { return kName; }
  std::string_view summary() const override { return kSummary; }
  void configure(ConfigSection& section) override;
  std::vector<std::string> inputs() const override;
  std::vector<std::string> optional_inputs() const override;
  std::vector<std::string> outputs() const override;
  void run(RunContext& context) override;

 private:
  Options options_;
  std::string bins_where_, aligned_bins_where_;
};

}  // namespace stallscope
