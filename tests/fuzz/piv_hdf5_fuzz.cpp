// PIV stacks as HDF5 files, byte by byte (PIV_LAYOUT undefined) or laid out
// from the fuzzer's choices (PIV_LAYOUT defined): shapes of /piv/u and /piv/v,
// grid axes, camera times, the valid mask and the units attribute.
#include <vector>

#include "stages/piv/frame_source.hpp"
#include "tests/fuzz/fuzz_support.hpp"
#include "tests/fuzz/h5_layout.hpp"

using namespace stallscope;

static void read_every_frame(const std::filesystem::path& path) {
  fuzz::expect_only_input_errors([&] {
    auto source = piv::open_frame_source(path, "m/s");
    std::vector<piv::Frame> frames;
    for (std::size_t first = 0; first < source->frames(); first += 4)
      source->read(first, std::min<std::size_t>(4, source->frames() - first), frames);
  });
}

extern "C" int LLVMFuzzerTestOneInput(const std::uint8_t* data, std::size_t size) {
#ifdef PIV_LAYOUT
  FuzzedDataProvider in(data, size);
  const auto path = fuzz::scratch_dir() / "piv_layout.h5";
  try {
    h5::File file = h5::File::create(path);
    fuzz::LayoutWriter w(in, file.id());
    const hsize_t frames = in.ConsumeIntegralInRange<hsize_t>(0, 6);
    for (const char* name : {"piv/u", "piv/v", "piv/x_m", "piv/y_m", "piv/time_s", "piv/valid"})
      if (in.ConsumeIntegralInRange(0, 9) > 0) w.dataset(w.name({name}), frames);
    for (int i = in.ConsumeIntegralInRange(0, 2); i > 0; --i)
      w.attribute(w.name({"piv/u", "piv/v"}), "units", {"m/s", "px/frame"});
  } catch (const std::exception&) {
    return 0;  // the layout could not be written (an odd name): nothing to read
  }
#else
  const auto path = fuzz::write_file("piv.h5", fuzz::as_text(data, size));
#endif
  read_every_frame(path);
  return 0;
}
