#pragma once
// A check of an HDF5 file's global heap collections (where variable-length
// strings live) before libhdf5 reads them: libhdf5 1.10 loops forever on a
// damaged collection whose object list does not move forward.
#include <cstddef>
#include <cstdint>
#include <filesystem>
#include <optional>
#include <string>

namespace stallscope::h5 {

// Throws InputError(name, ...) when a collection in the file at path would
// stop libhdf5 1.10 in an endless loop; does nothing for a sound file.
void check_global_heaps(const std::filesystem::path& path, const std::string& name);

// Where a dataset of variable-length strings keeps its raw elements (heap ids).
struct StringReferences {
  std::uint64_t base = 0;    // the file's base address (its user block)
  std::uint64_t offset = 0;  // the raw data's address, from base
  std::uint64_t count = 0;   // elements
  std::size_t address_size = 8;
};

// libhdf5 1.10 reads a heap object by its index without checking that the
// collection holds it (H5HG_read), and segfaults on a damaged id. Throws
// InputError(name, ...) naming dataset when an element refers to an object
// that is not in its collection or whose size is not the string's length
// (longer, libhdf5 copies past its buffer; shorter, it allocates what the
// damaged length says, and spends seconds converting).
void check_string_references(const std::filesystem::path& path, const std::string& name, const std::string& dataset,
                             const StringReferences& refs);

// Where the raw elements (for a string, its heap ids) of the attribute named
// attribute lie, as an offset from base, found by walking the messages of the
// object header at header (an offset from base) and its continuations. nullopt
// when the header does not hold it there (attributes in dense storage, a
// shared message, or a header this walk cannot follow).
std::optional<std::uint64_t> attribute_data_offset(const std::filesystem::path& path, std::uint64_t base,
                                                   std::uint64_t header, const std::string& attribute,
                                                   std::size_t address_size, std::size_t length_size);

// libhdf5 1.10 decodes every attribute message of an object to find one by
// name (H5Aexists_by_name, H5Aopen_by_name) and copies past its buffer when a
// message declares parts longer than itself. Throws InputError(name, ...)
// naming object when an attribute message in the header at header is so damaged.
void check_attribute_messages(const std::filesystem::path& path, const std::string& name, const std::string& object,
                              std::uint64_t base, std::uint64_t header, std::size_t address_size,
                              std::size_t length_size);

// Where the raw data of a dataset of compact layout lies (in its layout
// message), as an offset from base; nullopt when the header holds no compact layout.
std::optional<std::uint64_t> compact_data_offset(const std::filesystem::path& path, std::uint64_t base,
                                                 std::uint64_t header, std::size_t address_size,
                                                 std::size_t length_size);

}  // namespace stallscope::h5
