#include "tools/synth/h5_append.hpp"

#include <algorithm>
#include <cstring>
#include <stdexcept>

#include "pipeline/errors.hpp"

namespace stallscope::synth {

namespace {

void check(herr_t status, const std::string& what) {
  if (status < 0) throw std::runtime_error("HDF5: " + what);
}

hid_t native_type(ElementType t) {
  switch (t) {
    case ElementType::kFloat64: return H5T_NATIVE_DOUBLE;
    case ElementType::kFloat32: return H5T_NATIVE_FLOAT;
    case ElementType::kUint8: return H5T_NATIVE_UINT8;
    case ElementType::kInt64: return H5T_NATIVE_INT64;
  }
  throw std::logic_error("unknown element type");
}

hid_t file_type(ElementType t) {
  switch (t) {
    case ElementType::kFloat64: return H5T_IEEE_F64LE;
    case ElementType::kFloat32: return H5T_IEEE_F32LE;
    case ElementType::kUint8: return H5T_STD_U8LE;
    case ElementType::kInt64: return H5T_STD_I64LE;
  }
  throw std::logic_error("unknown element type");
}

std::size_t element_size(ElementType t) {
  switch (t) {
    case ElementType::kFloat64: return 8;
    case ElementType::kFloat32: return 4;
    case ElementType::kUint8: return 1;
    case ElementType::kInt64: return 8;
  }
  throw std::logic_error("unknown element type");
}

// Parent groups created without timestamps.
h5::Id parent_group(hid_t file, const std::string& path, std::string& leaf) {
  auto slash = path.rfind('/');
  leaf = slash == std::string::npos ? path : path.substr(slash + 1);
  std::string parent = slash == std::string::npos ? "" : path.substr(0, slash);
  h5::Id gcpl(H5Pcreate(H5P_GROUP_CREATE));
  check(H5Pset_obj_track_times(gcpl.get(), false), "group properties");
  h5::Id g(H5Gopen2(file, "/", H5P_DEFAULT));
  std::size_t start = 0;
  while (start < parent.size()) {
    auto next = parent.find('/', start);
    std::string part = parent.substr(start, next == std::string::npos ? std::string::npos : next - start);
    if (!part.empty()) {
      if (H5Lexists(g.get(), part.c_str(), H5P_DEFAULT) > 0)
        g = h5::Id(H5Gopen2(g.get(), part.c_str(), H5P_DEFAULT));
      else
        g = h5::Id(H5Gcreate2(g.get(), part.c_str(), H5P_DEFAULT, gcpl.get(), H5P_DEFAULT));
      if (!g) throw std::runtime_error("HDF5: cannot create group " + parent);
    }
    if (next == std::string::npos) break;
    start = next + 1;
  }
  return g;
}

h5::Id create(hid_t file, const std::string& path, hid_t type, const std::vector<hsize_t>& dims,
              const std::vector<hsize_t>& max_dims, const std::vector<hsize_t>& chunk) {
  std::string leaf;
  h5::Id group = parent_group(file, path, leaf);
  h5::Id space(H5Screate_simple(static_cast<int>(dims.size()), dims.data(),
                                max_dims.empty() ? nullptr : max_dims.data()));
  h5::Id dcpl(H5Pcreate(H5P_DATASET_CREATE));
  check(H5Pset_obj_track_times(dcpl.get(), false), "dataset properties " + path);
  if (!chunk.empty()) {
    check(H5Pset_chunk(dcpl.get(), static_cast<int>(chunk.size()), chunk.data()), "chunk " + path);
    check(H5Pset_shuffle(dcpl.get()), "shuffle " + path);
    check(H5Pset_deflate(dcpl.get(), 4), "deflate " + path);
  }
  h5::Id ds(H5Dcreate2(group.get(), leaf.c_str(), type, space.get(), H5P_DEFAULT, dcpl.get(), H5P_DEFAULT));
  if (!ds) throw std::runtime_error("HDF5: cannot create dataset " + path);
  return ds;
}

}  // namespace

h5::Id create_reproducible_file(const std::filesystem::path& path) {
  // The root group's creation properties live in the file-creation list.
  h5::quiet_library_errors();
  h5::Id fcpl(H5Pcreate(H5P_FILE_CREATE));
  check(H5Pset_obj_track_times(fcpl.get(), false), "file properties");
  // Memory that does not grow with the run: the 1.10 format indexes the chunks
  // of a dataset growing along one dimension with an extensible array, not a
  // v1 B-tree whose nodes stay cached (about 1.2 KB a PIV frame); a small fixed
  // metadata cache and eviction on close keep the rest bounded. Exactly 1.10,
  // not "latest", so every libhdf5 1.10 and later reads the files.
  h5::Id fapl(H5Pcreate(H5P_FILE_ACCESS));
  check(H5Pset_libver_bounds(fapl.get(), H5F_LIBVER_V110, H5F_LIBVER_V110), "file format version");
  H5AC_cache_config_t cache{};
  cache.version = H5AC__CURR_CACHE_CONFIG_VERSION;
  check(H5Pget_mdc_config(fapl.get(), &cache), "metadata cache");
  cache.set_initial_size = true;
  cache.initial_size = 1 << 20;
  cache.min_size = 1 << 20;
  cache.max_size = 2 << 20;
  check(H5Pset_mdc_config(fapl.get(), &cache), "metadata cache");
  check(H5Pset_evict_on_close(fapl.get(), true), "evict on close");
  h5::Id f(H5Fcreate(path.string().c_str(), H5F_ACC_TRUNC, fcpl.get(), fapl.get()));
  if (!f) throw InputError(path.string(), "cannot create HDF5 file (is the folder writable, is the disk full?)");
  return f;
}

AppendableDataset::AppendableDataset(hid_t file, const std::string& path, ElementType type,
                                     std::vector<hsize_t> row_shape, hsize_t chunk_rows, const std::string& units)
    : type_(type), row_shape_(std::move(row_shape)), chunk_rows_(std::max<hsize_t>(1, chunk_rows)),
      element_size_(element_size(type)) {
  for (auto d : row_shape_) row_elements_ *= d;
  std::vector<hsize_t> dims = {0}, max_dims = {H5S_UNLIMITED}, chunk = {chunk_rows_};
  for (auto d : row_shape_) {
    dims.push_back(d);
    max_dims.push_back(d);
    chunk.push_back(d);
  }
  dataset_ = create(file, path, file_type(type), dims, max_dims, chunk);
  file_ = file;
  path_ = path;
  h5::write_attribute(dataset_.get(), "units", units);
  buffer_.resize(chunk_rows_ * row_elements_ * element_size_);
}

AppendableDataset::~AppendableDataset() {
  // Best effort: callers flush explicitly; a destructor must not throw.
  try {
    if (dataset_) flush();
  } catch (...) {
  }
}

void AppendableDataset::append(const void* data, hsize_t rows) {
  const auto* bytes = static_cast<const unsigned char*>(data);
  const std::size_t row_bytes = row_elements_ * element_size_;
  while (rows > 0) {
    const hsize_t take = std::min(rows, chunk_rows_ - buffered_rows_);
    std::memcpy(buffer_.data() + buffered_rows_ * row_bytes, bytes, take * row_bytes);
    buffered_rows_ += take;
    bytes += take * row_bytes;
    rows -= take;
    if (buffered_rows_ == chunk_rows_) flush();
  }
}

void AppendableDataset::append(const std::vector<double>& values) {
  if (type_ != ElementType::kFloat64 || values.size() % row_elements_ != 0)
    throw std::logic_error("AppendableDataset: values do not fill whole float64 rows");
  append(values.data(), values.size() / row_elements_);
}

void AppendableDataset::flush() {
  if (buffered_rows_ == 0) return;
  std::vector<hsize_t> new_dims = {rows_written_ + buffered_rows_};
  for (auto d : row_shape_) new_dims.push_back(d);
  check(H5Dset_extent(dataset_.get(), new_dims.data()), "extend dataset");
  h5::Id file_space(H5Dget_space(dataset_.get()));
  std::vector<hsize_t> start(new_dims.size(), 0), count = new_dims;
  start[0] = rows_written_;
  count[0] = buffered_rows_;
  check(H5Sselect_hyperslab(file_space.get(), H5S_SELECT_SET, start.data(), nullptr, count.data(), nullptr),
        "select hyperslab");
  h5::Id mem_space(H5Screate_simple(static_cast<int>(count.size()), count.data(), nullptr));
  check(H5Dwrite(dataset_.get(), native_type(type_), mem_space.get(), file_space.get(), H5P_DEFAULT, buffer_.data()),
        "write rows");
  rows_written_ += buffered_rows_;
  buffered_rows_ = 0;
  // An open dataset keeps its chunk index in the metadata cache; closing it now
  // and then (evicted on close) keeps a stack of any length in bounded memory.
  if (++chunks_since_open_ == kChunksPerOpen) {
    dataset_.close();
    dataset_ = h5::Id(H5Dopen2(file_, path_.c_str(), H5P_DEFAULT));
    if (!dataset_) throw std::runtime_error("HDF5: cannot reopen dataset " + path_);
    chunks_since_open_ = 0;
  }
}

static void write_full(hid_t file, const std::string& path, ElementType type, const void* data,
                       const std::vector<hsize_t>& dims, const std::string& units) {
  hsize_t total = 1;
  for (auto d : dims) total *= d;
  std::vector<hsize_t> chunk;
  if (total >= 4096 && !dims.empty()) {
    chunk = dims;
    hsize_t trailing = total / std::max<hsize_t>(1, dims[0]);
    chunk[0] = std::max<hsize_t>(1, std::min<hsize_t>(dims[0], 65536 / std::max<hsize_t>(1, trailing)));
  }
  h5::Id ds = create(file, path, file_type(type), dims, {}, chunk);
  if (total > 0) check(H5Dwrite(ds.get(), native_type(type), H5S_ALL, H5S_ALL, H5P_DEFAULT, data), "write " + path);
  if (!units.empty()) h5::write_attribute(ds.get(), "units", units);
}

void write_dataset(hid_t file, const std::string& path, const std::vector<double>& values,
                   const std::vector<hsize_t>& dims, const std::string& units) {
  write_full(file, path, ElementType::kFloat64, values.data(), dims, units);
}

void write_dataset(hid_t file, const std::string& path, const std::vector<float>& values,
                   const std::vector<hsize_t>& dims, const std::string& units) {
  write_full(file, path, ElementType::kFloat32, values.data(), dims, units);
}

void write_dataset(hid_t file, const std::string& path, const std::vector<std::int64_t>& values,
                   const std::string& units) {
  std::string leaf;
  h5::Id group = parent_group(file, path, leaf);
  hsize_t n = values.size();
  h5::Id space(H5Screate_simple(1, &n, nullptr));
  h5::Id dcpl(H5Pcreate(H5P_DATASET_CREATE));
  check(H5Pset_obj_track_times(dcpl.get(), false), "dataset properties " + path);
  h5::Id ds(H5Dcreate2(group.get(), leaf.c_str(), H5T_STD_I64LE, space.get(), H5P_DEFAULT, dcpl.get(), H5P_DEFAULT));
  if (!ds) throw std::runtime_error("HDF5: cannot create dataset " + path);
  if (n) check(H5Dwrite(ds.get(), H5T_NATIVE_INT64, H5S_ALL, H5S_ALL, H5P_DEFAULT, values.data()), "write " + path);
  h5::write_attribute(ds.get(), "units", units);
}

void write_text_dataset(hid_t file, const std::string& path, const std::vector<std::string>& values) {
  std::string leaf;
  h5::Id group = parent_group(file, path, leaf);
  h5::Id type(H5Tcopy(H5T_C_S1));
  H5Tset_size(type.get(), H5T_VARIABLE);
  H5Tset_cset(type.get(), H5T_CSET_UTF8);
  hsize_t n = values.size();
  h5::Id space(H5Screate_simple(1, &n, nullptr));
  h5::Id dcpl(H5Pcreate(H5P_DATASET_CREATE));
  check(H5Pset_obj_track_times(dcpl.get(), false), "dataset properties " + path);
  h5::Id ds(H5Dcreate2(group.get(), leaf.c_str(), type.get(), space.get(), H5P_DEFAULT, dcpl.get(), H5P_DEFAULT));
  if (!ds) throw std::runtime_error("HDF5: cannot create dataset " + path);
  std::vector<const char*> ptrs;
  for (const auto& s : values) ptrs.push_back(s.c_str());
  if (n) check(H5Dwrite(ds.get(), type.get(), H5S_ALL, H5S_ALL, H5P_DEFAULT, ptrs.data()), "write " + path);
}

}  // namespace stallscope::synth
