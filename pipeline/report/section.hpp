#pragma once
// One section of the report: its HTML and the plot files it drew. Each
// section builder returns nothing when the archive lacks its data.
#include <cmath>
#include <filesystem>
#include <optional>
#include <string>
#include <vector>

#include "pipeline/report/archive_view.hpp"

namespace stallscope::report {

struct Section {
  std::string id;     // HTML anchor, also what tests look for
  std::string title;
  std::string html;   // body, figures included
  std::vector<std::filesystem::path> plots;
};

// Where plots go, and how they are written (to a .partial name first).
class PlotFolder {
 public:
  explicit PlotFolder(std::filesystem::path folder) : folder_(std::move(folder)) {}
  // The partial path to draw into; commit() renames every one of them.
  std::filesystem::path draft(const std::string& file_name);
  std::vector<std::filesystem::path> commit();
  const std::filesystem::path& folder() const { return folder_; }

 private:
  std::filesystem::path folder_;
  std::vector<std::string> names_;
};

// <figure> with the image and a numbered caption.
std::string figure_html(const std::string& file_name, const std::string& alt, const std::string& caption,
                        const std::string& css_class = "");
std::string escape_html(const std::string& s);
// The page style every report page shares, and a page written to a .partial
// name and renamed when complete (InputError naming the file if it cannot be).
const char* page_style();
void write_page(const std::filesystem::path& path, const std::string& text);
// A number for tables and captions: `digits` significant digits, true minus sign, "–" for NaN.
std::string format_number(double v, int digits = 4);

std::optional<Section> summary_section(const ArchiveView& archive);
std::optional<Section> loops_section(const ArchiveView& archive, PlotFolder& plots);
std::optional<Section> pressure_section(const ArchiveView& archive, PlotFolder& plots);
std::optional<Section> events_section(const ArchiveView& archive, PlotFolder& plots);
std::optional<Section> vortex_section(const ArchiveView& archive, PlotFolder& plots);
std::optional<Section> damping_section(const ArchiveView& archive, PlotFolder& plots);
std::optional<Section> fit_section(const ArchiveView& archive, PlotFolder& plots);
Section provenance_section(const ArchiveView& archive);

// Event timing shared by sections: each event's mean phase over valid cycles.
struct EventMean {
  std::string event;
  double phase_deg = NAN, alpha_deg = NAN;
  std::size_t n = 0;
};
std::vector<EventMean> event_means(const ArchiveView& archive);
// Every event keeps one colour and marker in every plot: its place in the
// layout's list of event names (others follow, in order of appearance).
std::size_t event_style_index(const std::string& event);
// Trade name for an event ("stall_onset" -> "stall onset").
std::string event_title(const std::string& event);

}  // namespace stallscope::report
