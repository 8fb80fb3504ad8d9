// Campaign manifests (TOML): [campaign], [[runs]] with their files and
// settings overrides merged into each run's config. Paths resolve in the
// scratch folder, where run.toml is a small good run config.
#include "pipeline/campaign/manifest.hpp"
#include "tests/fuzz/fuzz_support.hpp"

using namespace stallscope;

extern "C" int LLVMFuzzerTestOneInput(const std::uint8_t* data, std::size_t size) {
  static const bool prepared = [] {
    fuzz::write_file("base.toml", "[run]\nname = \"base\"\nchord_m = 0.15\n\n[daq]\nfile = \"daq.csv\"\n\n"
                                  "[conditions]\nvelocity_m_s = 25.0\n");
    fuzz::write_file("run.toml", "[run]\nname = \"own\"\nchord_m = 0.2\n");
    return true;
  }();
  (void)prepared;
  fuzz::expect_only_input_errors([&] {
    (void)campaign::parse_manifest(std::string(fuzz::as_text(data, size)), fuzz::scratch_dir() / "campaign.toml");
  });
  return 0;
}
