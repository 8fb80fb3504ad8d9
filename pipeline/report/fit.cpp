// The Goman-Khrabrov fit: the measured phase-averaged Cn loop (the stretch the
// fit left out drawn faint), the static curve through the Kirchhoff relation,
// and the fitted loop; the constants with their intervals, per-cycle spread and
// sensitivity to x0 and to the attached lag. With the vortex-lift term, its
// fitted share of Cn is drawn too and T_v, T_vl stand beside tau1, tau2.
#include <fmt/format.h>

#include <cmath>

#include "pipeline/report/plot.hpp"
#include "pipeline/report/section.hpp"

namespace stallscope::report {

std::optional<Section> fit_section(const ArchiveView& a, PlotFolder& plots) {
  const Table* loop = a.table("fit/loop");
  const Table* summary = a.table("fit/summary");
  if (!loop || !summary || !has_column(*loop, "cn_measured")) return std::nullopt;
  const auto alpha = numbers_of(*loop, "alpha_deg"), measured = numbers_of(*loop, "cn_measured"),
             fitted = numbers_of(*loop, "cn_fitted"), stat = numbers_of(*loop, "cn_static"),
             in = numbers_of(*loop, "in_window");
  const std::size_t n = alpha.size();
  if (n == 0) return std::nullopt;
  auto closed = [](std::vector<double> v) {
    v.push_back(v.front());
    return v;
  };
  std::vector<double> inside(n, NAN), outside(n, NAN), static_sorted_a, static_sorted_cn;
  for (std::size_t i = 0; i < n; ++i) (in[i] != 0 ? inside : outside)[i] = measured[i];
  // Static curve on the upstroke angles (alpha rising), as one line.
  for (std::size_t i = 0; i < n; ++i)
    if (static_sorted_a.empty() || alpha[i] > static_sorted_a.back()) {
      static_sorted_a.push_back(alpha[i]);
      static_sorted_cn.push_back(stat[i]);
    }
  const bool with_vortex = has_column(*loop, "cn_vortex");
  const auto vortex = with_vortex ? numbers_of(*loop, "cn_vortex") : std::vector<double>{};
  std::vector<double> ys = measured;
  ys.insert(ys.end(), fitted.begin(), fitted.end());
  ys.insert(ys.end(), stat.begin(), stat.end());
  ys.insert(ys.end(), vortex.begin(), vortex.end());
  const Rgb static_colour = category_colour(1), fit_colour = category_colour(2), vortex_colour = category_colour(3);
  Canvas canvas(plots.draft("fit_loop.svg"), 720, 380);
  Axes axes(canvas, 70, 14, 620, 310, nice_range(alpha), nice_range(ys));
  axes.frame("\u03b1 (deg)", "C_n");
  axes.clip();
  axes.line(static_sorted_a, static_sorted_cn, Stroke{static_colour, 1.4, 1.0, {6, 3}});
  axes.line(closed(alpha), closed(inside), Stroke{ink::kMean, 2.0});
  axes.markers(alpha, outside, Marker::kCircle, ink::kCycle, 2.6, true);
  axes.line(closed(alpha), closed(fitted), Stroke{fit_colour, 1.6});
  if (with_vortex) axes.line(closed(alpha), closed(vortex), Stroke{vortex_colour, 1.3, 1.0, {3, 2}});
  axes.unclip();
  std::vector<LegendEntry> entries{
      LegendEntry("measured (phase average, fitted part)", Stroke{ink::kMean, 2.0}),
      LegendEntry::with_marker("left out of the fit", Marker::kCircle, ink::kCycle),
      LegendEntry("static (Kirchhoff, x\u2080)", Stroke{static_colour, 1.4, 1.0, {6, 3}}),
      LegendEntry(with_vortex ? "Goman\u2013Khrabrov fit with vortex lift" : "Goman\u2013Khrabrov fit",
                  Stroke{fit_colour, 1.6})};
  if (with_vortex)
    entries.push_back(LegendEntry("its vortex lift C_n,v (Leishman\u2013Beddoes)", Stroke{vortex_colour, 1.3, 1.0, {3, 2}}));
  legend(canvas, 70, 366, entries, 8.0, 640);
  canvas.finish();

  const auto attr_text = [&](const std::string& k) { return a.table_text("fit/summary", k).value_or(""); };
  const auto attr_num = [&](const std::string& k) { return a.table_number("fit/summary", k).value_or(NAN); };
  Section s{"fit", "Goman\u2013Khrabrov fit", "", {}};
  if (attr_text("status") != "fitted") {
    s.html = "<p>Not fitted: " + escape_html(attr_text("reason")) + "</p>\n";
  } else {
    const double conv = attr_num("convective_time_s");
    s.html = fmt::format(
        "<p>\u03c4\u2081 = <span data-key=\"fit/summary/tau1_conv\">{}</span> c/U ({} ms), 95 % interval {}; "
        "\u03c4\u2082 = <span data-key=\"fit/summary/tau2_conv\">{}</span> c/U ({} ms), 95 % interval {}; "
        "correlation of the two over the bootstrap {}; rms residual {} in C<sub>n</sub>.{}</p>\n",
        format_number(attr_num("tau1_conv"), 4), format_number(attr_num("tau1_conv") * conv * 1e3, 3),
        escape_html(attr_text("tau1_ci95_conv")), format_number(attr_num("tau2_conv"), 4),
        format_number(attr_num("tau2_conv") * conv * 1e3, 3), escape_html(attr_text("tau2_ci95_conv")),
        format_number(attr_num("tau_correlation"), 3), format_number(attr_num("rms_residual"), 3),
        attr_text("reason").empty() ? "" : " Flag: " + escape_html(attr_text("reason")) + ".");
    if (std::isfinite(attr_num("t_v_conv")))
      s.html += fmt::format(
          "<p>Vortex lift (Leishman\u2013Beddoes): T<sub>v</sub> = <span data-key=\"fit/summary/t_v_conv\">{}</span> "
          "c/U ({} ms), 95 % interval {}; T<sub>vl</sub> = <span data-key=\"fit/summary/t_vl_conv\">{}</span> c/U "
          "({} ms), 95 % interval {}; from the stall onset at {}\u00b0 of phase.</p>\n",
          format_number(attr_num("t_v_conv"), 4), format_number(attr_num("t_v_conv") * conv * 1e3, 3),
          escape_html(attr_text("t_v_ci95_conv")), format_number(attr_num("t_vl_conv"), 4),
          format_number(attr_num("t_vl_conv") * conv * 1e3, 3), escape_html(attr_text("t_vl_ci95_conv")),
          format_number(attr_num("vortex_onset_phase_deg"), 4));
    else if (!attr_text("vortex_lift").empty())
      s.html += "<p>Vortex lift: " + escape_html(attr_text("vortex_lift")) + ".</p>\n";
  }
  s.html += "<p>Fit window: " + escape_html(attr_text("fit_window")) + ". Static curve: " +
            escape_html(attr_text("static_curve")) + " (" + escape_html(attr_text("static_polar")) + ").</p>\n";
  // Per-cycle and sensitivity rows.
  const auto estimate = texts_of(*summary, "estimate"), kind = texts_of(*summary, "kind"),
             status = texts_of(*summary, "status");
  const auto t1 = numbers_of(*summary, "tau1_conv"), t2 = numbers_of(*summary, "tau2_conv"),
             rms = numbers_of(*summary, "rms_residual");
  // With [uncertainty]: the instruments' share beside the cycles' spread (the
  // per-cycle rows) and the interval of the mean (above).
  const auto u1 = numbers_of(*summary, "tau1_conv_uncertainty"), u2 = numbers_of(*summary, "tau2_conv_uncertainty");
  const bool with_uncertainty = !u1.empty() && !u2.empty();
  const auto tv = numbers_of(*summary, "t_v_conv"), tvl = numbers_of(*summary, "t_vl_conv");
  const bool vortex_columns = !tv.empty() && !tvl.empty();
  std::string rows;
  for (std::size_t i = 0; i < estimate.size(); ++i) {
    const bool fitted = status[i] == "fitted";
    rows += fmt::format("<tr><td>{}</td><td>{}</td><td>{}</td><td>{}</td><td>{}</td>", escape_html(estimate[i]),
                        escape_html(kind[i]), fitted ? format_number(t1[i], 4) : "\u2013",
                        fitted ? format_number(t2[i], 4) : "\u2013", format_number(rms[i], 3));
    if (vortex_columns)
      rows += fmt::format("<td>{}</td><td>{}</td>", fitted && std::isfinite(tv[i]) ? format_number(tv[i], 4) : "\u2013",
                          fitted && std::isfinite(tvl[i]) ? format_number(tvl[i], 4) : "\u2013");
    if (with_uncertainty)
      rows += fmt::format("<td>{}</td><td>{}</td>", fitted ? format_number(u1[i], 3) : "\u2013",
                          fitted ? format_number(u2[i], 3) : "\u2013");
    rows += "</tr>\n";
  }
  s.html += figure_html("fit_loop.svg", "Measured, static and fitted Cn loops",
                        std::string("Phase-averaged C<sub>n</sub> loop against \u03b1 with the static curve and the fitted ") +
                            std::string("Goman\u2013Khrabrov loop (attached part with Theodorsen's lag)") +
                            (with_vortex ? "; dotted: the fitted vortex lift C<sub>n,v</sub> alone." : "."));
  s.html += "<table>\n<tr><th>estimate</th><th>kind</th><th>\u03c4\u2081 (c/U)</th><th>\u03c4\u2082 (c/U)</th>"
            "<th>rms residual</th>" +
            std::string(vortex_columns ? "<th>T<sub>v</sub> (c/U)</th><th>T<sub>vl</sub> (c/U)</th>" : "") +
            std::string(with_uncertainty ? "<th>\u03c4\u2081 measurement std</th><th>\u03c4\u2082 measurement std</th>" : "") +
            "</tr>\n" + rows + "</table>\n";
  return s;
}

}  // namespace stallscope::report
