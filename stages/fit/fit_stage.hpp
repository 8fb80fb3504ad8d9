#pragma once
// [fit]: the Goman-Khrabrov time constants tau1, tau2 of the run's loop (in
// c/U and seconds) from its phase-averaged Cn loop and a static polar, with
// per-cycle fits, a bootstrap over cycles, the sensitivity to x0 and the
// attached lag, and the exports other semi-empirical fits use (see run_fit.hpp).
// vortex_lift = true adds the Leishman-Beddoes vortex-lift term and fits its
// T_v and T_vl (t_v_bounds_conv, t_vl_bounds_conv) over the whole loop.
// The static polar: this run's static_polar stage, static_polar_archive (a
// reduced static run) or static_polar_csv (alpha_deg, cn). A loop that never
// stalls is stored as not fitted, with the reason.
#include <filesystem>
#include <optional>

#include "pipeline/stage.hpp"
#include "stages/fit/run_fit.hpp"

namespace stallscope {

class FitStage final : public Stage {
 public:
  static constexpr std::string_view kName = "fit";
  static constexpr std::string_view kSummary =
      "Goman-Khrabrov tau1, tau2 from the Cn loop and a static polar, with bootstrap intervals over cycles";

  std::string_view name() const override { return kName; }
  std::string_view summary() const override { return kSummary; }
  void configure(ConfigSection& section) override;
  std::vector<std::string> inputs() const override;
  std::vector<std::string> optional_inputs() const override;
  std::vector<std::string> outputs() const override;
  void run(RunContext& context) override;

  const fit::FitSettings& settings() const { return settings_; }

 private:
  fit::FitSettings settings_;
  std::optional<std::filesystem::path> archive_, csv_;
  std::string polar_where_;
};

// Reads the [fit] keys (shared by the stage and `stallscope fit --config`).
void configure_fit_settings(ConfigSection& section, fit::FitSettings& settings);

}  // namespace stallscope
