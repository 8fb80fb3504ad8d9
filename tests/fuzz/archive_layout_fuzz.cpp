// Archives as `inspect`, `verify` and `report` meet them: damaged or hand-edited
// files with provenance tables whose columns are missing or of the wrong type,
// units attributes that are numbers, datasets of odd rank.
#include "pipeline/archive.hpp"
#include "pipeline/inspect.hpp"
#include "tests/fuzz/fuzz_support.hpp"
#include "tests/fuzz/h5_layout.hpp"

using namespace stallscope;

namespace {

const std::vector<std::string> kTables = {"provenance/inputs", "provenance/calibrations", "provenance/stages",
                                          "cycles", "events/per_cycle", "events/summary", "pressure/taps"};
const std::vector<std::string> kColumns = {"path", "role", "bytes", "sha256", "id", "file", "name", "seconds",
                                           "parameters", "cycle", "event", "quantity", "valid", "tap"};
const std::vector<std::string> kDatasets = {"provenance/config_toml", "run/time_s", "loads/cn", "loads/time_s",
                                            "pressure/cp", "piv/u", "motion/alpha_deg", "phase/bin_deg"};
const std::vector<std::string> kAttributes = {"tool_version", "git_commit", "created_utc", "command_line", "host",
                                              "config_path", "units", "columns", "chord_m", "U_inf_m_s", "name"};

void write_layout(fuzz::LayoutWriter& w) {
  FuzzedDataProvider& in = w.in();
  h5::open_or_create_group(w.file(), "provenance");
  const int tables = in.ConsumeIntegralInRange(0, 4);
  for (int t = 0; t < tables; ++t) {
    const std::string table = w.name(kTables);
    h5::open_or_create_group(w.file(), table);
    const int columns = in.ConsumeIntegralInRange(0, 5);
    for (int c = 0; c < columns; ++c) w.dataset(table + "/" + w.name(kColumns), 3);
    w.attribute(table, "columns", kColumns);
  }
  const int datasets = in.ConsumeIntegralInRange(0, 4);
  for (int d = 0; d < datasets; ++d) w.dataset(w.name(kDatasets), 4);
  const int attributes = in.ConsumeIntegralInRange(0, 6);
  for (int a = 0; a < attributes; ++a)
    w.attribute(w.name({"provenance", "run", "loads/cn", "pressure/cp", "cycles", ""}), w.name(kAttributes), kColumns);
}

}  // namespace

extern "C" int LLVMFuzzerTestOneInput(const std::uint8_t* data, std::size_t size) {
  FuzzedDataProvider in(data, size);
  const auto path = fuzz::scratch_dir() / "archive_layout.h5";
  try {
    h5::File file = h5::File::create(path);
    fuzz::LayoutWriter w(in, file.id());
    write_layout(w);
  } catch (const std::exception&) {
    return 0;  // the layout could not be written (an odd name): nothing to read
  }
  fuzz::expect_only_input_errors([&] { (void)read_provenance(path); });
  fuzz::expect_only_input_errors([&] { (void)read_archive(path); });
  fuzz::expect_only_input_errors([&] { (void)inspect_archive(path); });
  return 0;
}
