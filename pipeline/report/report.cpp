#include "pipeline/report/report.hpp"

#include <fmt/format.h>

#include <fstream>

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

// Our own look: one quiet column, hairline rules, figures in pairs.
constexpr const char* kStyle = R"css(
:root { --ink: #22242b; --muted: #5d6170; --rule: #c9ccd6; --accent: #1a2954; --tint: #f3f4f8; }
* { box-sizing: border-box; }
body { margin: 0; color: var(--ink); background: #fff;
       font: 15px/1.5 "DejaVu Sans", "Liberation Sans", Helvetica, Arial, sans-serif; }
main { max-width: 1060px; margin: 0 auto; padding: 28px 32px 60px; }
header { border-bottom: 2px solid var(--accent); padding-bottom: 12px; margin-bottom: 8px; }
header h1 { font-size: 26px; margin: 0; font-weight: 600; letter-spacing: 0.01em; }
header p { margin: 4px 0 0; color: var(--muted); }
nav { font-size: 13px; margin: 10px 0 22px; color: var(--muted); }
nav a { color: var(--accent); text-decoration: none; margin-right: 14px; }
section { margin-top: 30px; }
h2 { font-size: 18px; font-weight: 600; color: var(--accent); border-bottom: 1px solid var(--rule);
     padding-bottom: 4px; margin: 0 0 12px; }
h2 .number { color: var(--muted); font-weight: 400; margin-right: 8px; }
h3 { font-size: 15px; font-weight: 600; margin: 20px 0 6px; }
figure { margin: 12px 0 18px; }
figure img { display: block; max-width: 100%; height: auto; }
figcaption { font-size: 13px; color: var(--muted); margin-top: 4px; max-width: 720px; }
figcaption b { color: var(--ink); }
.pair { display: flex; flex-wrap: wrap; gap: 18px; }
.pair figure { flex: 1 1 460px; max-width: 506px; }
table { border-collapse: collapse; font-variant-numeric: tabular-nums; font-size: 13.5px; }
table.summary { border-top: 1.5px solid var(--ink); border-bottom: 1.5px solid var(--ink); min-width: 520px; }
table.summary th { text-align: left; font-weight: 400; padding: 3px 24px 3px 0; color: var(--muted); }
table.summary td { padding: 3px 10px 3px 0; text-align: right; }
table.summary.facts td { text-align: left; }
table.summary td.units { text-align: left; color: var(--muted); }
table.numbers, table.files { border-top: 1.5px solid var(--ink); border-bottom: 1.5px solid var(--ink); }
table.numbers th, table.files th { border-bottom: 1px solid var(--ink); font-weight: 600; padding: 4px 10px;
                                   text-align: left; }
table.numbers td { text-align: right; padding: 2px 10px; }
table.numbers td:first-child, table.numbers td:nth-child(2) { text-align: left; }
table.files td { padding: 2px 10px; vertical-align: top; }
table tbody tr:nth-child(even) { background: var(--tint); }
td.num { text-align: right; }
.ci { color: var(--muted); }
code { font: 12.5px "DejaVu Sans Mono", "Liberation Mono", monospace; }
code.hash { font-size: 11.5px; word-break: break-all; }
pre { background: var(--tint); padding: 10px 12px; overflow-x: auto; font-size: 12px; }
details summary { cursor: pointer; color: var(--accent); }
.note, .description { color: var(--muted); }
footer { margin-top: 40px; border-top: 1px solid var(--rule); padding-top: 10px; font-size: 12.5px;
         color: var(--muted); }
)css";

void write_file(const fs::path& path, const std::string& text) {
  const fs::path partial = path.string() + ".partial";
  {
    std::ofstream out(partial, std::ios::binary | std::ios::trunc);
    out << text;
    out.flush();
    if (!out) {
      std::error_code ec;
      fs::remove(partial, ec);
      throw InputError(path.string(), "report page cannot be written (disk full or read-only?)");
    }
  }
  fs::rename(partial, path);
}

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
  page += "<title>" + escape_html(run) + " \u2014 stallscope report</title>\n<style>" + kStyle + "</style>\n</head>\n";
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
  write_file(result.index, page);
  return result;
}

}  // namespace stallscope::report
