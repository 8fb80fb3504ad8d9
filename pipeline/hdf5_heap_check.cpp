#include "pipeline/hdf5_heap_check.hpp"

#include <array>
#include <cstdint>
#include <cstring>
#include <fstream>
#include <functional>
#include <map>
#include <optional>
#include <variant>
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

// Every offset where each signature starts (all four bytes long), in one pass.
std::vector<std::vector<std::uint64_t>> signature_offsets(std::ifstream& in, const std::vector<std::string_view>& signatures) {
  std::vector<std::vector<std::uint64_t>> found(signatures.size());
  std::vector<char> block(1 << 20);
  constexpr std::size_t keep = 3;  // bytes carried over to the next block
  std::uint64_t block_start = 0;
  std::size_t carried = 0, total = 0;
  in.clear();
  in.seekg(0);
  while (total < kMaxCollections) {
    in.read(block.data() + carried, static_cast<std::streamsize>(block.size() - carried));
    const std::size_t n = carried + static_cast<std::size_t>(in.gcount());
    if (n == carried) break;
    const std::string_view view(block.data(), n);
    for (std::size_t s = 0; s < signatures.size(); ++s)
      for (auto at = view.find(signatures[s]); at != std::string_view::npos; at = view.find(signatures[s], at + 1))
        found[s].push_back(block_start + at), ++total;
    carried = std::min(keep, n);
    std::memmove(block.data(), block.data() + n - carried, carried);
    block_start += n - carried;
    if (!in) break;
  }
  return found;
}

// A local heap ("III.D Disk Format: Level 1D - Local Heaps": "HEAP", version
// 0, 3 reserved bytes, the data segment's size, the free list's offset, the
// data segment's address) holds a group's link names. libhdf5 1.10 allocates
// the data segment's size as declared before it reads it; returns why that
// size cannot be real, or "".
std::string local_heap_damage(std::ifstream& in, std::uint64_t at, std::uint64_t file_size, std::size_t lengths) {
  std::vector<unsigned char> h(8 + 2 * lengths);
  in.clear();
  in.seekg(static_cast<std::streamoff>(at));
  if (!in.read(reinterpret_cast<char*>(h.data()), static_cast<std::streamsize>(h.size()))) return "";
  if (h[4] != 0 || h[5] != 0 || h[6] != 0 || h[7] != 0) return "";  // not a local heap: the bytes only look alike
  const std::uint64_t size = little_endian(h.data() + 8, lengths);
  if (size <= file_size) return "";
  return "declares a data segment of " + std::to_string(size) + " bytes, more than the file's " +
         std::to_string(file_size);
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
  // The whole collection in one read: a seek and a read per object would be a
  // system call each, and a summary reads many strings of the same collections.
  std::vector<unsigned char> c(size);
  in.seekg(static_cast<std::streamoff>(at));
  if (!in.read(reinterpret_cast<char*>(c.data()), static_cast<std::streamsize>(size))) return "";
  std::uint64_t p = header;
  while (p < size) {
    if (p + object_header > size) break;  // the tail too small for an object: free space
    const unsigned char* o = c.data() + p;
    const std::uint64_t index = little_endian(o, 2), object = little_endian(o + 8, lengths);
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
  const auto found = signature_offsets(in, {"GCOL", "HEAP"});
  for (std::uint64_t at : found[0]) {
    const std::string why = walk(in, at, file_size, lengths);
    if (!why.empty())
      throw InputError(name, "damaged HDF5 file: the global heap collection at byte " + std::to_string(at) +
                                 " (variable-length strings) is corrupt: " + why);
  }
  for (std::uint64_t at : found[1]) {
    const std::string why = local_heap_damage(in, at, file_size, lengths);
    if (!why.empty())
      throw InputError(name, "damaged HDF5 file: the local heap at byte " + std::to_string(at) +
                                 " (a group's link names) " + why);
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
    if (object == it->second.end() || object->second != length)
      throw InputError(name, "damaged HDF5 file: string " + std::to_string(i) + " of /" + dataset +
                                 " refers to object " + std::to_string(index) + " of a global heap collection at byte " +
                                 std::to_string(refs.base + address) +
                                 (object == it->second.end()
                                      ? " that does not hold it"
                                      : ", which holds " + std::to_string(object->second) + " bytes for a string of " +
                                            std::to_string(length)));
  }
}

namespace {

// The HDF5 file format, "IV.A.1 Data Object Headers": version 1 is a 16-byte
// prefix and messages of type (2), size (2), flags (1), 3 reserved; version 2
// is "OHDR", optional times and attribute thresholds, the chunk's size, and
// messages of type (1), size (2), flags (1), creation order (2, when tracked).
// A continuation message (0x10) names another chunk: the address and length
// of bare messages (version 1) or of "OCHK", messages and a checksum (2).
constexpr unsigned kContinuation = 0x10, kAttribute = 0x0C, kLayout = 0x08;
constexpr unsigned kSharedMessage = 0x02;  // message flags: the message lives in the shared table
constexpr std::size_t kMaxChunks = 64;

struct Chunk {
  std::uint64_t at = 0, size = 0;  // the messages' bytes, absolute
};

std::optional<std::vector<unsigned char>> read_bytes(std::ifstream& in, std::uint64_t at, std::uint64_t n,
                                                     std::uint64_t file_size) {
  if (at > file_size || n > file_size - at) return std::nullopt;
  std::vector<unsigned char> b(n);
  in.clear();
  in.seekg(static_cast<std::streamoff>(at));
  if (!in.read(reinterpret_cast<char*>(b.data()), static_cast<std::streamsize>(n))) return std::nullopt;
  return b;
}

// Where the attribute message's data starts within its message ("IV.A.2.m The
// Attribute Message"): version 1 pads name, datatype and dataspace to 8 bytes,
// version 3 adds a character-set byte.
struct AttributeParts {
  std::uint64_t name_at = 0, name_size = 0, data_at = 0;
};

// The parts of an attribute message, or why it is damaged.
std::variant<AttributeParts, std::string> attribute_parts(const unsigned char* m, std::uint64_t size) {
  if (size < 8) return "is " + std::to_string(size) + " bytes, shorter than its own header";
  const unsigned version = m[0];
  if (version < 1 || version > 3) return "has version " + std::to_string(version) + " (1 to 3 exist)";
  const std::uint64_t name_size = little_endian(m + 2, 2), type_size = little_endian(m + 4, 2),
                      space_size = little_endian(m + 6, 2);
  auto pad = [&](std::uint64_t n) { return version == 1 ? (n + 7) / 8 * 8 : n; };
  AttributeParts a{version == 3 ? 9u : 8u, name_size, 0};
  a.data_at = a.name_at + pad(name_size) + pad(type_size) + pad(space_size);
  if (a.data_at > size)
    return "declares a name of " + std::to_string(name_size) + ", a type of " + std::to_string(type_size) +
           " and a dataspace of " + std::to_string(space_size) + " bytes, more than its " + std::to_string(size);
  if (name_size == 0 || m[a.name_at + name_size - 1] != '\0') return "has a name that does not end where it says";
  return a;
}

std::optional<std::uint64_t> attribute_data_start(const unsigned char* m, std::uint64_t size,
                                                  const std::string& name) {
  const auto parts = attribute_parts(m, size);
  const AttributeParts* a = std::get_if<AttributeParts>(&parts);
  if (!a || a->name_size != name.size() + 1 || std::memcmp(m + a->name_at, name.data(), name.size()) != 0)
    return std::nullopt;
  return a->data_at;
}

}  // namespace

// Where a compact dataset's raw data starts within its layout message ("IV.A.2.i
// The Data Layout Message", version 3: version, class 0, the size (2), the data).
std::optional<std::uint64_t> compact_data_start(const unsigned char* m, std::uint64_t size) {
  if (size < 4 || m[0] != 3 || m[1] != 0) return std::nullopt;
  return 4;
}

// The first message for which found gives a place in its data, as an offset from base.
using MessageFinder = std::function<std::optional<std::uint64_t>(unsigned type, const unsigned char*, std::uint64_t)>;

std::optional<std::uint64_t> find_in_header(const std::filesystem::path& path, std::uint64_t base, std::uint64_t header,
                                            std::size_t address_size, std::size_t length_size,
                                            const MessageFinder& found) {
  std::ifstream in(path, std::ios::binary);
  if (!in) return std::nullopt;
  in.seekg(0, std::ios::end);
  const auto end = in.tellg();
  if (end <= 0) return std::nullopt;
  const auto file_size = static_cast<std::uint64_t>(end);
  if (base > file_size || header > file_size - base) return std::nullopt;
  const std::uint64_t at = base + header;
  const auto prefix = read_bytes(in, at, 16, file_size);
  if (!prefix) return std::nullopt;
  const unsigned char* h = prefix->data();
  const bool v2 = std::memcmp(h, "OHDR", 4) == 0;
  if (!v2 && h[0] != 1) return std::nullopt;
  bool creation_order = false;
  std::vector<Chunk> chunks;
  if (v2) {
    if (h[4] != 2) return std::nullopt;
    const unsigned flags = h[5];
    creation_order = (flags & 0x04) != 0;
    std::size_t p = 6 + ((flags & 0x20) ? 16 : 0) + ((flags & 0x10) ? 4 : 0);
    const std::size_t width = std::size_t{1} << (flags & 0x03);
    const auto field = read_bytes(in, at + p, width, file_size);
    if (!field) return std::nullopt;
    chunks.push_back({at + p + width, little_endian(field->data(), width)});
  } else {
    chunks.push_back({at + 16, little_endian(h + 8, 4)});
  }
  const std::size_t message_header = v2 ? (creation_order ? 6 : 4) : 8;
  for (std::size_t c = 0; c < chunks.size() && c < kMaxChunks; ++c) {
    const auto bytes = read_bytes(in, chunks[c].at, chunks[c].size, file_size);
    if (!bytes) return std::nullopt;
    const unsigned char* b = bytes->data();
    for (std::uint64_t p = 0; p + message_header <= bytes->size();) {
      const unsigned type = v2 ? b[p] : static_cast<unsigned>(little_endian(b + p, 2));
      const std::uint64_t size = little_endian(b + p + (v2 ? 1 : 2), 2);
      const unsigned flags = b[p + (v2 ? 3 : 4)];
      const std::uint64_t data = p + message_header;
      if (size > bytes->size() - data) break;  // a damaged message: nothing after it can be trusted
      if (!(flags & kSharedMessage))
        if (const auto start = found(type, b + data, size)) return chunks[c].at + data + *start - base;
      if (type == kContinuation && size >= address_size + length_size) {
        const std::uint64_t where = little_endian(b + data, address_size),
                            length = little_endian(b + data + address_size, length_size);
        // A version 2 continuation chunk: "OCHK", messages, a 4-byte checksum.
        if (where > file_size - base) break;
        if (!v2) chunks.push_back({base + where, length});
        else if (length >= 8) chunks.push_back({base + where + 4, length - 8});
      }
      p = data + size;
    }
  }
  return std::nullopt;
}

std::optional<std::uint64_t> attribute_data_offset(const std::filesystem::path& path, std::uint64_t base,
                                                   std::uint64_t header, const std::string& attribute,
                                                   std::size_t address_size, std::size_t length_size) {
  return find_in_header(path, base, header, address_size, length_size,
                        [&](unsigned type, const unsigned char* m, std::uint64_t size) {
                          return type == kAttribute ? attribute_data_start(m, size, attribute) : std::nullopt;
                        });
}

std::optional<std::uint64_t> compact_data_offset(const std::filesystem::path& path, std::uint64_t base,
                                                 std::uint64_t header, std::size_t address_size,
                                                 std::size_t length_size) {
  return find_in_header(path, base, header, address_size, length_size,
                        [](unsigned type, const unsigned char* m, std::uint64_t size) {
                          return type == kLayout ? compact_data_start(m, size) : std::nullopt;
                        });
}

void check_attribute_messages(const std::filesystem::path& path, const std::string& name, const std::string& object,
                              std::uint64_t base, std::uint64_t header, std::size_t address_size,
                              std::size_t length_size) {
  find_in_header(path, base, header, address_size, length_size,
                 [&](unsigned type, const unsigned char* m, std::uint64_t size) -> std::optional<std::uint64_t> {
                   if (type != kAttribute) return std::nullopt;
                   const auto parts = attribute_parts(m, size);
                   if (const std::string* why = std::get_if<std::string>(&parts))
                     throw InputError(name, "damaged HDF5 file: an attribute message in the header of /" + object +
                                                " " + *why);
                   return std::nullopt;
                 });
}

}  // namespace stallscope::h5
