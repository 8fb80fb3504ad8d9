#pragma once
// Appending to HDF5 datasets chunk by chunk (hyperslab writes into a chunked,
// extendible dataset), so a synthetic run of any length is written with memory
// that does not grow with its duration. Object modification times are not
// recorded, so the same content gives byte-identical files.
#include <cstdint>
#include <filesystem>
#include <string>
#include <vector>

#include "pipeline/hdf5.hpp"

namespace stallscope::synth {

// Creates (truncating) an HDF5 file whose objects carry no timestamps.
h5::Id create_reproducible_file(const std::filesystem::path& path);

enum class ElementType { kFloat64, kFloat32, kUint8, kInt64 };

// A dataset of rows growing along its first dimension; `row_shape` gives the
// trailing dimensions (empty for a 1-D series). Rows are buffered up to one
// chunk and flushed as a hyperslab.
class AppendableDataset {
 public:
  AppendableDataset(hid_t file, const std::string& path, ElementType type, std::vector<hsize_t> row_shape,
                    hsize_t chunk_rows, const std::string& units);
  AppendableDataset(AppendableDataset&&) = default;
  ~AppendableDataset();

  // `rows` whole rows, row-major, of the element type given at creation.
  void append(const void* data, hsize_t rows);
  void append(const std::vector<double>& values);  // float64 datasets, whole rows
  void flush();
  hsize_t rows() const { return rows_written_ + buffered_rows_; }
  hid_t id() const { return dataset_.get(); }

 private:
  static constexpr int kChunksPerOpen = 1024;
  h5::Id dataset_;
  hid_t file_ = -1;
  std::string path_;
  int chunks_since_open_ = 0;
  ElementType type_;
  std::vector<hsize_t> row_shape_;
  hsize_t row_elements_ = 1;
  hsize_t chunk_rows_;
  hsize_t rows_written_ = 0;
  hsize_t buffered_rows_ = 0;
  std::vector<unsigned char> buffer_;
  std::size_t element_size_;
};

// Small datasets in full, without timestamps (truth series, tables, axes).
void write_dataset(hid_t file, const std::string& path, const std::vector<double>& values,
                   const std::vector<hsize_t>& dims, const std::string& units);
void write_dataset(hid_t file, const std::string& path, const std::vector<float>& values,
                   const std::vector<hsize_t>& dims, const std::string& units);
void write_dataset(hid_t file, const std::string& path, const std::vector<std::int64_t>& values,
                   const std::string& units);
void write_text_dataset(hid_t file, const std::string& path, const std::vector<std::string>& values);

}  // namespace stallscope::synth
