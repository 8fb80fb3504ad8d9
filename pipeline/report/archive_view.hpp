#pragma once
// What the report reads: the archive loaded back (the archive is the single
// source of the report), with typed look-ups that tolerate absent keys, so
// each section appears only when its data are there.
#include <filesystem>
#include <map>
#include <optional>
#include <string>

#include "pipeline/provenance.hpp"
#include "pipeline/run_store.hpp"

namespace stallscope::report {

class ArchiveView {
 public:
  // InputError if the file is not a stallscope archive.
  static ArchiveView load(const std::filesystem::path& archive);

  const std::filesystem::path& path() const { return path_; }
  const std::string& sha256() const { return sha256_; }
  const Provenance& provenance() const { return provenance_; }
  const RunStore& store() const { return store_; }

  // nullptr / nullopt when the key is absent or holds another kind of value.
  const Series* series(const std::string& key) const;
  const Matrix* matrix(const std::string& key) const;
  const Table* table(const std::string& key) const;
  std::optional<double> number(const std::string& key) const;  // a Scalar (group attribute)
  std::optional<std::string> text(const std::string& key) const;
  // A table's own attributes (conventions, summary values), "columns" left out.
  const Attributes& table_attributes(const std::string& key) const;
  std::optional<double> table_number(const std::string& table_key, const std::string& attribute) const;
  std::optional<std::string> table_text(const std::string& table_key, const std::string& attribute) const;
  // A dataset's attributes (empty when absent).
  const Attributes& attributes(const std::string& key) const;

 private:
  std::filesystem::path path_;
  std::string sha256_;
  Provenance provenance_;
  RunStore store_;
  std::map<std::string, Table> tables_;
  std::map<std::string, Attributes> table_attributes_;
};

// Table column helpers that tolerate absent columns and either numeric kind.
std::vector<double> numbers_of(const Table& t, const std::string& column);  // empty if absent
std::vector<std::string> texts_of(const Table& t, const std::string& column);
bool has_column(const Table& t, const std::string& column);

}  // namespace stallscope::report
