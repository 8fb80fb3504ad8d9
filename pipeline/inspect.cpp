#include "pipeline/inspect.hpp"

#include <fmt/format.h>

#include <map>

#include "pipeline/archive.hpp"
#include "pipeline/errors.hpp"
#include "pipeline/sha256.hpp"

namespace stallscope {

namespace fs = std::filesystem;

static std::string shape_of(const Value& v) {
  struct Shape {
    std::string operator()(const Scalar& s) const { return fmt::format("{:.6g}", s.value); }
    std::string operator()(const Text& t) const { return t.value.size() > 60 ? t.value.substr(0, 57) + "..." : t.value; }
    std::string operator()(const Series& s) const { return fmt::format("[{}] {}", s.values.size(), s.units); }
    std::string operator()(const Matrix& m) const {
      return fmt::format("[{} x {}] {}", m.values.rows(), m.values.cols(), m.units);
    }
    std::string operator()(const FieldStack& f) const {
      return fmt::format("[{} x {} x {}] {}", f.frames, f.ny, f.nx, f.units);
    }
    std::string operator()(const Table& t) const {
      return fmt::format("table, {} rows x {} columns", t.rows(), t.columns.size());
    }
  };
  return std::visit(Shape{}, v);
}

std::string inspect_archive(const fs::path& archive) {
  Provenance p = read_provenance(archive);
  RunStore store = read_archive(archive);
  std::string out = fmt::format("archive   {}\n", archive.string());

  out += "\nrun\n";
  for (const auto& [key, e] : store.entries()) {
    if (key.rfind("run/", 0) != 0) continue;
    out += fmt::format("  {:<22} {}\n", key.substr(4), shape_of(e.value));
  }

  out += "\ncontents\n";
  for (const auto& [key, e] : store.entries()) {
    if (key.rfind("run/", 0) == 0 || key.rfind("events/summary/", 0) == 0) continue;
    if (std::holds_alternative<Scalar>(e.value) || std::holds_alternative<Text>(e.value)) continue;
    out += fmt::format("  /{:<28} {}\n", key, shape_of(e.value));
  }

  if (store.contains("events/summary")) {
    const Table& t = store.get<Table>("events/summary");
    // A damaged or hand-edited archive: say which column is wrong rather than fail inside.
    auto need = [&](const char* column, bool text, bool integer) {
      const Column* c = t.find(column);
      const bool ok = c && (text ? std::holds_alternative<std::vector<std::string>>(c->data)
                                 : integer ? std::holds_alternative<std::vector<std::int64_t>>(c->data)
                                           : std::holds_alternative<std::vector<double>>(c->data));
      if (!ok)
        throw InputError(archive.string(), std::string("/events/summary needs a column '") + column + "' of " +
                                               (text ? "text" : integer ? "integers" : "numbers"));
    };
    need("event", true, false);
    need("n", false, true);
    for (const char* c : {"mean", "std", "ci95_lo", "ci95_hi"}) need(c, false, false);
    if (t.find("quantity")) need("quantity", true, false);
    out += "\nevent statistics (across valid cycles)\n";
    out += fmt::format("  {:<24} {:<12} {:>4} {:>12} {:>12} {:>25}\n", "event", "quantity", "n", "mean", "std",
                       "95% CI of the mean");
    const auto* q = t.find("quantity");
    for (std::size_t r = 0; r < t.rows(); ++r) {
      out += fmt::format("  {:<24} {:<12} {:>4} {:>12.5g} {:>12.5g}   [{:.5g}, {:.5g}]\n", t.texts("event")[r],
                         q ? t.texts("quantity")[r] : "", t.integers("n")[r], t.numbers("mean")[r],
                         t.numbers("std")[r], t.numbers("ci95_lo")[r], t.numbers("ci95_hi")[r]);
    }
  }

  out += "\nstages\n";
  double total = 0;
  for (const auto& s : p.stages) {
    out += fmt::format("  {:<18} {:9.3f} s\n", s.name, s.seconds);
    total += s.seconds;
  }
  out += fmt::format("  {:<18} {:9.3f} s\n", "(total)", total);

  out += "\nprovenance\n";
  out += fmt::format("  tool        stallscope {} ({})\n", p.tool_version, p.git_commit);
  out += fmt::format("  created     {} on {}\n", p.created_utc, p.host);
  out += fmt::format("  command     {}\n", p.command_line);
  out += fmt::format("  config      {}\n", p.config_path);
  for (const auto& i : p.inputs)
    out += fmt::format("  input       {}  {}  ({}, {} bytes)\n", i.sha256.substr(0, 16), i.path, i.role, i.bytes);
  for (const auto& c : p.calibrations)
    out += fmt::format("  calibration {}  {}  {}\n", c.sha256.substr(0, 16), c.id, c.file);
  return out;
}

std::vector<InputCheck> verify_archive(const fs::path& archive) {
  Provenance p = read_provenance(archive);
  std::vector<InputCheck> out;
  for (const auto& i : p.inputs) {
    InputCheck c{i.path, i.role, InputCheck::State::kSame};
    std::error_code ec;
    if (!fs::is_regular_file(i.path, ec)) c.state = InputCheck::State::kMissing;
    else if (fs::file_size(i.path, ec) != i.bytes || sha256_file(i.path) != i.sha256)
      c.state = InputCheck::State::kChanged;
    out.push_back(c);
  }
  return out;
}

std::string describe(const std::vector<InputCheck>& checks) {
  std::string out;
  std::size_t bad = 0;
  for (const auto& c : checks) {
    const char* word = c.state == InputCheck::State::kSame ? "ok     " :
                       c.state == InputCheck::State::kChanged ? "CHANGED" : "MISSING";
    bad += c.state != InputCheck::State::kSame;
    out += fmt::format("{}  {}  ({})\n", word, c.path, c.role);
  }
  out += bad == 0 ? fmt::format("all {} inputs match their recorded SHA-256\n", checks.size())
                  : fmt::format("{} of {} inputs changed or missing\n", bad, checks.size());
  return out;
}

}  // namespace stallscope
