// Cp against x/c and phase as a colour map (one panel per surface, one
// colour scale), and Cp(x/c) snapshots at the mean phases of key events.
#include <fmt/format.h>

#include <algorithm>
#include <cmath>
#include <map>

#include "pipeline/report/plot.hpp"
#include "pipeline/report/section.hpp"

namespace stallscope::report {

namespace {

struct Tap {
  double x = 0;
  Eigen::Index column = 0;
};

// Cp rows at known phases: the phase average, or one valid cycle's samples.
struct CpField {
  std::vector<double> phase;  // row centres, ascending, deg
  Eigen::MatrixXd cp;         // rows x columns of `names`
  std::vector<std::string> names;
  std::string source;
  Eigen::RowVectorXd row_at(double p) const {
    const auto it = std::lower_bound(phase.begin(), phase.end(), p);
    std::size_t i = it == phase.end() ? phase.size() - 1 : static_cast<std::size_t>(it - phase.begin());
    if (i > 0 && std::abs(phase[i - 1] - p) < std::abs(phase[i] - p)) --i;
    return cp.row(static_cast<Eigen::Index>(i));
  }
};

std::optional<CpField> cp_field(const ArchiveView& a) {
  const Series* bins = a.series("phase/bin_deg");
  const Matrix* mean = a.matrix("phase/cp/mean");
  if (bins && mean && mean->values.rows() == bins->values.size() && !mean->columns.empty()) {
    CpField f{std::vector<double>(bins->values.data(), bins->values.data() + bins->values.size()), mean->values,
              mean->columns, fmt::format("phase average over {} bins", bins->values.size())};
    return f;
  }
  // Without a phase average: the first valid cycle, sample by sample.
  const Series* t = a.series("pressure/time_s");
  const Matrix* cp = a.matrix("pressure/cp");
  const Table* cycles = a.table("cycles");
  if (!t || !cp || !cycles || cp->values.rows() != t->values.size() || cp->columns.empty()) return std::nullopt;
  const auto t0 = numbers_of(*cycles, "t_start_s"), t1 = numbers_of(*cycles, "t_end_s");
  auto valid = numbers_of(*cycles, "valid");
  const auto number = numbers_of(*cycles, "cycle");
  for (std::size_t c = 0; c < t0.size(); ++c) {
    if (!valid.empty() && valid[c] == 0) continue;
    const double* begin = t->values.data();
    const double* end = begin + t->values.size();
    const auto first = std::lower_bound(begin, end, t0[c]) - begin, last = std::lower_bound(begin, end, t1[c]) - begin;
    if (last - first < 8) continue;
    CpField f;
    f.cp = cp->values.middleRows(first, last - first);
    for (auto i = first; i < last; ++i) f.phase.push_back(360.0 * (t->values[i] - t0[c]) / (t1[c] - t0[c]));
    f.names = cp->columns;
    f.source = fmt::format("cycle {} (no phase average in the archive)",
                           number.empty() ? static_cast<long>(c) : std::lround(number[c]));
    return f;
  }
  return std::nullopt;
}

// Taps of one surface, ordered from the leading edge, that have data.
std::vector<Tap> surface_taps(const Table& taps, const CpField& f, const std::string& surface) {
  const auto name = texts_of(taps, "tap"), side = texts_of(taps, "surface"), status = texts_of(taps, "status");
  const auto x = numbers_of(taps, "x_over_c");
  std::map<std::string, Eigen::Index> col;
  for (std::size_t j = 0; j < f.names.size(); ++j) col[f.names[j]] = static_cast<Eigen::Index>(j);
  std::vector<Tap> out;
  for (std::size_t r = 0; r < name.size() && r < x.size(); ++r) {
    if (side.size() > r && side[r] != surface) continue;
    if (status.size() > r && status[r] == "dead") continue;
    auto it = col.find(name[r]);
    if (it == col.end() || !std::isfinite(x[r]) || !f.cp.col(it->second).array().isFinite().any()) continue;
    out.push_back({x[r], it->second});
  }
  std::sort(out.begin(), out.end(), [](const Tap& p, const Tap& q) { return p.x < q.x; });
  return out;
}

// Linear in x/c between neighbouring taps; outside the taps: no value.
double interpolate(const std::vector<Tap>& taps, const Eigen::RowVectorXd& row, double x) {
  if (taps.empty() || x < taps.front().x || x > taps.back().x) return NAN;
  auto hi = std::lower_bound(taps.begin(), taps.end(), x, [](const Tap& t, double v) { return t.x < v; });
  if (hi == taps.begin()) return row[hi->column];
  const auto lo = hi - 1;
  const double f = hi->x > lo->x ? (x - lo->x) / (hi->x - lo->x) : 0.0;
  return (1 - f) * row[lo->column] + f * row[hi->column];
}

std::vector<double> surface_values(const std::vector<Tap>& taps, const CpField& f) {
  std::vector<double> v;
  for (const Tap& t : taps)
    for (Eigen::Index r = 0; r < f.cp.rows(); ++r) v.push_back(f.cp(r, t.column));
  return v;
}

}  // namespace

std::optional<Section> pressure_section(const ArchiveView& a, PlotFolder& plots) {
  const Table* taps = a.table("pressure/taps");
  if (!taps || !has_column(*taps, "x_over_c") || !has_column(*taps, "tap")) return std::nullopt;
  const auto field = cp_field(a);
  if (!field || field->phase.empty()) return std::nullopt;
  const std::vector<Tap> upper = surface_taps(*taps, *field, "upper"), lower = surface_taps(*taps, *field, "lower");
  if (upper.size() < 2 && lower.size() < 2) return std::nullopt;

  std::vector<double> all = surface_values(upper, *field), low = surface_values(lower, *field);
  all.insert(all.end(), low.begin(), low.end());
  const Range cp_range = nice_range(all, 6, 0.0);
  const Palette& palette = Palette::sequential();
  const std::vector<EventMean> events = event_means(a);
  const Range phase_range{0, 360};

  // The colour map.
  {
    Canvas canvas(plots.draft("cp_map.svg"), 720, 310);
    struct Panel {
      const std::vector<Tap>* taps;
      std::string title;
      double left;
    };
    const Panel panels[] = {{&upper, "upper (suction) surface", 58}, {&lower, "lower (pressure) surface", 352}};
    for (const Panel& p : panels) {
      Axes axes(canvas, p.left, 26, 262, 230, {0, 1}, phase_range);
      if (p.taps->size() >= 2) {
        axes.image([&](double x, double phase) {
          const double v = interpolate(*p.taps, field->row_at(phase), x);
          return std::isfinite(v) ? palette.at((v - cp_range.lo) / cp_range.span()) : Rgb{0.93, 0.93, 0.94};
        });
        // Tap stations along the top edge.
        std::vector<double> tx, ty;
        for (const Tap& t : *p.taps) {
          tx.push_back(t.x);
          ty.push_back(360);
        }
        axes.markers(tx, ty, Marker::kTriangleDown, ink::kAxis, 2.4);
      }
      for (const EventMean& e : events) {
        axes.horizontal(e.phase_deg, Stroke{ink::kText, 0.7, 0.8, {3, 2}});
        const std::size_t s = event_style_index(e.event);
        axes.markers({1.0}, {e.phase_deg}, marker_for(s), category_colour(s), 3.6);
      }
      axes.horizontal(180, Stroke{ink::kText, 0.5, 0.5, {1, 2}});
      axes.frame("x/c", p.left < 100 ? "phase (deg)" : "", false);  // one phase label for both panels
      canvas.label(p.left, 18, p.title, 9.0, Anchor::kLeft, 0, ink::kText, true);
    }
    colour_bar(canvas, 650, 26, 12, 230, cp_range, palette, "C_p");
    std::vector<LegendEntry> entries;
    for (const EventMean& e : events) {
      const std::size_t s = event_style_index(e.event);
      entries.push_back(LegendEntry::with_marker(event_title(e.event), marker_for(s), category_colour(s)));
    }
    legend(canvas, 58, 302, entries, 8.0, 600);
    canvas.finish();
  }

  // Snapshots: at key events, or at the quarter phases when there are none.
  struct Moment {
    std::string label;
    double phase;
    Rgb colour;
  };
  std::vector<Moment> moments;
  for (const EventMean& e : events)
    if (e.event != "stall_delay" && e.event.find("speed") == std::string::npos && moments.size() < 5)
      moments.push_back({event_title(e.event), e.phase_deg, category_colour(event_style_index(e.event))});
  const bool by_event = !moments.empty();
  if (!by_event)
    for (double p : {0.0, 90.0, 180.0, 270.0})
      moments.push_back({fmt::format("phase {:.0f}\u00b0", p), p, category_colour(moments.size() + 20)});
  {
    Canvas canvas(plots.draft("cp_snapshots.svg"), 380, 330);
    std::vector<double> ys;
    for (const Moment& m : moments) {
      const Eigen::RowVectorXd row = field->row_at(m.phase);
      for (const Tap& t : upper) ys.push_back(-row[t.column]);
      for (const Tap& t : lower) ys.push_back(-row[t.column]);
    }
    Axes axes(canvas, 60, 14, 300, 220, {0, 1}, nice_range(ys));
    axes.frame("x/c", "\u2212C_p");
    axes.horizontal(0, Stroke{ink::kAxis, 0.6});
    std::vector<LegendEntry> entries;
    for (std::size_t m = 0; m < moments.size(); ++m) {
      const Rgb colour = moments[m].colour;
      const Eigen::RowVectorXd row = field->row_at(moments[m].phase);
      for (const auto* side : {&upper, &lower}) {
        std::vector<double> x, y;
        for (const Tap& t : *side) {
          x.push_back(t.x);
          y.push_back(-row[t.column]);
        }
        axes.line(x, y, Stroke{colour, 1.4, 1.0, side == &upper ? std::vector<double>{} : std::vector<double>{4, 2}});
        axes.markers(x, y, Marker::kCircle, colour, 1.8);
      }
      entries.push_back({fmt::format("{} ({:.0f}\u00b0)", moments[m].label, moments[m].phase), Stroke{colour, 1.4}});
    }
    entries.push_back({"upper", Stroke{ink::kAxis, 1.0}});
    entries.push_back({"lower", Stroke{ink::kAxis, 1.0, 1.0, {4, 2}}});
    legend(canvas, 22, 280, entries, 8.0, 340);
    canvas.finish();
  }

  Section s{"pressure", "Surface pressure", "", {}};
  s.html = fmt::format("<p>Source: {}; {} upper and {} lower taps with data (dead taps left out).</p>\n",
                       escape_html(field->source), upper.size(), lower.size());
  s.html += figure_html("cp_map.svg", "Cp against x/c and phase",
                        "Pressure coefficient against chordwise position and phase of the cycle (0\u00b0 at the "
                        "minimum angle, 180\u00b0 dotted: the maximum). Colours interpolated linearly between taps "
                        "(triangles); grey where no tap covers the chord. Dashed lines: mean event phases. Palette: "
                        + escape_html(palette.name()) + ", dark for strong suction.");
  s.html += figure_html("cp_snapshots.svg", "Cp(x/c) snapshots",
                        by_event ? "Chordwise pressure distribution at the mean phase of each event (nearest phase "
                                   "bin); solid: upper surface, dashed: lower."
                                 : "Chordwise pressure distribution at the quarter phases (no events in the "
                                   "archive); solid: upper surface, dashed: lower.",
                        "half");
  return s;
}

}  // namespace stallscope::report
