#pragma once
// `stallscope fit ARCHIVE... [-o DIR] [--static-polar FILE] [--config TOML]
//  [--bootstrap N] [-j N]`: refits reduced archives without re-reducing. Each
// run's fit CSVs go to DIR/<run>/; with several archives, also one (tau1, tau2)
// shared by all runs and the trend of the per-run constants with reduced
// frequency and mean angle (DIR/campaign_fit.csv, DIR/campaign_trend.csv).
#include <filesystem>
#include <iosfwd>
#include <optional>
#include <string>
#include <vector>

#include "stages/fit/run_fit.hpp"

namespace stallscope::fit {

struct RefitRequest {
  std::vector<std::filesystem::path> archives;
  std::filesystem::path output_directory = "fit";
  std::optional<std::filesystem::path> static_polar, config;
  std::optional<std::int64_t> bootstrap_resamples;
  int threads = 1;
  // Take each run's own fit as its reduction stored it, not a new one (the
  // campaign, whose runs were just fitted with their own settings).
  bool stored_run_fits = false;
};

// Returns the exit code; InputError propagates (exit 2 in main).
int refit_archives(const RefitRequest& request, std::ostream& out);

// Without --config, each archive is refitted with the [fit] options its
// reduction used (from its provenance).

// The campaign-wide fit at the end of `stallscope campaign`: over the archives
// that hold a fit (two or more), from their stored fits, into folder; returns
// the campaign files.
std::vector<std::filesystem::path> fit_campaign(const std::vector<std::filesystem::path>& archives,
                                                const std::filesystem::path& folder, int threads, std::ostream& out);

// nullopt unless argv[1] is "fit"; otherwise parses the rest and runs refit_archives.
std::optional<int> run_fit_command(int argc, char** argv);

}  // namespace stallscope::fit
