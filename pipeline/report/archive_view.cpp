#include "pipeline/report/archive_view.hpp"

#include <cmath>

#include "pipeline/archive.hpp"
#include "pipeline/errors.hpp"
#include "pipeline/hdf5.hpp"
#include "pipeline/sha256.hpp"

namespace stallscope::report {

namespace fs = std::filesystem;

namespace {

// The tables the report uses. They are read here rather than from the store
// because a table's attributes (the damping summary, conventions) and tables
// at the top of the layout (/cycles) must come back whole.
constexpr const char* kTables[] = {"cycles",        "cycles/damping",   "events/per_cycle", "events/summary",
                                   "vortex/tracks", "vortex/per_track", "vortex/events_per_cycle",
                                   "pressure/taps", "phase/loads",      "piv/detections", "piv/frames",
                                   "fit/summary",   "fit/loop"};

std::optional<Table> read_table(hid_t file, const std::string& file_name, const std::string& path) {
  if (!h5::exists(file, path) || !h5::is_group(file, path) || !h5::has_attribute(file, path, "columns"))
    return std::nullopt;
  Table t;
  for (const auto& name : h5::read_text_list_attribute(file, path, "columns")) {
    const std::string cpath = path + "/" + name;
    const h5::DatasetInfo di = h5::info(file, cpath, file_name);
    const auto units = h5::read_attribute(file, cpath, "units");
    const std::string u = units && std::holds_alternative<std::string>(*units) ? std::get<std::string>(*units) : "";
    // A damaged table may have ragged or multi-dimensional columns: bad input, not our error.
    if (di.dims.size() != 1 || (!t.columns.empty() && di.dims[0] != t.rows()))
      throw InputError(file_name, "table column /" + cpath + " is not a column of the table's length");
    if (di.type_class == H5T_STRING) t.add({name, "", h5::read_texts(file, cpath, file_name)});
    else if (di.type_class == H5T_INTEGER) t.add({name, u, h5::read_integers(file, cpath, file_name)});
    else t.add({name, u, h5::read_numbers(file, cpath, file_name)});
  }
  return t;
}

const Attributes kNoAttributes;

}  // namespace

ArchiveView ArchiveView::load(const fs::path& archive) {
  ArchiveView v;
  v.path_ = archive;
  v.provenance_ = read_provenance(archive);  // InputError for anything but an archive
  v.store_ = read_archive(archive);
  v.sha256_ = sha256_file(archive);
  h5::File file = h5::File::open_read(archive);
  for (const char* key : kTables) {
    auto t = read_table(file.id(), file.name(), key);
    if (!t) continue;
    v.tables_[key] = std::move(*t);
    Attributes a;
    for (const auto& name : h5::attribute_names(file.id(), key)) {
      if (name == "columns") continue;
      if (auto value = h5::read_attribute(file.id(), key, name)) a[name] = *value;
    }
    v.table_attributes_[key] = std::move(a);
  }
  return v;
}

const Series* ArchiveView::series(const std::string& key) const {
  if (!store_.contains(key)) return nullptr;
  return std::get_if<Series>(&store_.entry(key).value);
}

const Matrix* ArchiveView::matrix(const std::string& key) const {
  if (!store_.contains(key)) return nullptr;
  return std::get_if<Matrix>(&store_.entry(key).value);
}

const Table* ArchiveView::table(const std::string& key) const {
  auto it = tables_.find(key);
  if (it != tables_.end()) return &it->second;
  if (!store_.contains(key)) return nullptr;
  return std::get_if<Table>(&store_.entry(key).value);
}

std::optional<double> ArchiveView::number(const std::string& key) const {
  if (!store_.contains(key)) return std::nullopt;
  if (const auto* s = std::get_if<Scalar>(&store_.entry(key).value)) return s->value;
  return std::nullopt;
}

std::optional<std::string> ArchiveView::text(const std::string& key) const {
  if (!store_.contains(key)) return std::nullopt;
  if (const auto* t = std::get_if<Text>(&store_.entry(key).value)) return t->value;
  return std::nullopt;
}

const Attributes& ArchiveView::table_attributes(const std::string& key) const {
  auto it = table_attributes_.find(key);
  return it == table_attributes_.end() ? kNoAttributes : it->second;
}

std::optional<double> ArchiveView::table_number(const std::string& table_key, const std::string& attribute) const {
  const Attributes& a = table_attributes(table_key);
  auto it = a.find(attribute);
  if (it == a.end()) return std::nullopt;
  if (const auto* d = std::get_if<double>(&it->second)) return *d;
  if (const auto* i = std::get_if<std::int64_t>(&it->second)) return static_cast<double>(*i);
  return std::nullopt;
}

std::optional<std::string> ArchiveView::table_text(const std::string& table_key, const std::string& attribute) const {
  const Attributes& a = table_attributes(table_key);
  auto it = a.find(attribute);
  if (it == a.end()) return std::nullopt;
  if (const auto* s = std::get_if<std::string>(&it->second)) return *s;
  return std::nullopt;
}

const Attributes& ArchiveView::attributes(const std::string& key) const {
  return store_.contains(key) ? store_.entry(key).attributes : kNoAttributes;
}

bool has_column(const Table& t, const std::string& column) { return t.find(column) != nullptr; }

std::vector<double> numbers_of(const Table& t, const std::string& column) {
  const Column* c = t.find(column);
  if (!c) return {};
  if (const auto* d = std::get_if<std::vector<double>>(&c->data)) return *d;
  if (const auto* i = std::get_if<std::vector<std::int64_t>>(&c->data))
    return std::vector<double>(i->begin(), i->end());
  return std::vector<double>(c->size(), NAN);
}

std::vector<std::string> texts_of(const Table& t, const std::string& column) {
  const Column* c = t.find(column);
  if (!c) return {};
  if (const auto* s = std::get_if<std::vector<std::string>>(&c->data)) return *s;
  return std::vector<std::string>(c->size());
}

}  // namespace stallscope::report
