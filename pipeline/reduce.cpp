#include "pipeline/reduce.hpp"

#include <algorithm>
#include <chrono>
#include <optional>
#include <set>
#include <thread>

#include <fmt/format.h>

#include "pipeline/archive.hpp"
#include "pipeline/config.hpp"
#include "pipeline/errors.hpp"
#include "pipeline/registry.hpp"
#include "pipeline/scheduler.hpp"
#include "pipeline/uncertainty.hpp"

namespace stallscope {

namespace fs = std::filesystem;

namespace {

struct ConfiguredStage {
  std::unique_ptr<Stage> stage;
  std::string parameters;
};

// Every top-level table of the config is a stage's section; a stage runs when
// its section is present and does not say enabled = false. The "run" stage
// always runs.
std::vector<ConfiguredStage> configure_stages(const ConfigFile& config) {
  std::set<std::string> known;
  for (const auto& info : registered_stages()) known.insert(std::string(info.name));
  for (const auto& [key, node] : config.table()) {
    std::string k(key.str());
    if (known.count(k) || k == "uncertainty") continue;
    std::string list;
    for (const auto& info : registered_stages()) list += (list.empty() ? "" : ", ") + std::string(info.name);
    throw InputError(config.path().string() + ":" + std::to_string(node.source().begin.line) + ":" +
                         std::to_string(node.source().begin.column),
                     "unknown section '" + k + "' (known stages: " + list + ")");
  }
  std::vector<ConfiguredStage> out;
  for (const auto& info : registered_stages()) {
    ConfigSection section(config, std::string(info.name));
    if (!section.present() && info.name != "run") continue;
    if (!section.boolean("enabled", true)) continue;
    auto stage = make_stage(info.name);
    stage->configure(section);
    section.reject_unknown_keys();
    out.push_back({std::move(stage), section.parameters_toml()});
  }
  return out;
}

// [uncertainty], when present and enabled: the Monte Carlo model.
std::optional<UncertaintyModel> uncertainty_model(const ConfigFile& config, std::string& parameters) {
  ConfigSection section(config, "uncertainty");
  if (!section.present() || !section.boolean("enabled", true)) return std::nullopt;
  UncertaintyModel model = UncertaintyModel::from(section);
  section.reject_unknown_keys();
  parameters = section.parameters_toml();
  return model;
}

void put_model(RunStore& store, const UncertaintyModel& m, const UncertaintyResult& r) {
  store.put("uncertainty/replicas", Scalar{static_cast<double>(r.replicas), "1"});
  store.put("uncertainty/failed_replicas", Scalar{static_cast<double>(r.failed), "1"});
  store.put("uncertainty/seed", Scalar{static_cast<double>(m.seed), "1"});
  struct Sigma {
    const char* name;
    double value;
    const char* units;
  };
  const Sigma sigmas[] = {{"channel_gain_relative", m.channel_gain_relative, "1"},
                          {"taps_gain_relative", m.taps_gain_relative, "1"},
                          {"q_relative", m.q_relative, "1"},
                          {"p_static_pa", m.p_static_pa, "Pa"},
                          {"temperature_k", m.temperature_k, "K"},
                          {"tap_position_over_c", m.tap_position_over_c, "1"},
                          {"tube_length_relative", m.tube_length_relative, "1"},
                          {"tube_diameter_relative", m.tube_diameter_relative, "1"},
                          {"encoder_offset_deg", m.encoder_offset_deg, "deg"},
                          {"encoder_gain_relative", m.encoder_gain_relative, "1"}};
  for (const Sigma& s : sigmas) store.put(std::string("uncertainty/") + s.name, Scalar{s.value, s.units});
  store.put("uncertainty/calibration_residuals", Text{m.calibration_residuals ? "yes" : "no"});
  store.put("uncertainty/zero_drift", Text{m.zero_drift ? "yes" : "no"});
}

}  // namespace

std::string ReduceSummary::brief() const {
  std::string s = fmt::format("reduced run '{}' in {:.2f} s\n", run_name, seconds);
  for (const auto& st : stages) s += fmt::format("  {:<16} {:8.3f} s\n", st.name, st.seconds);
  s += fmt::format("archive: {}\n", archive.string());
  return s;
}

ReduceSummary reduce(const ReduceRequest& request, Progress& progress) {
  using Clock = std::chrono::steady_clock;
  const auto started = Clock::now();
  ConfigFile config = request.config_text.empty() ? ConfigFile::load(request.config)
                                                  : ConfigFile::parse(request.config_text, request.config);
  std::vector<ConfiguredStage> configured = configure_stages(config);
  std::string uncertainty_parameters;
  const std::optional<UncertaintyModel> model = uncertainty_model(config, uncertainty_parameters);

  std::vector<std::unique_ptr<Stage>> stages;
  for (auto& c : configured) stages.push_back(std::move(c.stage));
  std::vector<Stage*> order = schedule(stages, config.path().string());

  // The run's name comes from [run]; the target is checked before any work.
  ConfigSection run_section(config, "run");
  ArchiveTarget target{request.output_directory, run_section.text("name"), request.force};
  check_archive_target(target);

  Provenance provenance = Provenance::start(request.command_line);
  provenance.config_path = fs::absolute(config.path()).lexically_normal().string();
  provenance.config_toml = config.text();
  if (request.config_text.empty()) provenance.add_input(config.path(), "run config");
  for (const auto& source : request.config_sources) provenance.add_input(source, "run config");

  int threads = request.threads > 0 ? request.threads : static_cast<int>(std::thread::hardware_concurrency());
  RunStore store;
  RunContext context(store, provenance, progress, std::max(1, threads));
  std::set<std::string> shared;  // written by stages that Monte Carlo replicas do not repeat
  for (Stage* stage : order) {
    const auto t0 = Clock::now();
    progress.begin(std::string(stage->name()));
    const std::vector<std::string> before = stage->repeated_in_replicas() ? std::vector<std::string>{} : store.keys();
    stage->run(context);
    if (!stage->repeated_in_replicas())
      for (const auto& key : store.keys())
        if (!std::binary_search(before.begin(), before.end(), key)) shared.insert(key);
    progress.end();
    std::string parameters;
    for (std::size_t i = 0; i < stages.size(); ++i)
      if (stages[i].get() == stage) parameters = configured[i].parameters;
    provenance.stages.push_back(
        {std::string(stage->name()), std::chrono::duration<double>(Clock::now() - t0).count(), parameters});
  }

  if (model) {
    const auto t0 = Clock::now();
    progress.begin("uncertainty");
    auto make_stages = [&config] {
      std::vector<std::unique_ptr<Stage>> fresh;
      for (auto& c : configure_stages(config)) fresh.push_back(std::move(c.stage));
      return fresh;
    };
    const UncertaintyResult result = propagate_uncertainty(*model, make_stages, config.path().string(), shared,
                                                           store, progress, std::max(1, threads));
    put_model(store, *model, result);
    progress.end();
    provenance.stages.push_back(
        {"uncertainty", std::chrono::duration<double>(Clock::now() - t0).count(), uncertainty_parameters});
  }

  ReduceSummary summary;
  summary.run_name = target.run_name;
  summary.archive = write_archive(store, provenance, target);
  summary.stages = provenance.stages;
  summary.seconds = std::chrono::duration<double>(Clock::now() - started).count();
  return summary;
}

}  // namespace stallscope
