#include "stages/phase.hpp"

#include <algorithm>
#include <cmath>
#include <cstdio>

#include "pipeline/errors.hpp"
#include "stages/motion.hpp"
#include "stages/numerics/binned_statistics.hpp"

namespace stallscope {

namespace {

const std::vector<std::string> kKnownLoads = {"cn", "cc", "cl", "cd_p", "cm", "cm_pivot"};
constexpr const char* kPhaseOrigin = "bin 0 starts at the minimum angle of the fitted fundamental (cycle start)";
constexpr const char* kStatistics[] = {"mean", "std", "p05", "p95"};

std::string num(double v, int digits = 4) {
  char buf[64];
  std::snprintf(buf, sizeof buf, "%.*g", digits, v);
  return buf;
}

// Which bin each sample of a time base falls in (and of which cycle).
struct Members {
  std::vector<Eigen::Index> sample;
  std::vector<int> bin;
  std::vector<std::int64_t> cycle;
};

// Cycle and phase bin of every sample of one time base.
struct Placement {
  std::vector<std::int64_t> cycle;  // -1 outside the complete cycles
  std::vector<int> bin;
};

Placement place(const Eigen::VectorXd& t, const MotionFit& motion, int bins) {
  const std::vector<MotionFit::CyclePhase> at = motion.at(std::span<const double>(t.data(), t.size()));
  Placement p;
  p.cycle.resize(at.size());
  p.bin.resize(at.size());
  for (std::size_t i = 0; i < at.size(); ++i) {
    p.cycle[i] = at[i].cycle;
    p.bin[i] = std::min(bins - 1, static_cast<int>(at[i].phase_deg * bins / 360.0));
  }
  return p;
}

Members phase_members(const Placement& p, const std::vector<bool>& use) {
  Members m;
  for (std::size_t i = 0; i < p.cycle.size(); ++i) {
    const std::int64_t c = p.cycle[i];
    if (c < 0 || !use[static_cast<std::size_t>(c)]) continue;
    m.sample.push_back(static_cast<Eigen::Index>(i));
    m.bin.push_back(p.bin[i]);
    m.cycle.push_back(c);
  }
  return m;
}

// Samples in [t_align + lo, t_align + hi) of each aligned cycle, binned by time from t_align.
Members aligned_members(const Eigen::VectorXd& t, const std::vector<std::pair<std::int64_t, double>>& align,
                        double lo, double hi, int bins) {
  Members m;
  const double* begin = t.data();
  const double* end = begin + t.size();
  const double width = (hi - lo) / bins;
  for (const auto& [cycle, ta] : align) {
    for (const double* p = std::lower_bound(begin, end, ta + lo); p != end && *p < ta + hi; ++p) {
      m.sample.push_back(p - begin);
      m.bin.push_back(std::clamp(static_cast<int>((*p - ta - lo) / width), 0, bins - 1));
      m.cycle.push_back(cycle);
    }
  }
  return m;
}

// One quantity group on one time base: the angle, the loads, or Cp.
struct Group {
  std::string name;    // store key below phase/ ("alpha_deg", "cn", "cp")
  std::string source;  // for messages
  Eigen::Map<const Eigen::MatrixXd> values;  // the store's data, not a copy
  std::string units;
  std::vector<std::string> columns;  // for Cp: tap names
  const Eigen::VectorXd* time = nullptr;
  bool matrix = false;  // written as one Matrix (Cp) rather than one Series per column
};

void check_filled(const numerics::BinnedStatistics& st, const Group& g, const std::string& where, int bins,
                  const std::string& what, std::size_t cycles_used) {
  for (Eigen::Index j = 0; j < st.n.cols(); ++j) {
    // A tap with no finite value at all is dead, not a binning problem.
    if (g.matrix && st.n.col(j).sum() == 0) continue;
    for (int b = 0; b < bins; ++b)
      if (st.n(b, j) == 0) {
        const std::string column = g.matrix ? " (tap " + g.columns[static_cast<std::size_t>(j)] + ")" : "";
        throw InputError(where, what + " bin " + std::to_string(b) + " holds no sample of " + g.source + column +
                                    " from the " + std::to_string(cycles_used) + " cycles averaged; use fewer bins");
      }
  }
}

void write_stats(RunStore& s, const std::string& prefix, const Group& g, const numerics::BinnedStatistics& st,
                 const Attributes& attrs) {
  const Eigen::MatrixXd* parts[] = {&st.mean, &st.std, &st.p05, &st.p95};
  for (int k = 0; k < 4; ++k) {
    const std::string key = prefix + g.name + "/" + kStatistics[k];
    if (g.matrix) s.put(key, Matrix{*parts[k], g.units, g.columns}, attrs);
    else s.put(key, Series{parts[k]->col(0), g.units}, attrs);
  }
  const Eigen::MatrixXd n = st.n.cast<double>();
  if (g.matrix) s.put(prefix + g.name + "/n", Matrix{n, "1", g.columns}, attrs);
  else s.put(prefix + g.name + "/n", Series{n.col(0), "1"}, attrs);
}

}  // namespace

void PhaseStage::configure(ConfigSection& s) {
  bins_where_ = s.where("bins");
  aligned_bins_where_ = s.where("aligned_bins");
  options_.bins = s.integer("bins", options_.bins);
  s.require(options_.bins >= 4 && options_.bins <= 3600, "bins", "expected a number of phase bins from 4 to 3600");
  options_.loads = s.texts("loads", options_.loads);
  s.require(!options_.loads.empty(), "loads", "expected at least one load");
  for (const auto& l : options_.loads)
    s.require(std::find(kKnownLoads.begin(), kKnownLoads.end(), l) != kKnownLoads.end(), "loads",
              "'" + l + "' is not a load; expected names from cn, cc, cl, cd_p, cm, cm_pivot");
  options_.cp = s.boolean("cp", options_.cp);
  options_.per_cycle = s.boolean("per_cycle", options_.per_cycle);
  options_.aligned_bins = s.integer("aligned_bins", options_.aligned_bins);
  s.require(options_.aligned_bins >= 4 && options_.aligned_bins <= 3600, "aligned_bins",
            "expected a number of bins from 4 to 3600");
  options_.aligned_window_periods = s.numbers("aligned_window_periods", options_.aligned_window_periods);
  const auto& w = options_.aligned_window_periods;
  s.require(w.size() == 2 && w[0] < w[1] && w[1] - w[0] <= 1.0, "aligned_window_periods",
            "expected [start, end] in pitch periods about the alignment time, start < end, at most one period wide");
}

std::vector<std::string> PhaseStage::inputs() const {
  std::vector<std::string> in = {"motion/fit", "cycles", "signals/time_s", "signals/alpha_deg", "loads/time_s"};
  for (const auto& l : options_.loads) in.push_back("loads/" + l);
  return in;
}

std::vector<std::string> PhaseStage::optional_inputs() const {
  std::vector<std::string> in = {"events/alignment"};
  if (options_.cp) in.insert(in.end(), {"pressure/cp", "pressure/time_s"});
  return in;
}

std::vector<std::string> PhaseStage::outputs() const {
  std::vector<std::string> out = {"phase/bin_deg", "phase/loads", "phase/aligned/tau_s"};
  std::vector<std::string> names = {"alpha_deg"};
  names.insert(names.end(), options_.loads.begin(), options_.loads.end());
  if (options_.cp) names.push_back("cp");
  for (const auto& prefix : {"phase/", "phase/aligned/"})
    for (const auto& q : names)
      for (const char* st : {"mean", "std", "p05", "p95", "n"}) out.push_back(prefix + q + "/" + st);
  if (options_.per_cycle)
    for (const auto& q : names)
      if (q != "cp") out.push_back("phase/per_cycle/" + q);
  return out;
}

void PhaseStage::run(RunContext& context) {
  RunStore& s = context.store();
  const MotionFit motion = MotionFit::from_store(s, std::string(kName));
  const Table& cycles = s.get<Table>("cycles");
  const auto& cycle_index = cycles.integers("cycle");
  const auto& valid = cycles.integers("valid");
  std::vector<bool> use(static_cast<std::size_t>(std::max<std::int64_t>(motion.cycles, 0)), false);
  std::vector<bool> all(use.size(), true);
  std::size_t used = 0;
  for (std::size_t r = 0; r < cycle_index.size(); ++r)
    if (valid[r] && cycle_index[r] >= 0 && static_cast<std::size_t>(cycle_index[r]) < use.size()) {
      use[static_cast<std::size_t>(cycle_index[r])] = true;
      ++used;
    }
  if (used == 0) {
    std::string why = cycles.rows() ? cycles.texts("reason").front() : "the record holds no complete cycle";
    throw InputError("cycles", "no valid cycle to phase-average (the first cycle's reason: " + why + ")");
  }
  const int bins = static_cast<int>(options_.bins);

  // The quantities, each on its own time base.
  std::vector<Group> groups;
  {
    auto column = [](const Eigen::VectorXd& v) { return Eigen::Map<const Eigen::MatrixXd>(v.data(), v.size(), 1); };
    Group a{"alpha_deg", "signals/alpha_deg", column(s.get<Series>("signals/alpha_deg").values), "deg", {},
            &s.get<Series>("signals/time_s").values, false};
    groups.push_back(std::move(a));
    const Eigen::VectorXd& lt = s.get<Series>("loads/time_s").values;
    for (const auto& l : options_.loads) {
      const Series& v = s.get<Series>("loads/" + l);
      if (v.values.size() != lt.size())
        throw std::logic_error("loads/" + l + " and loads/time_s differ in length");
      groups.push_back(Group{l, "loads/" + l, column(v.values), "1", {}, &lt, false});
    }
    if (options_.cp && s.contains("pressure/cp") && s.contains("pressure/time_s")) {
      const Matrix& cp = s.get<Matrix>("pressure/cp");
      groups.push_back(Group{"cp", "pressure/cp",
                             Eigen::Map<const Eigen::MatrixXd>(cp.values.data(), cp.values.rows(), cp.values.cols()),
                             "1", cp.columns, &s.get<Series>("pressure/time_s").values, true});
    }
  }

  Eigen::VectorXd centres(bins);
  for (int b = 0; b < bins; ++b) centres[b] = (b + 0.5) * 360.0 / bins;
  const Attributes attrs{{"phase_origin", std::string(kPhaseOrigin)},
                         {"cycles_averaged", static_cast<std::int64_t>(used)},
                         {"bin_width_deg", 360.0 / bins}};
  std::vector<numerics::BinnedStatistics> stats;
  // Placed once per time base (the angle, loads and Cp usually share one time
  // base; equal time vectors count as one): the valid cycles' members, and every complete cycle's.
  struct Base {
    const Eigen::VectorXd* time;
    Members valid, every;
  };
  std::vector<Base> bases;
  bases.reserve(groups.size());  // references into it stay valid
  auto base_of = [&](const Eigen::VectorXd* t) -> const Base& {
    for (const Base& b : bases)
      if (b.time == t || (b.time->size() == t->size() && *b.time == *t)) return b;
    const Placement p = place(*t, motion, bins);
    bases.push_back(Base{t, phase_members(p, use), options_.per_cycle ? phase_members(p, all) : Members{}});
    return bases.back();
  };
  for (const Group& g : groups) {
    const Base& base = base_of(g.time);
    const Members& m = base.valid;
    stats.push_back(numerics::bin_statistics(g.values, m.sample, m.bin, bins, context.threads()));
    check_filled(stats.back(), g, bins_where_, bins, "phase", used);
    write_stats(s, "phase/", g, stats.back(), attrs);
    if (options_.per_cycle && !g.matrix) {
      // Every complete cycle's loop, valid or not (the archive keeps invalid cycles, marked).
      const Members& every = base.every;
      Eigen::MatrixXd loops = Eigen::MatrixXd::Constant(bins, static_cast<Eigen::Index>(all.size()), NAN);
      std::vector<std::string> names;
      std::size_t start = 0;
      for (std::size_t c = 0; c < all.size(); ++c) {
        std::size_t stop = start;
        while (stop < every.cycle.size() && every.cycle[stop] == static_cast<std::int64_t>(c)) ++stop;
        const Eigen::MatrixXd one = numerics::bin_means(
            g.values, std::span(every.sample).subspan(start, stop - start),
            std::span(every.bin).subspan(start, stop - start), bins);
        loops.col(static_cast<Eigen::Index>(c)) = one.col(0);
        names.push_back("cycle " + std::to_string(c));
        start = stop;
      }
      std::string invalid;
      for (std::size_t c = 0; c < use.size(); ++c)
        if (!use[c]) invalid += (invalid.empty() ? "" : ", ") + std::to_string(c);
      Attributes loop_attrs = attrs;
      loop_attrs["layout"] = std::string("bins x cycles: each cycle's bin means");
      loop_attrs["invalid_cycles"] = invalid;
      s.put("phase/per_cycle/" + g.name, Matrix{std::move(loops), g.units, std::move(names)}, loop_attrs);
    }
  }
  s.put("phase/bin_deg", Series{centres, "deg"},
        {{"phase_origin", std::string(kPhaseOrigin)}, {"bin_width_deg", 360.0 / bins},
         {"upstroke", std::string("bins with centres below 180 deg")}});

  // The loops as one table for fitting scripts (phase_loads.csv).
  {
    std::vector<std::int64_t> index(static_cast<std::size_t>(bins)), count(static_cast<std::size_t>(bins));
    std::vector<std::string> stroke;
    for (int b = 0; b < bins; ++b) {
      index[static_cast<std::size_t>(b)] = b;
      count[static_cast<std::size_t>(b)] = stats[1].n(b, 0);
      stroke.push_back(centres[b] < 180.0 ? "up" : "down");
    }
    auto column = [&](const Eigen::MatrixXd& m) { return std::vector<double>(m.data(), m.data() + bins); };
    Table table;
    table.add({"bin", "1", index})
        .add({"phase_deg", "deg", std::vector<double>(centres.data(), centres.data() + bins)})
        .add({"stroke", "", stroke})
        .add({"alpha_deg", "deg", column(stats[0].mean)})
        .add({"alpha_std_deg", "deg", column(stats[0].std)});
    for (std::size_t q = 1; q <= options_.loads.size(); ++q) {
      const std::string& l = options_.loads[q - 1];
      table.add({l + "_mean", "1", column(stats[q].mean)})
          .add({l + "_std", "1", column(stats[q].std)})
          .add({l + "_p05", "1", column(stats[q].p05)})
          .add({l + "_p95", "1", column(stats[q].p95)});
    }
    table.add({"n", "1", count});
    Attributes table_attrs = attrs;
    table_attrs["csv"] = std::string("phase_loads.csv");
    s.put("phase/loads", std::move(table), table_attrs);
  }

  // Event-aligned (conditional) averages.
  if (!s.contains("events/alignment")) return;
  const Entry& entry = s.entry("events/alignment");
  const Table& align_table = std::get<Table>(entry.value);
  std::vector<std::pair<std::int64_t, double>> align;
  for (std::size_t r = 0; r < align_table.rows(); ++r) {
    const std::int64_t c = align_table.integers("cycle")[r];
    const double ta = align_table.numbers("t_s")[r];
    if (c >= 0 && static_cast<std::size_t>(c) < use.size() && use[static_cast<std::size_t>(c)] && std::isfinite(ta))
      align.emplace_back(c, ta);
  }
  if (align.empty()) {
    s.put("phase/aligned_note", Text{"no valid cycle has an alignment time; no aligned averages"});
    return;
  }
  const int abins = static_cast<int>(options_.aligned_bins);
  const double period = motion.period_s();
  const double lo = options_.aligned_window_periods[0] * period, hi = options_.aligned_window_periods[1] * period;
  Eigen::VectorXd tau(abins);
  for (int b = 0; b < abins; ++b) tau[b] = lo + (b + 0.5) * (hi - lo) / abins;
  Attributes aligned_attrs{{"cycles_averaged", static_cast<std::int64_t>(align.size())},
                           {"window_periods", num(options_.aligned_window_periods[0]) + " to " +
                                                  num(options_.aligned_window_periods[1])}};
  if (auto it = entry.attributes.find("event"); it != entry.attributes.end()) aligned_attrs["aligned_on"] = it->second;
  for (const Group& g : groups) {
    const Members m = aligned_members(*g.time, align, lo, hi, abins);
    const numerics::BinnedStatistics st = numerics::bin_statistics(g.values, m.sample, m.bin, abins, context.threads());
    check_filled(st, g, aligned_bins_where_, abins, "aligned", align.size());
    write_stats(s, "phase/aligned/", g, st, aligned_attrs);
  }
  s.put("phase/aligned/tau_s", Series{tau, "s"},
        {{"definition", std::string("time from each cycle's alignment time (events/alignment), bin centres")}});
}

}  // namespace stallscope
