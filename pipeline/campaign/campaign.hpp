#pragma once
// `stallscope campaign MANIFEST.toml [-o DIR] [-j N] [--force]`: reduce every
// run a manifest lists, several at once (and across nodes under mpirun), skip
// the ones whose archives are up to date, and write the campaign summary.
//
//   DIR/<run>/<run>.h5 (+ its CSV exports)   one folder per run
//   DIR/campaign.h5, DIR/campaign_runs.csv, campaign_events.csv,
//   campaign_stall.csv [, campaign_static_polar.csv]
#include <filesystem>
#include <ostream>
#include <string>

namespace stallscope::campaign {

struct CampaignRequest {
  std::filesystem::path manifest;
  std::filesystem::path output_directory = ".";
  int jobs = 0;        // runs at once on this node (per MPI rank); 0: one per core, at most one per run
  bool force = false;  // reduce every run again, even an up-to-date one
  bool quiet = false;
  bool draw_report = true;  // the run reports and the campaign page
  std::string command_line;
};

// Prints a line per run and where the summary is to `out`; progress and the
// failed runs' errors go to stderr. Returns 0 when every run is reduced or up
// to date, 2 when any failed (the others are still reduced and summarised).
// A bad manifest throws InputError before any run starts.
int run_campaign(const CampaignRequest& request, std::ostream& out);

}  // namespace stallscope::campaign
