// The leading-edge vortex: chordwise position against convective time per
// cycle with each cycle's convection-speed fit, the trajectory in the airfoil
// frame, and one swirl-strength field at onset when the archive holds one.
#include <fmt/format.h>

#include <algorithm>
#include <cmath>
#include <map>
#include <numbers>

#include "pipeline/report/plot.hpp"
#include "pipeline/report/section.hpp"
#include "stages/piv/airfoil_frame.hpp"
#include "stages/theory/naca4.hpp"

namespace stallscope::report {

namespace {

struct Track {
  long id = 0, cycle = -1;
  std::vector<double> t, x, y;
  double speed = NAN, detachment_t = NAN;
};

// The NACA 4-digit section named in run/airfoil ("NACA 0012", "0012"), if any.
std::optional<theory::Naca4Section> section_of(const ArchiveView& a) {
  auto name = a.text("run/airfoil");
  if (!name) return std::nullopt;
  std::string digits;
  for (char c : *name)
    if (std::isdigit(static_cast<unsigned char>(c))) digits += c;
  if (digits.size() != 4) return std::nullopt;
  try {
    return theory::parse_naca4(digits);
  } catch (const std::exception&) {
    return std::nullopt;
  }
}

// The section outline in chords, closed, counter-clockwise from the trailing edge.
std::pair<std::vector<double>, std::vector<double>> outline(const theory::Naca4Section& s) {
  std::vector<double> x, y;
  constexpr int kPoints = 80;
  for (int i = kPoints; i >= 0; --i) {
    const double xc = 0.5 * (1 - std::cos(std::numbers::pi * i / kPoints));
    const auto p = theory::naca4_upper_surface(s, xc);
    x.push_back(p.x);
    y.push_back(p.y);
  }
  for (int i = 1; i <= kPoints; ++i) {
    const double xc = 0.5 * (1 - std::cos(std::numbers::pi * i / kPoints));
    const auto p = theory::naca4_lower_surface(s, xc);
    x.push_back(p.x);
    y.push_back(p.y);
  }
  x.push_back(x.front());
  y.push_back(y.front());
  return {x, y};
}

// "0.200000 to 0.800000, after detachment when known" -> {0.2, 0.8}.
std::pair<double, double> window_of(const std::string& text) {
  double lo = -INFINITY, hi = INFINITY;
  if (std::sscanf(text.c_str(), "%lf to %lf", &lo, &hi) != 2) return {-INFINITY, INFINITY};
  return {lo, hi};
}

std::string swirl_figure(const ArchiveView& a, PlotFolder& plots, const std::optional<theory::Naca4Section>& section) {
  const Matrix* swirl = a.matrix("vortex/onset_swirl");
  if (!swirl || swirl->values.size() == 0) return "";
  const Series* gx = a.series("vortex/onset_swirl_x_m");
  const Series* gy = a.series("vortex/onset_swirl_y_m");
  if (!gx) gx = a.series("piv/grid_x_m");
  if (!gy) gy = a.series("piv/grid_y_m");
  if (!gx || !gy || gx->values.size() != swirl->values.cols() || gy->values.size() != swirl->values.rows()) return "";
  const Attributes& at = a.attributes("vortex/onset_swirl");
  auto number = [&](const char* key) {
    auto it = at.find(key);
    if (it == at.end()) return static_cast<double>(NAN);
    if (const auto* d = std::get_if<double>(&it->second)) return *d;
    if (const auto* i = std::get_if<std::int64_t>(&it->second)) return static_cast<double>(*i);
    return static_cast<double>(NAN);
  };
  const Eigen::VectorXd& xs = gx->values;
  const Eigen::VectorXd& ys = gy->values;
  double peak = swirl->values.array().isFinite().select(swirl->values.array().abs(), 0.0).maxCoeff();
  if (!(peak > 0)) peak = 1;
  const Range scale = nice_range({-peak, peak}, 5, 0.0);
  const Range xr{std::min(xs[0], xs[xs.size() - 1]), std::max(xs[0], xs[xs.size() - 1])};
  const Range yr{std::min(ys[0], ys[ys.size() - 1]), std::max(ys[0], ys[ys.size() - 1])};
  const double aspect = yr.span() / xr.span();
  const double w = 440, h = std::clamp(w * aspect, 120.0, 420.0);
  Canvas canvas(plots.draft("onset_swirl.svg"), 600, h + 60);
  Axes axes(canvas, 62, 12, w, h, xr, yr);
  auto index = [](const Eigen::VectorXd& g, double v) {
    const double f = (v - g[0]) / (g[g.size() - 1] - g[0]) * static_cast<double>(g.size() - 1);
    return std::clamp(static_cast<Eigen::Index>(std::lround(f)), Eigen::Index{0}, g.size() - 1);
  };
  const Palette& palette = Palette::diverging();
  axes.image([&](double x, double y) {
    const double v = swirl->values(index(ys, y), index(xs, x));
    return std::isfinite(v) ? palette.at((v - scale.lo) / scale.span()) : Rgb{0.8, 0.8, 0.82};
  });
  // The section where it sat at that instant (needs the registration attributes).
  const double alpha = number("alpha_deg"), px = number("pivot_x_m"), py = number("pivot_y_m");
  const auto chord = a.number("run/chord_m"), pivot = a.number("run/pivot_x_over_c");
  if (section && std::isfinite(alpha) && std::isfinite(px) && std::isfinite(py) && chord && pivot) {
    piv::AirfoilPlacement place{*chord, *pivot, px, py, std::isfinite(number("chord_angle_offset_deg"))
                                                            ? number("chord_angle_offset_deg") : 0.0};
    auto [ox, oy] = outline(*section);
    std::vector<double> lx, ly;
    for (std::size_t i = 0; i < ox.size(); ++i) {
      double x = 0, y = 0;
      piv::to_lab_frame(place, alpha, {ox[i], oy[i]}, x, y);
      lx.push_back(x);
      ly.push_back(y);
    }
    axes.line(lx, ly, Stroke{ink::kText, 1.2});
  }
  // Detected vortices in that frame.
  const double frame = number("frame");
  if (const Table* det = a.table("piv/detections"); det && std::isfinite(frame)) {
    const auto f = numbers_of(*det, "frame"), x = numbers_of(*det, "x_m"), y = numbers_of(*det, "y_m");
    std::vector<double> dx, dy;
    for (std::size_t i = 0; i < f.size() && i < x.size() && i < y.size(); ++i)
      if (f[i] == frame) {
        dx.push_back(x[i]);
        dy.push_back(y[i]);
      }
    axes.markers(dx, dy, Marker::kCross, ink::kText, 4.5);
  }
  axes.frame("x (m, laboratory frame)", "y (m)", false);
  colour_bar(canvas, 62 + w + 28, 12, 12, h, scale, palette, "\u03bb_{ci} c/U_\u221e (signed by vorticity)");
  canvas.finish();
  return figure_html("onset_swirl.svg", "Swirl strength at vortex onset",
                     fmt::format("Swirl strength at vortex onset{}{}, signed by the vorticity, with the section "
                                 "outline where it stood and the detected vortices (crosses). Palette: {}.",
                                 std::isfinite(frame) ? fmt::format(" (frame {:.0f}", frame) : "",
                                 std::isfinite(frame) ? (std::isfinite(alpha) ? ", \u03b1 = " + format_number(alpha, 3) + "\u00b0)" : ")") : "",
                                 escape_html(palette.name())));
}

}  // namespace

std::optional<Section> vortex_section(const ArchiveView& a, PlotFolder& plots) {
  const Table* tracks = a.table("vortex/tracks");
  const Table* per_track = a.table("vortex/per_track");
  if (!tracks || !has_column(*tracks, "track") || !has_column(*tracks, "x_over_c") || !has_column(*tracks, "t_s"))
    return std::nullopt;

  // Which tracks are leading-edge vortices, and of which cycle.
  std::map<long, Track> le;
  if (per_track && has_column(*per_track, "track")) {
    const auto id = numbers_of(*per_track, "track"), is_le = numbers_of(*per_track, "le_vortex");
    const auto cycle = numbers_of(*per_track, "cycle"), speed = numbers_of(*per_track, "convection_speed");
    const auto det = numbers_of(*per_track, "detachment_t_s");
    for (std::size_t r = 0; r < id.size(); ++r) {
      if (!is_le.empty() && is_le[r] == 0) continue;
      Track t;
      t.id = std::lround(id[r]);
      t.cycle = cycle.empty() || !std::isfinite(cycle[r]) ? -1 : std::lround(cycle[r]);
      t.speed = speed.empty() ? NAN : speed[r];
      t.detachment_t = det.empty() ? NAN : det[r];
      le[t.id] = t;
    }
  }
  const bool all_tracks = le.empty();
  {
    const auto id = numbers_of(*tracks, "track"), t = numbers_of(*tracks, "t_s");
    const auto x = numbers_of(*tracks, "x_over_c"), y = numbers_of(*tracks, "y_over_c");
    for (std::size_t r = 0; r < id.size(); ++r) {
      const long k = std::lround(id[r]);
      auto it = le.find(k);
      if (it == le.end()) {
        if (!all_tracks) continue;
        it = le.emplace(k, Track{k, -1, {}, {}, {}, NAN, NAN}).first;
      }
      it->second.t.push_back(t[r]);
      it->second.x.push_back(x[r]);
      it->second.y.push_back(y.empty() ? NAN : y[r]);
    }
  }
  std::erase_if(le, [](const auto& kv) { return kv.second.t.empty(); });
  if (le.empty()) return std::nullopt;

  // Convective time from each cycle's start (or from the track's birth).
  const auto chord = a.number("run/chord_m"), speed = a.number("run/U_inf_m_s");
  const bool convective = chord && speed && *chord > 0 && *speed > 0;
  const double per_second = convective ? *speed / *chord : 1.0;
  std::map<long, double> cycle_start;
  if (const Table* cycles = a.table("cycles")) {
    const auto c = numbers_of(*cycles, "cycle"), t0 = numbers_of(*cycles, "t_start_s");
    for (std::size_t i = 0; i < c.size() && i < t0.size(); ++i) cycle_start[std::lround(c[i])] = t0[i];
  }
  const auto window = window_of(a.table_text("vortex/per_track", "convection_window_x_over_c").value_or(""));

  Section s{"vortex", "Leading-edge vortex", "", {}};
  std::vector<double> speeds;
  bool from_cycle_start = true;
  {
    Canvas canvas(plots.draft("vortex_convection.svg"), 380, 330);
    std::vector<std::vector<double>> tc;
    std::vector<double> all_t, all_x{0.0, 1.0};
    for (const auto& [k, tr] : le) {
      auto it = cycle_start.find(tr.cycle);
      const double origin = it != cycle_start.end() ? it->second : tr.t.front();
      from_cycle_start = from_cycle_start && it != cycle_start.end();
      std::vector<double> v;
      for (double t : tr.t) v.push_back((t - origin) * per_second);
      all_t.insert(all_t.end(), v.begin(), v.end());
      all_x.insert(all_x.end(), tr.x.begin(), tr.x.end());
      tc.push_back(std::move(v));
    }
    Axes axes(canvas, 60, 14, 300, 220, nice_range(all_t), nice_range(all_x));
    axes.frame(convective ? (from_cycle_start ? "t U_\u221e/c from the cycle start" : "t U_\u221e/c from birth")
                          : "t from the cycle start (s)",
               "x/c of the vortex centre");
    std::size_t i = 0;
    for (const auto& [k, tr] : le) {
      const std::vector<double>& t = tc[i++];
      axes.line(t, tr.x, Stroke{ink::kCycle, 0.8, 0.6});
      axes.markers(t, tr.x, Marker::kCircle, ink::kCycle, 1.6);
      if (!std::isfinite(tr.speed)) continue;
      speeds.push_back(tr.speed);
      // The fitted line passes through the centroid of the points it was fitted to.
      double st = 0, sx = 0, lo = INFINITY, hi = -INFINITY;
      std::size_t n = 0;
      for (std::size_t j = 0; j < t.size(); ++j) {
        if (tr.x[j] < window.first || tr.x[j] > window.second) continue;
        if (std::isfinite(tr.detachment_t) && tr.t[j] < tr.detachment_t) continue;
        st += t[j];
        sx += tr.x[j];
        lo = std::min(lo, t[j]);
        hi = std::max(hi, t[j]);
        ++n;
      }
      if (n < 2) continue;
      const double tm = st / static_cast<double>(n), xm = sx / static_cast<double>(n);
      const double slope = convective ? tr.speed : tr.speed * per_second;
      axes.line({lo, hi}, {xm + slope * (lo - tm), xm + slope * (hi - tm)}, Stroke{ink::kMean, 1.1, 1.0, {4, 2}});
    }
    legend(canvas, 22, 282,
           {{"vortex centre, one line per cycle", Stroke{ink::kCycle, 1.0, 0.7}},
            {"convection-speed fit", Stroke{ink::kMean, 1.1, 1.0, {4, 2}}}},
           8.0, 340);
    canvas.finish();
  }
  const auto section = section_of(a);
  {
    Canvas canvas(plots.draft("vortex_trajectory.svg"), 380, 250);
    std::vector<double> xs{-0.05, 1.1}, ys{-0.1, 0.3};
    for (const auto& [k, tr] : le) {
      xs.insert(xs.end(), tr.x.begin(), tr.x.end());
      ys.insert(ys.end(), tr.y.begin(), tr.y.end());
    }
    const Range xr = nice_range(xs, 7, 0.0), yr0 = nice_range(ys, 4, 0.0);
    // Equal scales on both axes: the trajectory keeps its true shape.
    const double w = 300, h = std::clamp(w * yr0.span() / xr.span(), 60.0, 170.0);
    const double half = 0.5 * h / w * xr.span(), mid = 0.5 * (yr0.lo + yr0.hi);
    Axes axes(canvas, 60, 14, w, h, xr, {mid - half, mid + half});
    axes.frame("x/c (airfoil frame)", "y/c");
    if (section) {
      auto [ox, oy] = outline(*section);
      axes.polygon(ox, oy, ink::kGrid);
      axes.line(ox, oy, Stroke{ink::kAxis, 1.0});
    } else {
      axes.line({0, 1}, {0, 0}, Stroke{ink::kAxis, 1.5});
    }
    for (const auto& [k, tr] : le) {
      axes.line(tr.x, tr.y, Stroke{ink::kCycle, 0.8, 0.6});
      axes.markers({tr.x.front()}, {tr.y.front()}, Marker::kCircle, ink::kMean, 2.2);
      axes.markers({tr.x.back()}, {tr.y.back()}, Marker::kSquare, ink::kMean, 2.0, true);
    }
    legend(canvas, 22, 14 + h + 46,
           {{"track", Stroke{ink::kCycle, 1.0, 0.7}},
            LegendEntry::with_marker("birth", Marker::kCircle, ink::kMean),
            LegendEntry::with_marker("last seen", Marker::kSquare, ink::kMean)},
           8.0, 340);
    canvas.finish();
  }
  std::string stats;
  if (!speeds.empty()) {
    double m = 0;
    for (double v : speeds) m += v;
    m /= static_cast<double>(speeds.size());
    stats = fmt::format(" Mean convection speed over {} cycle{}: <span data-key=\"vortex/per_track/convection_speed/mean\">"
                        "{}</span> U<sub>\u221e</sub>.", speeds.size(), speeds.size() == 1 ? "" : "s",
                        format_number(m, 3));
  }
  s.html = fmt::format("<p>{} leading-edge vortex track{}.{}</p>\n", le.size(), le.size() == 1 ? "" : "s", stats);
  s.html += "<div class=\"pair\">\n";
  s.html += figure_html("vortex_convection.svg", "Vortex chordwise position against convective time",
                        "Chordwise position of the leading-edge vortex centre against convective time, one line per "
                        "cycle; dashed: the straight-line fit whose slope is the convection speed (over the fit "
                        "window stored with the tracks).", "half");
  s.html += figure_html("vortex_trajectory.svg", "Vortex trajectory in the airfoil frame",
                        fmt::format("Trajectory of the vortex centre in the airfoil frame (equal scales){}.",
                                    section ? ", with the section outline" : ", chord line for reference"),
                        "half");
  s.html += "</div>\n";
  s.html += swirl_figure(a, plots, section);
  return s;
}

}  // namespace stallscope::report
