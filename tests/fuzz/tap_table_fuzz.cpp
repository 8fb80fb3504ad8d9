// Tap tables (CSV): header, surfaces, statuses, numbers, duplicate taps, and
// the table's round trip through the run store.
#include "calib/lines/tap_table.hpp"
#include "tests/fuzz/fuzz_support.hpp"

using namespace stallscope;

extern "C" int LLVMFuzzerTestOneInput(const std::uint8_t* data, std::size_t size) {
  fuzz::expect_only_input_errors([&] {
    calib::TapTable taps = calib::parse_tap_table(std::string(fuzz::as_text(data, size)), "fuzz/taps.csv");
    for (std::size_t i = 0; i < taps.taps.size(); ++i) (void)taps.where(i);
    (void)calib::from_store_table(calib::to_store_table(taps), "fuzz/taps.csv");
  });
  return 0;
}
