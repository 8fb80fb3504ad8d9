#pragma once
// Small campaigns for the campaign tests: CSV DAQ files, a base config and a
// manifest with per-run overrides, all in a scratch folder.
#include <fmt/format.h>

#include <algorithm>
#include <filesystem>
#include <map>
#include <string>

#include "pipeline/archive.hpp"
#include "tests/support/test_support.hpp"

namespace stallscope::testing {

// A DAQ record: time, encoder volts and Pitot volts, `samples` rows.
inline std::string daq_csv(std::size_t samples, double offset) {
  std::string s = "time_s,alpha_enc,q_pitot\n";
  for (std::size_t i = 0; i < samples; ++i)
    s += fmt::format("{:.6f},{:.6f},{:.6f}\n", 0.001 * static_cast<double>(i),
                     offset + 0.5 * std::sin(0.01 * static_cast<double>(i)), 2.0 + 0.01 * offset);
  return s;
}

inline std::string base_config() {
  return "[run]\nname = \"base\"\nchord_m = 0.2\nairfoil = \"KR-12 section\"\n\n[daq]\nfile = \"raw/base.csv\"\n\n"
         "[daq.roles]\nangle = \"alpha_enc\"\n\n[conditions]\nvelocity_m_s = 20.0\ntemperature_c = 20.0\n";
}

// A campaign of `runs` runs made from one base config: run rNN reads
// raw/rNN.csv and runs at 15 + 5 NN m/s. Returns the manifest path.
inline std::filesystem::path write_campaign(const ScratchDir& dir, int runs, std::size_t samples = 50,
                                            const std::string& extra_runs = "") {
  dir.write("raw/base.csv", daq_csv(samples, 0.0));
  dir.write("base.toml", base_config());
  std::string m = "[campaign]\nname = \"kr12-test\"\ndescription = \"an invented test campaign\"\nbase = \"base.toml\"\n";
  for (int i = 0; i < runs; ++i) {
    const std::string name = fmt::format("r{:02d}", i);
    dir.write("raw/" + name + ".csv", daq_csv(samples, 0.1 * i));
    m += fmt::format("\n[[runs]]\nname = \"{}\"\n[runs.files]\ndaq.file = \"raw/{}.csv\"\n[runs.settings]\n"
                     "conditions.velocity_m_s = {:.1f}\n",
                     name, name, 15.0 + 5.0 * i);
  }
  return dir.write("campaign.toml", m + extra_runs);
}

// The bundled demo campaign (three synthetic runs in sample_data/kestrel_ridge)
// as a manifest in dir; empty if the demo runs are not there.
inline std::filesystem::path write_demo_campaign(const ScratchDir& dir) {
  std::string m = "[campaign]\nname = \"kestrel-ridge-a\"\n";
  for (int i = 1; i <= 3; ++i) {
    const auto config = kSourceDir / fmt::format("sample_data/kestrel_ridge/run{}/reduce.toml", i);
    if (!std::filesystem::exists(config)) return {};
    m += fmt::format("\n[[runs]]\nconfig = \"{}\"\n", config.string());
  }
  return dir.write("demo_campaign.toml", m);
}

inline CommandResult run_campaign_cli(const std::filesystem::path& manifest, const std::filesystem::path& out,
                                      const std::string& args = "") {
  return run_stallscope("campaign -q " + shell_quote(manifest.string()) + " -o " + shell_quote(out.string()) + " " +
                        args);
}

// Every value an archive holds, provenance aside, in full precision: two
// reductions of the same run give the same text.
inline std::string archive_contents(const std::filesystem::path& archive) {
  RunStore store = read_archive(archive);
  std::string s;
  struct Print {
    std::string& s;
    void operator()(const Scalar& v) const { s += fmt::format("{:.17g} {}", v.value, v.units); }
    void operator()(const Text& v) const { s += v.value; }
    void operator()(const Series& v) const {
      for (double x : v.values) s += fmt::format("{:.17g} ", x);
    }
    void operator()(const Matrix& v) const {
      for (Eigen::Index i = 0; i < v.values.size(); ++i) s += fmt::format("{:.17g} ", v.values.data()[i]);
    }
    void operator()(const FieldStack& v) const {
      for (float x : v.values) s += fmt::format("{:.9g} ", x);
    }
    void operator()(const Table& t) const {
      for (const auto& c : t.columns) {
        s += c.name + ":";
        std::visit([&](const auto& values) {
          for (const auto& x : values) s += fmt::format("{} ", x);
        }, c.data);
      }
    }
  };
  for (const auto& [key, entry] : store.entries()) {
    s += key + " = ";
    std::visit(Print{s}, entry.value);
    s += "\n";
  }
  return s;
}

// Every CSV in a folder tree, by path relative to it.
inline std::map<std::string, std::string> csv_files(const std::filesystem::path& root) {
  std::map<std::string, std::string> out;
  for (const auto& e : std::filesystem::recursive_directory_iterator(root))
    if (e.path().extension() == ".csv") out[std::filesystem::relative(e.path(), root).string()] = read_text(e.path());
  return out;
}

}  // namespace stallscope::testing
