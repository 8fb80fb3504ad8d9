#pragma once
// The campaign page: one table of runs (conditions, status, a link to each
// run's own report) and the trends a model fit asks about, the stall onset
// angle and the stall delay against reduced frequency and reduced pitch rate,
// each run a point with its 95 % confidence interval over cycles.
#include <filesystem>
#include <string>
#include <vector>

#include "pipeline/report/report.hpp"
#include "pipeline/values.hpp"

namespace stallscope::report {

struct CampaignPage {
  std::string name, description;
  Table runs;                           // a row per run: run, kind, status, error, conditions
  Table stall;                          // a row per run: conditions, <event>_<quantity>_{mean,ci95_lo,ci95_hi}
  std::vector<std::string> run_reports; // per runs row: link to the run's report, relative to the page; "" if none
  std::vector<std::string> files;       // summary files, relative to the page
};

// Writes <folder>/index.html and its plots (each .partial, then renamed).
ReportResult write_campaign_report(const CampaignPage& page, const std::filesystem::path& folder);

}  // namespace stallscope::report
