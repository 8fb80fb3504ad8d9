// PIV text frames: a folder with index.csv (frame,file,time_s) and frames
// `x y u v [valid]`. The input is cut at lines "====": the first part is
// index.csv, the k-th after it is the file "f<k>.txt".
#include <filesystem>
#include <string>
#include <vector>

#include "stages/piv/frame_source.hpp"
#include "tests/fuzz/fuzz_support.hpp"

using namespace stallscope;

extern "C" int LLVMFuzzerTestOneInput(const std::uint8_t* data, std::size_t size) {
  namespace fs = std::filesystem;
  const fs::path folder = fuzz::scratch_dir() / "piv_text";
  std::error_code ec;
  fs::remove_all(folder, ec);
  fs::create_directories(folder);
  std::string_view text = fuzz::as_text(data, size);
  for (int part = 0; part < 16; ++part) {
    const auto cut = text.find("\n====\n");
    std::string_view piece = text.substr(0, cut);
    fuzz::write_file((part == 0 ? std::string("piv_text/index.csv") : "piv_text/f" + std::to_string(part - 1) + ".txt"),
                     piece);
    if (cut == std::string_view::npos) break;
    text.remove_prefix(cut + 6);
  }
  fuzz::expect_only_input_errors([&] {
    auto source = piv::open_frame_source(folder, "m/s");
    std::vector<piv::Frame> frames;
    for (std::size_t first = 0; first < source->frames(); first += 4)
      source->read(first, std::min<std::size_t>(4, source->frames() - first), frames);
  });
  return 0;
}
