#pragma once
// [run]: what was tested — the run's name, the model's chord and pitch axis,
// the section — into run/* for every later stage and the archive.
#include "pipeline/stage.hpp"

namespace stallscope {

class RunStage final : public Stage {
 public:
  static constexpr std::string_view kName = "run";
  static constexpr std::string_view kSummary = "the run's identity and model geometry from [run]";

  struct Options {
    std::string name;  // required; names the archive file
    std::string description;
    std::string airfoil = "NACA 0012";
    double chord_m = 0;  // required
    double span_m = 0;   // 0: not given
    double pivot_x_over_c = 0.25;
  };

  std::string_view name() const override { return kName; }
  std::string_view summary() const override { return kSummary; }
  bool repeated_in_replicas() const override { return false; }
  void configure(ConfigSection& section) override;
  std::vector<std::string> inputs() const override { return {}; }
  std::vector<std::string> outputs() const override;
  void run(RunContext& context) override;

 private:
  Options options_;
};

}  // namespace stallscope
