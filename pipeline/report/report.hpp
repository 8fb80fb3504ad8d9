#pragma once
// `stallscope report`: plots and a static HTML page drawn from an archive.
// The page (index.html) and its SVG plots go in one folder, by default
// "report" beside the archive; the page needs no network and no script.
#include <filesystem>
#include <string>
#include <vector>

namespace stallscope::report {

struct ReportResult {
  std::filesystem::path index;               // the page
  std::vector<std::filesystem::path> plots;  // the SVG files it shows
  std::vector<std::string> sections;         // ids of the sections drawn, in page order
};

// Default folder: <archive folder>/report. Reads the archive only; writes
// every file as "<name>.partial" and renames it when complete, index.html
// last. InputError for an unreadable archive or an unwritable folder.
ReportResult write_report(const std::filesystem::path& archive, const std::filesystem::path& folder = {});

}  // namespace stallscope::report
