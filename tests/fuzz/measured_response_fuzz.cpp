// Measured line responses (CSV frequency_hz,gain,phase_deg), and evaluating
// one inside and at the ends of its frequency range.
#include <stdexcept>

#include "calib/lines/lines_file.hpp"
#include "tests/fuzz/fuzz_support.hpp"

using namespace stallscope;

extern "C" int LLVMFuzzerTestOneInput(const std::uint8_t* data, std::size_t size) {
  fuzz::expect_only_input_errors([&] {
    calib::MeasuredResponse r =
        calib::parse_measured_response(std::string(fuzz::as_text(data, size)), "fuzz/line.csv");
    const double top = r.max_frequency_hz();
    for (double f : {0.0, 0.25 * top, 0.5 * top, top}) (void)r.at(f);
  });
  return 0;
}
