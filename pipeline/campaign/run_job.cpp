#include "pipeline/campaign/run_job.hpp"

#include <chrono>
#include <fstream>
#include <sstream>
#include <stdexcept>

#include "pipeline/archive.hpp"
#include "pipeline/errors.hpp"
#include "pipeline/inspect.hpp"
#include "pipeline/reduce.hpp"
#include "pipeline/report/report.hpp"
#include "pipeline/sha256.hpp"

namespace stallscope::campaign {

namespace fs = std::filesystem;

std::string_view state_name(RunOutcome::State state) {
  switch (state) {
    case RunOutcome::State::kReduced: return "reduced";
    case RunOutcome::State::kUpToDate: return "up to date";
    case RunOutcome::State::kFailed: break;
  }
  return "failed";
}

std::string RunOutcome::serialised() const {
  std::ostringstream out;
  out.precision(17);
  out << index << '\n' << static_cast<int>(state) << '\n' << seconds << '\n' << rank << '\n' << error;
  return out.str();
}

RunOutcome RunOutcome::deserialised(const std::string& text) {
  std::istringstream in(text);
  RunOutcome o;
  int state = -1;
  in >> o.index >> state >> o.seconds >> o.rank;
  if (!in || state < 0 || state > 2) throw std::logic_error("malformed run outcome: '" + text + "'");
  o.state = static_cast<State>(state);
  in.get();  // the newline before the error text
  std::getline(in, o.error, '\0');
  return o;
}

fs::path run_folder(const JobSettings& settings, const CampaignRun& run) { return settings.output_directory / run.name; }

fs::path run_archive(const JobSettings& settings, const CampaignRun& run) {
  return run_folder(settings, run) / (run.name + ".h5");
}

namespace {

bool differs(std::string* why, std::string text) {
  if (why) *why = std::move(text);
  return false;
}

std::string file_text(const fs::path& path) {
  std::ifstream in(path, std::ios::binary);
  if (!in) throw InputError(path.string(), "config file cannot be read");
  std::ostringstream text;
  text << in.rdbuf();
  return text.str();
}

std::string one_line(std::string s) {
  for (char& c : s)
    if (c == '\n' || c == '\r') c = ' ';
  return s;
}

// Leftovers of an interrupted reduction ("<run>.h5.partial", CSV partials).
void remove_partials(const fs::path& folder) {
  std::error_code ec;
  if (!fs::is_directory(folder, ec)) return;
  for (const auto& e : fs::directory_iterator(folder, ec))
    if (e.path().extension() == ".partial") fs::remove(e.path(), ec);
}

}  // namespace

bool archive_up_to_date(const CampaignRun& run, const fs::path& archive, std::string* why) {
  std::error_code ec;
  if (!fs::is_regular_file(archive, ec)) return differs(why, "no archive yet");
  Provenance p;
  try {
    p = read_provenance(archive);
  } catch (const std::exception& e) {
    return differs(why, std::string("the archive cannot be read back: ") + e.what());
  }
  // The config text stands for every setting; comparing the text is comparing its hash.
  const std::string text = run.config_text.empty() ? file_text(run.config) : run.config_text;
  if (sha256_hex(text) != sha256_hex(p.config_toml)) return differs(why, "the config changed");
  if (fs::absolute(run.config_name()).lexically_normal().string() != p.config_path)
    return differs(why, "the config is another file");
  for (const auto& check : verify_archive(archive))
    if (check.state != InputCheck::State::kSame)
      return differs(why, "input " + check.path +
                              (check.state == InputCheck::State::kMissing ? " is missing" : " changed"));
  for (const auto& c : p.calibrations)
    if (!fs::is_regular_file(c.file, ec) || sha256_file(c.file) != c.sha256)
      return differs(why, "calibration " + c.id + " (" + c.file + ") changed");
  return true;
}

RunOutcome reduce_campaign_run(const CampaignRun& run, std::size_t index, const JobSettings& settings) {
  using Clock = std::chrono::steady_clock;
  const auto started = Clock::now();
  RunOutcome outcome;
  outcome.index = index;
  try {
    if (!run.problem.empty()) throw InputError("", run.problem);
    const fs::path archive = run_archive(settings, run);
    if (!settings.force && archive_up_to_date(run, archive)) {
      outcome.state = RunOutcome::State::kUpToDate;
    } else {
      remove_partials(run_folder(settings, run));
      ReduceRequest request;
      request.config = run.config_name();
      request.config_text = run.config_text;
      if (!run.config_text.empty()) request.config_sources = {run.config};
      request.output_directory = run_folder(settings, run);
      request.force = true;  // an archive still there is stale or forced; it is replaced only on success
      request.threads = settings.threads;
      request.command_line = settings.command_line;
      Progress quiet(Progress::Mode::kQuiet);
      reduce(request, quiet);
      outcome.state = RunOutcome::State::kReduced;
    }
    // Drawn from the archive, so an up-to-date run only needs a missing page.
    if (settings.draw_report &&
        (outcome.state == RunOutcome::State::kReduced || !fs::exists(run_folder(settings, run) / "report" / "index.html")))
      report::write_report(archive);
  } catch (const InputError& e) {
    outcome.error = one_line(e.what());
  } catch (const UsageError& e) {
    outcome.error = one_line(e.what());
  } catch (const std::exception& e) {
    outcome.error = one_line(std::string("internal error: ") + e.what());
  } catch (...) {
    outcome.error = "internal error: unknown exception";
  }
  if (!outcome.error.empty()) outcome.state = RunOutcome::State::kFailed;
  outcome.seconds = std::chrono::duration<double>(Clock::now() - started).count();
  return outcome;
}

}  // namespace stallscope::campaign
