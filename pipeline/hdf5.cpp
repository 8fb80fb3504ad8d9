#include "pipeline/hdf5.hpp"

#include <algorithm>
#include <cstdint>
#include <cstring>
#include <limits>
#include <optional>
#include <stdexcept>

#include "pipeline/errors.hpp"
#include "pipeline/hdf5_chunks.hpp"
#include "pipeline/hdf5_heap_check.hpp"

namespace stallscope::h5 {

namespace fs = std::filesystem;

Id& Id::operator=(Id&& o) noexcept {
  if (this != &o) {
    close();
    id_ = o.id_;
    o.id_ = H5I_INVALID_HID;
  }
  return *this;
}

void Id::close() {
  if (id_ < 0) return;
  switch (H5Iget_type(id_)) {
    case H5I_FILE: H5Fclose(id_); break;
    case H5I_GROUP: H5Gclose(id_); break;
    case H5I_DATASET: H5Dclose(id_); break;
    case H5I_DATASPACE: H5Sclose(id_); break;
    case H5I_DATATYPE: H5Tclose(id_); break;
    case H5I_ATTR: H5Aclose(id_); break;
    case H5I_GENPROP_LST: H5Pclose(id_); break;
    default: break;
  }
  id_ = H5I_INVALID_HID;
}

void quiet_library_errors() {
  // No clean-up at exit: after a failed write (disk full) H5Fclose fails and
  // leaves the file in the library's table, and libhdf5's exit handler then
  // crashes closing it. Every file we open is closed by Id anyway. Must run
  // before the library's first call, hence here (each File starts with it).
  static const bool no_atexit = H5dont_atexit() >= 0;
  (void)no_atexit;
  H5Eset_auto2(H5E_DEFAULT, nullptr, nullptr);
}

static void check(herr_t status, const std::string& what) {
  if (status < 0) throw std::runtime_error("HDF5: " + what);
}

File File::create(const fs::path& path) {
  quiet_library_errors();
  File f;
  f.name_ = path.string();
  f.id_ = Id(H5Fcreate(f.name_.c_str(), H5F_ACC_TRUNC, H5P_DEFAULT, H5P_DEFAULT));
  if (!f.id_) throw InputError(f.name_, "cannot create HDF5 file (is the folder writable, is the disk full?)");
  return f;
}

File File::open_read(const fs::path& path) {
  quiet_library_errors();
  File f;
  f.name_ = path.string();
  std::error_code ec;
  if (!fs::exists(path, ec)) throw InputError(f.name_, "file not found");
  if (H5Fis_hdf5(f.name_.c_str()) <= 0) throw InputError(f.name_, "not an HDF5 file");
  check_global_heaps(path, f.name_);  // before libhdf5 can loop on a damaged one
  f.id_ = Id(H5Fopen(f.name_.c_str(), H5F_ACC_RDONLY, H5P_DEFAULT));
  if (!f.id_) throw InputError(f.name_, "cannot open HDF5 file (truncated or damaged?)");
  return f;
}

static std::pair<std::string, std::string> split_parent(const std::string& path) {
  auto slash = path.rfind('/');
  if (slash == std::string::npos) return {"", path};
  return {path.substr(0, slash), path.substr(slash + 1)};
}

Id open_or_create_group(hid_t file, const std::string& path) {
  if (path.empty() || path == "/") return Id(H5Gopen2(file, "/", H5P_DEFAULT));
  std::string sofar;
  Id g;
  std::size_t start = 0;
  while (start <= path.size()) {
    auto slash = path.find('/', start);
    std::string part = path.substr(start, slash == std::string::npos ? std::string::npos : slash - start);
    if (!part.empty()) {
      sofar += "/" + part;
      if (H5Lexists(file, sofar.c_str(), H5P_DEFAULT) > 0)
        g = Id(H5Gopen2(file, sofar.c_str(), H5P_DEFAULT));
      else
        g = Id(H5Gcreate2(file, sofar.c_str(), H5P_DEFAULT, H5P_DEFAULT, H5P_DEFAULT));
      if (!g) throw std::runtime_error("HDF5: cannot create group " + sofar);
    }
    if (slash == std::string::npos) break;
    start = slash + 1;
  }
  return g;
}

// Chunk and compress datasets above this many elements; small ones stay
// contiguous (chunking overhead would dominate).
static constexpr hsize_t kChunkThreshold = 4096;

static void write_dataset(hid_t file, const std::string& path, hid_t mem_type, hid_t file_type, const void* data,
                          const std::vector<hsize_t>& dims) {
  auto [parent, leaf] = split_parent(path);
  Id group = open_or_create_group(file, parent);
  Id space(H5Screate_simple(static_cast<int>(dims.size()), dims.data(), nullptr));
  Id props(H5Pcreate(H5P_DATASET_CREATE));
  hsize_t total = 1;
  for (auto d : dims) total *= d;
  if (total >= kChunkThreshold && !dims.empty()) {
    // About 64k elements a chunk, whole rows of the trailing dimensions.
    std::vector<hsize_t> chunk = dims;
    hsize_t trailing = 1;
    for (std::size_t i = 1; i < dims.size(); ++i) trailing *= dims[i];
    chunk[0] = std::max<hsize_t>(1, std::min<hsize_t>(dims[0], 65536 / std::max<hsize_t>(1, trailing)));
    for (std::size_t i = 1; i < dims.size() && trailing > 65536; ++i) chunk[i] = std::min<hsize_t>(dims[i], 256);
    check(H5Pset_chunk(props.get(), static_cast<int>(chunk.size()), chunk.data()), "set chunk " + path);
    check(H5Pset_shuffle(props.get()), "set shuffle " + path);
    check(H5Pset_deflate(props.get(), 4), "set deflate " + path);
  }
  Id ds(H5Dcreate2(group.get(), leaf.c_str(), file_type, space.get(), H5P_DEFAULT, props.get(), H5P_DEFAULT));
  if (!ds) throw std::runtime_error("HDF5: cannot create dataset " + path);
  if (total > 0) check(H5Dwrite(ds.get(), mem_type, H5S_ALL, H5S_ALL, H5P_DEFAULT, data), "write " + path);
}

void write_numbers(hid_t file, const std::string& path, const double* data, const std::vector<hsize_t>& dims,
                   const std::string& units) {
  write_dataset(file, path, H5T_NATIVE_DOUBLE, H5T_IEEE_F64LE, data, dims);
  write_attribute(file, path, "units", units);
}

void write_floats(hid_t file, const std::string& path, const float* data, const std::vector<hsize_t>& dims,
                  const std::string& units) {
  write_dataset(file, path, H5T_NATIVE_FLOAT, H5T_IEEE_F32LE, data, dims);
  write_attribute(file, path, "units", units);
}

void write_integers(hid_t file, const std::string& path, const std::int64_t* data, std::size_t n,
                    const std::string& units) {
  write_dataset(file, path, H5T_NATIVE_INT64, H5T_STD_I64LE, data, {static_cast<hsize_t>(n)});
  write_attribute(file, path, "units", units);
}

void write_uint8(hid_t file, const std::string& path, const std::uint8_t* data, const std::vector<hsize_t>& dims) {
  write_dataset(file, path, H5T_NATIVE_UINT8, H5T_STD_U8LE, data, dims);
  write_attribute(file, path, "units", std::string("1"));
}

static Id utf8_vlen_string() {
  Id t(H5Tcopy(H5T_C_S1));
  H5Tset_size(t.get(), H5T_VARIABLE);
  H5Tset_cset(t.get(), H5T_CSET_UTF8);
  return t;
}

// The memory type to read a file's variable-length strings with: of the file's
// character set, since libhdf5 will not convert ASCII strings to UTF-8 ones.
static Id vlen_string_like(hid_t file_type) {
  Id t(H5Tcopy(H5T_C_S1));
  H5Tset_size(t.get(), H5T_VARIABLE);
  H5Tset_cset(t.get(), H5Tget_cset(file_type) == H5T_CSET_ASCII ? H5T_CSET_ASCII : H5T_CSET_UTF8);
  return t;
}

void write_texts(hid_t file, const std::string& path, const std::vector<std::string>& values) {
  std::vector<const char*> ptrs;
  ptrs.reserve(values.size());
  for (const auto& s : values) ptrs.push_back(s.c_str());
  Id t = utf8_vlen_string();
  write_dataset(file, path, t.get(), t.get(), ptrs.data(), {static_cast<hsize_t>(values.size())});
}

void write_text(hid_t file, const std::string& path, const std::string& value) {
  auto [parent, leaf] = split_parent(path);
  Id group = open_or_create_group(file, parent);
  Id space(H5Screate(H5S_SCALAR));
  Id t = utf8_vlen_string();
  Id ds(H5Dcreate2(group.get(), leaf.c_str(), t.get(), space.get(), H5P_DEFAULT, H5P_DEFAULT, H5P_DEFAULT));
  if (!ds) throw std::runtime_error("HDF5: cannot create dataset " + path);
  const char* p = value.c_str();
  check(H5Dwrite(ds.get(), t.get(), H5S_ALL, H5S_ALL, H5P_DEFAULT, &p), "write " + path);
}

void write_attribute(hid_t object, const std::string& name, const AttributeValue& value) {
  if (H5Aexists(object, name.c_str()) > 0) H5Adelete(object, name.c_str());
  Id space(H5Screate(H5S_SCALAR));
  if (const auto* d = std::get_if<double>(&value)) {
    Id a(H5Acreate2(object, name.c_str(), H5T_IEEE_F64LE, space.get(), H5P_DEFAULT, H5P_DEFAULT));
    check(H5Awrite(a.get(), H5T_NATIVE_DOUBLE, d), "write attribute " + name);
  } else if (const auto* i = std::get_if<std::int64_t>(&value)) {
    Id a(H5Acreate2(object, name.c_str(), H5T_STD_I64LE, space.get(), H5P_DEFAULT, H5P_DEFAULT));
    check(H5Awrite(a.get(), H5T_NATIVE_INT64, i), "write attribute " + name);
  } else {
    const std::string& s = std::get<std::string>(value);
    Id t = utf8_vlen_string();
    Id a(H5Acreate2(object, name.c_str(), t.get(), space.get(), H5P_DEFAULT, H5P_DEFAULT));
    const char* p = s.c_str();
    check(H5Awrite(a.get(), t.get(), &p), "write attribute " + name);
  }
}

void write_attribute(hid_t file, const std::string& object_path, const std::string& name,
                     const AttributeValue& value) {
  Id obj(H5Oopen(file, object_path.empty() ? "/" : object_path.c_str(), H5P_DEFAULT));
  if (!obj) throw std::runtime_error("HDF5: no object " + object_path + " for attribute " + name);
  write_attribute(obj.get(), name, value);
}

void write_text_list_attribute(hid_t object, const std::string& name, const std::vector<std::string>& values) {
  if (H5Aexists(object, name.c_str()) > 0) H5Adelete(object, name.c_str());
  std::vector<const char*> ptrs;
  for (const auto& s : values) ptrs.push_back(s.c_str());
  hsize_t n = values.size();
  Id space(H5Screate_simple(1, &n, nullptr));
  Id t = utf8_vlen_string();
  Id a(H5Acreate2(object, name.c_str(), t.get(), space.get(), H5P_DEFAULT, H5P_DEFAULT));
  if (n) check(H5Awrite(a.get(), t.get(), ptrs.data()), "write attribute " + name);
}

static void check_attributes_of(hid_t file, const char* object);

bool has_attribute(hid_t file, const std::string& object_path, const std::string& name) {
  if (!object_path.empty() && !exists(file, object_path)) return false;
  const char* obj = object_path.empty() ? "/" : object_path.c_str();
  check_attributes_of(file, obj);
  return H5Aexists_by_name(file, obj, name.c_str(), H5P_DEFAULT) > 0;
}

bool exists(hid_t file, const std::string& path) {
  // Every intermediate link must exist for H5Lexists on the full path.
  std::string sofar;
  std::size_t start = 0;
  while (start <= path.size()) {
    auto slash = path.find('/', start);
    std::string part = path.substr(start, slash == std::string::npos ? std::string::npos : slash - start);
    if (!part.empty()) {
      sofar += "/" + part;
      if (H5Lexists(file, sofar.c_str(), H5P_DEFAULT) <= 0) return false;
    }
    if (slash == std::string::npos) break;
    start = slash + 1;
  }
  return true;
}

bool is_group(hid_t file, const std::string& path) {
  if (!exists(file, path)) return false;
  H5O_info_t oi;
  if (H5Oget_info_by_name(file, path.c_str(), &oi, H5P_DEFAULT) < 0) return false;
  return oi.type == H5O_TYPE_GROUP;
}

std::vector<std::string> children(hid_t file, const std::string& group_path) {
  std::vector<std::string> names;
  Id g(H5Gopen2(file, group_path.empty() ? "/" : group_path.c_str(), H5P_DEFAULT));
  if (!g) return names;
  H5Literate(
      g.get(), H5_INDEX_NAME, H5_ITER_INC, nullptr,
      [](hid_t, const char* name, const H5L_info_t*, void* out) -> herr_t {
        static_cast<std::vector<std::string>*>(out)->emplace_back(name);
        return 0;
      },
      &names);
  std::sort(names.begin(), names.end());
  return names;
}

// libhdf5 allocates a whole chunk (and a conversion buffer beside it) to read
// any part of it. No DAQ or PIV writer makes chunks this large; a damaged
// layout message does, and would ask for gigabytes.
constexpr hsize_t kMaxChunkBytes = hsize_t{128} << 20;

// The same for a damaged number type: a float or integer of hundreds of
// megabytes, whose conversion buffer libhdf5 would allocate (16 bytes is the
// widest number any writer stores).
constexpr std::size_t kMaxNumberBytes = 16;

static void check_storage(hid_t ds, const std::string& path, const std::string& file_name) {
  Id type(H5Dget_type(ds));
  const H5T_class_t type_class = type ? H5Tget_class(type.get()) : H5T_NO_CLASS;
  if ((type_class == H5T_FLOAT || type_class == H5T_INTEGER) && H5Tget_size(type.get()) > kMaxNumberBytes)
    throw InputError(file_name, "/" + path + " declares numbers of " + std::to_string(H5Tget_size(type.get())) +
                                    " bytes each (a damaged datatype: at most 16 exist)");
  Id dcpl(H5Dget_create_plist(ds));
  if (!dcpl || H5Pget_layout(dcpl.get()) != H5D_CHUNKED) return;
  std::vector<hsize_t> chunk(H5S_MAX_RANK, 0);
  const int rank = H5Pget_chunk(dcpl.get(), H5S_MAX_RANK, chunk.data());
  hsize_t bytes = type ? std::max<hsize_t>(1, H5Tget_size(type.get())) : 1;
  for (int d = 0; d < rank; ++d) {
    if (chunk[static_cast<std::size_t>(d)] != 0 && bytes > kMaxChunkBytes / chunk[static_cast<std::size_t>(d)])
      throw InputError(file_name, "/" + path + " is stored in chunks of more than 128 MiB (a damaged layout, or a "
                                               "writer's choice this reader refuses: rechunk it, e.g. with h5repack)");
    bytes *= chunk[static_cast<std::size_t>(d)];
  }
}

static Id open_dataset(hid_t file, const std::string& path, const std::string& file_name) {
  if (!exists(file, path)) throw InputError(file_name, "dataset /" + path + " is missing");
  Id ds(H5Dopen2(file, path.c_str(), H5P_DEFAULT));
  if (!ds) throw InputError(file_name, "/" + path + " is not a readable dataset");
  check_storage(ds.get(), path, file_name);
  return ds;
}

DatasetInfo info(hid_t file, const std::string& path, const std::string& file_name) {
  Id ds = open_dataset(file, path, file_name);
  Id space(H5Dget_space(ds.get()));
  int rank = H5Sget_simple_extent_ndims(space.get());
  if (rank < 0) throw InputError(file_name, "/" + path + " has an unreadable shape");
  DatasetInfo out;
  out.dims.resize(static_cast<std::size_t>(rank));
  H5Sget_simple_extent_dims(space.get(), out.dims.data(), nullptr);
  Id type(H5Dget_type(ds.get()));
  out.type_class = H5Tget_class(type.get());
  return out;
}

// Element count of a dataset, refusing shapes a damaged file may declare: a
// product that overflows, or far more elements than the file stores (deflate
// packs at most ~1000:1, so a real dataset never declares more than that).
hsize_t checked_elements(hid_t file, const std::string& path, const std::string& file_name,
                         const DatasetInfo& di, std::size_t element_bytes) {
  hsize_t n = 1;
  for (auto d : di.dims) {
    if (d != 0 && n > std::numeric_limits<hsize_t>::max() / d / element_bytes)
      throw InputError(file_name, "/" + path + " declares a shape too large to be real (damaged file?)");
    n *= d;
  }
  Id ds(H5Dopen2(file, path.c_str(), H5P_DEFAULT));
  const hsize_t stored = ds ? H5Dget_storage_size(ds.get()) : 0;
  constexpr hsize_t kMaxRatio = 4096, kSlack = 1 << 20;
  if (n * element_bytes > kMaxRatio * stored + kSlack)
    throw InputError(file_name, "/" + path + " declares " + std::to_string(n) + " elements but the file stores only " +
                                    std::to_string(stored) + " bytes of it (truncated or damaged file?)");
  return n;
}

template <typename T>
static std::vector<T> read_numeric(hid_t file, const std::string& path, const std::string& file_name,
                                   hid_t mem_type, std::vector<hsize_t>* dims_out) {
  DatasetInfo di = info(file, path, file_name);
  if (di.type_class != H5T_FLOAT && di.type_class != H5T_INTEGER)
    throw InputError(file_name, "/" + path + " must be numeric");
  const hsize_t n = checked_elements(file, path, file_name, di, sizeof(T));
  std::vector<T> out(n);
  Id ds = open_dataset(file, path, file_name);
  if (n && H5Dread(ds.get(), mem_type, H5S_ALL, H5S_ALL, H5P_DEFAULT, out.data()) < 0)
    throw InputError(file_name, "/" + path + " cannot be read (truncated file?)");
  if (dims_out) *dims_out = di.dims;
  return out;
}

std::vector<double> read_numbers(hid_t file, const std::string& path, const std::string& file_name,
                                 std::vector<hsize_t>* dims) {
  return read_numeric<double>(file, path, file_name, H5T_NATIVE_DOUBLE, dims);
}

std::vector<float> read_floats(hid_t file, const std::string& path, const std::string& file_name,
                               std::vector<hsize_t>* dims) {
  return read_numeric<float>(file, path, file_name, H5T_NATIVE_FLOAT, dims);
}

RowReader::RowReader(hid_t file, const std::string& path, const std::string& file_name)
    : path_(path), file_name_(file_name) {
  const DatasetInfo di = info(file, path, file_name);
  if (di.dims.size() != 2) throw std::logic_error("RowReader: /" + path + " in " + file_name + " is not 2-D");
  dims_[0] = di.dims[0];
  dims_[1] = di.dims[1];
  dataset_ = open_dataset(file, path, file_name);
  space_ = Id(H5Dget_space(dataset_.get()));
  Id dcpl(H5Dget_create_plist(dataset_.get()));
  hsize_t chunk[2] = {0, 0};
  if (dcpl && H5Pget_layout(dcpl.get()) == H5D_CHUNKED && H5Pget_chunk(dcpl.get(), 2, chunk) == 2) {
    chunk_rows_ = chunk[0];
    ChunkCoding coding;
    own_decoder_ = chunk[1] == dims_[1] && chunk_rows_ > 0 && chunk_coding(dataset_.get(), coding);
    shuffled_ = coding.shuffled;
    deflated_ = coding.deflated;
  }
}

hsize_t RowReader::block_rows(hsize_t wanted) const {
  if (chunk_rows_ == 0) return std::max<hsize_t>(1, wanted);
  return chunk_rows_ * std::max<hsize_t>(1, (wanted + chunk_rows_ / 2) / chunk_rows_);
}

bool RowReader::read_decoded(hsize_t row0, hsize_t count, double* out) const {
  if (!own_decoder_ || row0 % chunk_rows_ != 0) return false;
  const std::size_t row_bytes = dims_[1] * sizeof(double), chunk_bytes = chunk_rows_ * row_bytes;
  std::vector<unsigned char> raw, scratch, whole;
  for (hsize_t start = row0; start < row0 + count; start += chunk_rows_) {
    hsize_t offset[2] = {start, 0}, stored = 0;
    // An unwritten chunk (fill values) or an absurd size: libhdf5's own read decides.
    if (H5Dget_chunk_storage_size(dataset_.get(), offset, &stored) < 0 || stored == 0 || stored > (hsize_t{1} << 31))
      return false;
    raw.resize(stored);
    std::uint32_t mask = 0;
    if (H5Dread_chunk(dataset_.get(), H5P_DEFAULT, offset, &mask, raw.data()) < 0) return false;
    const hsize_t rows = std::min(chunk_rows_, row0 + count - start);
    auto* target = reinterpret_cast<unsigned char*>(out + (start - row0) * dims_[1]);
    // The last chunk of the dataset is stored whole, past the rows it holds.
    unsigned char* into = rows == chunk_rows_ ? target : (whole.resize(chunk_bytes), whole.data());
    if (!decode_chunk({shuffled_, deflated_}, mask, raw, into, chunk_bytes, scratch)) return false;
    if (into != target) std::memcpy(target, into, rows * row_bytes);
  }
  return true;
}

void RowReader::read(hsize_t row0, hsize_t count, double* out) const {
  if (row0 + count > dims_[0]) throw std::logic_error("RowReader outside /" + path_ + " in " + file_name_);
  if (count == 0 || read_decoded(row0, count, out)) return;
  hsize_t start[2] = {row0, 0}, extent[2] = {count, dims_[1]};
  H5Sselect_hyperslab(space_.get(), H5S_SELECT_SET, start, nullptr, extent, nullptr);
  Id memory(H5Screate_simple(2, extent, nullptr));
  if (H5Dread(dataset_.get(), H5T_NATIVE_DOUBLE, memory.get(), space_.get(), H5P_DEFAULT, out) < 0)
    throw InputError(file_name_, "/" + path_ + " cannot be read (truncated file?)");
}

std::vector<std::int64_t> read_integers(hid_t file, const std::string& path, const std::string& file_name) {
  return read_numeric<std::int64_t>(file, path, file_name, H5T_NATIVE_INT64, nullptr);
}

// What the byte-level checks of hdf5_heap_check need to know of the file an
// object is in: its name on disk, its base address and its address size.
struct FileLayout {
  std::string path;
  hsize_t base = 0;
  std::size_t address = 8, length = 8;
};

static std::optional<FileLayout> file_layout(hid_t object) {
  Id file(H5Iget_file_id(object));
  Id fcpl(H5Fget_create_plist(file.get()));
  FileLayout l;
  if (!fcpl || H5Pget_sizes(fcpl.get(), &l.address, &l.length) < 0 || H5Pget_userblock(fcpl.get(), &l.base) < 0)
    return std::nullopt;
  const ssize_t name_size = H5Fget_name(file.get(), nullptr, 0);
  if (name_size <= 0) return std::nullopt;
  l.path.assign(static_cast<std::size_t>(name_size), '\0');
  H5Fget_name(file.get(), l.path.data(), l.path.size() + 1);
  return l;
}

// The heap ids of a contiguous or compact dataset are checked in the file's
// bytes (a chunked one keeps them where only the library can reach them).
static void check_string_references_before_reading(hid_t ds, const std::string& path, const std::string& file_name,
                                                   hsize_t n) {
  Id dcpl(H5Dget_create_plist(ds));
  if (!dcpl) return;
  const auto l = file_layout(ds);
  if (!l) return;
  std::optional<std::uint64_t> data;
  switch (H5Pget_layout(dcpl.get())) {
    case H5D_CONTIGUOUS:
      if (const haddr_t offset = H5Dget_offset(ds); offset != HADDR_UNDEF) data = offset;
      break;
    case H5D_COMPACT: {
      H5O_info_t oi;
      if (H5Oget_info(ds, &oi) >= 0) data = compact_data_offset(l->path, l->base, oi.addr, l->address, l->length);
      break;
    }
    default: break;
  }
  if (data) check_string_references(l->path, file_name, path, {l->base, *data, n, l->address});
}

// Every attribute message of the object checked before libhdf5 decodes them to
// find one (it copies past its buffer on a damaged one).
static void check_attributes_of(hid_t file, const char* object) {
  H5O_info_t oi;
  if (H5Oget_info_by_name2(file, object, &oi, H5O_INFO_BASIC, H5P_DEFAULT) < 0) return;
  if (const auto l = file_layout(file))
    check_attribute_messages(l->path, l->path, std::string(object).substr(object[0] == '/' ? 1 : 0), l->base, oi.addr,
                             l->address, l->length);
}

// The same for an attribute of variable-length strings, whose heap ids sit in
// its object's header (attributes in dense storage are out of this walk's reach).
static void check_attribute_string_references(hid_t file, const char* object, const std::string& name, hsize_t n) {
  H5O_info_t oi;
  if (H5Oget_info_by_name2(file, object, &oi, H5O_INFO_BASIC, H5P_DEFAULT) < 0) return;
  const auto l = file_layout(file);
  if (!l) return;
  const auto data = attribute_data_offset(l->path, l->base, oi.addr, name, l->address, l->length);
  if (!data) return;
  const std::string where = std::string(object == std::string("/") ? "" : object) + " attribute '" + name + "'";
  check_string_references(l->path, l->path, where, {l->base, *data, n, l->address});
}

std::vector<std::string> read_texts(hid_t file, const std::string& path, const std::string& file_name) {
  DatasetInfo di = info(file, path, file_name);
  if (di.type_class != H5T_STRING) throw InputError(file_name, "/" + path + " must hold strings");
  Id ds = open_dataset(file, path, file_name);
  Id ftype(H5Dget_type(ds.get()));
  // Every element, whatever the rank: H5S_ALL reads them all into the buffer.
  const hsize_t n = checked_elements(file, path, file_name, di, sizeof(char*));
  std::vector<std::string> out;
  if (H5Tis_variable_str(ftype.get()) > 0) {
    check_string_references_before_reading(ds.get(), path, file_name, n);
    Id t = vlen_string_like(ftype.get());
    std::vector<char*> ptrs(n, nullptr);
    if (n && H5Dread(ds.get(), t.get(), H5S_ALL, H5S_ALL, H5P_DEFAULT, ptrs.data()) < 0)
      throw InputError(file_name, "/" + path + " cannot be read");
    for (char* p : ptrs) out.emplace_back(p ? p : "");
    Id space(H5Dget_space(ds.get()));
    H5Dvlen_reclaim(t.get(), space.get(), H5P_DEFAULT, ptrs.data());
  } else {
    std::size_t size = H5Tget_size(ftype.get());
    std::vector<char> buf(n * size);
    if (n && H5Dread(ds.get(), ftype.get(), H5S_ALL, H5S_ALL, H5P_DEFAULT, buf.data()) < 0)
      throw InputError(file_name, "/" + path + " cannot be read");
    for (hsize_t i = 0; i < n; ++i) {
      std::string s(buf.data() + i * size, size);
      s.erase(std::find(s.begin(), s.end(), '\0'), s.end());
      out.push_back(s);
    }
  }
  return out;
}

// A damaged attribute message can hold fewer bytes than its dataspace and
// type promise; libhdf5 1.10 then copies past its own buffer in H5Aread. A
// variable-length string is stored as a global heap id: a 4-byte length, an
// address of the file's address size and a 4-byte index.
static bool attribute_storage_intact(hid_t attr, hid_t type, hid_t space) {
  const hssize_t n = H5Sget_simple_extent_npoints(space);
  if (n < 0) return false;
  hsize_t element = H5Tget_size(type);
  if (H5Tis_variable_str(type) > 0) {
    Id file(H5Iget_file_id(attr));
    Id fcpl(H5Fget_create_plist(file.get()));
    std::size_t address = 8, length = 8;
    if (!fcpl || H5Pget_sizes(fcpl.get(), &address, &length) < 0) return false;
    element = 4 + address + 4;
  }
  return H5Aget_storage_size(attr) >= static_cast<hsize_t>(n) * element;
}

std::optional<AttributeValue> read_attribute(hid_t file, const std::string& object_path, const std::string& name) {
  const char* obj = object_path.empty() ? "/" : object_path.c_str();
  if (!object_path.empty() && !exists(file, object_path)) return std::nullopt;
  check_attributes_of(file, obj);
  if (H5Aexists_by_name(file, obj, name.c_str(), H5P_DEFAULT) <= 0) return std::nullopt;
  Id a(H5Aopen_by_name(file, obj, name.c_str(), H5P_DEFAULT, H5P_DEFAULT));
  Id type(H5Aget_type(a.get()));
  Id space(H5Aget_space(a.get()));
  if (H5Sget_simple_extent_npoints(space.get()) != 1) return std::nullopt;  // a list: read_text_list_attribute
  if (!attribute_storage_intact(a.get(), type.get(), space.get())) return std::nullopt;
  switch (H5Tget_class(type.get())) {
    case H5T_FLOAT: {
      double d = 0;
      if (H5Aread(a.get(), H5T_NATIVE_DOUBLE, &d) < 0) return std::nullopt;
      return d;
    }
    case H5T_INTEGER: {
      std::int64_t i = 0;
      if (H5Aread(a.get(), H5T_NATIVE_INT64, &i) < 0) return std::nullopt;
      return i;
    }
    case H5T_STRING: {
      if (H5Tis_variable_str(type.get()) > 0) {
        check_attribute_string_references(file, obj, name, 1);
        Id t = vlen_string_like(type.get());
        char* p = nullptr;
        if (H5Aread(a.get(), t.get(), &p) < 0) return std::nullopt;
        std::string s = p ? p : "";
        H5free_memory(p);
        return s;
      }
      std::string s(H5Tget_size(type.get()), '\0');
      if (H5Aread(a.get(), type.get(), s.data()) < 0) return std::nullopt;
      s.erase(std::find(s.begin(), s.end(), '\0'), s.end());
      return s;
    }
    default: return std::nullopt;
  }
}

std::vector<std::string> read_text_list_attribute(hid_t file, const std::string& object_path,
                                                  const std::string& name) {
  const char* obj = object_path.empty() ? "/" : object_path.c_str();
  std::vector<std::string> out;
  check_attributes_of(file, obj);
  if (H5Aexists_by_name(file, obj, name.c_str(), H5P_DEFAULT) <= 0) return out;
  Id a(H5Aopen_by_name(file, obj, name.c_str(), H5P_DEFAULT, H5P_DEFAULT));
  Id type(H5Aget_type(a.get()));
  if (H5Tget_class(type.get()) != H5T_STRING) return out;
  Id space(H5Aget_space(a.get()));
  hssize_t n = H5Sget_simple_extent_npoints(space.get());
  if (n <= 0 || !attribute_storage_intact(a.get(), type.get(), space.get())) return out;
  if (H5Tis_variable_str(type.get()) > 0) {
    check_attribute_string_references(file, obj, name, static_cast<hsize_t>(n));
    Id t = vlen_string_like(type.get());
    std::vector<char*> ptrs(static_cast<std::size_t>(n), nullptr);
    if (H5Aread(a.get(), t.get(), ptrs.data()) < 0) return out;
    for (char* p : ptrs) out.emplace_back(p ? p : "");
    H5Dvlen_reclaim(t.get(), space.get(), H5P_DEFAULT, ptrs.data());
  } else {
    std::size_t size = H5Tget_size(type.get());
    std::vector<char> buf(static_cast<std::size_t>(n) * size);
    if (H5Aread(a.get(), type.get(), buf.data()) < 0) return out;
    for (hssize_t i = 0; i < n; ++i) {
      std::string s(buf.data() + i * size, size);
      s.erase(std::find(s.begin(), s.end(), '\0'), s.end());
      out.push_back(s);
    }
  }
  return out;
}

std::vector<std::string> attribute_names(hid_t file, const std::string& object_path) {
  std::vector<std::string> names;
  Id obj(H5Oopen(file, object_path.empty() ? "/" : object_path.c_str(), H5P_DEFAULT));
  if (!obj) return names;
  check_attributes_of(file, object_path.empty() ? "/" : object_path.c_str());
  H5Aiterate2(
      obj.get(), H5_INDEX_NAME, H5_ITER_INC, nullptr,
      [](hid_t, const char* name, const H5A_info_t*, void* out) -> herr_t {
        static_cast<std::vector<std::string>*>(out)->emplace_back(name);
        return 0;
      },
      &names);
  return names;
}

}  // namespace stallscope::h5
