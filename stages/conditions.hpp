#pragma once
// [conditions]: free-stream state of the run. Where the DAQ measures them
// (signals/q_pa, signals/p_static_pa, signals/T_K from [calibrate]) their medians
// over the wind-on span are used: rho from p and T (ideal gas), mu from T
// (Sutherland), U from q and rho, then Re and Mach. The config's values stand
// in for any quantity the DAQ does not measure; each result records its source.
#include "pipeline/stage.hpp"

namespace stallscope {

class ConditionsStage final : public Stage {
 public:
  static constexpr std::string_view kName = "conditions";
  static constexpr std::string_view kSummary = "free-stream rho, mu, U, q, Re and Mach from the tunnel state";

  struct Options {
    double temperature_c = 20.0;        // without signals/T_K
    double static_pressure_pa = 101325.0;  // without signals/p_static_pa
    double velocity_m_s = 0;            // without signals/q_pa: one of velocity or dynamic pressure
    double dynamic_pressure_pa = 0;
    bool use_signals = true;            // false: the config's values even where the DAQ measures them
    double wind_on_fraction = 0.9;      // wind on where q >= this x the running q
  };

  std::string_view name() const override { return kName; }
  std::string_view summary() const override { return kSummary; }
  void configure(ConfigSection& section) override;
  std::vector<std::string> inputs() const override { return {"run/chord_m"}; }
  std::vector<std::string> optional_inputs() const override;
  std::vector<std::string> outputs() const override;
  void run(RunContext& context) override;

 private:
  Options options_;
  std::string where_speed_;
};

}  // namespace stallscope
