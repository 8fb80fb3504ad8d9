#pragma once
// Writes the campaign summary beside the run folders: campaign.h5 (the four
// tables as groups in the archive's table layout, with the manifest and the
// tool's version) and campaign_runs.csv, campaign_events.csv,
// campaign_stall.csv, campaign_static_polar.csv (only with static-polar runs),
// campaign_repeatability.csv (only with repeated runs).
// Each file is written as .partial and renamed when complete.
#include <filesystem>
#include <string>
#include <vector>

#include "pipeline/campaign/manifest.hpp"
#include "pipeline/campaign/summary.hpp"

namespace stallscope::campaign {

std::vector<std::filesystem::path> write_summary(const CampaignSummary& summary, const Manifest& manifest,
                                                 const std::filesystem::path& directory,
                                                 const std::string& command_line);

}  // namespace stallscope::campaign
