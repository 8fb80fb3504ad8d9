#pragma once
// [daq]: ingest the DAQ record (HDF5 or CSV), check its time base, and map
// channel names to roles. Later stages find a role's channel by
// daq/roles/<role>.
#include "pipeline/stage.hpp"

namespace stallscope {

class DaqStage final : public Stage {
 public:
  static constexpr std::string_view kName = "daq";
  static constexpr std::string_view kSummary = "read the DAQ record, check its clock, map channels to roles";

  // Roles the pipeline knows; [daq.roles] maps each to a channel name.
  static const std::vector<std::string>& known_roles();

  struct Options {
    std::filesystem::path file;
    std::vector<std::pair<std::string, std::string>> roles;  // role -> channel
    double max_rate_jitter = 0.01;  // |dt - median dt| / median dt beyond this is an error
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
  std::vector<std::string> role_where_;  // config location of each role, for messages
};

}  // namespace stallscope
