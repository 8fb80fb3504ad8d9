#pragma once
// Structure-aware HDF5 input for the readers: the fuzzer's bytes choose which
// groups, datasets and attributes exist, their names (mostly the expected ones),
// ranks, shapes, element types and values (NaN, infinities and repeats
// included). The file is written with the project's own HDF5 helpers, so
// every file is valid HDF5 and the fuzzing reaches our layout checks rather
// than stopping at the library's superblock checks (the byte-level harnesses
// cover those).
#include <fuzzer/FuzzedDataProvider.h>

#include <cmath>
#include <limits>
#include <string>
#include <vector>

#include "pipeline/hdf5.hpp"

namespace stallscope::fuzz {

class LayoutWriter {
 public:
  LayoutWriter(FuzzedDataProvider& in, hid_t file) : in_(in), file_(file) {}

  // Mostly one of `usual`, sometimes a fuzzed name.
  std::string name(const std::vector<std::string>& usual) {
    if (usual.empty() || in_.ConsumeIntegralInRange(0, 7) == 0) return in_.ConsumeRandomLengthString(12);
    return usual[in_.ConsumeIntegralInRange<std::size_t>(0, usual.size() - 1)];
  }

  double value() {
    switch (in_.ConsumeIntegralInRange(0, 9)) {
      case 0: return std::numeric_limits<double>::quiet_NaN();
      case 1: return std::numeric_limits<double>::infinity();
      case 2: return -std::numeric_limits<double>::infinity();
      case 3: return last_;  // a repeat (duplicated times)
      case 4: return last_ = in_.ConsumeFloatingPoint<double>();
      default: return last_ += in_.ConsumeFloatingPointInRange<double>(-0.5, 2.0);  // mostly increasing
    }
  }

  // A dataset of fuzzed rank (0-3), shape (each side 0-9, or `rows` when
  // given) and type (float64, float32, int64, text).
  void dataset(const std::string& path, hsize_t rows = 0) {
    const int rank = in_.ConsumeIntegralInRange(0, 3);
    std::vector<hsize_t> dims;
    for (int i = 0; i < rank; ++i)
      dims.push_back(i == 0 && rows > 0 && in_.ConsumeBool() ? rows : in_.ConsumeIntegralInRange<hsize_t>(0, 9));
    hsize_t n = 1;
    for (auto d : dims) n *= d;
    const std::string units = name({"s", "V", "1", "m/s", "px/frame"});
    switch (in_.ConsumeIntegralInRange(0, 3)) {
      case 0: {
        std::vector<double> v(n);
        for (auto& x : v) x = value();
        if (rank == 0) {
          h5::Id g = h5::open_or_create_group(file_, parent(path));
          h5::write_attribute(g.get(), leaf(path), v.empty() ? 0.0 : v[0]);
        }
        else h5::write_numbers(file_, path, v.data(), dims, units);
        break;
      }
      case 1: {
        std::vector<float> v(n);
        for (auto& x : v) x = static_cast<float>(value());
        if (rank == 0) dims = {1}, v.assign(1, 0.0f);
        h5::write_floats(file_, path, v.data(), dims, units);
        break;
      }
      case 2: {
        std::vector<std::int64_t> v(rank == 0 ? 1 : dims[0]);
        for (auto& x : v) x = in_.ConsumeIntegral<std::int64_t>();
        h5::write_integers(file_, path, v.data(), v.size(), units);
        break;
      }
      default: {
        if (rank == 0) {
          h5::write_text(file_, path, in_.ConsumeRandomLengthString(16));
        } else {
          std::vector<std::string> v(dims[0]);
          for (auto& s : v) s = in_.ConsumeRandomLengthString(8);
          h5::write_texts(file_, path, v);
        }
      }
    }
  }

  // An attribute on an existing object: a text list (column or channel names),
  // a text, a number or an integer.
  void attribute(const std::string& object, const std::string& attr, const std::vector<std::string>& usual_words) {
    if (!object.empty() && !h5::exists(file_, object)) return;
    h5::Id obj(H5Oopen(file_, object.empty() ? "/" : object.c_str(), H5P_DEFAULT));
    if (!obj) return;
    switch (in_.ConsumeIntegralInRange(0, 4)) {
      case 0: h5::write_attribute(obj.get(), attr, value()); break;
      case 1: h5::write_attribute(obj.get(), attr, in_.ConsumeIntegral<std::int64_t>()); break;
      case 2: h5::write_attribute(obj.get(), attr, name(usual_words)); break;
      default: {
        std::vector<std::string> list(in_.ConsumeIntegralInRange<std::size_t>(0, 9));
        for (auto& s : list) s = name(usual_words);
        h5::write_text_list_attribute(obj.get(), attr, list);
      }
    }
  }

  FuzzedDataProvider& in() { return in_; }
  hid_t file() const { return file_; }

 private:
  static std::string parent(const std::string& p) {
    const auto slash = p.rfind('/');
    return slash == std::string::npos ? "" : p.substr(0, slash);
  }
  static std::string leaf(const std::string& p) {
    const auto slash = p.rfind('/');
    return slash == std::string::npos ? p : p.substr(slash + 1);
  }

  FuzzedDataProvider& in_;
  hid_t file_;
  double last_ = 0.0;
};

}  // namespace stallscope::fuzz
