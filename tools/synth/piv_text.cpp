#include "tools/synth/piv_text.hpp"

#include <fstream>

#include <fmt/format.h>

#include "pipeline/errors.hpp"
#include "stages/piv/frame_source.hpp"

namespace stallscope::synth {

std::int64_t write_text_frames(const std::filesystem::path& stack, const std::filesystem::path& folder) {
  constexpr std::size_t kChunk = 64;
  std::filesystem::create_directories(folder);
  const auto source = piv::open_frame_source(stack, "m/s");
  const piv::Grid& grid = source->grid();
  std::ofstream index(folder / "index.csv", std::ios::binary);
  index << "frame,file,time_s\n";
  std::vector<piv::Frame> frames;
  for (std::size_t first = 0; first < source->frames(); first += kChunk) {
    source->read(first, std::min(kChunk, source->frames() - first), frames);
    for (const piv::Frame& f : frames) {
      const std::string name = fmt::format("frame_{:06d}.txt", f.index);
      index << fmt::format("{},{},{:.17g}\n", f.index, name, f.camera_time_s);
      std::ofstream out(folder / name, std::ios::binary);
      std::string text = fmt::format("# x_m y_m u_{0} v_{0} valid\n", source->units());
      for (std::size_t j = 0; j < grid.ny(); ++j)
        for (std::size_t i = 0; i < grid.nx(); ++i) {
          const std::size_t c = j * grid.nx() + i;
          text += fmt::format("{:.17g} {:.17g} {:.9g} {:.9g} {}\n", grid.x_m[i], grid.y_m[j], f.u[c], f.v[c],
                              static_cast<int>(f.valid[c]));
        }
      out << text;
      if (!out) throw InputError((folder / name).string(), "cannot write the PIV text frame (disk full?)");
    }
  }
  if (!index) throw InputError((folder / "index.csv").string(), "cannot write the PIV index (disk full?)");
  return static_cast<std::int64_t>(source->frames());
}

}  // namespace stallscope::synth
