#include "stages/events/event_summary.hpp"

#include <algorithm>
#include <cmath>
#include <numbers>
#include <set>

namespace stallscope::events {

namespace {
constexpr const char* kPerRow = "per row: see the units column";
}

CircularSummary circular_summary(const std::vector<double>& degrees) {
  CircularSummary out;
  if (degrees.empty()) return out;
  constexpr double kRad = std::numbers::pi / 180.0;
  double c = 0, s = 0;
  for (double d : degrees) c += std::cos(d * kRad), s += std::sin(d * kRad);
  c /= static_cast<double>(degrees.size());
  s /= static_cast<double>(degrees.size());
  out.resultant_length = std::min(1.0, std::hypot(c, s));
  out.std_deg = std::sqrt(-2 * std::log(out.resultant_length)) / kRad;
  if (out.resultant_length > 1e-12) {
    out.mean_deg = std::atan2(s, c) / kRad;
    if (out.mean_deg < 0) out.mean_deg += 360;
  }
  return out;
}

Table per_cycle_table(const std::vector<EventRecord>& records) {
  std::vector<std::int64_t> cycle;
  std::vector<std::string> event, status, reason;
  std::vector<double> t, tconv, tu, phase, alpha, value;
  for (const EventRecord& r : records) {
    cycle.push_back(r.cycle);
    event.push_back(r.event);
    status.push_back(r.status);
    reason.push_back(r.reason);
    t.push_back(r.t_s);
    tconv.push_back(r.t_conv);
    tu.push_back(r.t_uncertainty_s);
    phase.push_back(r.phase_deg);
    alpha.push_back(r.alpha_deg);
    value.push_back(r.value);
  }
  Table table;
  table.add({"cycle", "1", cycle})
      .add({"event", "", event})
      .add({"status", "", status})
      .add({"reason", "", reason})
      .add({"t_s", "s", t})
      .add({"t_conv", "1", tconv})
      .add({"t_uncertainty_s", "s", tu})
      .add({"phase_deg", "deg", phase})
      .add({"alpha_deg", "deg", alpha})
      .add({"value", "1", value});
  return table;
}

EventStatistics event_statistics(const std::vector<EventRecord>& records,
                                 const std::map<std::string, std::string>& value_units,
                                 const numerics::SummaryOptions& options) {
  // Per event, the first ok row of each cycle (in cycle order) and the row counts.
  std::vector<std::string> order;
  std::map<std::string, std::vector<const EventRecord*>> first;
  std::map<std::string, std::map<std::int64_t, std::int64_t>> count;
  std::map<std::string, std::set<std::int64_t>> seen_cycles;
  std::map<std::string, std::int64_t> missing;
  for (const EventRecord& r : records) {
    if (!first.count(r.event)) {
      order.push_back(r.event);
      first[r.event];
    }
    auto& cycles = count[r.event];
    cycles.try_emplace(r.cycle, 0);
    if (r.status != "ok") {
      if (seen_cycles[r.event].insert(r.cycle).second) ++missing[r.event];
      continue;
    }
    ++cycles[r.cycle];
    if (seen_cycles[r.event].insert(r.cycle).second) first[r.event].push_back(&r);
  }

  std::vector<std::string> s_event, s_quantity, s_units;
  std::vector<std::int64_t> s_n, s_missing, s_autocorr, s_bimodal, s_converged;
  std::vector<double> s_mean, s_std, s_median, s_min, s_max, s_p05, s_p95, s_lo, s_hi, s_blo, s_bhi, s_lag1, s_bc,
      s_d, s_cmean, s_cstd, s_rlength;
  std::vector<std::string> r_event, r_quantity, r_units;
  std::vector<std::int64_t> r_n;
  std::vector<double> r_mean, r_half;

  auto summarise = [&](const std::string& event, const std::string& quantity, const std::string& units,
                       const std::vector<double>& x) {
    const numerics::SampleSummary s = numerics::summarise(x, options);
    s_event.push_back(event);
    s_quantity.push_back(quantity);
    s_units.push_back(units);
    s_n.push_back(static_cast<std::int64_t>(s.n));
    s_missing.push_back(missing.count(event) ? missing.at(event) : 0);
    s_mean.push_back(s.mean);
    s_std.push_back(s.std);
    s_median.push_back(s.median);
    s_min.push_back(s.min);
    s_max.push_back(s.max);
    s_p05.push_back(s.p05);
    s_p95.push_back(s.p95);
    s_lo.push_back(s.ci95_lo);
    s_hi.push_back(s.ci95_hi);
    s_blo.push_back(s.boot95_lo);
    s_bhi.push_back(s.boot95_hi);
    s_lag1.push_back(s.lag1);
    s_autocorr.push_back(s.autocorrelated);
    s_bc.push_back(s.bimodality);
    s_d.push_back(s.ashman);
    s_bimodal.push_back(s.bimodal);
    s_converged.push_back(s.converged);
    const CircularSummary circular = units == "deg" && quantity == "phase_deg" ? circular_summary(x) : CircularSummary{};
    s_cmean.push_back(circular.mean_deg);
    s_cstd.push_back(circular.std_deg);
    s_rlength.push_back(circular.resultant_length);
    const numerics::RunningMean run = numerics::running_mean(x);
    for (std::size_t i = 0; i < x.size(); ++i) {
      r_event.push_back(event);
      r_quantity.push_back(quantity);
      r_units.push_back(units);
      r_n.push_back(static_cast<std::int64_t>(i + 1));
      r_mean.push_back(run.mean[i]);
      r_half.push_back(run.half_width95[i]);
    }
  };

  for (const std::string& event : order) {
    const auto& rows = first.at(event);
    struct Quantity {
      const char* name;
      std::string units;
      double EventRecord::*member;
    };
    const auto units = value_units.find(event);
    const Quantity quantities[] = {{"t_conv", "1", &EventRecord::t_conv},
                                   {"phase_deg", "deg", &EventRecord::phase_from_start_deg},
                                   {"alpha_deg", "deg", &EventRecord::alpha_deg},
                                   {"value", units == value_units.end() ? "1" : units->second, &EventRecord::value}};
    for (const Quantity& q : quantities) {
      std::vector<double> x;
      for (const EventRecord* r : rows)
        if (std::isfinite(r->*q.member)) x.push_back(r->*q.member);
      summarise(event, q.name, q.units, x);
    }
    bool repeats = false;
    for (const auto& [c, k] : count.at(event)) repeats = repeats || k > 1;
    if (repeats) {
      std::vector<double> x;
      for (const auto& [c, k] : count.at(event)) x.push_back(static_cast<double>(k));
      summarise(event, "count", "1", x);
    }
  }

  EventStatistics out;
  out.summary.add({"event", "", s_event})
      .add({"quantity", "", s_quantity})
      .add({"units", "", s_units})
      .add({"n", "1", s_n})
      .add({"n_missing", "1", s_missing})
      .add({"mean", kPerRow, s_mean})
      .add({"std", kPerRow, s_std})
      .add({"median", kPerRow, s_median})
      .add({"min", kPerRow, s_min})
      .add({"max", kPerRow, s_max})
      .add({"p05", kPerRow, s_p05})
      .add({"p95", kPerRow, s_p95})
      .add({"ci95_lo", kPerRow, s_lo})
      .add({"ci95_hi", kPerRow, s_hi})
      .add({"bootstrap95_lo", kPerRow, s_blo})
      .add({"bootstrap95_hi", kPerRow, s_bhi})
      .add({"lag1_autocorrelation", "1", s_lag1})
      .add({"autocorrelated", "1", s_autocorr})
      .add({"bimodality_coefficient", "1", s_bc})
      .add({"ashman_d", "1", s_d})
      .add({"bimodal", "1", s_bimodal})
      .add({"converged", "1", s_converged})
      .add({"circular_mean", kPerRow, s_cmean})
      .add({"circular_std", kPerRow, s_cstd})
      .add({"resultant_length", "1", s_rlength});
  out.running_mean.add({"event", "", r_event})
      .add({"quantity", "", r_quantity})
      .add({"units", "", r_units})
      .add({"n", "1", r_n})
      .add({"mean", kPerRow, r_mean})
      .add({"ci95_half_width", kPerRow, r_half});
  return out;
}

}  // namespace stallscope::events
