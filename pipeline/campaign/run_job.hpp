#pragma once
// One run of a campaign: skipped when its archive is up to date, reduced
// otherwise, and never throwing: a failure becomes the run's outcome.
#include <filesystem>
#include <string>

#include "pipeline/campaign/manifest.hpp"

namespace stallscope::campaign {

struct RunOutcome {
  enum class State { kReduced, kUpToDate, kFailed };
  std::size_t index = 0;  // in the manifest
  State state = State::kFailed;
  double seconds = 0.0;
  std::string error;      // one line, for a failed run
  int rank = 0;           // the MPI rank that did the work (0 in local mode)

  // A compact text form for pipes and MPI messages.
  std::string serialised() const;
  static RunOutcome deserialised(const std::string& text);  // std::logic_error if malformed
};

std::string_view state_name(RunOutcome::State state);

struct JobSettings {
  std::filesystem::path output_directory;
  bool force = false;
  int threads = 1;  // threads one run may use
  std::string command_line;
  bool draw_report = true;  // each run's report/index.html beside its archive
};

// <out>/<name>/ holds a run's archive and its CSV exports.
std::filesystem::path run_folder(const JobSettings& settings, const CampaignRun& run);
std::filesystem::path run_archive(const JobSettings& settings, const CampaignRun& run);

// True when the run's archive exists and its provenance matches what would be
// reduced now: the same config text (hence the same settings) from the same
// place, and every raw input and calibration file with its recorded size and
// SHA-256. Sets *why to the first difference otherwise.
bool archive_up_to_date(const CampaignRun& run, const std::filesystem::path& archive, std::string* why = nullptr);

// Reduces the run unless it is up to date (or forced). Never throws.
RunOutcome reduce_campaign_run(const CampaignRun& run, std::size_t index, const JobSettings& settings);

}  // namespace stallscope::campaign
