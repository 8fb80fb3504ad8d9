#include "pipeline/campaign/manifest.hpp"

#include <algorithm>
#include <map>
#include <optional>
#include <sstream>

#include "pipeline/config.hpp"
#include "pipeline/errors.hpp"

namespace stallscope::campaign {

namespace fs = std::filesystem;

std::string_view kind_name(RunKind kind) { return kind == RunKind::kStaticPolar ? "static_polar" : "dynamic"; }

fs::path CampaignRun::config_name() const {
  if (config_text.empty()) return config;
  return config.parent_path() / (config.filename().string() + " [merged for run " + name + "]");
}

namespace {

// The same rule as [run] name: it names a folder and an archive file.
bool plain_run_name(const std::string& s) {
  return !s.empty() && s.size() <= 128 && s.front() != '.' &&
         std::all_of(s.begin(), s.end(), [](char c) {
           return std::isalnum(static_cast<unsigned char>(c)) || c == '-' || c == '_' || c == '.';
         });
}

std::string position(const fs::path& file, const toml::node& node, const std::string& dotted) {
  const auto& b = node.source().begin;
  std::string at = file.string();
  if (b.line > 0) at += ":" + std::to_string(b.line) + ":" + std::to_string(b.column);
  return dotted.empty() ? at : at + ": " + dotted;
}

std::string joined(const std::vector<std::string>& parts) {
  std::string s;
  for (const auto& p : parts) s += (s.empty() ? "" : ".") + p;
  return s;
}

std::string kind_of(const toml::node& n) {
  if (n.is_string()) return "a string";
  if (n.is_number()) return "a number";
  if (n.is_boolean()) return "true or false";
  if (n.is_array()) return "an array";
  if (n.is_table()) return "a table";
  return "a date or time";
}

struct Leaf {
  std::vector<std::string> key;  // the path inside the run config
  const toml::node* node;
};

void collect_leaves(const toml::table& table, std::vector<std::string> prefix, std::vector<Leaf>& out) {
  for (const auto& [k, n] : table) {
    auto key = prefix;
    key.emplace_back(k.str());
    if (const toml::table* t = n.as_table()) collect_leaves(*t, key, out);
    else out.push_back({key, &n});
  }
}

// Sets config[key] = value, where the override's own position is `where`. An
// override must agree with the config in kind: a number for a number, a table
// stays a table.
void apply_override(toml::table& config, const fs::path& config_file, const Leaf& leaf, const toml::node& value,
                    const std::string& where) {
  toml::table* t = &config;
  for (std::size_t i = 0; i + 1 < leaf.key.size(); ++i) {
    toml::node* child = t->get(leaf.key[i]);
    if (!child) {
      t->insert(leaf.key[i], toml::table{});
      child = t->get(leaf.key[i]);
    }
    if (!child->is_table())
      throw InputError(where, "the config " + config_file.string() + " has '" +
                                  joined(std::vector<std::string>(leaf.key.begin(), leaf.key.begin() + static_cast<long>(i) + 1)) +
                                  "' as a value, not a table");
    t = child->as_table();
  }
  const std::string& last = leaf.key.back();
  if (const toml::node* old = t->get(last)) {
    const bool same = old->type() == value.type() || (old->is_number() && value.is_number());
    if (!same)
      throw InputError(where, "expected " + kind_of(*old) + ", as '" + joined(leaf.key) + "' is in the config " +
                                  config_file.string() + ", found " + kind_of(value));
  }
  value.visit([&](const auto& v) { t->insert_or_assign(last, v); });
}

std::optional<std::string> run_name_of(const toml::table& config) {
  if (const toml::table* run = config["run"].as_table())
    if (auto name = (*run)["name"].value<std::string>()) return *name;
  return std::nullopt;
}

std::string formatted(const toml::table& t) {
  std::ostringstream out;
  out << toml::toml_formatter(t);
  return out.str() + "\n";
}

struct Base {
  fs::path path;
  std::optional<ConfigFile> file;
};

class ManifestReader {
 public:
  explicit ManifestReader(const ConfigFile& file) : file_(file) {}

  Manifest read() {
    Manifest m;
    m.path = file_.path();
    m.text = file_.text();
    for (const auto& [key, node] : file_.table()) {
      std::string k(key.str());
      if (k != "campaign" && k != "runs")
        throw InputError(position(file_.path(), node, k), "unknown key (expected [campaign] or [[runs]])");
    }
    ConfigSection campaign(file_, "campaign");
    m.name = campaign.text("name", file_.path().stem().string());
    campaign.require(!m.name.empty(), "name", "expected a campaign name");
    m.description = campaign.text("description", "");
    if (auto base = campaign.optional_path("base")) {
      require_file(campaign, "base", *base, "base config");
      base_.path = fs::absolute(*base).lexically_normal();
      base_.file = ConfigFile::load(*base);
    }
    campaign.reject_unknown_keys();

    const toml::node* runs = file_.table().get("runs");
    if (!runs) throw InputError(file_.path().string(), "the manifest lists no runs (expected [[runs]] entries)");
    const toml::array* list = runs->as_array();
    if (!list || !list->is_array_of_tables() || list->empty())
      throw InputError(position(file_.path(), *runs, "runs"), "expected [[runs]] entries (an array of tables)");
    for (std::size_t i = 0; i < list->size(); ++i) m.runs.push_back(read_run(i, *list->get(i)->as_table()));
    check_names(m.runs);
    return m;
  }

 private:
  void require_file(const ConfigSection& s, const std::string& key, const fs::path& p, const std::string& what) {
    std::error_code ec;
    s.require(fs::exists(p, ec), key, what + " not found: " + p.string());
  }

  CampaignRun read_run(std::size_t index, const toml::table& table) {
    const std::string label = "runs[" + std::to_string(index) + "]";
    ConfigSection entry(file_, label, &table);
    CampaignRun run;
    std::string given_name = entry.text("name", "");
    auto own_config = entry.optional_path("config");
    run.kind = entry.choice("kind", {"dynamic", "static_polar"}, "dynamic") == "static_polar" ? RunKind::kStaticPolar
                                                                                              : RunKind::kDynamic;
    run.repeat_of = entry.text("repeat_of", "");
    entry.subsection("files");  // type-checked here, walked below
    entry.subsection("settings");
    entry.reject_unknown_keys();
    if (!given_name.empty())
      entry.require(plain_run_name(given_name), "name",
                    "expected a run name of letters, digits, '-', '_' or '.' (it names a folder and the archive)");
    if (entry.has("name")) entry.require(!given_name.empty(), "name", "expected a run name, found an empty string");

    // The config the run starts from: its own, or the campaign's base.
    std::optional<ConfigFile> own;
    const ConfigFile* config = nullptr;
    if (own_config) {
      require_file(entry, "config", *own_config, "run config");
      run.config = fs::absolute(*own_config).lexically_normal();
      try {
        own = ConfigFile::load(*own_config);
        config = &*own;
      } catch (const InputError& e) {
        run.problem = e.what();  // this run fails; the others go on
      }
    } else {
      if (!base_.file)
        throw InputError(entry.where(""), "expected config = \"RUN.toml\" (or a base config in [campaign])");
      entry.require(!given_name.empty(), "name", "a run made from the base config needs a name");
      run.config = base_.path;
      config = &*base_.file;
    }

    std::optional<std::string> config_name = config ? run_name_of(config->table()) : std::nullopt;
    run.name = !given_name.empty() ? given_name : config_name.value_or(run.config.stem().string());
    if (run.problem.empty() && !plain_run_name(run.name))
      run.problem = run.config.string() + ": run name '" + run.name + "' cannot name a folder and an archive";

    std::vector<Leaf> files, settings;
    if (const toml::table* t = table["files"].as_table()) collect_leaves(*t, {}, files);
    if (const toml::table* t = table["settings"].as_table()) collect_leaves(*t, {}, settings);
    check_files(label, files);
    if (!config) return run;

    toml::table merged = config->table();
    bool changed = false;
    for (const auto& leaf : files) {
      apply_override(merged, run.config, leaf, resolved_paths(*leaf.node),
                     position(file_.path(), *leaf.node, label + ".files." + joined(leaf.key)));
      changed = true;
    }
    for (const auto& leaf : settings) {
      apply_override(merged, run.config, leaf, *leaf.node,
                     position(file_.path(), *leaf.node, label + ".settings." + joined(leaf.key)));
      changed = true;
    }
    if (config_name != run.name) {
      Leaf name_leaf{{"run", "name"}, nullptr};
      apply_override(merged, run.config, name_leaf, toml::value<std::string>(run.name), entry.where("name"));
      changed = true;
    }
    if (changed) run.config_text = formatted(merged);

    if (run.kind == RunKind::kStaticPolar) {
      const toml::table* polar = merged["static_polar"].as_table();
      entry.require(polar && (*polar)["enabled"].value_or(true), "kind",
                    "a static-polar run needs a [static_polar] section in its config " + run.config.string());
    }
    return run;
  }

  // File overrides are strings (or arrays of strings) naming files that exist.
  void check_files(const std::string& label, const std::vector<Leaf>& files) {
    for (const auto& leaf : files) {
      const std::string where = position(file_.path(), *leaf.node, label + ".files." + joined(leaf.key));
      std::vector<const toml::node*> items;
      if (const toml::array* a = leaf.node->as_array())
        for (const auto& e : *a) items.push_back(&e);
      else
        items.push_back(leaf.node);
      for (const toml::node* item : items) {
        auto text = item->value_exact<std::string>();
        if (!text || text->empty()) throw InputError(where, "expected a file path (or an array of them)");
        std::error_code ec;
        fs::path p = resolve(*text);
        if (!fs::exists(p, ec)) throw InputError(where, "file not found: " + p.string());
      }
    }
  }

  fs::path resolve(const std::string& text) const {
    fs::path p = text;
    return fs::absolute(p.is_absolute() ? p : file_.directory() / p).lexically_normal();
  }

  // The override's paths made absolute: the merged config keeps the base's
  // folder for the base's own relative paths.
  toml::array resolved_array(const toml::array& a) const {
    toml::array out;
    for (const auto& e : a) out.push_back(resolve(*e.value_exact<std::string>()).string());
    return out;
  }
  // A node that owns the resolved value (a string or an array of strings).
  const toml::node& resolved_paths(const toml::node& n) {
    if (const toml::array* a = n.as_array()) scratch_.push_back(std::make_unique<toml::array>(resolved_array(*a)));
    else scratch_.push_back(std::make_unique<toml::value<std::string>>(resolve(*n.value_exact<std::string>()).string()));
    return *scratch_.back();
  }

  void check_names(const std::vector<CampaignRun>& runs) {
    const toml::array& list = *file_.table().get("runs")->as_array();
    std::map<std::string, std::size_t> seen;
    for (std::size_t i = 0; i < runs.size(); ++i) {
      auto [it, fresh] = seen.emplace(runs[i].name, i);
      if (!fresh)
        throw InputError(position(file_.path(), *list.get(i), "runs[" + std::to_string(i) + "]"),
                         "run name '" + runs[i].name + "' is also the name of runs[" + std::to_string(it->second) +
                             "] (each run needs its own archive)");
    }
    for (std::size_t i = 0; i < runs.size(); ++i) {
      const std::string& target = runs[i].repeat_of;
      if (target.empty()) continue;
      const toml::node* at = list.get(i)->as_table()->get("repeat_of");
      const std::string where = position(file_.path(), *at, "runs[" + std::to_string(i) + "].repeat_of");
      auto found = seen.find(target);
      if (found == seen.end()) throw InputError(where, "no run named '" + target + "' in this manifest");
      if (found->second == i) throw InputError(where, "a run cannot be a repeat of itself");
      if (!runs[found->second].repeat_of.empty())
        throw InputError(where, "'" + target + "' is itself a repeat of '" + runs[found->second].repeat_of +
                                    "'; name the original run");
    }
  }

  const ConfigFile& file_;
  Base base_;
  std::vector<std::unique_ptr<toml::node>> scratch_;
};

}  // namespace

Manifest parse_manifest(std::string text, const fs::path& path) {
  ConfigFile file = ConfigFile::parse(std::move(text), path);
  return ManifestReader(file).read();
}

Manifest load_manifest(const fs::path& path) {
  ConfigFile file = ConfigFile::load(path);
  return ManifestReader(file).read();
}

}  // namespace stallscope::campaign
