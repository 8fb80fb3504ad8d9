#include "pipeline/uncertainty.hpp"

#include <fmt/format.h>

#include <cmath>
#include <exception>
#include <map>
#include <set>
#include <thread>

#include "pipeline/errors.hpp"
#include "pipeline/provenance.hpp"
#include "pipeline/scheduler.hpp"

namespace stallscope {

namespace {

bool starts_with(const std::string& s, std::string_view p) { return s.rfind(p, 0) == 0; }
bool ends_with(const std::string& s, std::string_view p) {
  return s.size() >= p.size() && s.compare(s.size() - p.size(), p.size(), p) == 0;
}

// Welford's running mean and sum of squares per element, skipping non-finite values.
struct Spread {
  std::vector<double> mean, m2;
  std::vector<std::int64_t> n;
  void add(const std::vector<double>& x) {
    if (mean.empty()) {
      mean.assign(x.size(), 0.0);
      m2.assign(x.size(), 0.0);
      n.assign(x.size(), 0);
    }
    if (x.size() != mean.size()) return;
    for (std::size_t i = 0; i < x.size(); ++i) {
      if (!std::isfinite(x[i])) continue;
      const double d = x[i] - mean[i];
      mean[i] += d / static_cast<double>(++n[i]);
      m2[i] += d * (x[i] - mean[i]);
    }
  }
  std::vector<double> std_dev() const {
    std::vector<double> s(mean.size(), NAN);
    for (std::size_t i = 0; i < s.size(); ++i)
      if (n[i] >= 2) s[i] = std::sqrt(m2[i] / static_cast<double>(n[i] - 1));
    return s;
  }
};

// A row's identity: its text and integer cells (the event, the cycle), or its
// index when the table has none (the phase bins).
std::vector<std::string> row_keys(const Table& t) {
  std::vector<std::string> keys(t.rows());
  bool any = false;
  for (const auto& c : t.columns) {
    if (const auto* s = std::get_if<std::vector<std::string>>(&c.data)) {
      any = true;
      for (std::size_t r = 0; r < keys.size(); ++r) keys[r] += (*s)[r] + '\x1f';
    } else if (const auto* i = std::get_if<std::vector<std::int64_t>>(&c.data)) {
      any = true;
      for (std::size_t r = 0; r < keys.size(); ++r) keys[r] += std::to_string((*i)[r]) + '\x1f';
    }
  }
  if (!any)
    for (std::size_t r = 0; r < keys.size(); ++r) keys[r] = std::to_string(r);
  return keys;
}

// The measured columns that get an uncertainty: the event's time, phase,
// angle and value, the statistics' centre, the phase-averaged means, and
// every number of a fit.
std::vector<std::string> number_columns(const std::string& key, const Table& t) {
  static const std::map<std::string, std::set<std::string>> kColumns = {
      {"events/per_cycle", {"t_s", "t_conv", "phase_deg", "alpha_deg", "value"}},
      {"vortex/events_per_cycle", {"t_s", "t_conv", "phase_deg", "alpha_deg", "value"}},
      {"events/summary", {"mean", "median"}}};
  const auto listed = kColumns.find(key);
  std::vector<std::string> names;
  for (const auto& c : t.columns) {
    if (!std::holds_alternative<std::vector<double>>(c.data) || c.name.find("uncertainty") != std::string::npos)
      continue;
    const bool wanted = listed != kColumns.end() ? listed->second.count(c.name) > 0
                        : key == "phase/loads"   ? ends_with(c.name, "_mean") || ends_with(c.name, "mean")
                                                 : true;
    if (wanted) names.push_back(c.name);
  }
  return names;
}

// What one replica measured: flattened arrays by key, and table rows by row key.
struct Observed {
  std::map<std::string, std::vector<double>> arrays;
  std::map<std::string, std::map<std::string, std::vector<double>>> rows;
};

Observed observe(const RunStore& store, const RunStore& nominal) {
  Observed o;
  for (const auto& [key, entry] : nominal.entries()) {
    if (!store.contains(key)) continue;
    const Value& v = store.entry(key).value;
    if (v.index() != entry.value.index()) continue;
    if (const auto* t = std::get_if<Table>(&v)) {
      if (!has_uncertainty_columns(key)) continue;
      const auto keys = row_keys(*t);
      const auto names = number_columns(key, std::get<Table>(entry.value));
      auto& rows = o.rows[key];
      for (std::size_t r = 0; r < keys.size(); ++r) {
        std::vector<double> values;
        for (const auto& n : names) {
          const Column* c = t->find(n);
          const auto* d = c ? std::get_if<std::vector<double>>(&c->data) : nullptr;
          values.push_back(d ? (*d)[r] : NAN);
        }
        rows.emplace(keys[r], std::move(values));  // the first of repeated keys stands
      }
    } else if (has_uncertainty_series(key)) {
      if (const auto* s = std::get_if<Series>(&v))
        o.arrays[key].assign(s->values.data(), s->values.data() + s->values.size());
      else if (const auto* m = std::get_if<Matrix>(&v))
        o.arrays[key].assign(m->values.data(), m->values.data() + m->values.size());
      else if (const auto* x = std::get_if<Scalar>(&v))
        o.arrays[key] = {x->value};
    }
  }
  return o;
}

}  // namespace

bool has_uncertainty_series(const std::string& key) {
  if (ends_with(key, "_uncertainty") || ends_with(key, "time_s")) return false;
  if (starts_with(key, "loads/") || key == "pressure/cp") return true;
  if (starts_with(key, "phase/") && ends_with(key, "/mean") && !starts_with(key, "phase/per_cycle")) return true;
  return starts_with(key, "fit/");
}

bool has_uncertainty_columns(const std::string& key) {
  return key == "events/per_cycle" || key == "events/summary" || key == "phase/loads" ||
         key == "vortex/events_per_cycle" || starts_with(key, "fit/");
}

UncertaintyResult propagate_uncertainty(const UncertaintyModel& model, const StageFactory& make_stages,
                                        const std::string& config_name, const std::set<std::string>& shared,
                                        RunStore& nominal, Progress& progress, int threads) {
  const std::size_t n = model.replicas;
  const std::size_t at_once = static_cast<std::size_t>(std::max(1, threads));
  std::map<std::string, Spread> arrays;
  std::map<std::string, std::map<std::string, Spread>> rows;
  UncertaintyResult result;
  std::exception_ptr first_failure;

  for (std::size_t begin = 0; begin < n; begin += at_once) {
    const std::size_t end = std::min(n, begin + at_once);
    progress.note(fmt::format("uncertainty: replicas {} to {} of {}", begin + 1, end, n));
    // Stages are made and scheduled here, one set per replica, before the threads start.
    std::vector<std::vector<std::unique_ptr<Stage>>> stage_sets;
    std::vector<std::vector<Stage*>> orders;
    for (std::size_t r = begin; r < end; ++r) {
      stage_sets.push_back(make_stages());
      orders.push_back(schedule(stage_sets.back(), config_name));
    }
    std::vector<Observed> observed(end - begin);
    std::vector<std::exception_ptr> failures(end - begin);
    auto replica = [&](std::size_t slot) {
      try {
        RunStore store;
        for (const auto& key : shared) store.put(key, nominal.entry(key).value, nominal.entry(key).attributes);
        Provenance scratch;  // replicas read the same files: nothing new to record
        Progress quiet(Progress::Mode::kQuiet);
        RunContext context(store, scratch, quiet, 1);
        const Perturbation perturbation(model, begin + slot);
        context.set_perturbation(&perturbation);
        for (Stage* stage : orders[slot])
          if (stage->repeated_in_replicas()) stage->run(context);
        observed[slot] = observe(store, nominal);
      } catch (...) {
        failures[slot] = std::current_exception();
      }
    };
    std::vector<std::thread> pool;
    for (std::size_t slot = 1; slot < end - begin; ++slot) pool.emplace_back(replica, slot);
    replica(0);
    for (auto& t : pool) t.join();
    // In replica order, whatever finished first.
    for (std::size_t slot = 0; slot < end - begin; ++slot) {
      if (failures[slot]) {
        ++result.failed;
        if (!first_failure) first_failure = failures[slot];
        continue;
      }
      for (auto& [key, values] : observed[slot].arrays) arrays[key].add(values);
      for (auto& [key, table_rows] : observed[slot].rows)
        for (auto& [row, values] : table_rows) rows[key][row].add(values);
    }
  }
  result.replicas = n - result.failed;
  if (result.replicas == 0) std::rethrow_exception(first_failure);

  const Attributes about{{"replicas", static_cast<std::int64_t>(result.replicas)},
                         {"meaning", std::string("measurement uncertainty: standard deviation over Monte Carlo "
                                                 "replicas with perturbed instrument inputs")}};
  for (const auto& [key, spread] : arrays) {
    const std::vector<double> s = spread.std_dev();
    const Entry& e = nominal.entry(key);
    const std::string target = key + "_uncertainty";
    if (const auto* series = std::get_if<Series>(&e.value)) {
      nominal.put(target, Series{Eigen::Map<const Eigen::VectorXd>(s.data(), static_cast<Eigen::Index>(s.size())),
                                 series->units},
                  about);
    } else if (const auto* m = std::get_if<Matrix>(&e.value)) {
      Matrix u{m->values, m->units, m->columns};
      u.values = Eigen::Map<const Eigen::MatrixXd>(s.data(), m->values.rows(), m->values.cols());
      nominal.put(target, std::move(u), about);
    } else if (const auto* x = std::get_if<Scalar>(&e.value)) {
      nominal.put(target, Scalar{s[0], x->units});
    }
    result.keys.push_back(target);
  }
  for (const auto& [key, by_row] : rows) {
    Table& t = nominal.get_mutable<Table>(key);
    const auto keys = row_keys(t);
    const auto names = number_columns(key, t);
    for (std::size_t c = 0; c < names.size(); ++c) {
      std::vector<double> column(t.rows(), NAN);
      for (std::size_t r = 0; r < keys.size(); ++r) {
        auto it = by_row.find(keys[r]);
        if (it != by_row.end()) column[r] = it->second.std_dev()[c];
      }
      t.add({names[c] + "_uncertainty", t.find(names[c])->units, std::move(column)});
    }
    nominal.attributes(key)["uncertainty_replicas"] = static_cast<std::int64_t>(result.replicas);
    result.keys.push_back(key);
  }
  return result;
}

}  // namespace stallscope
