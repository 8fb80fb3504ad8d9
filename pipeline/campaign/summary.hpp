#pragma once
// The campaign summary: a row per run (conditions, k, reduced pitch rate, Re,
// Mach, status, error), the event statistics of every run beside its
// conditions, the stall onset and stall delay statistics against reduced
// frequency and pitch rate (the table a model fit consumes), and the static
// polars. Built from the archives alone, so it is the same however the runs
// were shared out (one process, -j N, MPI ranks) and whether they were reduced
// now or found up to date.
#include <filesystem>
#include <map>
#include <optional>
#include <vector>

#include "pipeline/campaign/manifest.hpp"
#include "pipeline/campaign/run_job.hpp"
#include "pipeline/values.hpp"

namespace stallscope::campaign {

// What the summary needs of one archive, read without loading its bulk data.
struct RunDigest {
  Attributes run;                    // the attributes of /run
  std::optional<Table> events;       // /events/summary
  std::optional<Table> static_polar; // /static_polar/summary
  std::optional<Table> cycles;       // /cycles
  double max_alpha_rate_deg_s;       // max |motion/alpha_rate_deg_s|, NaN without it
};
RunDigest read_digest(const std::filesystem::path& archive);

// r = max|alpha rate| c / (2 U_inf), alpha rate in rad/s; NaN when any is missing.
double reduced_pitch_rate(const RunDigest& digest);

struct CampaignSummary {
  Table runs, events, stall, static_polar;
  Table repeatability;  // a row per repeated run group and event statistic; empty without repeats
  std::size_t failed = 0;
};

// outcomes: one per run, in manifest order.
CampaignSummary summarise(const Manifest& manifest, const std::vector<RunOutcome>& outcomes,
                          const JobSettings& settings);

}  // namespace stallscope::campaign
