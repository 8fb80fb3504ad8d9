#include "pipeline/campaign/local_runs.hpp"

#include <omp.h>

#include "pipeline/campaign/run_processes.hpp"

namespace stallscope::campaign {

RunOutcome run_in_child(const Manifest& manifest, const JobSettings& settings, std::size_t index) {
  // Stages pass context.threads() to their parallel loops; this also bounds
  // any OpenMP region that does not (Eigen's included).
  omp_set_num_threads(settings.threads);
  return reduce_campaign_run(manifest.runs[index], index, settings);
}

std::vector<RunOutcome> reduce_locally(const Manifest& manifest, const JobSettings& settings, int slots,
                                       const OnOutcome& on_outcome) {
  const std::size_t n = manifest.runs.size();
  std::vector<RunOutcome> outcomes(n);
  RunProcesses processes(static_cast<std::size_t>(slots),
                         [&](std::size_t i) { return run_in_child(manifest, settings, i); });
  std::size_t next = 0;
  while (next < n || processes.running() > 0) {
    while (next < n && processes.has_free_slot()) processes.start(next++);
    for (auto& o : processes.collect(-1)) {
      if (on_outcome) on_outcome(o);
      outcomes[o.index] = std::move(o);
    }
  }
  return outcomes;
}

}  // namespace stallscope::campaign
