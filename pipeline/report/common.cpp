// Pieces every section uses: plot files, figures, number formatting, event means.
#include <fmt/format.h>

#include <algorithm>
#include <cmath>
#include <fstream>
#include <map>
#include <set>

#include "pipeline/errors.hpp"
#include "pipeline/report/section.hpp"

namespace stallscope::report {

namespace fs = std::filesystem;

namespace {

// Our own look: one quiet column, hairline rules, figures in pairs.
constexpr const char* kStyle = R"css(
:root { --ink: #22242b; --muted: #5d6170; --rule: #c9ccd6; --accent: #1a2954; --tint: #f3f4f8; }
* { box-sizing: border-box; }
body { margin: 0; color: var(--ink); background: #fff;
       font: 15px/1.5 "DejaVu Sans", "Liberation Sans", Helvetica, Arial, sans-serif; }
main { max-width: 1060px; margin: 0 auto; padding: 28px 32px 60px; }
header { border-bottom: 2px solid var(--accent); padding-bottom: 12px; margin-bottom: 8px; }
header h1 { font-size: 26px; margin: 0; font-weight: 600; letter-spacing: 0.01em; }
header p { margin: 4px 0 0; color: var(--muted); }
nav { font-size: 13px; margin: 10px 0 22px; color: var(--muted); }
nav a { color: var(--accent); text-decoration: none; margin-right: 14px; }
section { margin-top: 30px; }
h2 { font-size: 18px; font-weight: 600; color: var(--accent); border-bottom: 1px solid var(--rule);
     padding-bottom: 4px; margin: 0 0 12px; }
h2 .number { color: var(--muted); font-weight: 400; margin-right: 8px; }
h3 { font-size: 15px; font-weight: 600; margin: 20px 0 6px; }
figure { margin: 12px 0 18px; }
figure img { display: block; max-width: 100%; height: auto; }
figcaption { font-size: 13px; color: var(--muted); margin-top: 4px; max-width: 720px; }
figcaption b { color: var(--ink); }
.pair { display: flex; flex-wrap: wrap; gap: 18px; }
.pair figure { flex: 1 1 460px; max-width: 506px; }
table { border-collapse: collapse; font-variant-numeric: tabular-nums; font-size: 13.5px; }
table.summary { border-top: 1.5px solid var(--ink); border-bottom: 1.5px solid var(--ink); min-width: 520px; }
table.summary th { text-align: left; font-weight: 400; padding: 3px 24px 3px 0; color: var(--muted); }
table.summary td { padding: 3px 10px 3px 0; text-align: right; }
table.summary.facts td { text-align: left; }
table.summary td.units { text-align: left; color: var(--muted); }
table.numbers, table.files { border-top: 1.5px solid var(--ink); border-bottom: 1.5px solid var(--ink); }
table.numbers th, table.files th { border-bottom: 1px solid var(--ink); font-weight: 600; padding: 4px 10px;
                                   text-align: left; }
table.numbers td { text-align: right; padding: 2px 10px; }
table.numbers td:first-child, table.numbers td:nth-child(2) { text-align: left; }
table.files td { padding: 2px 10px; vertical-align: top; }
table tbody tr:nth-child(even) { background: var(--tint); }
td.num { text-align: right; }
table.numbers td.text { text-align: left; max-width: 380px; font-size: 12.5px; }
table.numbers td.name { white-space: nowrap; }
.ci { color: var(--muted); }
code { font: 12.5px "DejaVu Sans Mono", "Liberation Mono", monospace; }
code.hash { font-size: 11.5px; word-break: break-all; }
pre { background: var(--tint); padding: 10px 12px; overflow-x: auto; font-size: 12px; }
details summary { cursor: pointer; color: var(--accent); }
.note, .description { color: var(--muted); }
footer { margin-top: 40px; border-top: 1px solid var(--rule); padding-top: 10px; font-size: 12.5px;
         color: var(--muted); }
)css";

}  // namespace

const char* page_style() { return kStyle; }

void write_page(const fs::path& path, const std::string& text) {
  const fs::path partial = path.string() + ".partial";
  {
    std::ofstream out(partial, std::ios::binary | std::ios::trunc);
    out << text;
    out.flush();
    if (!out) {
      std::error_code ec;
      fs::remove(partial, ec);
      throw InputError(path.string(), "report page cannot be written (disk full or read-only?)");
    }
  }
  fs::rename(partial, path);
}

fs::path PlotFolder::draft(const std::string& file_name) {
  names_.push_back(file_name);
  return folder_ / (file_name + ".partial");
}

std::vector<fs::path> PlotFolder::commit() {
  std::vector<fs::path> out;
  for (const auto& n : names_) {
    std::error_code ec;
    fs::rename(folder_ / (n + ".partial"), folder_ / n, ec);
    if (ec) throw InputError((folder_ / n).string(), "plot cannot be renamed into place: " + ec.message());
    out.push_back(folder_ / n);
  }
  names_.clear();
  return out;
}

std::string escape_html(const std::string& s) {
  std::string out;
  out.reserve(s.size());
  for (char c : s) {
    switch (c) {
      case '&': out += "&amp;"; break;
      case '<': out += "&lt;"; break;
      case '>': out += "&gt;"; break;
      case '"': out += "&quot;"; break;
      default: out += c;
    }
  }
  return out;
}

std::string format_number(double v, int digits) {
  if (!std::isfinite(v)) return "\u2013";
  std::string s = fmt::format("{:.{}g}", std::abs(v), digits);
  // Plain notation for the magnitudes a tunnel run produces; exponents otherwise.
  if (auto e = s.find('e'); e != std::string::npos) {
    const int exponent = std::stoi(s.substr(e + 1));
    s = s.substr(0, e) + "\u00d710<sup>" + (exponent < 0 ? "\u2212" : "") + std::to_string(std::abs(exponent)) +
        "</sup>";
  }
  return (v < 0 && std::abs(v) > 0 ? "\u2212" : "") + s;
}

std::string figure_html(const std::string& file_name, const std::string& alt, const std::string& caption,
                        const std::string& css_class) {
  return fmt::format("<figure{}><img src=\"{}\" alt=\"{}\"><figcaption>{}</figcaption></figure>\n",
                     css_class.empty() ? "" : " class=\"" + css_class + "\"", escape_html(file_name),
                     escape_html(alt), caption);
}

std::size_t event_style_index(const std::string& event) {
  static const std::vector<std::string> kKnown = {
      "static_stall_crossing", "lift_peak",        "normal_force_peak", "moment_stall",      "cm_min",
      "le_suction_collapse",   "stall_onset",      "stall_delay",       "secondary_peak",    "reattachment",
      "taps_convection_speed", "vortex_detection", "vortex_detachment", "vortex_te_passage", "convection_speed",
      "vortex_shedding"};
  static std::vector<std::string> others;
  auto it = std::find(kKnown.begin(), kKnown.end(), event);
  if (it != kKnown.end()) return static_cast<std::size_t>(it - kKnown.begin());
  auto o = std::find(others.begin(), others.end(), event);
  if (o == others.end()) o = others.insert(others.end(), event);
  return kKnown.size() + static_cast<std::size_t>(o - others.begin());
}

std::string event_title(const std::string& event) {
  std::string s = event;
  std::replace(s.begin(), s.end(), '_', ' ');
  if (s.rfind("le ", 0) == 0) s = "LE " + s.substr(3);
  if (auto p = s.find(" te "); p != std::string::npos) s.replace(p, 4, " TE ");
  return s;
}

std::vector<EventMean> event_means(const ArchiveView& archive) {
  const Table* events = archive.table("events/per_cycle");
  if (!events || !has_column(*events, "event") || !has_column(*events, "phase_deg")) return {};
  // Only cycles the cycle table calls valid (when it says).
  std::set<long> invalid;
  if (const Table* cycles = archive.table("cycles"); cycles && has_column(*cycles, "valid")) {
    const auto c = numbers_of(*cycles, "cycle"), v = numbers_of(*cycles, "valid");
    for (std::size_t i = 0; i < c.size(); ++i)
      if (v[i] == 0) invalid.insert(std::lround(c[i]));
  }
  const auto name = texts_of(*events, "event"), status = texts_of(*events, "status");
  const auto phase = numbers_of(*events, "phase_deg"), alpha = numbers_of(*events, "alpha_deg");
  const auto cycle = numbers_of(*events, "cycle");
  std::map<std::string, EventMean> sums;
  std::vector<std::string> order;
  for (std::size_t r = 0; r < name.size(); ++r) {
    if (!status.empty() && status[r] != "ok") continue;
    if (!cycle.empty() && std::isfinite(cycle[r]) && invalid.count(std::lround(cycle[r]))) continue;
    if (!std::isfinite(phase[r])) continue;
    auto [it, fresh] = sums.try_emplace(name[r], EventMean{name[r], 0.0, 0.0, 0});
    if (fresh) order.push_back(name[r]);
    it->second.phase_deg += phase[r];
    it->second.alpha_deg += alpha.empty() || !std::isfinite(alpha[r]) ? 0.0 : alpha[r];
    ++it->second.n;
  }
  std::sort(order.begin(), order.end(),
            [](const std::string& a, const std::string& b) { return event_style_index(a) < event_style_index(b); });
  std::vector<EventMean> out;
  for (const auto& n : order) {
    EventMean m = sums[n];
    m.phase_deg /= static_cast<double>(m.n);
    m.alpha_deg = alpha.empty() ? NAN : m.alpha_deg / static_cast<double>(m.n);
    out.push_back(m);
  }
  // The summary's mean, when the events stage wrote one, is the number of record.
  if (const Table* summary = archive.table("events/summary"); summary && has_column(*summary, "quantity")) {
    const auto ev = texts_of(*summary, "event"), q = texts_of(*summary, "quantity");
    const auto mean = numbers_of(*summary, "mean");
    for (auto& m : out)
      for (std::size_t r = 0; r < ev.size(); ++r)
        if (ev[r] == m.event && std::isfinite(mean[r])) {
          if (q[r] == "phase_deg") m.phase_deg = mean[r];
          if (q[r] == "alpha_deg") m.alpha_deg = mean[r];
        }
  }
  return out;
}

}  // namespace stallscope::report
