#include "stages/piv/frame_source.hpp"

#include <algorithm>
#include <charconv>
#include <cmath>
#include <fstream>
#include <map>
#include <sstream>

#include "pipeline/errors.hpp"
#include "pipeline/hdf5.hpp"

namespace stallscope::piv {

namespace fs = std::filesystem;

void check_axis(const std::vector<double>& axis, const std::string& where, const std::string& what) {
  if (axis.size() < 3) throw InputError(where, what + " needs at least 3 points, has " + std::to_string(axis.size()));
  const bool up = axis[1] > axis[0];
  for (std::size_t i = 0; i < axis.size(); ++i) {
    if (!std::isfinite(axis[i])) throw InputError(where, what + "[" + std::to_string(i) + "] is not finite");
    if (i > 0 && (up ? axis[i] <= axis[i - 1] : axis[i] >= axis[i - 1]))
      throw InputError(where, what + " is not strictly monotonic at index " + std::to_string(i) + " (" +
                                  std::to_string(axis[i - 1]) + " then " + std::to_string(axis[i]) + ")");
  }
}

static void check_times(const std::vector<double>& t, const std::string& where) {
  if (t.empty()) throw InputError(where, "the stack has no frames");
  for (std::size_t i = 0; i < t.size(); ++i) {
    if (!std::isfinite(t[i])) throw InputError(where, "time of frame " + std::to_string(i) + " is not finite");
    if (i > 0 && t[i] <= t[i - 1])
      throw InputError(where, "frame times must increase: frame " + std::to_string(i) + " at " +
                                  std::to_string(t[i]) + " s follows " + std::to_string(t[i - 1]) + " s");
  }
}

namespace {

// ---- HDF5 stack ---------------------------------------------------------
// pipeline/hdf5 reads whole datasets; a chunk of frames needs a hyperslab,
// so this reader selects one on the datasets it opens through h5::Id.
class Hdf5Stack final : public FrameSource {
 public:
  explicit Hdf5Stack(const fs::path& path) : file_(h5::File::open_read(path)) {
    const std::string& fn = file_.name();
    source_ = fn;
    grid_.x_m = h5::read_numbers(file_.id(), "piv/x_m", fn);
    grid_.y_m = h5::read_numbers(file_.id(), "piv/y_m", fn);
    check_axis(grid_.x_m, fn, "/piv/x_m");
    check_axis(grid_.y_m, fn, "/piv/y_m");
    camera_time_s_ = h5::read_numbers(file_.id(), "piv/time_s", fn);
    check_times(camera_time_s_, fn + ": /piv/time_s");
    const h5::DatasetInfo u = h5::info(file_.id(), "piv/u", fn), v = h5::info(file_.id(), "piv/v", fn);
    const std::vector<hsize_t> want = {camera_time_s_.size(), grid_.ny(), grid_.nx()};
    auto shape = [](const std::vector<hsize_t>& d) {
      std::string s;
      for (auto x : d) s += (s.empty() ? "" : " x ") + std::to_string(x);
      return s;
    };
    if (u.dims != v.dims)
      throw InputError(fn, "/piv/u is " + shape(u.dims) + " but /piv/v is " + shape(v.dims) + "; they must match");
    if (u.dims != want)
      throw InputError(fn, "/piv/u is " + shape(u.dims) + ", expected frames x ny x nx = " + shape(want) +
                               " from /piv/time_s, /piv/y_m and /piv/x_m");
    if (u.type_class != H5T_FLOAT || v.type_class != H5T_FLOAT)
      throw InputError(fn, "/piv/u and /piv/v must hold floating-point velocities");
    has_valid_ = h5::exists(file_.id(), "piv/valid");
    if (has_valid_ && h5::info(file_.id(), "piv/valid", fn).dims != want)
      throw InputError(fn, "/piv/valid must have the shape of /piv/u (" + shape(want) + ")");
    auto units = h5::read_attribute(file_.id(), "piv/u", "units");
    const std::string* us = units ? std::get_if<std::string>(&*units) : nullptr;
    if (!us || (*us != "m/s" && *us != "px/frame"))
      throw InputError(fn, "/piv/u needs an attribute units = \"m/s\" or \"px/frame\"");
    auto vunits = h5::read_attribute(file_.id(), "piv/v", "units");
    const std::string* vs = vunits ? std::get_if<std::string>(&*vunits) : nullptr;
    if (vs && *vs != *us) throw InputError(fn, "/piv/u is in " + *us + " but /piv/v in " + *vs);
    units_ = *us;
  }

  void read(std::size_t first, std::size_t count, std::vector<Frame>& out) override {
    if (first + count > frames()) throw std::logic_error("PIV chunk beyond the last frame");
    const std::size_t n = grid_.size();
    out.resize(count);
    std::vector<float> u(count * n), v(count * n);
    std::vector<std::uint8_t> valid(count * n, 1);
    read_slab("piv/u", H5T_NATIVE_FLOAT, first, count, u.data());
    read_slab("piv/v", H5T_NATIVE_FLOAT, first, count, v.data());
    if (has_valid_) read_slab("piv/valid", H5T_NATIVE_UINT8, first, count, valid.data());
    for (std::size_t k = 0; k < count; ++k) {
      Frame& f = out[k];
      f.index = first + k;
      f.camera_time_s = camera_time_s_[first + k];
      f.u.assign(u.begin() + static_cast<std::ptrdiff_t>(k * n), u.begin() + static_cast<std::ptrdiff_t>((k + 1) * n));
      f.v.assign(v.begin() + static_cast<std::ptrdiff_t>(k * n), v.begin() + static_cast<std::ptrdiff_t>((k + 1) * n));
      f.valid.assign(valid.begin() + static_cast<std::ptrdiff_t>(k * n),
                     valid.begin() + static_cast<std::ptrdiff_t>((k + 1) * n));
    }
  }

 private:
  void read_slab(const char* path, hid_t type, std::size_t first, std::size_t count, void* buffer) {
    h5::Id ds(H5Dopen2(file_.id(), path, H5P_DEFAULT));
    if (!ds) throw InputError(file_.name(), std::string("/") + path + " cannot be opened");
    h5::Id space(H5Dget_space(ds.get()));
    const hsize_t start[3] = {first, 0, 0};
    const hsize_t extent[3] = {count, grid_.ny(), grid_.nx()};
    h5::Id memory(H5Screate_simple(3, extent, nullptr));
    if (H5Sselect_hyperslab(space.get(), H5S_SELECT_SET, start, nullptr, extent, nullptr) < 0 ||
        H5Dread(ds.get(), type, memory.get(), space.get(), H5P_DEFAULT, buffer) < 0)
      throw InputError(file_.name(), std::string("/") + path + ": frames " + std::to_string(first) + ".." +
                                         std::to_string(first + count - 1) + " cannot be read (truncated file?)");
  }

  h5::File file_;
  bool has_valid_ = false;
};

// ---- text frames ----------------------------------------------------------
std::vector<std::string_view> split(std::string_view line, char sep) {
  std::vector<std::string_view> out;
  std::size_t i = 0;
  while (i <= line.size()) {
    if (sep == ' ') {
      while (i < line.size() && (line[i] == ' ' || line[i] == '\t' || line[i] == '\r')) ++i;
      if (i >= line.size()) break;
    }
    std::size_t j = i;
    while (j < line.size() && (sep == ' ' ? !(line[j] == ' ' || line[j] == '\t' || line[j] == '\r') : line[j] != sep))
      ++j;
    std::string_view f = line.substr(i, j - i);
    while (!f.empty() && (f.front() == ' ' || f.back() == ' ' || f.back() == '\r'))
      f = f.front() == ' ' ? f.substr(1) : f.substr(0, f.size() - 1);
    out.push_back(f);
    i = j + 1;
  }
  return out;
}

bool parse_number(std::string_view f, double& v) {
  if (f == "nan" || f == "NaN" || f == "NAN") {
    v = std::nan("");
    return true;
  }
  auto [p, ec] = std::from_chars(f.data(), f.data() + f.size(), v);
  return ec == std::errc() && p == f.data() + f.size();
}

struct TextRow {
  double x, y, u, v, valid;
  std::size_t line;  // in its file, for errors
};

std::vector<TextRow> read_text_frame(const fs::path& path) {
  std::ifstream in(path, std::ios::binary);
  if (!in) throw InputError(path.string(), "PIV text frame cannot be read");
  std::vector<TextRow> rows;
  std::string line;
  std::size_t line_no = 0;
  while (std::getline(in, line)) {
    ++line_no;
    auto f = split(line, ' ');
    if (f.empty() || f[0].front() == '#') continue;
    const std::string where = path.string() + ":" + std::to_string(line_no);
    if (f.size() != 4 && f.size() != 5)
      throw InputError(where, "expected 'x y u v [valid]', found " + std::to_string(f.size()) + " fields");
    double d[5] = {0, 0, 0, 0, 1};
    for (std::size_t k = 0; k < f.size(); ++k)
      if (!parse_number(f[k], d[k]))
        throw InputError(where, "field " + std::to_string(k + 1) + ": expected a number, found '" + std::string(f[k]) + "'");
    if (!std::isfinite(d[0]) || !std::isfinite(d[1])) throw InputError(where, "x and y must be finite");
    rows.push_back({d[0], d[1], d[2], d[3], d[4], line_no});
  }
  if (rows.empty()) throw InputError(path.string(), "PIV text frame has no vectors");
  return rows;
}

std::size_t find_on_axis(const std::vector<double>& axis, double value, double tolerance) {
  const bool up = axis[1] > axis[0];
  auto it = up ? std::lower_bound(axis.begin(), axis.end(), value - tolerance)
               : std::lower_bound(axis.begin(), axis.end(), value + tolerance, std::greater<double>());
  if (it == axis.end() || std::abs(*it - value) > tolerance) return axis.size();
  return static_cast<std::size_t>(it - axis.begin());
}

class TextFrames final : public FrameSource {
 public:
  TextFrames(const fs::path& folder, const std::string& units, const RawFileHook& hook) : hook_(hook) {
    units_ = units;
    const fs::path index = folder / "index.csv";
    source_ = folder.string();
    if (hook_) hook_(index);
    std::ifstream in(index, std::ios::binary);
    if (!in) throw InputError(index.string(), "PIV index file cannot be read");
    std::string line;
    std::size_t line_no = 0;
    bool header = false;
    while (std::getline(in, line)) {
      ++line_no;
      if (line.empty() || line == "\r" || line[0] == '#') continue;
      auto f = split(line, ',');
      const std::string where = index.string() + ":" + std::to_string(line_no);
      if (!header) {
        if (f.size() != 3 || f[0] != "frame" || f[1] != "file" || f[2] != "time_s")
          throw InputError(where, "expected the header 'frame,file,time_s'");
        header = true;
        continue;
      }
      double frame = 0, t = 0;
      if (f.size() != 3 || !parse_number(f[0], frame) || !parse_number(f[2], t) || f[1].empty())
        throw InputError(where, "expected 'frame,file,time_s' with a frame number, a file name and a time");
      if (frame != static_cast<double>(camera_time_s_.size()))
        throw InputError(where, "frames must be numbered 0, 1, 2 ... in order; expected " +
                                    std::to_string(camera_time_s_.size()));
      files_.push_back(folder / std::string(f[1]));
      camera_time_s_.push_back(t);
    }
    if (!header) throw InputError(index.string(), "expected the header 'frame,file,time_s'");
    check_times(camera_time_s_, index.string());
    // The grid comes from the first frame; every frame must share it.
    if (hook_) hook_(files_[0]);
    auto rows = read_text_frame(files_[0]);
    std::vector<double> xs, ys;
    for (const auto& r : rows) xs.push_back(r.x), ys.push_back(r.y);
    std::sort(xs.begin(), xs.end());
    std::sort(ys.begin(), ys.end());
    const double span = std::max(xs.back() - xs.front(), ys.back() - ys.front());
    tolerance_ = 1e-9 * std::max(span, 1e-12);
    auto unique = [&](std::vector<double>& a) {
      a.erase(std::unique(a.begin(), a.end(), [&](double p, double q) { return std::abs(p - q) <= tolerance_; }),
              a.end());
    };
    unique(xs);
    unique(ys);
    grid_.x_m = xs;
    grid_.y_m = ys;
    check_axis(grid_.x_m, files_[0].string(), "x");
    check_axis(grid_.y_m, files_[0].string(), "y");
    first_rows_ = std::move(rows);
  }

  void read(std::size_t first, std::size_t count, std::vector<Frame>& out) override {
    if (first + count > frames()) throw std::logic_error("PIV chunk beyond the last frame");
    out.resize(count);
    for (std::size_t k = 0; k < count; ++k) {
      const std::size_t n = first + k;
      if (n > 0 && hook_) hook_(files_[n]);
      std::vector<TextRow> rows = n == 0 ? first_rows_ : read_text_frame(files_[n]);
      Frame& f = out[k];
      f.index = n;
      f.camera_time_s = camera_time_s_[n];
      f.u.assign(grid_.size(), std::nanf(""));
      f.v.assign(grid_.size(), std::nanf(""));
      f.valid.assign(grid_.size(), 0);
      for (std::size_t r = 0; r < rows.size(); ++r) {
        const std::size_t i = find_on_axis(grid_.x_m, rows[r].x, tolerance_);
        const std::size_t j = find_on_axis(grid_.y_m, rows[r].y, tolerance_);
        if (i == grid_.nx() || j == grid_.ny())
          throw InputError(files_[n].string() + ":" + std::to_string(rows[r].line),
                           "vector at (" + std::to_string(rows[r].x) + ", " + std::to_string(rows[r].y) +
                               ") is off the grid of the first frame (" + files_[0].string() + ")");
        const std::size_t p = j * grid_.nx() + i;
        f.u[p] = static_cast<float>(rows[r].u);
        f.v[p] = static_cast<float>(rows[r].v);
        f.valid[p] = rows[r].valid != 0 ? 1 : 0;
      }
    }
  }

 private:
  RawFileHook hook_;
  std::vector<fs::path> files_;
  std::vector<TextRow> first_rows_;
  double tolerance_ = 0;
};

}  // namespace

std::unique_ptr<FrameSource> open_frame_source(const fs::path& path, const std::string& text_units,
                                               const RawFileHook& hook) {
  std::error_code ec;
  if (fs::is_directory(path, ec)) return std::make_unique<TextFrames>(path, text_units, hook);
  if (hook) hook(path);
  return std::make_unique<Hdf5Stack>(path);
}

}  // namespace stallscope::piv
