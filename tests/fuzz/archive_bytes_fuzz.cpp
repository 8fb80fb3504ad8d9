// Archives byte by byte (truncated, bit-flipped, half-copied files): what
// `inspect` reads must fail as an InputError, never crash.
#include "pipeline/archive.hpp"
#include "pipeline/inspect.hpp"
#include "tests/fuzz/fuzz_support.hpp"

using namespace stallscope;

extern "C" int LLVMFuzzerTestOneInput(const std::uint8_t* data, std::size_t size) {
  const auto path = fuzz::write_file("archive.h5", fuzz::as_text(data, size));
  fuzz::expect_only_input_errors([&] { (void)read_provenance(path); });
  fuzz::expect_only_input_errors([&] { (void)read_archive(path); });
  fuzz::expect_only_input_errors([&] { (void)inspect_archive(path); });
  return 0;
}
