// Synthetic-run scenarios (TOML): every section the generator reads, with
// its range checks (the run itself is not generated: that is not parsing).
#include "pipeline/config.hpp"
#include "tests/fuzz/fuzz_support.hpp"
#include "tools/synth/scenario.hpp"

using namespace stallscope;

extern "C" int LLVMFuzzerTestOneInput(const std::uint8_t* data, std::size_t size) {
  fuzz::expect_only_input_errors([&] {
    ConfigFile file = ConfigFile::parse(std::string(fuzz::as_text(data, size)), "fuzz/scenario.toml");
    synth::Scenario s = synth::read_scenario(file);
    (void)synth::record_duration_s(s);
  });
  return 0;
}
