// Event timing across cycles: one strip per event (each valid cycle a dot),
// the mean with its 95 % confidence interval and the p05-p95 spread; and the
// statistics table of the events stage.
#include <fmt/format.h>

#include <algorithm>
#include <cmath>
#include <map>
#include <set>

#include "pipeline/report/plot.hpp"
#include "pipeline/report/section.hpp"
#include "stages/numerics/statistics.hpp"

namespace stallscope::report {

namespace {

struct Strip {
  std::string event;
  std::vector<double> phase, cycle;
  double mean = NAN, lo = NAN, hi = NAN, p05 = NAN, p95 = NAN;
};

// Events that are instants in the cycle (durations and speeds are not).
bool is_instant(const std::string& event) {
  return event != "stall_delay" && event.find("speed") == std::string::npos;
}

std::vector<Strip> strips(const ArchiveView& a) {
  const Table* events = a.table("events/per_cycle");
  if (!events || !has_column(*events, "event") || !has_column(*events, "phase_deg")) return {};
  std::set<long> invalid;
  if (const Table* cycles = a.table("cycles"); cycles && has_column(*cycles, "valid")) {
    const auto c = numbers_of(*cycles, "cycle"), v = numbers_of(*cycles, "valid");
    for (std::size_t i = 0; i < c.size(); ++i)
      if (v[i] == 0) invalid.insert(std::lround(c[i]));
  }
  const auto name = texts_of(*events, "event"), status = texts_of(*events, "status");
  const auto phase = numbers_of(*events, "phase_deg"), cycle = numbers_of(*events, "cycle");
  std::map<std::string, Strip> by_name;
  for (std::size_t r = 0; r < name.size(); ++r) {
    if (!is_instant(name[r]) || !std::isfinite(phase[r])) continue;
    if (!status.empty() && status[r] != "ok") continue;
    const double c = cycle.empty() ? static_cast<double>(r) : cycle[r];
    if (std::isfinite(c) && invalid.count(std::lround(c))) continue;
    Strip& s = by_name[name[r]];
    s.event = name[r];
    s.phase.push_back(phase[r]);
    s.cycle.push_back(c);
  }
  // Mean and interval: the events stage's summary when it has the row, else computed here.
  const Table* summary = a.table("events/summary");
  std::vector<Strip> out;
  for (auto& [n, s] : by_name) {
    const numerics::MeanInterval mi = numerics::mean_interval95(s.phase);
    s.mean = mi.mean;
    s.lo = mi.lo;
    s.hi = mi.hi;
    std::vector<double> copy = s.phase;
    s.p05 = numerics::percentile(copy, 0.05);
    s.p95 = numerics::percentile(copy, 0.95);
    if (summary && has_column(*summary, "quantity")) {
      const auto ev = texts_of(*summary, "event"), q = texts_of(*summary, "quantity");
      for (std::size_t r = 0; r < ev.size(); ++r) {
        if (ev[r] != n || q[r] != "phase_deg") continue;
        auto take = [&](const char* column, double& into) {
          const auto v = numbers_of(*summary, column);
          if (!v.empty() && std::isfinite(v[r])) into = v[r];
        };
        take("mean", s.mean);
        take("ci95_lo", s.lo);
        take("ci95_hi", s.hi);
        take("p05", s.p05);
        take("p95", s.p95);
      }
    }
    out.push_back(std::move(s));
  }
  std::sort(out.begin(), out.end(),
            [](const Strip& p, const Strip& q) { return event_style_index(p.event) < event_style_index(q.event); });
  return out;
}

std::string summary_table(const Table& t) {
  const auto ev = texts_of(t, "event"), q = texts_of(t, "quantity");
  struct Col {
    const char* name;
    const char* title;
  };
  // Side by side: the cycle-to-cycle spread (std, p05-p95), the uncertainty of
  // the mean over cycles (CI), and, with [uncertainty], the instruments' share.
  std::vector<Col> cols = {{"n", "n"},           {"mean", "mean"},        {"std", "std over cycles"},
                           {"median", "median"}, {"p05", "p05"},          {"p95", "p95"},
                           {"ci95_lo", "95 % CI of the mean, low"}, {"ci95_hi", "high"}};
  if (has_column(t, "mean_uncertainty")) cols.push_back({"mean_uncertainty", "measurement std of the mean"});
  std::string html = "<table class=\"numbers\" id=\"event-statistics\">\n<thead><tr><th>event</th><th>quantity</th>";
  for (const Col& c : cols) html += fmt::format("<th>{}</th>", c.title);
  html += "</tr></thead>\n<tbody>\n";
  for (std::size_t r = 0; r < t.rows(); ++r) {
    const std::string event = ev.empty() ? "" : ev[r];
    const std::string quantity = q.empty() ? "" : q[r];
    html += fmt::format("<tr><td>{}</td><td>{}</td>", escape_html(event_title(event)), escape_html(quantity));
    for (const Col& c : cols) {
      const auto v = numbers_of(t, c.name);
      html += fmt::format("<td data-key=\"events/summary/{}/{}/{}\">{}</td>", escape_html(event),
                          escape_html(quantity), c.name,
                          v.empty() ? "" : std::string(c.name) == "n" ? fmt::format("{:.0f}", v[r])
                                                                    : format_number(v[r], 4));
    }
    html += "</tr>\n";
  }
  return html + "</tbody>\n</table>\n";
}

}  // namespace

std::optional<Section> events_section(const ArchiveView& a, PlotFolder& plots) {
  const std::vector<Strip> rows = strips(a);
  const Table* summary = a.table("events/summary");
  if (rows.empty() && !summary) return std::nullopt;
  Section s{"events", "Stall events", "", {}};
  if (!rows.empty()) {
    const double row_height = 24;
    const double plot_height = row_height * static_cast<double>(rows.size());
    std::vector<double> all{0.0, 360.0};
    for (const Strip& r : rows) all.insert(all.end(), r.phase.begin(), r.phase.end());
    const Range x = nice_range(all, 8, 0.0);
    const double left = 150;
    Canvas canvas(plots.draft("event_timing.svg"), 720, plot_height + 78);
    Axes axes(canvas, left, 12, 540, plot_height, x, {0, static_cast<double>(rows.size())});
    for (std::size_t i = 0; i < rows.size(); i += 2) {
      const double y0 = static_cast<double>(rows.size() - i);
      axes.rectangle(x.lo, y0 - 1, x.hi, y0, Rgb{0.965, 0.97, 0.98});
    }
    axes.frame("phase of the cycle at the event (deg; 0 at the minimum angle)", "", true, false);
    axes.vertical(180, Stroke{ink::kAxis, 0.6, 1.0, {1, 2}});
    for (std::size_t i = 0; i < rows.size(); ++i) {
      const Strip& r = rows[i];
      const double centre = static_cast<double>(rows.size() - i) - 0.5;
      const std::size_t style = event_style_index(r.event);
      canvas.label(left - 8, axes.py(centre) + 3.2, event_title(r.event), 9.0, Anchor::kRight);
      axes.line({r.p05, r.p95}, {centre, centre}, Stroke{ink::kAxis, 0.8});
      axes.rectangle(r.lo, centre - 0.16, r.hi, centre + 0.16, ink::kBand);
      // Deterministic jitter by cycle number, so the same cycle sits at the same height in every strip.
      std::vector<double> y;
      for (double c : r.cycle) y.push_back(centre + 0.6 * (std::fmod(0.618034 * (std::isfinite(c) ? c : 0), 1.0) - 0.5));
      axes.markers(r.phase, y, marker_for(style), category_colour(style), 2.6);
      axes.line({r.mean, r.mean}, {centre - 0.3, centre + 0.3}, Stroke{ink::kMean, 2.0});
      canvas.label(left + 540 + 4, axes.py(centre) + 3.2, fmt::format("n={}", r.phase.size()), 7.5, Anchor::kLeft,
                   0, ink::kAxis);
    }
    canvas.finish();
    s.html += figure_html("event_timing.svg", "Event timing across cycles",
                          "Phase of each event in every valid cycle (dots, spread vertically by cycle number). "
                          "Bold tick: mean; shaded box: 95 % confidence interval of the mean (Student t); thin "
                          "line: 5th to 95th percentile of the cycles, i.e. the cycle-to-cycle spread.");
  }
  if (summary) {
    s.html += "<h3>Event statistics across valid cycles</h3>\n" + summary_table(*summary);
  }
  return s;
}

}  // namespace stallscope::report
