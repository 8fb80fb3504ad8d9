#pragma once
// [conditions]: free-stream state of the run — air temperature and static
// pressure give rho (ideal gas) and mu (Sutherland); with the tunnel speed
// (or dynamic pressure) they give U, q, Re and Mach.
#include "pipeline/stage.hpp"

namespace stallscope {

class ConditionsStage final : public Stage {
 public:
  static constexpr std::string_view kName = "conditions";
  static constexpr std::string_view kSummary = "free-stream rho, mu, U, q, Re and Mach from the tunnel state";

  struct Options {
    double temperature_c = 20.0;
    double static_pressure_pa = 101325.0;
    double velocity_m_s = 0;        // one of velocity or dynamic pressure
    double dynamic_pressure_pa = 0;
  };

  std::string_view name() const override { return kName; }
  std::string_view summary() const override { return kSummary; }
  void configure(ConfigSection& section) override;
  std::vector<std::string> inputs() const override { return {"run/chord_m"}; }
  std::vector<std::string> outputs() const override;
  void run(RunContext& context) override;

 private:
  Options options_;
};

}  // namespace stallscope
