#include "stages/fit/fit_command.hpp"

#include <CLI/CLI.hpp>
#include <fmt/format.h>

#include <cstdio>
#include <deque>
#include <iostream>
#include <string_view>
#include <thread>

#include "pipeline/archive.hpp"
#include "pipeline/config.hpp"
#include "pipeline/csv_writer.hpp"
#include "pipeline/errors.hpp"
#include "pipeline/hdf5.hpp"
#include "stages/fit/campaign_fit.hpp"
#include "stages/fit/fit_stage.hpp"
#include "stages/fit/static_polar_source.hpp"

namespace stallscope::fit {

namespace {

void write_tables(const RunStore& store, const std::filesystem::path& folder) {
  std::filesystem::create_directories(folder);
  for (const auto& [key, entry] : store.entries()) {
    if (key.rfind("fit/", 0) != 0) continue;
    const auto csv = entry.attributes.find("csv");
    if (csv != entry.attributes.end() && std::holds_alternative<Table>(entry.value))
      write_csv_file(folder / std::get<std::string>(csv->second), std::get<Table>(entry.value));
  }
}

std::string interval(double lo, double hi) {
  return std::isfinite(lo) ? fmt::format("[{:.3g}, {:.3g}]", lo, hi) : "(no interval)";
}

// The [fit] options in force when the archive was reduced (its provenance), so
// a refit repeats the reduction's fit; defaults when it had no fit stage.
FitSettings archive_settings(const std::filesystem::path& archive) {
  FitSettings settings;
  for (const StageRecord& stage : read_provenance(archive).stages)
    if (stage.name == "fit") {
      const ConfigFile file = ConfigFile::parse(stage.parameters, archive);
      ConfigSection section(file, "fit", &file.table());
      configure_fit_settings(section, settings);
    }
  return settings;
}

}  // namespace

int refit_archives(const RefitRequest& request, std::ostream& out) {
  std::optional<FitSettings> configured;
  std::optional<std::filesystem::path> config_polar;
  if (request.config) {
    FitSettings settings;
    const ConfigFile file = ConfigFile::load(*request.config);
    ConfigSection section(file, "fit");
    config_polar = section.optional_path("static_polar_archive");
    if (!config_polar) config_polar = section.optional_path("static_polar_csv");
    configure_fit_settings(section, settings);
    section.reject_unknown_keys();
    configured = settings;
  }
  std::optional<StaticPolarPoints> common;
  if (request.static_polar) common = read_static_polar(*request.static_polar, "--static-polar");
  else if (config_polar) common = read_static_polar(*config_polar, request.config->string() + " [fit]");

  std::deque<CampaignRun> runs;
  FitSettings settings;  // of the last archive: the shared fit uses its bounds and bootstrap
  for (const auto& archive : request.archives) {
    settings = configured ? *configured : archive_settings(archive);
    if (request.bootstrap_resamples) settings.bootstrap_resamples = *request.bootstrap_resamples;
    // What the fit reads: the stored fit, or for a new one the polar the
    // reduction used and the loads it puts at each cycle's onset (fit/onset).
    std::vector<std::string> wanted = {"run",      "phase/bin_deg",       "phase/alpha_deg",  "phase/cn",
                                       "phase/per_cycle/alpha_deg", "phase/per_cycle/cn", "cycles",
                                       "events/per_cycle",          "static_polar/points"};
    if (request.stored_run_fits) wanted.push_back("fit");
    else wanted.insert(wanted.end(), {"fit/static_polar", "loads"});
    RunStore store = read_archive(archive, wanted);
    std::optional<StaticPolarPoints> polar = common ? common : polar_from_store(store, archive.filename().string());
    if (!polar)
      throw InputError(archive.string(), "holds no static polar (no /fit/static_polar or /static_polar/points): give "
                                         "--static-polar FILE (a static run's archive, or a CSV with alpha_deg, cn)");
    StaticSeparation curve;
    try {
      curve = StaticSeparation::from_polar(polar->alpha_deg, polar->cn, settings.curve);
    } catch (const std::invalid_argument& e) {
      throw InputError(request.static_polar ? "--static-polar" : archive.string(), polar->source + ": " + e.what());
    }
    RunLoops loops = read_run_loops(store, settings);
    RunFit fit;
    if (request.stored_run_fits) {
      fit = stored_run_fit(store, loops, archive.string());
    } else {
      fit = fit_run(loops, curve, *polar, settings, request.threads);
      put_fit(store, loops, curve, *polar, fit, settings);
    }
    write_tables(store, request.output_directory / loops.run);
    out << fmt::format("{}: ", loops.run);
    if (fit.main.fitted) {
      out << fmt::format("tau1 = {:.3f} c/U {}, tau2 = {:.3f} c/U {} (k = {:.3f}, mean {:.1f} deg){}\n", fit.main.tau1,
                         interval(fit.bootstrap.tau1_ci[0], fit.bootstrap.tau1_ci[1]), fit.main.tau2,
                         interval(fit.bootstrap.tau2_ci[0], fit.bootstrap.tau2_ci[1]), loops.reduced_frequency,
                         loops.alpha_mean_deg, fit.main.reason.empty() ? "" : " -- " + fit.main.reason);
      if (fit.main.vortex_lift)
        out << fmt::format("  vortex lift: T_v = {:.3f} c/U {}, T_vl = {:.3f} c/U {}\n", fit.main.t_v,
                           interval(fit.bootstrap.t_v_ci[0], fit.bootstrap.t_v_ci[1]), fit.main.t_vl,
                           interval(fit.bootstrap.t_vl_ci[0], fit.bootstrap.t_vl_ci[1]));
    } else {
      out << "not fitted: " << fit.main.reason << "\n";
    }
    runs.push_back({std::move(loops), std::move(curve), std::move(fit)});
  }
  if (runs.size() > 1) {
    const SharedFit shared = fit_shared(runs, settings, request.threads);
    const auto trends = constant_trends(runs);
    write_csv_file(request.output_directory / "campaign_fit.csv", campaign_table(runs, shared));
    write_csv_file(request.output_directory / "campaign_trend.csv", trend_table(trends));
    if (shared.fit.fitted)
      out << fmt::format("shared by {} runs: tau1 = {:.3f} c/U {}, tau2 = {:.3f} c/U {}\n", shared.runs,
                         shared.fit.tau1, interval(shared.bootstrap.tau1_ci[0], shared.bootstrap.tau1_ci[1]),
                         shared.fit.tau2, interval(shared.bootstrap.tau2_ci[0], shared.bootstrap.tau2_ci[1]));
    else
      out << "shared fit: not fitted: " << shared.fit.reason << "\n";
    for (const Trend& t : trends)
      out << fmt::format("  d{}/d{} = {:.4g} {} ({})\n", t.constant, t.regressor, t.slope,
                         interval(t.slope_lo, t.slope_hi), t.note);
  }
  out << "written to " << request.output_directory.string() << "\n";
  return 0;
}

std::vector<std::filesystem::path> fit_campaign(const std::vector<std::filesystem::path>& archives,
                                                const std::filesystem::path& folder, int threads, std::ostream& out) {
  RefitRequest request;
  for (const auto& a : archives) {
    const h5::File file = h5::File::open_read(a);
    if (h5::exists(file.id(), "fit/summary")) request.archives.push_back(a);
  }
  if (request.archives.size() < 2) return {};
  request.output_directory = folder;
  request.threads = threads;
  request.stored_run_fits = true;
  refit_archives(request, out);
  return {folder / "campaign_fit.csv", folder / "campaign_trend.csv"};
}

std::optional<int> run_fit_command(int argc, char** argv) {
  if (argc < 2 || std::string_view(argv[1]) != "fit") return std::nullopt;
  RefitRequest request;
  std::vector<std::string> archives;
  std::string polar, config;
  std::int64_t bootstrap = -1;
  bool quiet = false;
  CLI::App app{"refit the Goman-Khrabrov constants of reduced archives without re-reducing"};
  app.name("stallscope fit");
  app.add_option("archives", archives, "reduced archives (.h5)")->required()->check(CLI::ExistingFile);
  app.add_option("-o,--output", request.output_directory, "folder for the fit CSVs")->capture_default_str();
  app.add_option("--static-polar", polar, "static polar: a static run's archive (.h5) or a CSV with alpha_deg, cn");
  app.add_option("--config", config, "TOML whose [fit] section sets the fit (as in a run config)");
  app.add_option("--bootstrap", bootstrap, "bootstrap resamples (0: none)")->check(CLI::NonNegativeNumber);
  app.add_option("-j,--threads", request.threads, "threads for the bootstrap (0: all cores)")->check(CLI::NonNegativeNumber);
  app.add_flag("-q,--quiet", quiet, "no progress messages on stderr");
  try {
    app.parse(argc - 1, argv + 1);
  } catch (const CLI::CallForHelp& e) {
    return app.exit(e);
  } catch (const CLI::ParseError& e) {
    std::fprintf(stderr, "stallscope: error: %s (see stallscope fit --help)\n", e.what());
    return 2;
  }
  for (const auto& a : archives) request.archives.emplace_back(a);
  if (!polar.empty()) request.static_polar = polar;
  if (!config.empty()) request.config = config;
  if (bootstrap >= 0) request.bootstrap_resamples = bootstrap;
  if (request.threads == 0) request.threads = static_cast<int>(std::max(1u, std::thread::hardware_concurrency()));
  return refit_archives(request, std::cout);
}

}  // namespace stallscope::fit
