#include "pipeline/hdf5_heap_check.hpp"

#include <array>
#include <cstdint>
#include <cstring>
#include <fstream>
#include <map>
#include <vector>

#include "pipeline/errors.hpp"

namespace stallscope::h5 {

namespace {

// The HDF5 file format (specification version 3, "III.E Global Heap"): a
// collection is "GCOL", version 1, 3 reserved bytes, its size in bytes
// (length-sized, counting this header), then objects, each: heap object index
// (2 bytes), reference count (2), reserved (4), object size (length-sized),
// data padded to 8 bytes. Index 0 is the free space, whose size counts its
// own header and is not padded.
constexpr char kSignature[] = "GCOL";
constexpr std::size_t kMaxCollections = 1 << 16;

std::uint64_t little_endian(const unsigned char* p, std::size_t bytes) {
  std::uint64_t v = 0;
  for (std::size_t i = bytes; i-- > 0;) v = (v << 8) | p[i];
  return v;
}

// Size of lengths from a superblock at the start of the file (8 when there is none there).
std::size_t size_of_lengths(std::ifstream& in) {
  std::array<unsigned char, 16> s{};
  in.clear();
  in.seekg(0);
  if (!in.read(reinterpret_cast<char*>(s.data()), s.size())) return 8;
  if (std::memcmp(s.data(), "\x89HDF\r\n\x1a\n", 8) != 0) return 8;
  const std::size_t n = s[8] <= 1 ? s[14] : s[10];  // superblock versions 0-1 and 2-3
  return n == 2 || n == 4 || n == 8 ? n : 8;
}

// Every offset where the signature starts.
std::vector<std::uint64_t> signature_offsets(std::ifstream& in) {
  std::vector<std::uint64_t> found;
  std::vector<char> block(1 << 20);
  const std::size_t keep = sizeof kSignature - 2;  // bytes carried over to the next block
  std::uint64_t block_start = 0;
  std::size_t carried = 0;
  in.clear();
  in.seekg(0);
  while (found.size() < kMaxCollections) {
    in.read(block.data() + carried, static_cast<std::streamsize>(block.size() - carried));
    const std::size_t n = carried + static_cast<std::size_t>(in.gcount());
    if (n == carried) break;
    const std::string_view view(block.data(), n);
    for (auto at = view.find(kSignature); at != std::string_view::npos; at = view.find(kSignature, at + 1))
      found.push_back(block_start + at);
    carried = std::min(keep, n);
    std::memmove(block.data(), block.data() + n - carried, carried);
    block_start += n - carried;
    if (!in) break;
  }
  return found;
}

// Walks one collection's objects the way libhdf5 1.10 does
// (H5HG__cache_heap_deserialize); returns why it would not end, or "". With
// objects, records each object's index and size (and *objects stays empty
// when there is no sound collection at that byte).
std::string walk(std::ifstream& in, std::uint64_t at, std::uint64_t file_size, std::size_t lengths,
                 std::map<std::uint64_t, std::uint64_t>* objects = nullptr) {
  const std::size_t header = 8 + lengths, object_header = 8 + lengths;
  std::vector<unsigned char> h(header);
  in.clear();
  in.seekg(static_cast<std::streamoff>(at));
  if (!in.read(reinterpret_cast<char*>(h.data()), static_cast<std::streamsize>(header)) || h[4] != 1) return "";
  const std::uint64_t size = little_endian(h.data() + 8, lengths);
  // A collection the file cannot hold is refused by libhdf5 itself (read past the end).
  if (size < header || size > file_size - at) return "";
  std::uint64_t p = header;
  std::vector<unsigned char> o(object_header);
  while (p < size) {
    if (p + object_header > size) break;  // the tail too small for an object: free space
    in.seekg(static_cast<std::streamoff>(at + p));
    if (!in.read(reinterpret_cast<char*>(o.data()), static_cast<std::streamsize>(object_header))) return "";
    const std::uint64_t index = little_endian(o.data(), 2), object = little_endian(o.data() + 8, lengths);
    const std::string where = " at byte " + std::to_string(at + p);
    if (index == 0 && object == 0) return "its free-space entry" + where + " has size 0";
    // libhdf5 steps by the free space's size as stored, or by the padded size of an object;
    // a step past the end makes it read outside the collection.
    const std::uint64_t step = object > size ? size : index == 0 ? object : object_header + ((object + 7) / 8) * 8;
    if (object > size || step > size - p) {
      if (objects) objects->clear();
      return "object " + std::to_string(index) + where + " declares " + std::to_string(object) +
             " bytes, past the collection's end";
    }
    if (objects && index != 0) (*objects)[index] = object;
    p += step;
  }
  return "";
}

}  // namespace

void check_global_heaps(const std::filesystem::path& path, const std::string& name) {
  std::ifstream in(path, std::ios::binary);
  if (!in) return;  // the library's own open reports it
  in.seekg(0, std::ios::end);
  const auto end = in.tellg();
  if (end <= 0) return;
  const auto file_size = static_cast<std::uint64_t>(end);
  const std::size_t lengths = size_of_lengths(in);
  for (std::uint64_t at : signature_offsets(in)) {
    const std::string why = walk(in, at, file_size, lengths);
    if (!why.empty())
      throw InputError(name, "damaged HDF5 file: the global heap collection at byte " + std::to_string(at) +
                                 " (variable-length strings) is corrupt: " + why);
  }
}

void check_string_references(const std::filesystem::path& path, const std::string& name, const std::string& dataset,
                             const StringReferences& refs) {
  std::ifstream in(path, std::ios::binary);
  if (!in) return;
  in.seekg(0, std::ios::end);
  const auto end = in.tellg();
  if (end <= 0) return;
  const auto file_size = static_cast<std::uint64_t>(end);
  const std::size_t lengths = size_of_lengths(in);
  // Each element: the string's length (4 bytes), its collection's address, the object's index (4 bytes).
  const std::size_t element = 4 + refs.address_size + 4;
  const std::uint64_t at = refs.base + refs.offset;
  if (refs.count == 0) return;
  if (at > file_size || refs.count > (file_size - at) / element)
    throw InputError(name, "damaged HDF5 file: /" + dataset + " holds " + std::to_string(refs.count) +
                               " strings, more than the file's bytes after byte " + std::to_string(at));
  std::vector<unsigned char> raw(refs.count * element);
  in.seekg(static_cast<std::streamoff>(at));
  if (!in.read(reinterpret_cast<char*>(raw.data()), static_cast<std::streamsize>(raw.size()))) return;
  std::map<std::uint64_t, std::map<std::uint64_t, std::uint64_t>> collections;
  for (std::uint64_t i = 0; i < refs.count; ++i) {
    const unsigned char* e = raw.data() + i * element;
    const std::uint64_t length = little_endian(e, 4), address = little_endian(e + 4, refs.address_size),
                        index = little_endian(e + 4 + refs.address_size, 4);
    if (length == 0) continue;  // an empty string: the library reads no heap
    auto [it, fresh] = collections.try_emplace(address);
    if (fresh && address <= file_size - refs.base) walk(in, refs.base + address, file_size, lengths, &it->second);
    const auto object = it->second.find(index);
    if (object == it->second.end() || object->second > length)
      throw InputError(name, "damaged HDF5 file: string " + std::to_string(i) + " of /" + dataset +
                                 " refers to object " + std::to_string(index) + " of a global heap collection at byte " +
                                 std::to_string(refs.base + address) + " that does not hold it" +
                                 (object == it->second.end() ? "" : " (the object is longer than the string)"));
  }
}

}  // namespace stallscope::h5
