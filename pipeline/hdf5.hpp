#pragma once
// A thin RAII layer over the HDF5 C library: files, groups, numeric and text
// datasets, attributes. Readers turn every failure into an InputError naming
// the file and dataset; writers chunk and compress large datasets.
#include <hdf5.h>

#include <cstdint>
#include <filesystem>
#include <optional>
#include <string>
#include <vector>

#include "pipeline/values.hpp"

namespace stallscope::h5 {

// An owned HDF5 identifier, closed with the right H5?close.
class Id {
 public:
  Id() = default;
  explicit Id(hid_t id) : id_(id) {}
  Id(Id&& o) noexcept : id_(o.id_) { o.id_ = H5I_INVALID_HID; }
  Id& operator=(Id&& o) noexcept;
  Id(const Id&) = delete;
  Id& operator=(const Id&) = delete;
  ~Id() { close(); }
  hid_t get() const { return id_; }
  explicit operator bool() const { return id_ >= 0; }
  void close();

 private:
  hid_t id_ = H5I_INVALID_HID;
};

class File {
 public:
  // Creates (truncating) a file for writing.
  static File create(const std::filesystem::path& path);
  // Opens read-only; InputError if missing or not HDF5.
  static File open_read(const std::filesystem::path& path);
  hid_t id() const { return id_.get(); }
  const std::string& name() const { return name_; }
  void close() { id_.close(); }

 private:
  Id id_;
  std::string name_;
};

struct DatasetInfo {
  std::vector<hsize_t> dims;
  H5T_class_t type_class = H5T_NO_CLASS;
};

// Writing. Paths may be nested ("loads/cn"); missing groups are created.
Id open_or_create_group(hid_t file, const std::string& path);
void write_numbers(hid_t file, const std::string& path, const double* data, const std::vector<hsize_t>& dims,
                   const std::string& units);
void write_floats(hid_t file, const std::string& path, const float* data, const std::vector<hsize_t>& dims,
                  const std::string& units);
void write_integers(hid_t file, const std::string& path, const std::int64_t* data, std::size_t n,
                    const std::string& units);
void write_uint8(hid_t file, const std::string& path, const std::uint8_t* data, const std::vector<hsize_t>& dims);
void write_texts(hid_t file, const std::string& path, const std::vector<std::string>& values);
void write_text(hid_t file, const std::string& path, const std::string& value);  // scalar string
void write_attribute(hid_t object, const std::string& name, const AttributeValue& value);
void write_attribute(hid_t file, const std::string& object_path, const std::string& name, const AttributeValue& value);
void write_text_list_attribute(hid_t object, const std::string& name, const std::vector<std::string>& values);

// Reading: `file_name` only labels errors.
bool exists(hid_t file, const std::string& path);
bool is_group(hid_t file, const std::string& path);
bool has_attribute(hid_t file, const std::string& object_path, const std::string& name);
std::vector<std::string> children(hid_t file, const std::string& group_path);  // sorted names
DatasetInfo info(hid_t file, const std::string& path, const std::string& file_name);
// The dataset's element count; InputError when its declared shape overflows or is far
// larger than what the file stores (a damaged file), before anyone allocates for it.
hsize_t checked_elements(hid_t file, const std::string& path, const std::string& file_name, const DatasetInfo& info,
                         std::size_t element_bytes);
std::vector<double> read_numbers(hid_t file, const std::string& path, const std::string& file_name,
                                 std::vector<hsize_t>* dims = nullptr);
std::vector<float> read_floats(hid_t file, const std::string& path, const std::string& file_name,
                               std::vector<hsize_t>* dims = nullptr);
// A 2-D numeric dataset read a block of rows at a time through one open
// dataset. Blocks of whole chunks (block_rows) decompress each chunk once.
class RowReader {
 public:
  RowReader(hid_t file, const std::string& path, const std::string& file_name);
  hsize_t rows() const { return dims_[0]; }
  hsize_t columns() const { return dims_[1]; }
  // About `wanted` rows, rounded to whole chunks of the dataset (at least one).
  hsize_t block_rows(hsize_t wanted) const;
  // Rows [row0, row0 + count), row-major into out.
  void read(hsize_t row0, hsize_t count, double* out) const;
  // The same by hdf5_chunks' decoder, when the dataset is a chunked one of
  // doubles, shuffled and deflated or not, chunks spanning every column, and
  // row0 starts a chunk; false otherwise or on a damaged chunk (read() then
  // leaves it to libhdf5).
  bool read_decoded(hsize_t row0, hsize_t count, double* out) const;

 private:

  std::string path_, file_name_;
  Id dataset_, space_;
  hsize_t dims_[2] = {0, 0}, chunk_rows_ = 0;
  bool own_decoder_ = false;  // chunks span every column and hdf5_chunks can decode them
  bool shuffled_ = false, deflated_ = false;
};
std::vector<std::int64_t> read_integers(hid_t file, const std::string& path, const std::string& file_name);
std::vector<std::string> read_texts(hid_t file, const std::string& path, const std::string& file_name);
std::optional<AttributeValue> read_attribute(hid_t file, const std::string& object_path, const std::string& name);
std::vector<std::string> read_text_list_attribute(hid_t file, const std::string& object_path,
                                                  const std::string& name);
std::vector<std::string> attribute_names(hid_t file, const std::string& object_path);

// Silences HDF5's own error printing (we report errors ourselves). Idempotent.
void quiet_library_errors();

}  // namespace stallscope::h5
