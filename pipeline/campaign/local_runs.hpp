#pragma once
// Reducing a campaign's runs on this machine, a number at a time, each in its
// own child process, in manifest order as slots free up.
#include <functional>
#include <vector>

#include "pipeline/campaign/manifest.hpp"
#include "pipeline/campaign/run_job.hpp"

namespace stallscope::campaign {

using OnOutcome = std::function<void(const RunOutcome&)>;

// The job a child process runs: this run's threads limited (OpenMP included),
// then reduce_campaign_run.
RunOutcome run_in_child(const Manifest& manifest, const JobSettings& settings, std::size_t index);

// Returns one outcome per run, in manifest order; on_outcome is called as each finishes.
std::vector<RunOutcome> reduce_locally(const Manifest& manifest, const JobSettings& settings, int slots,
                                       const OnOutcome& on_outcome);

}  // namespace stallscope::campaign
