#pragma once
// PIV vector fields, read a chunk of frames at a time so a long run is never
// held in memory at once. Two layouts (README, "Input formats"): an HDF5
// stack (/piv/u, /piv/v frames x ny x nx, /piv/x_m, /piv/y_m, /piv/time_s,
// optional /piv/valid), or a folder of text frames `x y u v [valid]` with an
// index.csv `frame,file,time_s`.
#include <cstdint>
#include <filesystem>
#include <functional>
#include <memory>
#include <string>
#include <vector>

namespace stallscope::piv {

// Lab-frame grid axes; each strictly monotonic (increasing or decreasing).
struct Grid {
  std::vector<double> x_m, y_m;
  std::size_t nx() const { return x_m.size(); }
  std::size_t ny() const { return y_m.size(); }
  std::size_t size() const { return nx() * ny(); }
};

// One frame, row-major ny x nx. A missing vector is NaN with valid = 0.
struct Frame {
  std::size_t index = 0;
  double camera_time_s = 0;
  std::vector<float> u, v;
  std::vector<std::uint8_t> valid;
};

class FrameSource {
 public:
  virtual ~FrameSource() = default;
  const Grid& grid() const { return grid_; }
  std::size_t frames() const { return camera_time_s_.size(); }
  const std::vector<double>& camera_time_s() const { return camera_time_s_; }
  // "m/s" or "px/frame", as the file says.
  const std::string& units() const { return units_; }
  const std::string& source() const { return source_; }
  // Reads frames [first, first + count) into `out` (resized to count).
  virtual void read(std::size_t first, std::size_t count, std::vector<Frame>& out) = 0;

 protected:
  Grid grid_;
  std::vector<double> camera_time_s_;
  std::string units_, source_;
};

// Called with every raw file the source opens (the stage hashes it into provenance).
using RawFileHook = std::function<void(const std::filesystem::path&)>;

// An HDF5 file or a folder of text frames (told by what `path` is). Checks
// the layout (shapes, monotonic axes, increasing times) before any frame is
// read; throws InputError naming the file and dataset or line.
// `text_units` is the velocity unit of text frames, which carry none.
std::unique_ptr<FrameSource> open_frame_source(const std::filesystem::path& path, const std::string& text_units,
                                               const RawFileHook& hook = {});

// InputError (labelled `where`, `what`) unless the axis is strictly monotonic and finite.
void check_axis(const std::vector<double>& axis, const std::string& where, const std::string& what);

}  // namespace stallscope::piv
