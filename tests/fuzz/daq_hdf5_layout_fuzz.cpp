// DAQ HDF5 files of every shape the fuzzer can think of: /daq/time_s and
// /daq/volts of wrong rank, length, type or value, the `channels` attribute
// missing, too short, of the wrong type or with repeated names.
#include "stages/ingest/daq_file.hpp"
#include "tests/fuzz/fuzz_support.hpp"
#include "tests/fuzz/h5_layout.hpp"

using namespace stallscope;

extern "C" int LLVMFuzzerTestOneInput(const std::uint8_t* data, std::size_t size) {
  FuzzedDataProvider in(data, size);
  const auto path = fuzz::scratch_dir() / "daq_layout.h5";
  try {
    h5::File file = h5::File::create(path);
    fuzz::LayoutWriter w(in, file.id());
    const hsize_t rows = in.ConsumeIntegralInRange<hsize_t>(0, 12);
    if (in.ConsumeIntegralInRange(0, 9) > 0) w.dataset(w.name({"daq/time_s"}), rows);
    if (in.ConsumeIntegralInRange(0, 9) > 0) w.dataset(w.name({"daq/volts"}), rows);
    const int attributes = in.ConsumeIntegralInRange(0, 2);
    for (int i = 0; i < attributes; ++i)
      w.attribute(w.name({"daq/volts"}), w.name({"channels"}), {"alpha_enc", "q_pitot", "p01"});
  } catch (const std::exception&) {
    return 0;  // the layout could not be written (an odd name): nothing to read
  }
  fuzz::expect_only_input_errors([&] { (void)read_daq_file(path); });
  return 0;
}
