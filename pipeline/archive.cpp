#include "pipeline/archive.hpp"

#include <unistd.h>

#include <algorithm>
#include <array>
#include <fstream>

#include "pipeline/csv_writer.hpp"
#include "pipeline/errors.hpp"
#include "pipeline/hdf5.hpp"

namespace stallscope {

namespace fs = std::filesystem;

// The top-level groups of the archive layout (README, "Archive").
static constexpr std::array kArchiveGroups = {"run",    "pressure", "loads", "motion",      "cycles", "phase",
                                              "events", "vortex",   "piv",   "static_polar", "fit",   "uncertainty"};

bool is_archived_key(const std::string& key) {
  std::string top = key.substr(0, key.find('/'));
  return std::find(kArchiveGroups.begin(), kArchiveGroups.end(), top) != kArchiveGroups.end();
}

void check_archive_target(const ArchiveTarget& target) {
  std::error_code ec;
  fs::create_directories(target.directory, ec);
  if (!fs::is_directory(target.directory, ec))
    throw InputError(target.directory.string(), "output folder cannot be created");
  // Probe by creating a file: permission bits do not stop root, but
  // read-only mounts and special file systems do.
  const fs::path probe = target.directory / (".stallscope-write-probe-" + std::to_string(getpid()));
  {
    std::ofstream out(probe);
    if (!out) throw InputError(target.directory.string(), "output folder is not writable");
  }
  fs::remove(probe, ec);
  if (fs::exists(target.archive_path(), ec) && !target.force)
    throw InputError(target.archive_path().string(), "archive already exists (use --force to overwrite it)");
}

namespace {

std::pair<std::string, std::string> split_parent(const std::string& key) {
  auto slash = key.rfind('/');
  return {key.substr(0, slash), key.substr(slash + 1)};
}

void write_attributes(hid_t file, const std::string& path, const Attributes& attributes) {
  for (const auto& [name, value] : attributes) h5::write_attribute(file, path, name, value);
}

void write_table(hid_t file, const std::string& path, const Table& table) {
  h5::Id group = h5::open_or_create_group(file, path);
  std::vector<std::string> names;
  for (const auto& c : table.columns) {
    names.push_back(c.name);
    std::string cpath = path + "/" + c.name;
    if (const auto* d = std::get_if<std::vector<double>>(&c.data)) {
      h5::write_numbers(file, cpath, d->data(), {d->size()}, c.units.empty() ? "1" : c.units);
    } else if (const auto* i = std::get_if<std::vector<std::int64_t>>(&c.data)) {
      h5::write_integers(file, cpath, i->data(), i->size(), c.units.empty() ? "1" : c.units);
    } else {
      h5::write_texts(file, cpath, std::get<std::vector<std::string>>(c.data));
    }
  }
  h5::write_text_list_attribute(group.get(), "columns", names);
}

struct EntryWriter {
  hid_t file;
  const std::string& key;
  void operator()(const Scalar& s) const {
    auto [group, name] = split_parent(key);
    h5::Id g = h5::open_or_create_group(file, group);
    h5::write_attribute(g.get(), name, s.value);
  }
  void operator()(const Text& t) const {
    auto [group, name] = split_parent(key);
    h5::Id g = h5::open_or_create_group(file, group);
    h5::write_attribute(g.get(), name, t.value);
  }
  void operator()(const Series& s) const {
    h5::write_numbers(file, key, s.values.data(), {static_cast<hsize_t>(s.values.size())}, s.units);
  }
  void operator()(const Matrix& m) const {
    // Row-major on disk (samples x channels), as every HDF5 client expects.
    Eigen::Matrix<double, Eigen::Dynamic, Eigen::Dynamic, Eigen::RowMajor> rm = m.values;
    h5::write_numbers(file, key, rm.data(), {static_cast<hsize_t>(rm.rows()), static_cast<hsize_t>(rm.cols())},
                      m.units);
    if (!m.columns.empty()) {
      h5::Id ds(H5Dopen2(file, key.c_str(), H5P_DEFAULT));
      h5::write_text_list_attribute(ds.get(), "columns", m.columns);
    }
  }
  void operator()(const FieldStack& f) const {
    h5::write_floats(file, key, f.values.data(), {f.frames, f.ny, f.nx}, f.units);
  }
  void operator()(const Table& t) const { write_table(file, key, t); }
};

void write_provenance(hid_t file, const Provenance& p) {
  h5::Id g = h5::open_or_create_group(file, "provenance");
  h5::write_attribute(g.get(), "tool_version", p.tool_version);
  h5::write_attribute(g.get(), "git_commit", p.git_commit);
  h5::write_attribute(g.get(), "created_utc", p.created_utc);
  h5::write_attribute(g.get(), "command_line", p.command_line);
  h5::write_attribute(g.get(), "host", p.host);
  h5::write_attribute(g.get(), "config_path", p.config_path);
  h5::write_text(file, "provenance/config_toml", p.config_toml);

  Table inputs, calibrations, stages;
  std::vector<std::string> path, role, sha, cid, cfile, csha, sname, sparams;
  std::vector<std::int64_t> bytes;
  std::vector<double> seconds;
  for (const auto& i : p.inputs) {
    path.push_back(i.path);
    role.push_back(i.role);
    bytes.push_back(static_cast<std::int64_t>(i.bytes));
    sha.push_back(i.sha256);
  }
  for (const auto& c : p.calibrations) {
    cid.push_back(c.id);
    cfile.push_back(c.file);
    csha.push_back(c.sha256);
  }
  for (const auto& s : p.stages) {
    sname.push_back(s.name);
    seconds.push_back(s.seconds);
    sparams.push_back(s.parameters);
  }
  inputs.add({"path", "", path}).add({"role", "", role}).add({"bytes", "B", bytes}).add({"sha256", "", sha});
  calibrations.add({"id", "", cid}).add({"file", "", cfile}).add({"sha256", "", csha});
  stages.add({"name", "", sname}).add({"seconds", "s", seconds}).add({"parameters", "", sparams});
  write_table(file, "provenance/inputs", inputs);
  write_table(file, "provenance/calibrations", calibrations);
  write_table(file, "provenance/stages", stages);
}

struct Partial {
  fs::path path;
  bool keep = false;
  ~Partial() {
    std::error_code ec;
    if (!keep) fs::remove(path, ec);
  }
};

}  // namespace

fs::path write_archive(const RunStore& store, const Provenance& provenance, const ArchiveTarget& target) {
  check_archive_target(target);
  const fs::path final_path = target.archive_path();
  Partial partial{fs::path(final_path.string() + ".partial")};
  {
    h5::File file = h5::File::create(partial.path);
    try {
      write_provenance(file.id(), provenance);
      for (const auto& [key, entry] : store.entries()) {
        if (!is_archived_key(key)) continue;
        std::visit(EntryWriter{file.id(), key}, entry.value);
        if (!entry.attributes.empty()) write_attributes(file.id(), key, entry.attributes);
      }
    } catch (const std::runtime_error& e) {
      if (dynamic_cast<const InputError*>(&e)) throw;
      throw InputError(partial.path.string(), std::string("archive write failed (disk full?): ") + e.what());
    }
    if (H5Fflush(file.id(), H5F_SCOPE_GLOBAL) < 0)
      throw InputError(partial.path.string(), "archive flush failed (disk full?)");
    file.close();
  }
  // CSV exports first, the archive last: its presence means all is complete.
  for (const auto& [key, entry] : store.entries()) {
    auto csv = entry.attributes.find("csv");
    if (csv == entry.attributes.end() || !std::holds_alternative<Table>(entry.value)) continue;
    write_csv_file(target.directory / std::get<std::string>(csv->second), std::get<Table>(entry.value));
  }
  fs::rename(partial.path, final_path);
  partial.keep = true;
  return final_path;
}

namespace {

// Which archive paths a reader asked for: a path named, one under a name, or
// (read only in part) a group on the way to one. Nothing named: everything.
class Selection {
 public:
  enum Reach { kNone, kPart, kWhole };
  explicit Selection(const std::vector<std::string>& names) : names_(names) {}
  Reach of(const std::string& path) const {
    if (names_.empty()) return kWhole;
    Reach r = kNone;
    for (const auto& n : names_) {
      if (path == n || (path.size() > n.size() && path.compare(0, n.size(), n) == 0 && path[n.size()] == '/'))
        return kWhole;
      if (n.size() > path.size() && n.compare(0, path.size(), path) == 0 && n[path.size()] == '/') r = kPart;
    }
    return r;
  }

 private:
  const std::vector<std::string>& names_;
};

void read_group(hid_t file, const std::string& file_name, const std::string& group, RunStore& store, int depth,
                const Selection& selection);

// What a dataset's or table's writer said of it beyond its units and columns
// (its CSV name, its notes).
Attributes extra_attributes(hid_t file, const std::string& path) {
  Attributes extra;
  for (const auto& a : h5::attribute_names(file, path)) {
    if (a == "units" || a == "columns") continue;
    if (auto v = h5::read_attribute(file, path, a)) extra[a] = *v;
  }
  return extra;
}

// The units attribute of a dataset, "" when absent or not text.
std::string units_of(hid_t file, const std::string& path) {
  auto units = h5::read_attribute(file, path, "units");
  return units && std::holds_alternative<std::string>(*units) ? std::get<std::string>(*units) : "";
}

void read_table(hid_t file, const std::string& file_name, const std::string& path, RunStore& store) {
  Table t;
  std::size_t rows = 0;
  for (const auto& name : h5::read_text_list_attribute(file, path, "columns")) {
    std::string cpath = path + "/" + name;
    h5::DatasetInfo di = h5::info(file, cpath, file_name);
    if (di.dims.size() != 1) throw InputError(file_name, "table column /" + cpath + " must be 1-D");
    if (t.find(name)) throw InputError(file_name, "table /" + path + " names column '" + name + "' twice");
    // A damaged table may have ragged columns; every reader indexes rows across columns.
    if (!t.columns.empty() && di.dims[0] != rows)
      throw InputError(file_name, "table column /" + cpath + " has " + std::to_string(di.dims[0]) +
                                      " rows, the table's other columns " + std::to_string(rows));
    rows = di.dims[0];
    std::string u = units_of(file, cpath);
    if (di.type_class == H5T_STRING) t.add({name, "", h5::read_texts(file, cpath, file_name)});
    else if (di.type_class == H5T_INTEGER) t.add({name, u, h5::read_integers(file, cpath, file_name)});
    else t.add({name, u, h5::read_numbers(file, cpath, file_name)});
  }
  store.put(path, std::move(t), extra_attributes(file, path));
}

void read_dataset(hid_t file, const std::string& file_name, const std::string& path, RunStore& store) {
  h5::DatasetInfo di = h5::info(file, path, file_name);
  std::string units = units_of(file, path);
  if (di.type_class == H5T_STRING) {
    auto texts = h5::read_texts(file, path, file_name);
    store.put(path, Text{texts.empty() ? "" : texts.front()});
    return;
  }
  if (di.dims.size() == 1) {
    auto v = h5::read_numbers(file, path, file_name);
    store.put(path, Series{Eigen::Map<Eigen::VectorXd>(v.data(), static_cast<Eigen::Index>(v.size())), units});
  } else if (di.dims.size() == 2) {
    auto v = h5::read_numbers(file, path, file_name);
    Matrix m;
    m.values = Eigen::Map<Eigen::Matrix<double, Eigen::Dynamic, Eigen::Dynamic, Eigen::RowMajor>>(
        v.data(), static_cast<Eigen::Index>(di.dims[0]), static_cast<Eigen::Index>(di.dims[1]));
    m.units = units;
    m.columns = h5::read_text_list_attribute(file, path, "columns");
    store.put(path, std::move(m));
  } else if (di.dims.size() == 3) {
    FieldStack f{di.dims[0], di.dims[1], di.dims[2], h5::read_floats(file, path, file_name), units};
    store.put(path, std::move(f));
  }
  if (store.contains(path)) store.attributes(path) = extra_attributes(file, path);
}

// Deeper than any layout we write; a deeper file is damaged or holds a link cycle.
constexpr int kMaxGroupDepth = 16;

void read_group(hid_t file, const std::string& file_name, const std::string& group, RunStore& store, int depth,
                const Selection& selection) {
  if (depth > kMaxGroupDepth)
    throw InputError(file_name, "/" + group + " is nested deeper than " + std::to_string(kMaxGroupDepth) +
                                    " groups (a link cycle?)");
  const bool whole = selection.of(group) == Selection::kWhole;
  for (const auto& a : whole ? h5::attribute_names(file, group) : std::vector<std::string>{}) {
    auto v = h5::read_attribute(file, group, a);
    if (!v) continue;
    if (const auto* d = std::get_if<double>(&*v)) store.put(group + "/" + a, Scalar{*d, ""});
    else if (const auto* i = std::get_if<std::int64_t>(&*v)) store.put(group + "/" + a, Scalar{double(*i), ""});
    else store.put(group + "/" + a, Text{std::get<std::string>(*v)});
  }
  for (const auto& child : h5::children(file, group)) {
    std::string path = group + "/" + child;
    const Selection::Reach reach = whole ? Selection::kWhole : selection.of(path);
    if (reach == Selection::kNone) continue;
    if (h5::is_group(file, path)) {
      if (h5::has_attribute(file, path, "columns")) {
        if (reach == Selection::kWhole) read_table(file, file_name, path, store);
      } else {
        read_group(file, file_name, path, store, depth + 1, selection);
      }
    } else if (reach == Selection::kWhole) {
      read_dataset(file, file_name, path, store);
    }
  }
}

}  // namespace

RunStore read_archive(const fs::path& archive) { return read_archive(archive, {}); }

RunStore read_archive(const fs::path& archive, const std::vector<std::string>& groups) {
  h5::File file = h5::File::open_read(archive);
  RunStore store;
  const Selection selection(groups);
  for (const auto& top : h5::children(file.id(), "/")) {
    if (top == "provenance" || selection.of(top) == Selection::kNone || !h5::is_group(file.id(), top)) continue;
    // A top-level group may itself be a table (cycles).
    if (h5::has_attribute(file.id(), top, "columns")) {
      if (selection.of(top) == Selection::kWhole) read_table(file.id(), file.name(), top, store);
    } else {
      read_group(file.id(), file.name(), top, store, 1, selection);
    }
  }
  return store;
}

Provenance read_provenance(const fs::path& archive) {
  h5::File file = h5::File::open_read(archive);
  const std::string& fn = file.name();
  if (!h5::is_group(file.id(), "provenance"))
    throw InputError(fn, "not a stallscope archive (no /provenance group)");
  auto attr = [&](const char* name) {
    auto v = h5::read_attribute(file.id(), "provenance", name);
    return v && std::holds_alternative<std::string>(*v) ? std::get<std::string>(*v) : std::string();
  };
  Provenance p;
  p.tool_version = attr("tool_version");
  p.git_commit = attr("git_commit");
  p.created_utc = attr("created_utc");
  p.command_line = attr("command_line");
  p.host = attr("host");
  p.config_path = attr("config_path");
  auto cfg = h5::read_texts(file.id(), "provenance/config_toml", fn);
  p.config_toml = cfg.empty() ? "" : cfg.front();
  RunStore s;
  read_table(file.id(), fn, "provenance/inputs", s);
  read_table(file.id(), fn, "provenance/calibrations", s);
  read_table(file.id(), fn, "provenance/stages", s);
  // The columns each table must have, of the type it is read as (a hand-edited
  // or damaged archive is the user's input, not our bug).
  auto require_column = [&](const char* table, const char* column, const char* kind) {
    const Column* c = s.get<Table>(std::string("provenance/") + table).find(column);
    const bool ok = c && ((kind[0] == 't' && std::holds_alternative<std::vector<std::string>>(c->data)) ||
                          (kind[0] == 'i' && std::holds_alternative<std::vector<std::int64_t>>(c->data)) ||
                          (kind[0] == 'n' && std::holds_alternative<std::vector<double>>(c->data)));
    if (!ok)
      throw InputError(fn, std::string("/provenance/") + table + " needs a column '" + column + "' of " + kind);
  };
  for (const char* c : {"path", "role", "sha256"}) require_column("inputs", c, "text");
  require_column("inputs", "bytes", "integers");
  for (const char* c : {"id", "file", "sha256"}) require_column("calibrations", c, "text");
  for (const char* c : {"name", "parameters"}) require_column("stages", c, "text");
  require_column("stages", "seconds", "numbers");
  const Table& in = s.get<Table>("provenance/inputs");
  for (std::size_t r = 0; r < in.rows(); ++r)
    p.inputs.push_back({in.texts("path")[r], in.texts("role")[r],
                        static_cast<std::uint64_t>(in.integers("bytes")[r]), in.texts("sha256")[r]});
  const Table& cal = s.get<Table>("provenance/calibrations");
  for (std::size_t r = 0; r < cal.rows(); ++r)
    p.calibrations.push_back({cal.texts("id")[r], cal.texts("file")[r], cal.texts("sha256")[r]});
  const Table& st = s.get<Table>("provenance/stages");
  for (std::size_t r = 0; r < st.rows(); ++r)
    p.stages.push_back({st.texts("name")[r], st.numbers("seconds")[r], st.texts("parameters")[r]});
  return p;
}

}  // namespace stallscope
