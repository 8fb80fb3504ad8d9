#pragma once
// A check of an HDF5 file's global heap collections (where variable-length
// strings live) before libhdf5 reads them: libhdf5 1.10 loops forever on a
// damaged collection whose object list does not move forward.
#include <filesystem>
#include <string>

namespace stallscope::h5 {

// Throws InputError(name, ...) when a collection in the file at path would
// stop libhdf5 1.10 in an endless loop; does nothing for a sound file.
void check_global_heaps(const std::filesystem::path& path, const std::string& name);

}  // namespace stallscope::h5
