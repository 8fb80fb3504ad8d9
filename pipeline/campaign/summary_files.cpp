#include "pipeline/campaign/summary_files.hpp"

#include "pipeline/csv_writer.hpp"
#include "pipeline/errors.hpp"
#include "pipeline/hdf5.hpp"
#include "pipeline/provenance.hpp"
#include "stallscope/version.hpp"

namespace stallscope::campaign {

namespace fs = std::filesystem;

namespace {

bool has_repeats(const Manifest& m) {
  for (const auto& r : m.runs)
    if (!r.repeat_of.empty()) return true;
  return false;
}

bool has_static_polar(const Manifest& m) {
  for (const auto& r : m.runs)
    if (r.kind == RunKind::kStaticPolar) return true;
  return false;
}

void write_table(hid_t file, const std::string& path, const Table& table) {
  h5::Id group = h5::open_or_create_group(file, path);
  std::vector<std::string> names;
  for (const auto& c : table.columns) {
    names.push_back(c.name);
    const std::string cpath = path + "/" + c.name;
    if (const auto* d = std::get_if<std::vector<double>>(&c.data))
      h5::write_numbers(file, cpath, d->data(), {d->size()}, c.units.empty() ? "1" : c.units);
    else if (const auto* i = std::get_if<std::vector<std::int64_t>>(&c.data))
      h5::write_integers(file, cpath, i->data(), i->size(), c.units.empty() ? "1" : c.units);
    else
      h5::write_texts(file, cpath, std::get<std::vector<std::string>>(c.data));
  }
  h5::write_text_list_attribute(group.get(), "columns", names);
}

void write_h5(const fs::path& path, const CampaignSummary& s, const Manifest& m, const std::string& command_line) {
  const fs::path partial = path.string() + ".partial";
  try {
    h5::File file = h5::File::create(partial);
    {
      h5::Id g = h5::open_or_create_group(file.id(), "campaign");
      h5::write_attribute(g.get(), "name", m.name);
      h5::write_attribute(g.get(), "description", m.description);
      h5::write_attribute(g.get(), "manifest", fs::absolute(m.path).lexically_normal().string());
      h5::write_attribute(g.get(), "tool_version", std::string(kToolVersion));
      h5::write_attribute(g.get(), "git_commit", std::string(kGitCommit));
      h5::write_attribute(g.get(), "created_utc", utc_now_iso8601());
      h5::write_attribute(g.get(), "command_line", command_line);
      h5::write_attribute(g.get(), "runs", static_cast<std::int64_t>(m.runs.size()));
      h5::write_attribute(g.get(), "failed", static_cast<std::int64_t>(s.failed));
      h5::write_text(file.id(), "campaign/manifest_toml", m.text);
    }
    write_table(file.id(), "runs", s.runs);
    write_table(file.id(), "events", s.events);
    write_table(file.id(), "stall", s.stall);
    if (has_static_polar(m)) write_table(file.id(), "static_polar", s.static_polar);
    if (has_repeats(m)) write_table(file.id(), "repeatability", s.repeatability);
    if (H5Fflush(file.id(), H5F_SCOPE_GLOBAL) < 0) throw InputError(partial.string(), "flush failed (disk full?)");
    file.close();
  } catch (...) {
    std::error_code ec;
    fs::remove(partial, ec);
    throw;
  }
  fs::rename(partial, path);
}

}  // namespace

std::vector<fs::path> write_summary(const CampaignSummary& summary, const Manifest& manifest, const fs::path& directory,
                                    const std::string& command_line) {
  std::vector<fs::path> written;
  auto csv = [&](const std::string& name, const Table& t) {
    write_csv_file(directory / name, t);
    written.push_back(directory / name);
  };
  csv("campaign_runs.csv", summary.runs);
  csv("campaign_events.csv", summary.events);
  csv("campaign_stall.csv", summary.stall);
  if (has_static_polar(manifest)) csv("campaign_static_polar.csv", summary.static_polar);
  if (has_repeats(manifest)) csv("campaign_repeatability.csv", summary.repeatability);
  write_h5(directory / "campaign.h5", summary, manifest, command_line);
  written.insert(written.begin(), directory / "campaign.h5");
  return written;
}

}  // namespace stallscope::campaign
