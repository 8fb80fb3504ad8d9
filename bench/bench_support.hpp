#pragma once
// Shared by the benchmarks: one stage configured from a config and run.
#include <string>

#include "pipeline/config.hpp"
#include "pipeline/run_context.hpp"

namespace stallscope::bench {

template <typename StageT>
void run_stage(const ConfigFile& config, RunContext& context) {
  StageT stage;
  ConfigSection section(config, std::string(StageT::kName));
  stage.configure(section);
  stage.run(context);
}

}  // namespace stallscope::bench
