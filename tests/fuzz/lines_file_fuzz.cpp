// Lines files (TOML): [lines.NAME] with segments or a measured response.
#include "calib/lines/lines_file.hpp"
#include "tests/fuzz/fuzz_support.hpp"

using namespace stallscope;

extern "C" int LLVMFuzzerTestOneInput(const std::uint8_t* data, std::size_t size) {
  fuzz::expect_only_input_errors([&] {
    calib::LinesFile lines = calib::parse_lines_file(std::string(fuzz::as_text(data, size)), "fuzz/lines.toml");
    for (const auto& [name, _] : lines.lines) (void)lines.where(name);
  });
  return 0;
}
