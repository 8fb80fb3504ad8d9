// Aerodynamic (pitch) damping per cycle: a stem per cycle, negative damping
// in the warning colour, the mean with its 95 % interval across valid cycles.
#include <fmt/format.h>

#include <cmath>

#include "pipeline/report/plot.hpp"
#include "pipeline/report/section.hpp"
#include "stages/numerics/statistics.hpp"

namespace stallscope::report {

std::optional<Section> damping_section(const ArchiveView& a, PlotFolder& plots) {
  const Table* t = a.table("cycles/damping");
  if (!t || !has_column(*t, "xi")) return std::nullopt;
  const auto xi = numbers_of(*t, "xi");
  auto cycle = numbers_of(*t, "cycle");
  auto valid = numbers_of(*t, "valid");
  if (cycle.empty())
    for (std::size_t i = 0; i < xi.size(); ++i) cycle.push_back(static_cast<double>(i));
  if (valid.empty()) valid.assign(xi.size(), 1.0);
  std::vector<double> used;
  std::size_t negative = 0;
  for (std::size_t i = 0; i < xi.size(); ++i)
    if (valid[i] != 0 && std::isfinite(xi[i])) {
      used.push_back(xi[i]);
      negative += xi[i] < 0;
    }
  if (used.empty()) return std::nullopt;
  numerics::MeanInterval mi = numerics::mean_interval95(used);
  // The damping stage's own summary is the number of record when present.
  mi.mean = a.table_number("cycles/damping", "xi_mean").value_or(mi.mean);
  mi.lo = a.table_number("cycles/damping", "xi_ci95_lo").value_or(mi.lo);
  mi.hi = a.table_number("cycles/damping", "xi_ci95_hi").value_or(mi.hi);

  std::vector<double> ys = xi;
  ys.push_back(0.0);
  const Range y = nice_range(ys);
  const Range x{cycle.front() - 0.8, cycle.back() + 0.8};
  Canvas canvas(plots.draft("damping.svg"), 720, 270);
  Axes axes(canvas, 70, 14, 620, 200, x, y);
  axes.rectangle(x.lo, y.lo, x.hi, 0.0, ink::kWarningBand);  // the negative-damping half-plane
  axes.rectangle(x.lo, mi.lo, x.hi, mi.hi, ink::kBand);
  axes.frame("cycle", "damping factor \u039e");
  axes.horizontal(0.0, Stroke{ink::kAxis, 0.9});
  axes.horizontal(mi.mean, Stroke{ink::kMean, 1.4, 1.0, {5, 3}});
  const double half = std::min(0.32, 0.32 * 40.0 / static_cast<double>(std::max<std::size_t>(xi.size(), 1)));
  for (std::size_t i = 0; i < xi.size(); ++i) {
    if (!std::isfinite(xi[i])) continue;
    const bool neg = xi[i] < 0;
    const bool ok = valid[i] != 0;
    const Rgb colour = ok ? (neg ? ink::kWarning : ink::kMean) : ink::kCycle;
    axes.rectangle(cycle[i] - half, 0.0, cycle[i] + half, xi[i], colour, ok ? 1.0 : 0.35);
  }
  legend(canvas, 70, 258,
         {LegendEntry::with_swatch("damped cycle", ink::kMean),
          LegendEntry::with_swatch("negative damping", ink::kWarning),
          LegendEntry::with_swatch("invalid cycle", Rgb{0.80, 0.82, 0.86}),
          LegendEntry("mean", Stroke{ink::kMean, 1.4, 1.0, {5, 3}}),
          LegendEntry::with_swatch("95 % CI of the mean", ink::kBand)},
         8.0, 640);
  canvas.finish();

  Section s{"damping", "Aerodynamic damping", "", {}};
  const std::string verdict = a.table_text("cycles/damping", "negative_damping").value_or("");
  s.html = fmt::format(
      "<p>Damping factor over {} valid cycles: mean <span data-key=\"cycles/damping/xi_mean\">{}</span>, 95 % "
      "interval [{}, {}]; <span data-key=\"cycles/damping/negative_cycles\">{}</span> cycle{} with negative "
      "damping.{}</p>\n",
      used.size(), format_number(mi.mean, 4), format_number(mi.lo, 4), format_number(mi.hi, 4), negative,
      negative == 1 ? "" : "s",
      verdict.empty() ? "" : " Negative damping: " + escape_html(verdict) + ".");
  const std::string definition = a.table_text("cycles/damping", "definition").value_or(
      "\u039e = \u2212\u222e Cm d\u03b1 / (\u03c0 \u03b1\u0302\u00b2), \u03b1 in rad");
  s.html += figure_html("damping.svg", "Aerodynamic damping per cycle",
                        "Pitch-damping factor of each cycle (" + escape_html(definition) +
                            "). Below zero (tinted) the flow feeds energy into the pitching motion.");
  return s;
}

}  // namespace stallscope::report
