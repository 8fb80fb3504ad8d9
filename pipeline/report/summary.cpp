// The summary table (run conditions, motion, cycles, damping) and the
// provenance (tool, inputs with hashes, calibrations, stages, config).
#include <fmt/format.h>

#include <cmath>

#include "pipeline/report/section.hpp"

namespace stallscope::report {

namespace {

struct Row {
  const char* key;
  const char* label;
  const char* units;  // as shown
  int digits;
};

// Run conditions in the order a reader scans them.
constexpr Row kRows[] = {
    {"run/airfoil", "section", "", 0},
    {"run/chord_m", "chord c", "m", 4},
    {"run/span_m", "span", "m", 4},
    {"run/pivot_x_over_c", "pitch axis", "x/c", 3},
    {"run/U_inf_m_s", "free-stream speed U<sub>\u221e</sub>", "m/s", 4},
    {"run/q_pa", "dynamic pressure q", "Pa", 4},
    {"run/rho_kg_m3", "air density \u03c1", "kg/m\u00b3", 4},
    {"run/T_K", "air temperature", "K", 4},
    {"run/p_static_pa", "static pressure", "Pa", 5},
    {"run/mu_pa_s", "viscosity \u03bc", "Pa\u00b7s", 4},
    {"run/Re", "Reynolds number Re", "", 4},
    {"run/Mach", "Mach number", "", 3},
    {"run/motion", "motion", "", 0},
    {"run/alpha_mean_deg", "mean angle \u03b1<sub>0</sub>", "deg", 4},
    {"run/alpha_amp_deg", "amplitude \u03b1<sub>1</sub>", "deg", 4},
    {"run/freq_hz", "pitch frequency f", "Hz", 4},
    {"run/k", "reduced frequency k = \u03c0 f c / U<sub>\u221e</sub>", "", 4},
};

std::string row_html(const std::string& key, const std::string& label, const std::string& value,
                     const std::string& units) {
  return fmt::format("<tr><th scope=\"row\">{}</th><td data-key=\"{}\">{}</td><td class=\"units\">{}</td></tr>\n", label,
                     escape_html(key), value, units);
}

std::string short_hash(const std::string& h) {
  return fmt::format("<code title=\"{}\">{}</code>", escape_html(h), escape_html(h.substr(0, 16)));
}

}  // namespace

std::optional<Section> summary_section(const ArchiveView& a) {
  std::string rows;
  for (const Row& r : kRows) {
    if (auto v = a.number(r.key)) rows += row_html(r.key, r.label, format_number(*v, r.digits), r.units);
    else if (auto t = a.text(r.key)) rows += row_html(r.key, r.label, escape_html(*t), r.units);
  }
  if (const Table* cycles = a.table("cycles"); cycles && cycles->rows() > 0) {
    const auto valid = numbers_of(*cycles, "valid");
    std::size_t n = 0;
    for (double v : valid) n += v != 0;
    if (valid.empty()) n = cycles->rows();
    rows += row_html("cycles/valid", "valid cycles", fmt::format("{} of {}", n, cycles->rows()), "");
  }
  if (auto xi = a.table_number("cycles/damping", "xi_mean"))
    rows += row_html("cycles/damping/xi_mean", "mean damping factor \u039e", format_number(*xi, 4), "");
  if (const Table* summary = a.table("events/summary"); summary && has_column(*summary, "quantity")) {
    const auto ev = texts_of(*summary, "event"), q = texts_of(*summary, "quantity");
    const auto mean = numbers_of(*summary, "mean"), lo = numbers_of(*summary, "ci95_lo"),
               hi = numbers_of(*summary, "ci95_hi");
    for (std::size_t r = 0; r < ev.size(); ++r) {
      if (ev[r] != "stall_onset" || mean.empty()) continue;
      const std::string units = q[r] == "alpha_deg" || q[r] == "phase_deg" ? "deg" : q[r] == "t_s" ? "s" : "";
      const std::string what = q[r] == "phase_deg" ? "phase" : q[r] == "alpha_deg" ? "angle" : q[r] == "t_conv" ?
                               "convective time t U<sub>\u221e</sub>/c" : escape_html(q[r]);
      rows += row_html("events/summary/stall_onset/" + q[r] + "/mean", "stall onset " + what + " (mean, 95 % CI)",
                       format_number(mean[r], 4) +
                           (lo.empty() ? "" : fmt::format(" <span class=\"ci\">[{}, {}]</span>",
                                                          format_number(lo[r], 4), format_number(hi[r], 4))),
                       units);
    }
  }
  Section s{"summary", "Run summary", "", {}};
  s.html = "<table class=\"summary\" id=\"summary-table\">\n<tbody>\n" + rows + "</tbody>\n</table>\n";
  if (auto d = a.text("run/description"))
    s.html = "<p class=\"description\">" + escape_html(*d) + "</p>\n" + s.html;
  return s;
}

Section provenance_section(const ArchiveView& a) {
  const Provenance& p = a.provenance();
  Section s{"provenance", "Provenance", "", {}};
  std::string& h = s.html;
  h += "<table class=\"summary facts\">\n<tbody>\n";
  h += row_html("provenance/tool_version", "tool",
                escape_html("stallscope " + p.tool_version + " (commit " + p.git_commit + ")"), "");
  h += row_html("provenance/created_utc", "reduced", escape_html(p.created_utc + " on " + p.host), "");
  h += row_html("provenance/command_line", "command", "<code>" + escape_html(p.command_line) + "</code>", "");
  h += row_html("provenance/config_path", "run config", "<code>" + escape_html(p.config_path) + "</code>", "");
  h += row_html("archive", "archive",
                "<code>" + escape_html(a.path().filename().string()) + "</code> SHA-256 " + short_hash(a.sha256()), "");
  h += "</tbody>\n</table>\n";

  h += "<h3>Raw inputs</h3>\n<table class=\"files\" id=\"inputs\">\n<thead><tr><th>role</th><th>file</th>"
       "<th>bytes</th><th>SHA-256</th></tr></thead>\n<tbody>\n";
  for (const auto& i : p.inputs)
    h += fmt::format("<tr><td>{}</td><td><code>{}</code></td><td class=\"num\">{}</td><td><code class=\"hash\">{}"
                     "</code></td></tr>\n",
                     escape_html(i.role), escape_html(i.path), i.bytes, escape_html(i.sha256));
  h += "</tbody>\n</table>\n";
  if (!p.calibrations.empty()) {
    h += "<h3>Calibrations</h3>\n<table class=\"files\" id=\"calibrations\">\n<thead><tr><th>id</th><th>file</th>"
         "<th>SHA-256</th></tr></thead>\n<tbody>\n";
    for (const auto& c : p.calibrations)
      h += fmt::format("<tr><td>{}</td><td><code>{}</code></td><td><code class=\"hash\">{}</code></td></tr>\n",
                       escape_html(c.id), escape_html(c.file), escape_html(c.sha256));
    h += "</tbody>\n</table>\n";
  }
  if (!p.stages.empty()) {
    h += "<h3>Stages</h3>\n<table class=\"files\" id=\"stages\">\n<thead><tr><th>stage</th><th>time (s)</th>"
         "<th>options in force</th></tr></thead>\n<tbody>\n";
    for (const auto& st : p.stages)
      h += fmt::format("<tr><td>{}</td><td class=\"num\">{:.3f}</td><td>{}</td></tr>\n", escape_html(st.name),
                       st.seconds,
                       st.parameters.empty() ? "defaults"
                                             : "<details><summary>show</summary><pre>" + escape_html(st.parameters) +
                                                   "</pre></details>");
    h += "</tbody>\n</table>\n";
  }
  h += "<h3>Run configuration</h3>\n<details><summary>" + escape_html(p.config_path.empty() ? "config" : p.config_path) +
       "</summary><pre>" + escape_html(p.config_toml) + "</pre></details>\n";
  return s;
}

}  // namespace stallscope::report
