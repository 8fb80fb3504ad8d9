// stallscope: reduce wind-tunnel data of pitching airfoils in dynamic stall.
// main() turns errors into one line and the exit code: 0 success, 2 bad usage
// or bad input, 1 internal failure.
#include <CLI/CLI.hpp>
#include <fmt/format.h>

#include <cstdio>
#include <iostream>

#include "calib/calib_command.hpp"
#include "pipeline/allocator.hpp"
#include "pipeline/errors.hpp"
#include "pipeline/campaign/campaign.hpp"
#include "pipeline/inspect.hpp"
#include "pipeline/reduce.hpp"
#include "stages/piv/detection.hpp"
#include "pipeline/registry.hpp"
#include "stages/fit/fit_command.hpp"
#include "tools/synth/synth_command.hpp"
#include "pipeline/report/report.hpp"
#include "stallscope/version.hpp"

namespace {

using namespace stallscope;

std::string joined_command_line(int argc, char** argv) {
  std::string s;
  for (int i = 0; i < argc; ++i) s += (i ? " " : "") + std::string(argv[i]);
  return s;
}

int run(int argc, char** argv) {
  if (auto code = fit::run_fit_command(argc, argv)) return *code;
  CLI::App app{"stallscope: reduce wind-tunnel data of pitching airfoils in dynamic stall"};
  app.set_version_flag("--version", fmt::format("stallscope {} (commit {})", kToolVersion, kGitCommit));
  app.require_subcommand(1);
  bool quiet = false;
  app.add_flag("-q,--quiet", quiet, "no progress messages on stderr");

  ReduceRequest reduce_request;
  auto* reduce_cmd = app.add_subcommand("reduce", "reduce one tunnel run into an archive");
  reduce_cmd->add_option("config", reduce_request.config, "run configuration (TOML)")->required();
  reduce_cmd->add_option("-o,--output", reduce_request.output_directory, "folder for the archive and exports")
      ->capture_default_str();
  reduce_cmd->add_flag("--force", reduce_request.force, "overwrite an existing archive");
  reduce_cmd->add_option("-j,--threads", reduce_request.threads, "threads to use (0: all cores)")
      ->check(CLI::NonNegativeNumber);
  reduce_cmd->add_flag("-q,--quiet", quiet, "no progress messages on stderr");

  std::string archive;
  auto* inspect_cmd = app.add_subcommand("inspect", "summarise a reduced archive");
  inspect_cmd->add_option("archive", archive, "archive (.h5)")->required();
  auto* verify_cmd = app.add_subcommand("verify", "re-hash the raw inputs named in an archive's provenance");
  verify_cmd->add_option("archive", archive, "archive (.h5)")->required();
  verify_cmd->add_flag("-q,--quiet", quiet, "print only changed or missing inputs");

  auto* stages_cmd = app.add_subcommand("stages", "list the stages a config can enable");

  SynthRequest synth_request;
  auto* synth_cmd = app.add_subcommand("synth", "write a synthetic run (raw files and ground truth) from a scenario");
  synth_cmd->add_option("scenario", synth_request.scenario, "scenario (TOML)")->required();
  synth_cmd->add_option("-o,--output", synth_request.output_directory, "folder for the run")->required();
  synth_cmd->add_flag("--force", synth_request.force, "overwrite a run already in the folder");
  synth_cmd->add_flag("-q,--quiet", quiet, "no progress messages on stderr");

  bool no_report = false;
  reduce_cmd->add_flag("--no-report", no_report, "do not draw report/index.html beside the archive");
  std::string report_folder;
  auto* report_cmd = app.add_subcommand("report", "(re)draw the plots and the HTML report of an archive");
  report_cmd->add_option("archive", archive, "archive (.h5)")->required();
  report_cmd->add_option("-o,--output", report_folder, "folder for the page and plots (default: report/ beside the archive)");

  const calib::CalibCommand calib_cmd = calib::add_calib_command(app);

  campaign::CampaignRequest campaign_request;
  auto* campaign_cmd = app.add_subcommand("campaign", "reduce the runs a campaign manifest lists, in parallel");
  campaign_cmd->add_option("manifest", campaign_request.manifest, "campaign manifest (TOML)")->required();
  campaign_cmd->add_option("-o,--output", campaign_request.output_directory, "folder for the run folders and summary")
      ->capture_default_str();
  campaign_cmd->add_option("-j,--jobs", campaign_request.jobs, "runs reduced at once (0: one per core)")
      ->check(CLI::NonNegativeNumber);
  campaign_cmd->add_flag("--force", campaign_request.force, "reduce every run again, even an up-to-date one");
  campaign_cmd->add_flag("-q,--quiet", quiet, "no progress messages on stderr");
  campaign_cmd->add_flag("!--no-report", campaign_request.draw_report, "draw neither the run reports nor the campaign page");

  try {
    app.parse(argc, argv);
  } catch (const CLI::CallForHelp& e) {
    return app.exit(e);
  } catch (const CLI::CallForAllHelp& e) {
    return app.exit(e);
  } catch (const CLI::CallForVersion& e) {
    return app.exit(e);
  } catch (const CLI::ParseError& e) {
    std::fprintf(stderr, "stallscope: error: %s (see --help)\n", e.what());
    return 2;
  }

  if (*calib_cmd.command) return calib_cmd.run();
  if (*campaign_cmd) {
    campaign_request.quiet = quiet;
    campaign_request.command_line = joined_command_line(argc, argv);
    return campaign::run_campaign(campaign_request, std::cout);
  }
  if (*synth_cmd) {
    synth_request.quiet = quiet;
    return run_synth(synth_request);
  }
  if (*reduce_cmd) {
    reduce_request.command_line = joined_command_line(argc, argv);
    Progress progress = Progress::for_stderr(quiet);
    ReduceSummary summary = reduce(reduce_request, progress);
    std::cout << summary.brief();
    // Drawn from the archive just written: the archive stays the single source.
    if (!no_report) std::cout << "report:  " << report::write_report(summary.archive).index.string() << "\n";
    return 0;
  }
  if (*report_cmd) {
    std::cout << report::write_report(archive, report_folder).index.string() << "\n";
    return 0;
  }
  if (*inspect_cmd) {
    std::cout << inspect_archive(archive);
    return 0;
  }
  if (*verify_cmd) {
    auto checks = verify_archive(archive);
    bool all_same = true;
    for (const auto& c : checks) all_same = all_same && c.state == InputCheck::State::kSame;
    std::cout << describe(checks);
    return all_same ? 0 : 2;
  }
  if (*stages_cmd) {
    for (const auto& s : registered_stages()) std::cout << fmt::format("{:<16} {}\n", s.name, s.summary);
    return 0;
  }
  return 2;
}

}  // namespace

int main(int argc, char** argv) {
  stallscope::keep_large_blocks_for_reuse();
  stallscope::piv::label_regions_in_caller_threads();
  try {
    return run(argc, argv);
  } catch (const stallscope::InputError& e) {
    std::fprintf(stderr, "stallscope: error: %s\n", e.what());
    return 2;
  } catch (const stallscope::UsageError& e) {
    std::fprintf(stderr, "stallscope: error: %s\n", e.what());
    return 2;
  } catch (const std::exception& e) {
    std::fprintf(stderr, "stallscope: internal error: %s\n", e.what());
    return 1;
  }
}
