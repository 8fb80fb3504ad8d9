#include "stages/cp.hpp"

#include <algorithm>
#include <cmath>
#include <fmt/format.h>
#include <numeric>
#include <stdexcept>
#include <tuple>

#include "calib/lines/tap_table.hpp"
#include "pipeline/errors.hpp"

namespace stallscope {

std::vector<std::size_t> contour_order(const std::vector<ContourPoint>& taps) {
  std::vector<std::size_t> upper, lower;
  for (std::size_t i = 0; i < taps.size(); ++i) (taps[i].upper ? upper : lower).push_back(i);
  std::stable_sort(upper.begin(), upper.end(), [&](auto a, auto b) { return taps[a].x > taps[b].x; });
  std::stable_sort(lower.begin(), lower.end(), [&](auto a, auto b) { return taps[a].x < taps[b].x; });
  upper.insert(upper.end(), lower.begin(), lower.end());
  return upper;
}

void interpolate_masked_taps(Eigen::MatrixXd& cp, const std::vector<ContourPoint>& taps,
                             const std::vector<bool>& masked) {
  const std::vector<std::size_t> order = contour_order(taps);
  const std::size_t n = order.size();
  // Arc length round the contour; the last segment closes across the trailing edge.
  std::vector<double> s(n + 1, 0.0);
  for (std::size_t k = 1; k <= n; ++k) {
    const ContourPoint& a = taps[order[k - 1]];
    const ContourPoint& b = taps[order[k % n]];
    s[k] = s[k - 1] + std::hypot(b.x - a.x, b.y - a.y);
  }
  const double perimeter = s[n];
  std::vector<std::size_t> valid;
  for (std::size_t k = 0; k < n; ++k)
    if (!masked[order[k]]) valid.push_back(k);
  if (valid.size() < 2) throw std::invalid_argument("fewer than two usable taps");
  for (std::size_t k = 0; k < n; ++k) {
    if (!masked[order[k]]) continue;
    // Nearest unmasked neighbours before and after, wrapping round the trailing edge.
    auto next = std::upper_bound(valid.begin(), valid.end(), k);
    const std::size_t after = next == valid.end() ? valid.front() : *next;
    const std::size_t before = next == valid.begin() ? valid.back() : *(next - 1);
    double d_before = s[k] - s[before], d_after = s[after] - s[k];
    if (d_before < 0) d_before += perimeter;
    if (d_after < 0) d_after += perimeter;
    const double w = d_before + d_after > 0 ? d_before / (d_before + d_after) : 0.5;
    cp.col(static_cast<Eigen::Index>(order[k])) = (1 - w) * cp.col(static_cast<Eigen::Index>(order[before])) +
                                                  w * cp.col(static_cast<Eigen::Index>(order[after]));
  }
}

std::optional<std::pair<Eigen::Index, Eigen::Index>> wind_on_span(const Eigen::VectorXd& q, double fraction) {
  const Eigen::Index n = q.size();
  const double q_max = n ? q.maxCoeff() : 0.0;
  if (!(q_max > 0)) return std::nullopt;
  std::vector<double> high;
  for (Eigen::Index i = 0; i < n; ++i)
    if (q[i] >= 0.5 * q_max) high.push_back(q[i]);
  std::nth_element(high.begin(), high.begin() + static_cast<std::ptrdiff_t>(high.size() / 2), high.end());
  const double q_run = high[high.size() / 2];
  Eigen::Index first = 0, last = n - 1;
  while (q[first] < fraction * q_run) ++first;
  while (q[last] < fraction * q_run) --last;
  return std::pair{first, last};
}

void CpStage::configure(ConfigSection& s) {
  where_window_ = s.where("window_s");
  options_.window_s = s.numbers("window_s", {});
  s.require(options_.window_s.empty() || (options_.window_s.size() == 2 && options_.window_s[0] < options_.window_s[1]),
            "window_s", "expected a time window [start_s, end_s] with start < end");
  options_.wind_on_fraction = s.number("wind_on_fraction", options_.wind_on_fraction);
  s.require(options_.wind_on_fraction > 0 && options_.wind_on_fraction < 1, "wind_on_fraction",
            "expected a fraction between 0 and 1");
  options_.use_suspect = s.boolean("use_suspect", options_.use_suspect);
  options_.flat_fraction = s.number("flat_fraction", options_.flat_fraction);
  s.require(options_.flat_fraction >= 0 && options_.flat_fraction < 1, "flat_fraction", "expected a fraction in [0, 1)");
  options_.clip_fraction = s.number("clip_fraction", options_.clip_fraction);
  s.require(options_.clip_fraction > 0 && options_.clip_fraction <= 1, "clip_fraction", "expected a fraction in (0, 1]");
  where_le_ = s.where("allow_le_gap");
  options_.le_region_x_over_c = s.number("le_region_x_over_c", options_.le_region_x_over_c);
  s.require(options_.le_region_x_over_c >= 0 && options_.le_region_x_over_c < 1, "le_region_x_over_c",
            "expected a fraction of chord in [0, 1)");
  options_.allow_le_gap = s.boolean("allow_le_gap", options_.allow_le_gap);
}

void CpStage::run(RunContext& context) {
  RunStore& store = context.store();
  const Eigen::VectorXd& t = store.get<Series>("signals/time_s").values;
  const Eigen::VectorXd& q = store.get<Series>("signals/q_pa").values;
  const bool corrected = store.contains("signals/p_taps_pa");
  const Matrix& p = store.get<Matrix>(corrected ? "signals/p_taps_pa" : "signals/p_taps_raw_pa");
  const Matrix& p_raw = store.get<Matrix>("signals/p_taps_raw_pa");
  const Matrix& volts = store.get<Matrix>("daq/volts");
  const Table& tap_store = store.get<Table>("signals/taps");
  const calib::TapTable taps = calib::from_store_table(tap_store, "tap table");
  const Eigen::Index n = t.size();

  // The wind-on window.
  Eigen::Index first = 0, last = n - 1;
  if (!options_.window_s.empty()) {
    while (first < n && t[first] < options_.window_s[0]) ++first;
    while (last >= 0 && t[last] > options_.window_s[1]) --last;
    if (last - first < 1) throw InputError(where_window_, "the window holds fewer than 2 DAQ samples");
  } else {
    const auto span = wind_on_span(q, options_.wind_on_fraction);
    if (!span)
      throw InputError(where_window_, fmt::format("the reference q never rises above 0 Pa (max {:.4g} Pa): no wind-on "
                                                  "data (check the q channel, its calibration and wind-off zero)",
                                                  q.size() ? q.maxCoeff() : 0.0));
    std::tie(first, last) = *span;
    if (last - first < 1) throw InputError(where_window_, "the wind-on span holds fewer than 2 samples");
  }
  // A dip to q <= 0 inside the span (a Pitot drop-out) would divide Cp by zero.
  const std::string span = options_.window_s.empty() ? "the wind-on span found automatically" : "the window";
  for (Eigen::Index i = first; i <= last; ++i)
    if (!(q[i] > 0))
      throw InputError(where_window_, fmt::format("the reference q is {:.4g} Pa at t = {:g} s inside {} "
                                                  "({:g} to {:g} s); Cp needs q > 0 (check the q channel, its "
                                                  "calibration and wind-off zero, or set window_s)",
                                                  q[i], t[i], span, t[first], t[last]));
  const Eigen::Index m = last - first + 1;

  Eigen::MatrixXd cp = p.values.middleRows(first, m);
  const Eigen::VectorXd qw = q.segment(first, m);
  for (Eigen::Index j = 0; j < cp.cols(); ++j) cp.col(j) = cp.col(j).cwiseQuotient(qw);

  // Masking: table status, zero flag, flat and clipped signals.
  const std::size_t nt = taps.taps.size();
  if (nt == 0) throw InputError(taps.source, "the tap table lists no taps; Cp needs at least two");
  std::vector<double> spread(nt);
  for (std::size_t i = 0; i < nt; ++i) {
    const auto col = p_raw.values.col(static_cast<Eigen::Index>(i)).segment(first, m);
    spread[i] = std::sqrt((col.array() - col.mean()).square().mean());
  }
  std::vector<double> sorted = spread;
  std::nth_element(sorted.begin(), sorted.begin() + static_cast<std::ptrdiff_t>(nt / 2), sorted.end());
  const double median_spread = sorted[nt / 2];
  std::vector<bool> masked(nt, false);
  std::vector<std::string> reason(nt);
  std::vector<std::string> status;
  for (std::size_t i = 0; i < nt; ++i) {
    const calib::Tap& tap = taps.taps[i];
    status.emplace_back(calib::status_name(tap.status));
    if (tap.status == calib::TapStatus::kDead) reason[i] = "dead";
    else if (tap.status == calib::TapStatus::kSuspect && !options_.use_suspect) reason[i] = "suspect";
    else if (spread[i] < options_.flat_fraction * median_spread) reason[i] = "flat";
    else {
      Eigen::Index column = -1;
      for (std::size_t c = 0; c < volts.columns.size(); ++c)
        if (volts.columns[c] == tap.channel) column = static_cast<Eigen::Index>(c);
      if (column < 0) throw std::logic_error("cp: tap channel missing from daq/volts");
      const auto v = volts.values.col(column).segment(first, m);
      const double hi = v.maxCoeff(), lo = v.minCoeff();
      const double at_rail = std::max((v.array() == hi).count(), (v.array() == lo).count());
      if (hi > lo && at_rail > options_.clip_fraction * static_cast<double>(m)) reason[i] = "clipped";
    }
    masked[i] = !reason[i].empty();
  }

  std::vector<ContourPoint> points;
  for (const auto& tap : taps.taps) points.push_back({tap.x_over_c, tap.y_over_c, tap.surface == theory::Surface::kUpper});
  try {
    interpolate_masked_taps(cp, points, masked);
  } catch (const std::invalid_argument&) {
    throw InputError(taps.source, "fewer than two usable taps after masking dead, suspect, flat and clipped ones");
  }

  // A gap in the leading-edge suction region makes Cc and Cm unreliable.
  std::string le_gap;
  for (std::size_t i = 0; i < nt; ++i)
    if (masked[i] && taps.taps[i].x_over_c <= options_.le_region_x_over_c)
      le_gap += fmt::format("{}{} (x/c {:.3f}, {})", le_gap.empty() ? "" : ", ", taps.taps[i].name,
                            taps.taps[i].x_over_c, reason[i]);
  const bool cc_cm_valid = le_gap.empty() || options_.allow_le_gap;
  if (!le_gap.empty())
    context.progress().note("cp: masked tap(s) in the leading-edge suction region: " + le_gap +
                            (cc_cm_valid ? "; Cc and Cm kept (allow_le_gap = true)"
                                         : "; Cc and Cm are invalid for this run (" + where_le_ + " = true keeps them)"));

  // Arc length along the contour, for the record.
  const auto order = contour_order(points);
  std::vector<double> arc(nt, 0.0);
  double s_acc = 0.0;
  for (std::size_t k = 0; k < order.size(); ++k) {
    if (k > 0) s_acc += std::hypot(points[order[k]].x - points[order[k - 1]].x, points[order[k]].y - points[order[k - 1]].y);
    arc[order[k]] = s_acc;
  }
  std::vector<std::int64_t> interpolated_col;
  for (std::size_t i = 0; i < nt; ++i) interpolated_col.push_back(masked[i] ? 1 : 0);
  std::vector<std::string> names, channels, surfaces;
  std::vector<double> xs, ys;
  for (const auto& tap : taps.taps) {
    names.push_back(tap.name);
    channels.push_back(tap.channel);
    surfaces.emplace_back(calib::surface_name(tap.surface));
    xs.push_back(tap.x_over_c);
    ys.push_back(tap.y_over_c);
  }
  Table out;
  out.add({"tap", "", names})
      .add({"channel", "", channels})
      .add({"x_over_c", "1", xs})
      .add({"y_over_c", "1", ys})
      .add({"surface", "", surfaces})
      .add({"status", "", status})
      .add({"mask_reason", "", reason})
      .add({"interpolated", "", interpolated_col})
      .add({"arc_length_over_c", "1", arc});
  if (const Column* z = tap_store.find("zero_pa")) out.add(*z);
  if (const Column* z = tap_store.find("zero_drift_pa")) out.add(*z);
  if (const Column* z = tap_store.find("zero_flagged")) out.add(*z);

  store.put("pressure/time_s", Series{t.segment(first, m), "s"}, {{"first_sample", std::int64_t{first}}});
  Attributes cp_attributes{{"definition", std::string("(p - p_inf) / q_inf")},
                           {"tubing_corrected", std::int64_t{corrected ? 1 : 0}},
                           {"cc_cm_valid", std::int64_t{cc_cm_valid ? 1 : 0}}};
  if (!le_gap.empty()) cp_attributes["le_gap"] = le_gap;
  store.put("pressure/cp", Matrix{std::move(cp), "1", p.columns}, cp_attributes);
  store.put("pressure/taps", std::move(out));
  store.put("pressure/q_pa", Series{qw, "Pa"});
}

}  // namespace stallscope
