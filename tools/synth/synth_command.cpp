#include "tools/synth/synth_command.hpp"

#include <iostream>

#include "pipeline/progress.hpp"
#include "tools/synth/scenario.hpp"
#include "tools/synth/synth_run.hpp"

namespace stallscope {

int run_synth(const SynthRequest& request) {
  const synth::Scenario scenario = synth::load_scenario(request.scenario);
  Progress progress = Progress::for_stderr(request.quiet);
  const synth::SynthSummary summary =
      synth::write_synthetic_run(scenario, request.output_directory, request.force, progress);
  std::cout << summary.brief();
  return 0;
}

}  // namespace stallscope
