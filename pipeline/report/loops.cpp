// Cl-alpha and Cm-alpha loops: every valid cycle faint, the phase average
// bold inside its p05-p95 band, the events marked on the average.
#include <fmt/format.h>

#include <algorithm>
#include <cmath>

#include "pipeline/report/plot.hpp"
#include "pipeline/report/section.hpp"

namespace stallscope::report {

namespace {

constexpr std::size_t kMaxPointsPerCycle = 600;  // enough for a smooth loop at print size

struct Curve {
  std::vector<double> x, y;
};

// One curve per valid cycle, from the loads on their own time base, or else
// from the per-cycle bin means of the phase stage.
std::vector<Curve> cycle_loops(const ArchiveView& a, const std::string& load, std::size_t& invalid) {
  std::vector<Curve> out;
  invalid = 0;
  const Series* t = a.series("loads/time_s");
  const Series* y = a.series("loads/" + load);
  const Series* alpha = a.series("loads/alpha_deg");
  const Table* cycles = a.table("cycles");
  if (t && y && alpha && cycles && y->values.size() == t->values.size() && alpha->values.size() == t->values.size() &&
      has_column(*cycles, "t_start_s") && has_column(*cycles, "t_end_s")) {
    const auto t0 = numbers_of(*cycles, "t_start_s"), t1 = numbers_of(*cycles, "t_end_s");
    auto valid = numbers_of(*cycles, "valid");
    if (valid.empty()) valid.assign(t0.size(), 1.0);
    const double* begin = t->values.data();
    const double* end = begin + t->values.size();
    for (std::size_t c = 0; c < t0.size(); ++c) {
      if (valid[c] == 0) {
        ++invalid;
        continue;
      }
      const auto first = std::lower_bound(begin, end, t0[c]) - begin;
      const auto last = std::lower_bound(begin, end, t1[c]) - begin;
      Curve k;
      const auto step = std::max<std::ptrdiff_t>(1, (last - first) / static_cast<std::ptrdiff_t>(kMaxPointsPerCycle));
      for (auto i = first; i <= std::min<std::ptrdiff_t>(last, t->values.size() - 1); i += step) {
        k.x.push_back(alpha->values[i]);
        k.y.push_back(y->values[i]);
      }
      if (k.x.size() >= 2) out.push_back(std::move(k));
    }
    return out;
  }
  const Matrix* ly = a.matrix("phase/per_cycle/" + load);
  const Matrix* la = a.matrix("phase/per_cycle/alpha_deg");
  if (!ly || !la || ly->values.rows() != la->values.rows() || ly->values.cols() != la->values.cols()) return out;
  std::vector<double> valid;
  if (cycles) valid = numbers_of(*cycles, "valid");
  for (Eigen::Index c = 0; c < ly->values.cols(); ++c) {
    if (static_cast<std::size_t>(c) < valid.size() && valid[static_cast<std::size_t>(c)] == 0) {
      ++invalid;
      continue;
    }
    Curve k;
    for (Eigen::Index b = 0; b <= ly->values.rows(); ++b) {  // closed: back to the first bin
      k.x.push_back(la->values(b % ly->values.rows(), c));
      k.y.push_back(ly->values(b % ly->values.rows(), c));
    }
    out.push_back(std::move(k));
  }
  return out;
}

// Periodic linear interpolation of a phase-binned quantity.
double at_phase(const Eigen::VectorXd& bins, const Eigen::VectorXd& v, double phase) {
  const Eigen::Index n = bins.size();
  if (n == 0 || v.size() != n) return NAN;
  const double width = 360.0 / static_cast<double>(n);
  const double p = std::fmod(std::fmod(phase, 360.0) + 360.0, 360.0);
  const double x = (p - bins[0]) / width;
  const auto i0 = static_cast<Eigen::Index>(std::floor(x));
  const double f = x - std::floor(x);
  auto wrap = [n](Eigen::Index i) { return ((i % n) + n) % n; };
  return (1 - f) * v[wrap(i0)] + f * v[wrap(i0 + 1)];
}

struct LoopSpec {
  std::string load, symbol, file;
};

std::optional<std::string> draw_loop(const ArchiveView& a, PlotFolder& plots, const LoopSpec& spec,
                                     std::size_t& cycles_drawn, std::size_t& invalid) {
  const std::vector<Curve> loops = cycle_loops(a, spec.load, invalid);
  const Series* bins = a.series("phase/bin_deg");
  const Series* amean = a.series("phase/alpha_deg/mean");
  const Series* mean = a.series("phase/" + spec.load + "/mean");
  const Series* p05 = a.series("phase/" + spec.load + "/p05");
  const Series* p95 = a.series("phase/" + spec.load + "/p95");
  const bool have_mean = bins && amean && mean && mean->values.size() == amean->values.size();
  if (loops.empty() && !have_mean) return std::nullopt;
  cycles_drawn = loops.size();

  std::vector<double> xs, ys;
  for (const auto& k : loops) {
    xs.insert(xs.end(), k.x.begin(), k.x.end());
    ys.insert(ys.end(), k.y.begin(), k.y.end());
  }
  auto closed = [](const Series* s) {
    std::vector<double> v(s->values.data(), s->values.data() + s->values.size());
    if (!v.empty()) v.push_back(v.front());
    return v;
  };
  std::vector<double> mx, my, lo, hi;
  if (have_mean) {
    mx = closed(amean);
    my = closed(mean);
    xs.insert(xs.end(), mx.begin(), mx.end());
    ys.insert(ys.end(), my.begin(), my.end());
    if (p05 && p95 && p05->values.size() == mean->values.size() && p95->values.size() == mean->values.size()) {
      lo = closed(p05);
      hi = closed(p95);
      ys.insert(ys.end(), lo.begin(), lo.end());
      ys.insert(ys.end(), hi.begin(), hi.end());
    }
  }
  Canvas canvas(plots.draft(spec.file), 380, 330);
  Axes axes(canvas, 60, 14, 300, 220, nice_range(xs), nice_range(ys));
  axes.frame("\u03b1 (deg)", spec.symbol);
  if (!lo.empty()) axes.band(mx, lo, hi, ink::kBand);
  for (const auto& k : loops) axes.line(k.x, k.y, Stroke{ink::kCycle, 0.6, ink::kCycleOpacity});
  std::vector<LegendEntry> legend_entries;
  if (!loops.empty())
    legend_entries.push_back({fmt::format("{} valid cycles", loops.size()), Stroke{ink::kCycle, 1.0, 0.7}});
  if (have_mean) {
    axes.line(mx, my, Stroke{ink::kMean, 1.8});
    legend_entries.push_back({"phase average", Stroke{ink::kMean, 1.8}});
    if (!lo.empty()) {
      legend_entries.push_back(LegendEntry::with_swatch("p05\u2013p95", ink::kBand));
    }
    // Direction of travel: mid-upstroke and mid-downstroke.
    for (double phase : {90.0, 270.0}) {
      const double x = at_phase(bins->values, amean->values, phase), y = at_phase(bins->values, mean->values, phase);
      const double x2 = at_phase(bins->values, amean->values, phase + 3), y2 = at_phase(bins->values, mean->values, phase + 3);
      axes.arrow(x, y, x2 - x, y2 - y, ink::kMean, 5.5);
    }
    for (const EventMean& e : event_means(a)) {
      const double x = at_phase(bins->values, amean->values, e.phase_deg);
      const double y = at_phase(bins->values, mean->values, e.phase_deg);
      const std::size_t s = event_style_index(e.event);
      axes.markers({x}, {y}, marker_for(s), category_colour(s), 4.2);
      legend_entries.push_back(LegendEntry::with_marker(event_title(e.event), marker_for(s), category_colour(s)));
    }
  }
  legend(canvas, 22, 280, legend_entries, 8.0, 340);
  canvas.finish();
  return spec.file;
}

}  // namespace

std::optional<Section> loops_section(const ArchiveView& a, PlotFolder& plots) {
  std::string ref = "the moment reference";
  for (const char* key : {"loads/cm", "phase/cm/mean"}) {
    auto it = a.attributes(key).find("moment_ref_x_over_c");
    if (it != a.attributes(key).end() && std::holds_alternative<double>(it->second)) {
      ref = "x/c = " + format_number(std::get<double>(it->second), 3);
      break;
    }
  }
  const LoopSpec specs[] = {{"cl", "C_l", "loops_cl.svg"}, {"cm", "C_m", "loops_cm.svg"}};
  std::string figures;
  Section s{"loops", "Load loops", "", {}};
  std::size_t drawn = 0, invalid = 0;
  for (const LoopSpec& spec : specs) {
    std::size_t n = 0, bad = 0;
    auto file = draw_loop(a, plots, spec, n, bad);
    if (!file) continue;
    drawn = std::max(drawn, n);
    invalid = std::max(invalid, bad);
    const std::string what = spec.load == "cl" ? "Lift coefficient" : "Pitching-moment coefficient about " + ref;
    figures += figure_html(*file, what + " against angle of attack",
                           what + " against angle of attack. Thin lines: single valid cycles; bold: the phase "
                                  "average with arrows in the direction of travel; shaded: the 5th\u201395th "
                                  "percentile band of the cycles in each phase bin; markers: mean event phases.",
                           "half");
  }
  if (figures.empty()) return std::nullopt;
  s.html = "<div class=\"pair\">\n" + figures + "</div>\n";
  if (invalid > 0)
    s.html += fmt::format("<p class=\"note\">{} invalid cycle{} not drawn (reasons in the cycle table of the "
                          "archive).</p>\n", invalid, invalid == 1 ? " is" : "s are");
  s.html = fmt::format("<p>{} valid cycle{} drawn.</p>\n", drawn, drawn == 1 ? "" : "s") + s.html;
  return s;
}

}  // namespace stallscope::report
