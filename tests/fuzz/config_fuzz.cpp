// Run configs (TOML): parsing, every registered stage's configure() with its
// range checks, the unknown-key check, the provenance echo and scheduling.
#include <memory>
#include <vector>

#include "pipeline/config.hpp"
#include "pipeline/registry.hpp"
#include "pipeline/scheduler.hpp"
#include "tests/fuzz/fuzz_support.hpp"

using namespace stallscope;

extern "C" int LLVMFuzzerTestOneInput(const std::uint8_t* data, std::size_t size) {
  fuzz::expect_only_input_errors([&] {
    ConfigFile config = ConfigFile::parse(std::string(fuzz::as_text(data, size)), "fuzz/run.toml");
    std::vector<std::unique_ptr<Stage>> stages;
    for (const auto& info : registered_stages()) {
      ConfigSection section(config, std::string(info.name));
      if (!section.present() && info.name != "run") continue;
      if (!section.boolean("enabled", true)) continue;
      auto stage = make_stage(info.name);
      stage->configure(section);
      section.reject_unknown_keys();
      (void)section.parameters_toml();
      stages.push_back(std::move(stage));
    }
    (void)schedule(stages, config.path().string());
  });
  return 0;
}
