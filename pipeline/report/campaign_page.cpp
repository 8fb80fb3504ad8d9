#include "pipeline/report/campaign_page.hpp"

#include <fmt/format.h>

#include <cmath>

#include "pipeline/errors.hpp"
#include "pipeline/report/plot.hpp"
#include "pipeline/report/section.hpp"
#include "stallscope/version.hpp"

namespace stallscope::report {

namespace fs = std::filesystem;

namespace {

struct Trend {
  const char* quantity;  // column stem in the stall table
  const char* title;     // axis label
};
constexpr Trend kTrendQuantities[] = {{"stall_onset_alpha_deg", "stall onset angle (deg)"},
                                      {"stall_delay_value", "stall delay"}};
constexpr Trend kTrendConditions[] = {{"k", "reduced frequency k"},
                                      {"reduced_pitch_rate", "reduced pitch rate r = \u03b1\u0307_{max} c / 2U"}};

std::vector<double> column_or_nan(const Table& t, const std::string& name) {
  auto v = numbers_of(t, name);
  if (v.empty()) v.assign(t.rows(), NAN);
  return v;
}

std::string units_of(const Table& t, const std::string& name) {
  const Column* c = t.find(name);
  return c && !c->units.empty() && c->units != "1" ? c->units : "";
}

// One trend plot, or nothing when fewer than one run has both numbers.
std::optional<std::string> trend_plot(const CampaignPage& page, const Trend& y, const Trend& x, PlotFolder& plots) {
  const Table& t = page.stall;
  const auto xs = column_or_nan(t, x.quantity);
  const auto mean = column_or_nan(t, std::string(y.quantity) + "_mean");
  const auto lo = column_or_nan(t, std::string(y.quantity) + "_ci95_lo");
  const auto hi = column_or_nan(t, std::string(y.quantity) + "_ci95_hi");
  const auto names = texts_of(t, "run");
  std::vector<double> px, py, extent_x, extent_y;
  for (std::size_t r = 0; r < t.rows(); ++r) {
    if (!std::isfinite(xs[r]) || !std::isfinite(mean[r])) continue;
    px.push_back(xs[r]);
    py.push_back(mean[r]);
    extent_y.push_back(std::isfinite(lo[r]) ? lo[r] : mean[r]);
    extent_y.push_back(std::isfinite(hi[r]) ? hi[r] : mean[r]);
  }
  if (px.empty()) return std::nullopt;
  extent_x = px;
  const std::string file = fmt::format("trend_{}_vs_{}.svg", y.quantity, x.quantity);
  Canvas canvas(plots.draft(file), 480, 320);
  Axes axes(canvas, 62, 14, 396, 250, nice_range(extent_x, 6, 0.08), nice_range(extent_y, 6, 0.08));
  const std::string units = units_of(t, std::string(y.quantity) + "_mean");
  axes.frame(x.title, std::string(y.title) + (units.empty() || std::string(y.title).find('(') != std::string::npos
                                                  ? ""
                                                  : " (" + units + ")"));
  for (std::size_t r = 0; r < t.rows(); ++r) {
    if (!std::isfinite(xs[r]) || !std::isfinite(mean[r])) continue;
    if (std::isfinite(lo[r]) && std::isfinite(hi[r])) axes.line({xs[r], xs[r]}, {lo[r], hi[r]}, Stroke{ink::kAxis, 1.2});
    if (r < names.size()) axes.note(xs[r], mean[r], names[r], 7.5, Anchor::kLeft, ink::kAxis, 5, -4);
  }
  axes.markers(px, py, Marker::kCircle, category_colour(0), 3.5);
  canvas.finish();
  return figure_html(file, fmt::format("{} against {}", y.title, x.title),
                     fmt::format("<b>{}</b> against {}: each run's mean over its valid cycles (dot) with the 95 % "
                                 "confidence interval of that mean (bar).",
                                 escape_html(y.title), escape_html(x.title)));
}

std::string runs_table(const CampaignPage& page) {
  const Table& t = page.runs;
  const auto names = texts_of(t, "run"), kinds = texts_of(t, "kind"), status = texts_of(t, "status"),
             errors = texts_of(t, "error");
  struct Col {
    const char* name;
    const char* title;
  };
  const Col numbers[] = {{"alpha_mean_deg", "\u03b1 mean (deg)"}, {"alpha_amp_deg", "\u03b1 amplitude (deg)"},
                         {"k", "k"},   {"reduced_pitch_rate", "r"}, {"U_inf_m_s", "U (m/s)"},
                         {"Re", "Re"}, {"Mach", "Mach"}};
  std::string html = "<table class=\"numbers\" id=\"campaign-runs\">\n<thead><tr><th>run</th><th>kind</th>";
  for (const Col& c : numbers) html += fmt::format("<th>{}</th>", c.title);
  html += "<th>status</th></tr></thead>\n<tbody>\n";
  for (std::size_t r = 0; r < t.rows(); ++r) {
    const std::string name = r < names.size() ? names[r] : "";
    const std::string link = r < page.run_reports.size() ? page.run_reports[r] : "";
    html += "<tr><td class=\"name\">" +
            (link.empty() ? escape_html(name)
                          : fmt::format("<a href=\"{}\">{}</a>", escape_html(link), escape_html(name))) +
            "</td><td>" + escape_html(r < kinds.size() ? kinds[r] : "") + "</td>";
    for (const Col& c : numbers) html += "<td>" + format_number(column_or_nan(t, c.name)[r], 4) + "</td>";
    const std::string s = r < status.size() ? status[r] : "";
    const std::string e = r < errors.size() ? errors[r] : "";
    html += "<td class=\"text\">" + escape_html(s) + (e.empty() ? "" : ": <span class=\"note\">" + escape_html(e) + "</span>") +
            "</td></tr>\n";
  }
  return html + "</tbody>\n</table>\n";
}

}  // namespace

ReportResult write_campaign_report(const CampaignPage& page, const fs::path& folder) {
  std::error_code ec;
  fs::create_directories(folder, ec);
  if (!fs::is_directory(folder, ec)) throw InputError(folder.string(), "campaign report folder cannot be created");
  PlotFolder plots(folder);
  std::string trends;
  for (const Trend& y : kTrendQuantities) {
    std::string pair;
    for (const Trend& x : kTrendConditions)
      if (auto f = trend_plot(page, y, x, plots)) pair += *f;
    if (!pair.empty()) trends += "<div class=\"pair\">\n" + pair + "</div>\n";
  }
  ReportResult result;
  result.plots = plots.commit();

  std::string html = "<!DOCTYPE html>\n<html lang=\"en\">\n<head>\n<meta charset=\"utf-8\">\n";
  html += "<meta name=\"viewport\" content=\"width=device-width, initial-scale=1\">\n";
  html += "<meta name=\"generator\" content=\"stallscope " + escape_html(std::string(kToolVersion)) + "\">\n";
  html += "<title>" + escape_html(page.name) + " \u2014 stallscope campaign</title>\n<style>" +
          std::string(page_style()) + "</style>\n</head>\n<body>\n<main>\n";
  html += "<header>\n<h1>Campaign " + escape_html(page.name) + "</h1>\n<p>" + escape_html(page.description) +
          "</p>\n</header>\n";
  html += "<section id=\"runs\">\n<h2><span class=\"number\">1</span>Runs</h2>\n" + runs_table(page) +
          "<p class=\"note\">Each run's name links to its own report.</p>\n</section>\n";
  result.sections.push_back("runs");
  if (!trends.empty()) {
    html += "<section id=\"trends\">\n<h2><span class=\"number\">2</span>Stall against reduced frequency and pitch "
            "rate</h2>\n" + trends + "</section>\n";
    result.sections.push_back("trends");
  }
  if (!page.files.empty()) {
    html += "<section id=\"files\">\n<h2><span class=\"number\">" + std::to_string(result.sections.size() + 1) +
            "</span>Summary files</h2>\n<ul>\n";
    for (const auto& f : page.files)
      html += fmt::format("<li><a href=\"{0}\"><code>{0}</code></a></li>\n", escape_html(f));
    html += "</ul>\n</section>\n";
    result.sections.push_back("files");
  }
  html += "<footer>\n<p>Drawn by stallscope " + escape_html(std::string(kToolVersion)) +
          " from the campaign summary; every number on this page is read back from the runs' archives.</p>\n"
          "</footer>\n</main>\n</body>\n</html>\n";
  result.index = folder / "index.html";
  write_page(result.index, html);
  return result;
}

}  // namespace stallscope::report
