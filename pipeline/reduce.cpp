#include "pipeline/reduce.hpp"

#include <chrono>
#include <set>
#include <thread>

#include <fmt/format.h>

#include "pipeline/archive.hpp"
#include "pipeline/config.hpp"
#include "pipeline/errors.hpp"
#include "pipeline/registry.hpp"
#include "pipeline/scheduler.hpp"

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
    if (known.count(k)) continue;
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
  for (Stage* stage : order) {
    const auto t0 = Clock::now();
    progress.begin(std::string(stage->name()));
    stage->run(context);
    progress.end();
    std::string parameters;
    for (std::size_t i = 0; i < stages.size(); ++i)
      if (stages[i].get() == stage) parameters = configured[i].parameters;
    provenance.stages.push_back(
        {std::string(stage->name()), std::chrono::duration<double>(Clock::now() - t0).count(), parameters});
  }

  ReduceSummary summary;
  summary.run_name = target.run_name;
  summary.archive = write_archive(store, provenance, target);
  summary.stages = provenance.stages;
  summary.seconds = std::chrono::duration<double>(Clock::now() - started).count();
  return summary;
}

}  // namespace stallscope
