#pragma once
// The campaign manifest (TOML, strict): the runs of a test campaign, each a
// run config of its own or the campaign's shared base config with per-run
// overrides of files and settings; static-polar runs and repeats are marked.
//
//   [campaign]
//   name = "kr12-pitch-matrix"   # default: the manifest's file stem
//   description = "..."          # default: ""
//   base = "base.toml"           # shared base config for runs without `config`
//
//   [[runs]]
//   name = "k050-a10"            # required with the base; with `config` it renames [run] name
//   config = "runs/k050.toml"    # this run's own config instead of the base
//   kind = "dynamic"             # "dynamic" (default) | "static_polar"
//   repeat_of = "k050"           # a repeat of that run (same nominal condition)
//   [runs.files]                 # path overrides, relative to the manifest
//   daq.file = "raw/k050/daq.h5"
//   [runs.settings]              # any other overrides, e.g. conditions
//   conditions.velocity_m_s = 24.5
//
// Every problem with the manifest itself (an unknown key, a file that is not
// there, an override of the wrong type) is an InputError naming the manifest's
// line before anything is reduced. A run whose own config cannot be read is
// not a manifest error: that run fails and the others go on.
#include <filesystem>
#include <string>
#include <vector>

namespace stallscope::campaign {

enum class RunKind { kDynamic, kStaticPolar };
std::string_view kind_name(RunKind kind);

struct CampaignRun {
  std::string name;                 // the archive is <out>/<name>/<name>.h5
  RunKind kind = RunKind::kDynamic;
  std::string repeat_of;            // empty: not a repeat
  std::filesystem::path config;     // the file the run starts from (its own config or the base)
  // The merged config when the run overrides anything (its name included);
  // empty when the run is its config file as it stands.
  std::string config_text;
  std::string problem;              // set when the run cannot be reduced at all (its config is unreadable)

  // What reduce() is given as the config path: the file itself, or for a
  // merged config a name beside the base (so its relative paths still hold)
  // that says which run it was merged for.
  std::filesystem::path config_name() const;
};

struct Manifest {
  std::filesystem::path path;
  std::string text;
  std::string name, description;
  std::vector<CampaignRun> runs;
};

Manifest load_manifest(const std::filesystem::path& path);
Manifest parse_manifest(std::string text, const std::filesystem::path& path);

}  // namespace stallscope::campaign
