#include "pipeline/report/report.hpp"

#include <fmt/format.h>

#include "pipeline/errors.hpp"
#include "pipeline/report/colour.hpp"
#include "pipeline/report/section.hpp"
#include "stallscope/version.hpp"

namespace stallscope::report {

namespace fs = std::filesystem;

namespace {

// Every plot file a report can draw: those not drawn this time are removed,
// so a folder never shows a plot from an earlier archive.
constexpr const char* kPlotFiles[] = {"loops_cl.svg",      "loops_cm.svg",          "cp_map.svg",
                                      "cp_snapshots.svg",  "event_timing.svg",      "vortex_convection.svg",
                                      "vortex_trajectory.svg", "onset_swirl.svg",   "damping.svg"};

std::string subtitle(const ArchiveView& a) {
  std::vector<std::string> parts;
  if (auto s = a.text("run/airfoil")) parts.push_back(escape_html(*s));
  if (auto m = a.text("run/motion")) parts.push_back(escape_html(*m) + " motion");
  auto mean = a.number("run/alpha_mean_deg"), amp = a.number("run/alpha_amp_deg");
  if (mean && amp) parts.push_back("\u03b1 = " + format_number(*mean, 3) + "\u00b0 \u00b1 " + format_number(*amp, 3) + "\u00b0");
  if (auto k = a.number("run/k"); k && *k > 0) parts.push_back("k = " + format_number(*k, 3));
  if (auto re = a.number("run/Re")) parts.push_back("Re = " + format_number(*re, 3));
  if (auto m = a.number("run/Mach")) parts.push_back("M = " + format_number(*m, 2));
  std::string s;
  for (const auto& p : parts) s += (s.empty() ? "" : " \u00b7 ") + p;
  return s;
}

}  // namespace

ReportResult write_report(const fs::path& archive, const fs::path& folder_in) {
  const ArchiveView view = ArchiveView::load(archive);
  const fs::path folder = folder_in.empty() ? archive.parent_path() / "report" : folder_in;
  std::error_code ec;
  fs::create_directories(folder, ec);
  if (!fs::is_directory(folder, ec)) throw InputError(folder.string(), "report folder cannot be created");

  PlotFolder plots(folder);
  std::vector<Section> sections;
  auto add = [&](std::optional<Section> s) {
    if (s) sections.push_back(std::move(*s));
  };
  add(summary_section(view));
  add(loops_section(view, plots));
  add(pressure_section(view, plots));
  add(events_section(view, plots));
  add(vortex_section(view, plots));
  add(damping_section(view, plots));
  add(fit_section(view, plots));
  sections.push_back(provenance_section(view));

  ReportResult result;
  result.plots = plots.commit();
  for (const char* name : kPlotFiles) {
    const fs::path p = folder / name;
    if (std::find(result.plots.begin(), result.plots.end(), p) == result.plots.end()) fs::remove(p, ec);
  }

  const std::string run = view.text("run/name").value_or(archive.stem().string());
  std::string page = "<!DOCTYPE html>\n<html lang=\"en\">\n<head>\n<meta charset=\"utf-8\">\n";
  page += "<meta name=\"viewport\" content=\"width=device-width, initial-scale=1\">\n";
  page += "<meta name=\"generator\" content=\"stallscope " + escape_html(std::string(kToolVersion)) + "\">\n";
  page += "<title>" + escape_html(run) + " \u2014 stallscope report</title>\n<style>" + std::string(page_style()) + "</style>\n</head>\n";
  page += "<body>\n<main>\n<header>\n<h1>Run " + escape_html(run) + "</h1>\n<p>" + subtitle(view) + "</p>\n</header>\n";
  page += "<nav>";
  for (std::size_t i = 0; i < sections.size(); ++i)
    page += fmt::format("<a href=\"#{}\">{} {}</a>", sections[i].id, i + 1, escape_html(sections[i].title));
  page += "</nav>\n";
  for (std::size_t i = 0; i < sections.size(); ++i) {
    const Section& s = sections[i];
    page += fmt::format("<section id=\"{}\">\n<h2><span class=\"number\">{}</span>{}</h2>\n{}</section>\n", s.id, i + 1,
                        escape_html(s.title), s.html);
    result.sections.push_back(s.id);
  }
  page += "<footer>\n<p>Drawn by stallscope " + escape_html(std::string(kToolVersion)) + " from <code>" +
          escape_html(fs::absolute(archive).lexically_normal().string()) +
          "</code>; every number and plot on this page is read back from that archive.</p>\n";
  page += "<p>Colour maps, built for this tool in the OKLab space (perceptual lightness and colour difference, "
          "Ottosson 2020): <b>" + escape_html(Palette::sequential().name()) + "</b>: " +
          escape_html(Palette::sequential().construction()) + ". <b>" + escape_html(Palette::diverging().name()) +
          "</b>: " + escape_html(Palette::diverging().construction()) +
          ". Lightness changes monotonically along each, so they read correctly in grey.</p>\n";
  page += "</footer>\n</main>\n</body>\n</html>\n";
  result.index = folder / "index.html";
  write_page(result.index, page);
  return result;
}

}  // namespace stallscope::report
