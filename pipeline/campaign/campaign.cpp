#include "pipeline/campaign/campaign.hpp"

#include <chrono>
#include <cstdio>
#include <optional>
#include <sstream>

#include <fmt/format.h>

#include "pipeline/archive.hpp"
#include "pipeline/campaign/local_runs.hpp"
#include "pipeline/campaign/manifest.hpp"
#include "pipeline/campaign/mpi_runs.hpp"
#include "pipeline/campaign/parallelism.hpp"
#include "pipeline/campaign/summary.hpp"
#include "pipeline/campaign/summary_files.hpp"
#include "pipeline/errors.hpp"
#include "pipeline/progress.hpp"
#include "pipeline/report/campaign_page.hpp"
#include "stages/fit/fit_command.hpp"

namespace stallscope::campaign {

namespace fs = std::filesystem;

namespace {

// The output folder is made and probed before any run starts.
void check_output_folder(const fs::path& directory) {
  ArchiveTarget probe{directory, "campaign", true};
  check_archive_target(probe);
}

std::string report(const Manifest& m, const std::vector<RunOutcome>& outcomes, std::size_t failed, double seconds,
                   const std::vector<fs::path>& files) {
  std::size_t reduced = 0, current = 0;
  for (const auto& o : outcomes) {
    reduced += o.state == RunOutcome::State::kReduced;
    current += o.state == RunOutcome::State::kUpToDate;
  }
  std::string s = fmt::format("campaign '{}': {} runs, {} reduced, {} up to date, {} failed, in {:.2f} s\n", m.name,
                              m.runs.size(), reduced, current, failed, seconds);
  for (std::size_t i = 0; i < m.runs.size(); ++i) {
    const RunOutcome& o = outcomes[i];
    if (o.state == RunOutcome::State::kFailed)
      s += fmt::format("  {:<24} FAILED      {}\n", m.runs[i].name, o.error);
    else
      s += fmt::format("  {:<24} {:<11} {:8.2f} s\n", m.runs[i].name, state_name(o.state), o.seconds);
  }
  for (const auto& f : files) s += fmt::format("summary: {}\n", f.string());
  return s;
}

// The campaign page in <out>/report, linking each run's own report.
fs::path draw_campaign_page(const CampaignSummary& summary, const Manifest& m, const JobSettings& settings,
                            const std::vector<fs::path>& files) {
  report::CampaignPage page;
  page.name = m.name;
  page.description = m.description;
  page.runs = summary.runs;
  page.stall = summary.stall;
  const fs::path folder = settings.output_directory / "report";
  for (const auto& run : m.runs) {
    const fs::path run_page = run_folder(settings, run) / "report" / "index.html";
    page.run_reports.push_back(fs::exists(run_page) ? fs::relative(run_page, folder).generic_string() : "");
  }
  for (const auto& f : files) page.files.push_back(fs::relative(f, folder).generic_string());
  return report::write_campaign_report(page, folder).index;
}

}  // namespace

int run_campaign(const CampaignRequest& request, std::ostream& out) {
  using Clock = std::chrono::steady_clock;
  const auto started = Clock::now();
  // Every rank reads the manifest and checks the folder before MPI starts, so
  // a bad manifest is the same one clear error (exit 2) on every rank.
  Manifest manifest = load_manifest(request.manifest);
  check_output_folder(request.output_directory);
  const bool mpi = started_by_mpirun() && (built_with_mpi() || mpirun_world_size() > 1);
  if (mpi && !built_with_mpi())
    throw UsageError(fmt::format("started by mpirun with {} processes, but this stallscope was built without MPI "
                                 "(configure with -DSTALLSCOPE_WITH_MPI=ON)",
                                 mpirun_world_size()));

  std::optional<MpiSession> session;
  if (mpi) session.emplace();
  const bool root = !session || session->rank() == 0;
  // Unbound ranks on one node share its cores; ranks bound by mpirun have their own.
  const int sharing = session && !bound_to_part_of_machine() ? session->local_size() : 1;
  const Parallelism plan = plan_parallelism(request.jobs, manifest.runs.size(), available_cores(), sharing);

  JobSettings settings;
  settings.output_directory = request.output_directory;
  settings.force = request.force;
  settings.threads = plan.threads_per_run;
  settings.command_line = request.command_line;
  settings.draw_report = request.draw_report;

  Progress progress = Progress::for_stderr(request.quiet || !root);
  progress.note(fmt::format("campaign '{}': {} runs, {} at a time{}, {} thread{} each", manifest.name,
                            manifest.runs.size(), plan.concurrent_runs,
                            session ? fmt::format(" on each of {} ranks", session->size()) : "",
                            plan.threads_per_run, plan.threads_per_run == 1 ? "" : "s"));
  std::size_t finished = 0;
  auto on_outcome = [&](const RunOutcome& o) {
    ++finished;
    const std::string& name = manifest.runs[o.index].name;
    const std::string where = session ? fmt::format(" on rank {}", o.rank) : "";
    if (o.state == RunOutcome::State::kFailed)
      progress.note(fmt::format("[{}/{}] {} FAILED{}: {}", finished, manifest.runs.size(), name, where, o.error));
    else
      progress.note(fmt::format("[{}/{}] {} {}{} ({:.2f} s)", finished, manifest.runs.size(), name,
                                state_name(o.state), where, o.seconds));
  };

  std::vector<RunOutcome> outcomes = session ? session->reduce(manifest, settings, plan.concurrent_runs, on_outcome)
                                             : reduce_locally(manifest, settings, plan.concurrent_runs, on_outcome);
  int code = 0;
  if (root) {
    try {
      CampaignSummary summary = summarise(manifest, outcomes, settings);
      for (std::size_t i = 0; i < manifest.runs.size(); ++i)
        if (outcomes[i].state != RunOutcome::State::kFailed && summary.failed) {
          // A run whose archive could not be read back counts as failed too.
          const auto& status = summary.runs.texts("status")[i];
          if (status == "failed") {
            outcomes[i].state = RunOutcome::State::kFailed;
            outcomes[i].error = summary.runs.texts("error")[i];
          }
        }
      auto files = write_summary(summary, manifest, request.output_directory, request.command_line);
      std::vector<std::filesystem::path> archives;  // the campaign-wide Goman-Khrabrov fit, if runs have [fit]
      for (std::size_t i = 0; i < manifest.runs.size(); ++i)
        if (outcomes[i].state != RunOutcome::State::kFailed) archives.push_back(run_archive(settings, manifest.runs[i]));
      std::ostringstream fit_lines;  // per-run lines repeat the runs' own summaries: only the files are listed
      // The runs are done (every rank's): the shared fit has the cores this process may use.
      const int threads = available_cores();
      for (auto& f : fit::fit_campaign(archives, request.output_directory / "fit", threads, fit_lines))
        files.push_back(f);
      if (request.draw_report) files.push_back(draw_campaign_page(summary, manifest, settings, files));
      const double seconds = std::chrono::duration<double>(Clock::now() - started).count();
      out << report(manifest, outcomes, summary.failed, seconds, files);
      out.flush();
      for (std::size_t i = 0; i < manifest.runs.size(); ++i)
        if (outcomes[i].state == RunOutcome::State::kFailed)
          std::fprintf(stderr, "stallscope: error: run %s: %s\n", manifest.runs[i].name.c_str(),
                       outcomes[i].error.c_str());
      code = summary.failed ? 2 : 0;
    } catch (...) {
      if (session) session->shared_exit_code(2);  // the other ranks must not wait for rank 0 forever
      throw;
    }
  }
  return session ? session->shared_exit_code(code) : code;
}

}  // namespace stallscope::campaign
