#pragma once
// The archive: one HDF5 file per reduced run (layout in the README), plus the
// plain CSV exports beside it. Written to "<run>.h5.partial" and renamed only
// when complete, so a crash never leaves a half archive under the final name.
#include <filesystem>
#include <string>
#include <vector>

#include "pipeline/provenance.hpp"
#include "pipeline/run_store.hpp"

namespace stallscope {

struct ArchiveTarget {
  std::filesystem::path directory;
  std::string run_name;
  bool force = false;
  std::filesystem::path archive_path() const { return directory / (run_name + ".h5"); }
};

// Fails early (InputError) if the folder cannot be made or written, or the
// archive exists and force is off. Call before reducing, so no work is wasted.
void check_archive_target(const ArchiveTarget& target);

// True for store keys that belong in the archive (their top-level group is
// part of the layout); others ("daq/...", "scratch/...") are working data.
bool is_archived_key(const std::string& key);

// Writes the archive and, for every table entry with a "csv" attribute, that
// CSV file beside it. Returns the archive path.
std::filesystem::path write_archive(const RunStore& store, const Provenance& provenance,
                                    const ArchiveTarget& target);

// Reading back (inspect, verify, report).
Provenance read_provenance(const std::filesystem::path& archive);
// Loads every archived dataset and table back into a store.
RunStore read_archive(const std::filesystem::path& archive);
// Only the named paths: groups, tables or datasets ("run", "phase/cn"), each
// with all it holds; a group on the way to a named path is read only in part
// (not its own attributes). A reader that needs a few need not read a run's
// whole pressure and PIV record.
RunStore read_archive(const std::filesystem::path& archive, const std::vector<std::string>& groups);

}  // namespace stallscope
