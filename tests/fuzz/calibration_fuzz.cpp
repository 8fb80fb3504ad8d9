// Transducer calibration files (TOML): id, date, kind, per-channel
// coefficients. A file that parses must also survive being written back out
// and read again, with the same channels and coefficients.
#include <cstdlib>

#include "calib/transducers/calibration_file.hpp"
#include "tests/fuzz/fuzz_support.hpp"

using namespace stallscope;

extern "C" int LLVMFuzzerTestOneInput(const std::uint8_t* data, std::size_t size) {
  fuzz::expect_only_input_errors([&] {
    calib::CalibrationFile cal = calib::parse_calibration(std::string(fuzz::as_text(data, size)), "fuzz/cal.toml");
    for (const auto& [channel, c] : cal.channels) {
      (void)cal.where(channel);
      (void)c.evaluate(1.0);
    }
    calib::CalibrationFile again = calib::parse_calibration(calib::format_calibration(cal), "fuzz/again.toml");
    if (again.channels.size() != cal.channels.size() || again.id != cal.id) std::abort();
    for (const auto& [channel, c] : cal.channels)
      if (again.channels.at(channel).coefficients != c.coefficients) std::abort();
  });
  return 0;
}
