#include "pipeline/campaign/summary.hpp"

#include <cmath>
#include <limits>
#include <numbers>

#include "pipeline/campaign/table_builder.hpp"
#include "pipeline/hdf5.hpp"

namespace stallscope::campaign {

namespace fs = std::filesystem;

namespace {

constexpr double kNaN = std::numeric_limits<double>::quiet_NaN();

// A table group of the archive layout: one dataset per column, named by the
// group's "columns" attribute.
Table read_table(hid_t file, const std::string& file_name, const std::string& path) {
  Table t;
  for (const auto& name : h5::read_text_list_attribute(file, path, "columns")) {
    const std::string cpath = path + "/" + name;
    const h5::DatasetInfo di = h5::info(file, cpath, file_name);
    auto units = h5::read_attribute(file, cpath, "units");
    std::string u = units && std::holds_alternative<std::string>(*units) ? std::get<std::string>(*units) : "";
    if (di.type_class == H5T_STRING) t.add({name, "", h5::read_texts(file, cpath, file_name)});
    else if (di.type_class == H5T_INTEGER) t.add({name, u, h5::read_integers(file, cpath, file_name)});
    else t.add({name, u, h5::read_numbers(file, cpath, file_name)});
  }
  return t;
}

double number(const Attributes& a, const std::string& name) {
  auto it = a.find(name);
  if (it == a.end()) return kNaN;
  if (const auto* d = std::get_if<double>(&it->second)) return *d;
  if (const auto* i = std::get_if<std::int64_t>(&it->second)) return static_cast<double>(*i);
  return kNaN;
}

std::string text(const Attributes& a, const std::string& name) {
  auto it = a.find(name);
  return it != a.end() && std::holds_alternative<std::string>(it->second) ? std::get<std::string>(it->second) : "";
}

double cell(const Table& t, std::string_view name, std::size_t r) {
  const Column* c = t.find(name);
  if (!c) return kNaN;
  if (const auto* d = std::get_if<std::vector<double>>(&c->data)) return (*d)[r];
  if (const auto* i = std::get_if<std::vector<std::int64_t>>(&c->data)) return static_cast<double>((*i)[r]);
  return kNaN;
}

std::string text_cell(const Table& t, std::string_view name, std::size_t r) {
  const Column* c = t.find(name);
  if (!c || !std::holds_alternative<std::vector<std::string>>(c->data)) return "";
  return std::get<std::vector<std::string>>(c->data)[r];
}

double valid_cycles(const Table& cycles) {
  const Column* c = cycles.find("valid");
  if (!c) return kNaN;
  double n = 0;
  for (std::size_t r = 0; r < cycles.rows(); ++r) {
    if (const auto* s = std::get_if<std::vector<std::string>>(&c->data))
      n += (*s)[r] == "true" || (*s)[r] == "yes" || (*s)[r] == "1";
    else
      n += cell(cycles, "valid", r) != 0.0;
  }
  return n;
}

// The conditions that lead every row of the stacked tables.
struct Condition {
  const char* name;
  const char* units;
};
constexpr Condition kLeadingConditions[] = {{"alpha_mean_deg", "deg"}, {"alpha_amp_deg", "deg"}, {"freq_hz", "Hz"},
                                            {"k", "1"},                {"reduced_pitch_rate", "1"},
                                            {"U_inf_m_s", "m/s"},       {"Re", "1"},
                                            {"Mach", "1"}};
constexpr Condition kRunConditions[] = {
    {"chord_m", "m"},  {"alpha_mean_deg", "deg"}, {"alpha_amp_deg", "deg"}, {"freq_hz", "Hz"},
    {"k", "1"},        {"reduced_pitch_rate", "1"}, {"U_inf_m_s", "m/s"},   {"q_pa", "Pa"},
    {"rho_kg_m3", "kg/m^3"}, {"T_K", "K"},          {"p_static_pa", "Pa"},  {"mu_pa_s", "Pa s"},
    {"Re", "1"},       {"Mach", "1"}};

// The events whose statistics a model fit consumes against k and r.
constexpr const char* kStallEvents[] = {"stall_onset", "stall_delay"};

double condition(const RunDigest& d, const std::string& name) {
  return name == "reduced_pitch_rate" ? reduced_pitch_rate(d) : number(d.run, name);
}

void declare_leading(TableBuilder& t, bool with_conditions) {
  t.declare("run", "", true);
  t.declare("kind", "", true);
  t.declare("repeat_of", "", true);
  t.declare("motion", "", true);
  if (with_conditions)
    for (const auto& c : kLeadingConditions) t.declare(c.name, c.units, false);
}

void set_leading(TableBuilder& t, const CampaignRun& run, const RunDigest& d, bool with_conditions) {
  t.set("run", run.name);
  t.set("kind", std::string(kind_name(run.kind)));
  t.set("repeat_of", run.repeat_of);
  t.set("motion", text(d.run, "motion"));
  if (with_conditions)
    for (const auto& c : kLeadingConditions) t.set(c.name, c.units, condition(d, c.name));
}

void add_stall_row(TableBuilder& stall, const CampaignRun& run, const RunDigest& d) {
  stall.new_row();
  set_leading(stall, run, d, true);
  if (!d.events) return;
  const Table& e = *d.events;
  for (std::size_t r = 0; r < e.rows(); ++r) {
    const std::string event = text_cell(e, "event", r);
    bool wanted = false;
    for (const char* s : kStallEvents) wanted = wanted || event == s;
    if (!wanted) continue;
    const std::string quantity = text_cell(e, "quantity", r);
    const std::string base = quantity.empty() ? event : event + "_" + quantity;
    // The statistics' units differ row by row; a "units" column says which.
    const Column* mean = e.find("mean");
    const std::string row_units = text_cell(e, "units", r);
    const std::string units = !row_units.empty() ? row_units : mean ? mean->units : "";
    stall.set(base + "_n", "1", cell(e, "n", r));
    for (const char* stat : {"mean", "std", "ci95_lo", "ci95_hi"}) stall.set(base + "_" + stat, units, cell(e, stat, r));
  }
}

// Run-to-run repeatability where the manifest marks repeats: for each group of
// a run and its repeats, and each event statistic, the spread of the runs'
// means beside the typical uncertainty of one run's mean over its cycles (CI
// half-width) and, with [uncertainty], its measurement uncertainty.
Table repeatability(const Manifest& m, const std::vector<std::optional<Table>>& events) {
  std::map<std::string, std::vector<std::size_t>> groups;  // nominal run -> run indices
  for (std::size_t i = 0; i < m.runs.size(); ++i)
    if (events[i]) groups[m.runs[i].repeat_of.empty() ? m.runs[i].name : m.runs[i].repeat_of].push_back(i);
  std::vector<std::string> group_name, event_name, quantity, units;
  std::vector<double> runs, mean, spread, ci_half, measurement;
  for (const auto& [group, members] : groups) {
    if (members.size() < 2) continue;
    // The statistics of the first run name the rows; the others are matched by event and quantity.
    const Table& first = *events[members.front()];
    for (std::size_t r = 0; r < first.rows(); ++r) {
      const std::string e = text_cell(first, "event", r), q = text_cell(first, "quantity", r);
      std::vector<double> means, halves, measured;
      for (std::size_t i : members) {
        const Table& t = *events[i];
        for (std::size_t k = 0; k < t.rows(); ++k) {
          if (text_cell(t, "event", k) != e || text_cell(t, "quantity", k) != q) continue;
          const double x = cell(t, "mean", k);
          if (!std::isfinite(x)) break;
          means.push_back(x);
          halves.push_back(0.5 * (cell(t, "ci95_hi", k) - cell(t, "ci95_lo", k)));
          measured.push_back(cell(t, "mean_uncertainty", k));
          break;
        }
      }
      if (means.size() < 2) continue;
      auto finite_mean = [](const std::vector<double>& v) {
        double s = 0;
        std::size_t n = 0;
        for (double x : v)
          if (std::isfinite(x)) s += x, ++n;
        return n ? s / static_cast<double>(n) : kNaN;
      };
      double centre = finite_mean(means), ss = 0;
      for (double x : means) ss += (x - centre) * (x - centre);
      group_name.push_back(group);
      event_name.push_back(e);
      quantity.push_back(q);
      units.push_back(text_cell(first, "units", r));
      runs.push_back(static_cast<double>(means.size()));
      mean.push_back(centre);
      spread.push_back(std::sqrt(ss / static_cast<double>(means.size() - 1)));
      ci_half.push_back(finite_mean(halves));
      measurement.push_back(finite_mean(measured));
    }
  }
  Table t;
  t.add({"run", "", group_name})
      .add({"event", "", event_name})
      .add({"quantity", "", quantity})
      .add({"units", "", units})
      .add({"runs", "1", runs})
      .add({"mean", "", mean})
      .add({"std_run_to_run", "", spread})
      .add({"ci95_half_width_within_run", "", ci_half})
      .add({"measurement_uncertainty", "", measurement});
  return t;
}

}  // namespace

RunDigest read_digest(const fs::path& archive) {
  h5::File f = h5::File::open_read(archive);
  const hid_t id = f.id();
  RunDigest d;
  d.max_alpha_rate_deg_s = kNaN;
  if (h5::is_group(id, "run"))
    for (const auto& a : h5::attribute_names(id, "run"))
      if (auto v = h5::read_attribute(id, "run", a)) d.run[a] = *v;
  auto table_at = [&](const std::string& path) -> std::optional<Table> {
    if (!h5::exists(id, path) || !h5::has_attribute(id, path, "columns")) return std::nullopt;
    return read_table(id, f.name(), path);
  };
  d.events = table_at("events/summary");
  d.static_polar = table_at("static_polar/summary");
  d.cycles = table_at("cycles");
  if (h5::exists(id, "motion/alpha_rate_deg_s")) {
    double top = 0;
    for (double v : h5::read_numbers(id, "motion/alpha_rate_deg_s", f.name()))
      if (std::isfinite(v)) top = std::max(top, std::abs(v));
    d.max_alpha_rate_deg_s = top;
  }
  return d;
}

double reduced_pitch_rate(const RunDigest& d) {
  const double chord = number(d.run, "chord_m"), velocity = number(d.run, "U_inf_m_s");
  return d.max_alpha_rate_deg_s * std::numbers::pi / 180.0 * chord / (2.0 * velocity);
}

CampaignSummary summarise(const Manifest& manifest, const std::vector<RunOutcome>& outcomes,
                          const JobSettings& settings) {
  TableBuilder runs, events, stall, polar;
  declare_leading(runs, false);
  runs.declare("airfoil", "", true);
  for (const auto& c : kRunConditions) runs.declare(c.name, c.units, false);
  runs.declare("cycles", "1", false);
  runs.declare("cycles_valid", "1", false);
  runs.declare("status", "", true);
  runs.declare("error", "", true);
  runs.declare("archive", "", true);
  declare_leading(events, true);
  declare_leading(stall, true);
  declare_leading(polar, false);

  CampaignSummary summary;
  std::vector<std::optional<Table>> run_events(manifest.runs.size());
  for (std::size_t i = 0; i < manifest.runs.size(); ++i) {
    const CampaignRun& run = manifest.runs[i];
    const RunOutcome* outcome = i < outcomes.size() ? &outcomes[i] : nullptr;
    std::optional<RunDigest> digest;
    std::string error = outcome ? outcome->error : "not reduced";
    if (outcome && outcome->state != RunOutcome::State::kFailed) {
      try {
        digest = read_digest(run_archive(settings, run));
      } catch (const std::exception& e) {
        error = std::string("the archive cannot be read back: ") + e.what();
      }
    }
    runs.new_row();
    if (!digest) {
      ++summary.failed;
      RunDigest none;
      none.max_alpha_rate_deg_s = kNaN;
      set_leading(runs, run, none, false);
      runs.set("status", "failed");
      runs.set("error", error);
      continue;
    }
    const RunDigest& d = *digest;
    set_leading(runs, run, d, false);
    runs.set("airfoil", text(d.run, "airfoil"));
    for (const auto& c : kRunConditions) runs.set(c.name, c.units, condition(d, c.name));
    runs.set("cycles", "1", d.cycles ? static_cast<double>(d.cycles->rows()) : kNaN);
    runs.set("cycles_valid", "1", d.cycles ? valid_cycles(*d.cycles) : kNaN);
    runs.set("status", "ok");
    runs.set("archive", (fs::path(run.name) / (run.name + ".h5")).string());

    if (d.events)
      for (std::size_t r = 0; r < d.events->rows(); ++r) {
        events.new_row();
        set_leading(events, run, d, true);
        events.set_row_of(*d.events, r);
      }
    if (run.kind == RunKind::kDynamic) add_stall_row(stall, run, d);
    if (run.kind == RunKind::kDynamic) run_events[i] = d.events;
    if (d.static_polar)
      for (std::size_t r = 0; r < d.static_polar->rows(); ++r) {
        polar.new_row();
        set_leading(polar, run, d, false);
        polar.set_row_of(*d.static_polar, r);
      }
  }
  summary.runs = runs.table();
  summary.events = events.table();
  summary.stall = stall.table();
  summary.static_polar = polar.table();
  summary.repeatability = repeatability(manifest, run_events);
  return summary;
}

}  // namespace stallscope::campaign
