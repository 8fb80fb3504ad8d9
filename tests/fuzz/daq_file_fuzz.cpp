// DAQ records, CSV or HDF5 (told by content): the reader, the finite and
// monotonic checks, and the daq stage's sample-rate and role checks.
#include "pipeline/config.hpp"
#include "pipeline/run_context.hpp"
#include "stages/daq.hpp"
#include "tests/fuzz/fuzz_support.hpp"

using namespace stallscope;

#ifndef DAQ_FILE_NAME
#define DAQ_FILE_NAME "daq.csv"
#endif

extern "C" int LLVMFuzzerTestOneInput(const std::uint8_t* data, std::size_t size) {
  const auto file = fuzz::write_file(DAQ_FILE_NAME, fuzz::as_text(data, size));
  fuzz::expect_only_input_errors([&] {
    ConfigFile config = ConfigFile::parse("[daq]\nfile = \"" + file.string() +
                                              "\"\n[daq.roles]\nangle = \"alpha_enc\"\nq_ref = \"q_pitot\"\n",
                                          fuzz::scratch_dir() / "run.toml");
    ConfigSection section(config, "daq");
    DaqStage stage;
    stage.configure(section);
    RunStore store;
    Provenance provenance;
    Progress progress(Progress::Mode::kQuiet);
    RunContext context(store, provenance, progress);
    stage.run(context);
  });
  return 0;
}
