#include "stages/fit/run_fit.hpp"

#include <fmt/format.h>

#include <algorithm>
#include <cmath>
#include <map>
#include <numbers>

#include "pipeline/errors.hpp"
#include "stages/numerics/statistics.hpp"

namespace stallscope::fit {

namespace {

constexpr double kNaN = std::numeric_limits<double>::quiet_NaN();

// One fitted time constant as the summary's six columns: in c/U and in
// seconds, with the ends of its 95 % interval in both (NaN where none).
struct ConstantColumns {
  std::vector<double> conv, s, lo, hi, lo_s, hi_s;
  void push(double value, const double* ci, double convective_s) {
    conv.push_back(value);
    s.push_back(value * convective_s);
    lo.push_back(ci ? ci[0] : kNaN);
    hi.push_back(ci ? ci[1] : kNaN);
    lo_s.push_back(lo.back() * convective_s);
    hi_s.push_back(hi.back() * convective_s);
  }
};

// A pair of constants, their columns interleaved as fit_summary.csv has them.
void add_pair(Table& t, const std::string& a, const ConstantColumns& ca, const std::string& b,
              const ConstantColumns& cb) {
  t.add({a + "_conv", "1", ca.conv})
      .add({b + "_conv", "1", cb.conv})
      .add({a + "_s", "s", ca.s})
      .add({b + "_s", "s", cb.s})
      .add({a + "_ci95_lo_conv", "1", ca.lo})
      .add({a + "_ci95_hi_conv", "1", ca.hi})
      .add({b + "_ci95_lo_conv", "1", cb.lo})
      .add({b + "_ci95_hi_conv", "1", cb.hi})
      .add({a + "_ci95_lo_s", "s", ca.lo_s})
      .add({a + "_ci95_hi_s", "s", ca.hi_s})
      .add({b + "_ci95_lo_s", "s", cb.lo_s})
      .add({b + "_ci95_hi_s", "s", cb.hi_s});
}

double scalar_or(const RunStore& s, const std::string& key, double fallback) {
  return s.contains(key) ? s.get<Scalar>(key).value : fallback;
}

const Series& required_series(const RunStore& s, const std::string& key, const std::string& hint) {
  if (!s.contains(key)) throw InputError(key, "the run has no " + key + " (" + hint + ")");
  return s.get<Series>(key);
}

// Phases (deg) of each event in each cycle, status ok only.
using EventPhases = std::map<std::string, std::map<std::int64_t, double>>;

EventPhases event_phases(const RunStore& s, const std::string& column) {
  EventPhases out;
  if (!s.contains("events/per_cycle")) return out;
  const Table& t = s.get<Table>("events/per_cycle");
  const auto& cycle = t.integers("cycle");
  const auto& event = t.texts("event");
  const auto& status = t.texts("status");
  const auto& value = t.numbers(column);
  for (std::size_t r = 0; r < t.rows(); ++r)
    if (status[r] == "ok" && std::isfinite(value[r]) && !out[event[r]].count(cycle[r])) out[event[r]][cycle[r]] = value[r];
  return out;
}

double mean_over(const std::map<std::int64_t, double>& by_cycle, const std::vector<std::int64_t>& cycles) {
  std::vector<double> v;
  for (std::int64_t c : cycles)
    if (auto it = by_cycle.find(c); it != by_cycle.end()) v.push_back(it->second);
  return v.empty() ? kNaN : numerics::mean(v);
}

double lookup(const EventPhases& e, const std::string& event, std::int64_t cycle, double fallback) {
  const auto it = e.find(event);
  if (it == e.end()) return fallback;
  const auto jt = it->second.find(cycle);
  return jt == it->second.end() ? fallback : jt->second;
}

// The excluded stretch [start, end] in phase degrees (end may pass 360).
struct Exclusion {
  double start = kNaN, end = kNaN;
  std::string how;
};

Exclusion exclusion(const FitSettings& o, double onset, double te_passage, double reattachment, double deg_per_conv) {
  Exclusion x;
  if (o.exclude == "none" || !std::isfinite(onset)) return x;
  x.start = onset;
  const double fallback = onset + o.vortex_lift_conv * deg_per_conv;
  if (o.exclude == "stalled") {
    if (std::isfinite(reattachment)) {
      x.end = reattachment < onset ? reattachment + 360.0 : reattachment;
      x.how = "stall onset to reattachment";
    } else {
      x.end = fallback;
      x.how = fmt::format("stall onset + {} c/U (no reattachment found)", o.vortex_lift_conv);
    }
    return x;
  }
  const double te = te_passage < onset ? te_passage + 360.0 : te_passage;
  if (std::isfinite(te) && te - onset < 180.0) {  // a passage half a cycle after onset is another cycle's
    x.end = te + o.vortex_clearance_conv * deg_per_conv;
    x.how = fmt::format("stall onset to the vortex trailing-edge passage + {} c/U", o.vortex_clearance_conv);
  } else {
    x.end = fallback;
    x.how = fmt::format("stall onset + {} c/U (no vortex trailing-edge passage found)", o.vortex_lift_conv);
  }
  return x;
}

std::vector<bool> window_mask(const Eigen::VectorXd& phase_deg, const Exclusion& x) {
  std::vector<bool> in(static_cast<std::size_t>(phase_deg.size()), true);
  if (!std::isfinite(x.start)) return in;
  for (Eigen::Index b = 0; b < phase_deg.size(); ++b) {
    const double p = phase_deg[b];
    in[static_cast<std::size_t>(b)] = !((p >= x.start && p <= x.end) || (p + 360.0 >= x.start && p + 360.0 <= x.end));
  }
  return in;
}

// Linear interpolation on a sorted time base (NaN outside).
double interpolate(const Eigen::VectorXd& t, const Eigen::VectorXd& y, double at) {
  if (t.size() < 2 || !(at >= t[0]) || !(at <= t[t.size() - 1])) return kNaN;
  const auto j = std::upper_bound(t.data(), t.data() + t.size(), at) - t.data();
  const Eigen::Index i = std::clamp<Eigen::Index>(j - 1, 0, t.size() - 2);
  const double w = (at - t[i]) / (t[i + 1] - t[i]);
  return (1 - w) * y[i] + w * y[i + 1];
}

double periodic_at(const Eigen::VectorXd& phase_deg, const Eigen::VectorXd& y, double phase) {
  const Eigen::Index n = phase_deg.size();
  const double width = 360.0 / double(n);
  const double u = std::fmod(std::fmod(phase - phase_deg[0], 360.0) + 360.0, 360.0) / width;
  const auto i = static_cast<Eigen::Index>(u);
  const double w = u - double(i);
  return (1 - w) * y[i % n] + w * y[(i + 1) % n];
}

const char* kTeEvents[] = {"vortex_te_passage", "taps_te_passage"};

}  // namespace

RunLoops read_run_loops(const RunStore& s, const FitSettings& o) {
  RunLoops r;
  r.run = s.contains("run/name") ? s.get<Text>("run/name").value : "run";
  const std::string phase_hint = "enable [phase] with cn among its loads";
  r.phase_deg = required_series(s, "phase/bin_deg", phase_hint).values;
  r.alpha_deg = required_series(s, "phase/alpha_deg/mean", phase_hint).values;
  r.cn = required_series(s, "phase/cn/mean", phase_hint).values;
  if (!s.contains("run/chord_m") || !s.contains("run/U_inf_m_s"))
    throw InputError("run/U_inf_m_s", "the run has no chord or free-stream speed (enable [conditions])");
  r.flow = {s.get<Scalar>("run/chord_m").value, s.get<Scalar>("run/U_inf_m_s").value,
            scalar_or(s, "run/pivot_x_over_c", 0.25)};
  const double f = scalar_or(s, "run/freq_hz", 0.0);
  std::vector<std::int64_t> valid_cycles;
  if (s.contains("cycles")) {
    const Table& c = s.get<Table>("cycles");
    std::vector<double> durations;
    for (std::size_t i = 0; i < c.rows(); ++i)
      if (c.integers("valid")[i]) {
        valid_cycles.push_back(c.integers("cycle")[i]);
        durations.push_back(c.numbers("t_end_s")[i] - c.numbers("t_start_s")[i]);
      }
    r.period_s = f > 0 ? 1.0 / f : durations.empty() ? 0.0 : numerics::mean(durations);
  } else {
    r.period_s = f > 0 ? 1.0 / f : 0.0;
  }
  if (!(r.period_s > 0)) throw InputError("run/freq_hz", "the run has no pitch period (no frequency and no cycles)");
  r.reduced_frequency = std::numbers::pi * r.flow.convective_s() / r.period_s;
  r.alpha_mean_deg = scalar_or(s, "run/alpha_mean_deg", r.alpha_deg.mean());

  // Valid cycles' own loops.
  if (s.contains("phase/per_cycle/alpha_deg") && s.contains("phase/per_cycle/cn")) {
    const Eigen::MatrixXd& a = s.get<Matrix>("phase/per_cycle/alpha_deg").values;
    const Eigen::MatrixXd& c = s.get<Matrix>("phase/per_cycle/cn").values;
    std::vector<Eigen::Index> keep;
    for (std::int64_t id : valid_cycles)
      if (id >= 0 && id < a.cols() && id < c.cols() && a.rows() == r.phase_deg.size() && a.col(id).allFinite())
        keep.push_back(id);
    r.cycle_alpha_deg.resize(r.phase_deg.size(), static_cast<Eigen::Index>(keep.size()));
    r.cycle_cn.resize(r.phase_deg.size(), static_cast<Eigen::Index>(keep.size()));
    for (std::size_t j = 0; j < keep.size(); ++j) {
      r.cycle_alpha_deg.col(static_cast<Eigen::Index>(j)) = a.col(keep[j]);
      r.cycle_cn.col(static_cast<Eigen::Index>(j)) = c.col(keep[j]);
      r.cycle_ids.push_back(keep[j]);
    }
  }

  // Fit windows from the events.
  const EventPhases phases = event_phases(s, "phase_deg");
  const double deg_per_conv = 360.0 * r.flow.convective_s() / r.period_s;
  const auto mean_phase = [&](const std::string& e) {
    const auto it = phases.find(e);
    return it == phases.end() ? kNaN : mean_over(it->second, valid_cycles);
  };
  double te = kNaN;
  for (const char* e : kTeEvents)
    if (!std::isfinite(te)) te = mean_phase(e);
  const double onset = mean_phase("stall_onset"), reattach = mean_phase("reattachment");
  const Exclusion main = exclusion(o, onset, te, reattach, deg_per_conv);
  r.onset_deg = onset;
  r.window = window_mask(r.phase_deg, main);
  if (o.exclude == "none")
    r.window_note = o.fit.vortex_lift ? "the whole loop (exclude = \"none\"; the vortex lift is modelled)"
                                      : "the whole loop (exclude = \"none\")";
  else if (!std::isfinite(onset))
    r.window_note = "the whole loop: no stall onset among the events (is [events] enabled?)";
  else
    r.window_note = fmt::format("excluded: {} (phase average: {:.1f} to {:.1f} deg of phase)", main.how, main.start,
                                main.end);
  for (std::int64_t id : r.cycle_ids) {
    double cte = kNaN;
    for (const char* e : kTeEvents)
      if (!std::isfinite(cte)) cte = lookup(phases, e, id, kNaN);
    const double conset = lookup(phases, "stall_onset", id, onset);
    r.cycle_onset_deg.push_back(conset);
    r.cycle_windows.push_back(window_mask(
        r.phase_deg, exclusion(o, conset, std::isfinite(cte) ? cte : te, lookup(phases, "reattachment", id, reattach),
                               deg_per_conv)));
  }
  return r;
}

RunFit fit_run(const RunLoops& r, const StaticSeparation& curve, const StaticPolarPoints& polar,
               const FitSettings& o, int threads) {
  RunFit out;
  out.main = fit_loop(r.alpha_deg, r.cn, r.window, r.period_s, r.flow, curve, o.fit, nullptr, r.onset_deg);
  if (r.alpha_deg.allFinite() && r.alpha_deg.size() >= 8)
    out.cn_static = LoopModel(r.alpha_deg, r.period_s, r.flow, curve).static_normal_force();
  // With the vortex term the per-cycle and sensitivity fits start from the
  // phase average's (its basin), as the bootstrap does: a 4-D grid start for
  // each would cost about ten times the whole plain fit. The plain fit keeps
  // its own grid start for each.
  const LoopFit* start = out.main.vortex_lift ? &out.main : nullptr;
  for (Eigen::Index c = 0; c < r.cycle_cn.cols(); ++c)
    out.cycles.push_back(fit_loop(r.cycle_alpha_deg.col(c), r.cycle_cn.col(c), r.cycle_windows[static_cast<std::size_t>(c)],
                                  r.period_s, r.flow, curve, o.fit, start,
                                  r.cycle_onset_deg[static_cast<std::size_t>(c)]));
  for (auto& f : out.cycles) {
    f.x_fitted.resize(0);
    f.cn_vortex.resize(0);
  }
  if (o.bootstrap_resamples > 0)
    out.bootstrap = bootstrap_over_cycles(r.cycle_alpha_deg, r.cycle_cn, r.window, r.period_s, r.flow, curve, o.fit,
                                          out.main, o.bootstrap_resamples, o.bootstrap_seed, threads, r.onset_deg);
  if (!o.sensitivity || !out.main.fitted) return out;
  struct Variant {
    std::string name;
    StaticCurveOptions curve;
    AttachedLag lag;
  };
  std::vector<Variant> variants;
  const StaticCurveOptions& base = curve.options();
  auto add = [&](std::string name, auto change, AttachedLag lag = AttachedLag::kTheodorsen) {
    StaticCurveOptions c = base;
    change(c);
    variants.push_back({std::move(name), c, lag});
  };
  if (base.smoothing_points > 1) add("x0 unsmoothed", [](StaticCurveOptions& c) { c.smoothing_points = 1; });
  add(fmt::format("x0 smoothed over {} points", 2 * base.smoothing_points + 1),
      [](StaticCurveOptions& c) { c.smoothing_points = 2 * c.smoothing_points + 1; });
  if (base.curve == SeparationCurve::kTable) add("x0 from the tanh fit", [](StaticCurveOptions& c) { c.curve = SeparationCurve::kTanh; });
  else add("x0 tabulated", [](StaticCurveOptions& c) { c.curve = SeparationCurve::kTable; });
  add(base.angle == KirchhoffAngle::kSine ? "Kirchhoff with alpha for sin(alpha)" : "Kirchhoff with sin(alpha)",
      [](StaticCurveOptions& c) {
        c.angle = c.angle == KirchhoffAngle::kSine ? KirchhoffAngle::kLinear : KirchhoffAngle::kSine;
      });
  add("quasi-steady attached flow (no Theodorsen lag)", [](StaticCurveOptions&) {}, AttachedLag::kQuasiSteady);
  for (const Variant& v : variants) {
    FitOptions fo = o.fit;
    fo.lag = v.lag;
    const StaticSeparation other = StaticSeparation::from_polar(polar.alpha_deg, polar.cn, v.curve);
    LoopFit f = fit_loop(r.alpha_deg, r.cn, r.window, r.period_s, r.flow, other, fo, start, r.onset_deg);
    f.x_fitted.resize(0);
    f.cn_fitted.resize(0);
    f.cn_vortex.resize(0);
    out.sensitivity.push_back({v.name, std::move(f)});
  }
  return out;
}

RunFit stored_run_fit(const RunStore& s, const RunLoops& loops, const std::string& where) {
  if (!s.contains("fit/summary") || !std::holds_alternative<Table>(s.entry("fit/summary").value))
    throw InputError(where, "holds no fit/summary table: the run was reduced without a [fit] section");
  const Entry& e = s.entry("fit/summary");
  const Table& t = std::get<Table>(e.value);
  const auto* estimate = t.find("estimate");
  const auto* texts = estimate ? std::get_if<std::vector<std::string>>(&estimate->data) : nullptr;
  const auto row = texts ? std::find(texts->begin(), texts->end(), "phase_average") - texts->begin() : 0;
  if (!texts || row == static_cast<std::ptrdiff_t>(texts->size()))
    throw InputError(where, "fit/summary has no phase_average row in its estimate column");
  const auto i = static_cast<std::size_t>(row);
  auto number = [&](const char* name) {
    const Column* c = t.find(name);
    const auto* v = c ? std::get_if<std::vector<double>>(&c->data) : nullptr;
    if (!v) throw InputError(where, fmt::format("fit/summary has no numeric column {}", name));
    return (*v)[i];
  };
  auto text = [&](const char* name) {
    const Column* c = t.find(name);
    const auto* v = c ? std::get_if<std::vector<std::string>>(&c->data) : nullptr;
    if (!v) throw InputError(where, fmt::format("fit/summary has no text column {}", name));
    return (*v)[i];
  };
  RunFit out;
  LoopFit& m = out.main;
  m.fitted = text("status") == "fitted";
  m.reason = text("reason");
  m.tau1 = number("tau1_conv");
  m.tau2 = number("tau2_conv");
  m.rms_residual = number("rms_residual");
  const Column* points = t.find("points");
  if (const auto* v = points ? std::get_if<std::vector<std::int64_t>>(&points->data) : nullptr) m.points = (*v)[i];
  BootstrapFit& b = out.bootstrap;
  b.tau1_ci[0] = number("tau1_ci95_lo_conv"), b.tau1_ci[1] = number("tau1_ci95_hi_conv");
  b.tau2_ci[0] = number("tau2_ci95_lo_conv"), b.tau2_ci[1] = number("tau2_ci95_hi_conv");
  b.correlation = number("tau_correlation");
  const auto lift = e.attributes.find("vortex_lift");
  if (lift != e.attributes.end() && std::get_if<std::string>(&lift->second) &&
      std::get<std::string>(lift->second) == "fitted") {
    m.vortex_lift = true;
    m.t_v = number("t_v_conv");
    m.t_vl = number("t_vl_conv");
    b.t_v_ci[0] = number("t_v_ci95_lo_conv"), b.t_v_ci[1] = number("t_v_ci95_hi_conv");
    b.t_vl_ci[0] = number("t_vl_ci95_lo_conv"), b.t_vl_ci[1] = number("t_vl_ci95_hi_conv");
    // As fit_loop places the term: the loop's onset phase in convective times.
    m.vortex_onset_conv = loops.onset_deg / 360.0 * (loops.period_s / loops.flow.convective_s());
  }
  return out;
}

void put_fit(RunStore& s, const RunLoops& r, const StaticSeparation& curve, const StaticPolarPoints& polar,
             const RunFit& fit, const FitSettings& o) {
  const double conv = r.flow.convective_s();
  // fit/summary: one row per estimate.
  {
    std::vector<std::string> estimate, kind, status, reason;
    std::vector<double> corr, rms;
    std::vector<std::int64_t> points;
    // The vortex-lift constants get columns only with the term, so a plain fit's table is as before.
    ConstantColumns tau1, tau2, t_v, t_vl;
    auto row = [&](const std::string& e, const std::string& k, const LoopFit& f, const BootstrapFit* b) {
      estimate.push_back(e);
      kind.push_back(k);
      status.push_back(f.fitted ? "fitted" : "not_fitted");
      reason.push_back(f.reason);
      tau1.push(f.tau1, b ? b->tau1_ci : nullptr, conv);
      tau2.push(f.tau2, b ? b->tau2_ci : nullptr, conv);
      t_v.push(f.t_v, b ? b->t_v_ci : nullptr, conv);
      t_vl.push(f.t_vl, b ? b->t_vl_ci : nullptr, conv);
      corr.push_back(b ? b->correlation : kNaN);
      rms.push_back(f.rms_residual);
      points.push_back(f.points);
    };
    row("phase_average", "main", fit.main, &fit.bootstrap);
    for (std::size_t c = 0; c < fit.cycles.size(); ++c)
      row("cycle " + std::to_string(r.cycle_ids[c]), "per_cycle", fit.cycles[c], nullptr);
    for (const auto& v : fit.sensitivity) row(v.variant, "sensitivity", v.fit, nullptr);
    Table t;
    t.add({"estimate", "", estimate}).add({"kind", "", kind}).add({"status", "", status}).add({"reason", "", reason});
    add_pair(t, "tau1", tau1, "tau2", tau2);
    t.add({"tau_correlation", "1", corr}).add({"rms_residual", "1", rms}).add({"points", "1", points});
    if (o.fit.vortex_lift) add_pair(t, "t_v", t_v, "t_vl", t_vl);
    // Per-cycle spread, as a second uncertainty beside the bootstrap.
    std::vector<double> c1, c2;
    for (const auto& f : fit.cycles)
      if (f.fitted) {
        c1.push_back(f.tau1);
        c2.push_back(f.tau2);
      }
    const auto i1 = numerics::mean_interval95(c1), i2 = numerics::mean_interval95(c2);
    Attributes a{
        {"csv", std::string("fit_summary.csv")},
        {"model", std::string("tau1 dx/dt* + x = x0(alpha - tau2 dalpha/dt*), t* = t U/c (Goman & Khrabrov 1994); "
                              "Cn = Cn_alpha ((1 + sqrt x)/2)^2 g(alpha_E - alpha_0) + Cn_nc, alpha_E and Cn_nc "
                              "from Theodorsen (1935) harmonic by harmonic")},
        {"status", std::string(fit.main.fitted ? "fitted" : "not_fitted")},
        {"reason", fit.main.reason},
        {"tau1_conv", fit.main.tau1},
        {"tau2_conv", fit.main.tau2},
        {"tau1_s", fit.main.tau1 * conv},
        {"tau2_s", fit.main.tau2 * conv},
        {"tau1_ci95_conv", fmt::format("{:.4g} to {:.4g}", fit.bootstrap.tau1_ci[0], fit.bootstrap.tau1_ci[1])},
        {"tau2_ci95_conv", fmt::format("{:.4g} to {:.4g}", fit.bootstrap.tau2_ci[0], fit.bootstrap.tau2_ci[1])},
        {"tau_correlation", fit.bootstrap.correlation},
        {"bootstrap", fit.bootstrap.note},
        {"per_cycle_tau1_mean_ci95", fmt::format("{:.4g} ({:.4g} to {:.4g}), n = {}", i1.mean, i1.lo, i1.hi, i1.n)},
        {"per_cycle_tau2_mean_ci95", fmt::format("{:.4g} ({:.4g} to {:.4g}), n = {}", i2.mean, i2.lo, i2.hi, i2.n)},
        {"rms_residual", fit.main.rms_residual},
        {"convective_time_s", conv},
        {"period_s", r.period_s},
        {"reduced_frequency", r.reduced_frequency},
        {"alpha_mean_deg", r.alpha_mean_deg},
        {"fit_window", r.window_note},
        {"static_polar", polar.source},
        {"static_curve", curve.description()},
        {"normal_force_slope_per_rad", curve.lift_slope_per_rad()},
        {"zero_lift_angle_deg", curve.zero_lift_angle_rad() * 180.0 / std::numbers::pi},
        {"x0_tanh_alpha_star_deg", curve.tanh_fit().alpha_star * 180.0 / std::numbers::pi},
        {"x0_tanh_steepness_per_deg", curve.tanh_fit().steepness * std::numbers::pi / 180.0},
        {"tau1_bounds_conv", fmt::format("{} to {}", o.fit.tau1_bounds[0], o.fit.tau1_bounds[1])},
        {"tau2_bounds_conv", fmt::format("{} to {}", o.fit.tau2_bounds[0], o.fit.tau2_bounds[1])},
    };
    if (o.fit.vortex_lift) {
      const LoopFit& m = fit.main;
      const BootstrapFit& b = fit.bootstrap;
      a["model"] = std::get<std::string>(a["model"]) +
                   "; plus the vortex lift of Leishman & Beddoes (1989): dCn_v/dt* = dC_v/dt* (for T_vl after stall "
                   "onset) - Cn_v/T_v, C_v = Cn_attached (1 - ((1 + sqrt x)/2)^2)";
      a["vortex_lift"] = std::string(m.vortex_lift ? "fitted" : "not fitted (no stall onset)");
      a["t_v_conv"] = m.t_v;
      a["t_vl_conv"] = m.t_vl;
      a["t_v_s"] = m.t_v * conv;
      a["t_vl_s"] = m.t_vl * conv;
      a["t_v_ci95_conv"] = fmt::format("{:.4g} to {:.4g}", b.t_v_ci[0], b.t_v_ci[1]);
      a["t_vl_ci95_conv"] = fmt::format("{:.4g} to {:.4g}", b.t_vl_ci[0], b.t_vl_ci[1]);
      a["vortex_onset_phase_deg"] = r.onset_deg;
      a["t_v_bounds_conv"] = fmt::format("{} to {}", o.fit.t_v_bounds[0], o.fit.t_v_bounds[1]);
      a["t_vl_bounds_conv"] = fmt::format("{} to {}", o.fit.t_vl_bounds[0], o.fit.t_vl_bounds[1]);
    }
    s.put("fit/summary", std::move(t), std::move(a));
  }
  // fit/loop: measured, static and fitted loops.
  {
    const Eigen::Index n = r.phase_deg.size();
    std::vector<double> ph(r.phase_deg.data(), r.phase_deg.data() + n), al(r.alpha_deg.data(), r.alpha_deg.data() + n),
        cn(r.cn.data(), r.cn.data() + n), fitted(n, kNaN), stat(n, kNaN), x(n, kNaN), x0(n, kNaN), res(n, kNaN);
    std::vector<std::int64_t> in(n);
    for (Eigen::Index b = 0; b < n; ++b) {
      const auto i = static_cast<std::size_t>(b);
      in[i] = r.window[i];
      if (fit.main.fitted) {
        fitted[i] = fit.main.cn_fitted[b];
        x[i] = fit.main.x_fitted[b];
        res[i] = cn[i] - fitted[i];
      }
      if (fit.cn_static.size() == n) stat[i] = fit.cn_static[b];
      x0[i] = curve(al[i] * std::numbers::pi / 180.0);
    }
    Table t;
    t.add({"phase_deg", "deg", ph})
        .add({"alpha_deg", "deg", al})
        .add({"cn_measured", "1", cn})
        .add({"cn_fitted", "1", fitted})
        .add({"cn_static", "1", stat})
        .add({"x_fitted", "1", x})
        .add({"x0", "1", x0})
        .add({"in_window", "1", in})
        .add({"residual", "1", res});
    if (o.fit.vortex_lift) {  // the fitted vortex lift's share of cn_fitted
      std::vector<double> vortex(n, kNaN);
      if (fit.main.cn_vortex.size() == n)
        for (Eigen::Index b = 0; b < n; ++b) vortex[static_cast<std::size_t>(b)] = fit.main.cn_vortex[b];
      t.add({"cn_vortex", "1", vortex});
    }
    s.put("fit/loop", std::move(t), {{"csv", std::string("fit_loop.csv")}, {"fit_window", r.window_note}});
  }
  // fit/static_separation: f(alpha) for other semi-empirical fits; fit/static_polar: the points used.
  {
    Table t;
    t.add({"alpha_deg", "deg", curve.alpha_deg()})
        .add({"cn", "1", curve.cn()})
        .add({"x0_kirchhoff", "1", curve.x0_raw()})
        .add({"x0", "1", curve.x0_smoothed()});
    s.put("fit/static_separation", std::move(t),
          {{"csv", std::string("fit_static_separation.csv")}, {"curve", curve.description()}});
    Table p;
    p.add({"alpha_deg", "deg", polar.alpha_deg}).add({"cn", "1", polar.cn});
    s.put("fit/static_polar", std::move(p), {{"source", polar.source}});
  }
  if (!fit.bootstrap.tau1.empty()) {
    Table t;
    t.add({"tau1_conv", "1", fit.bootstrap.tau1}).add({"tau2_conv", "1", fit.bootstrap.tau2});
    s.put("fit/bootstrap", std::move(t), {{"note", fit.bootstrap.note}});
  }
  // fit/onset: per-cycle state at stall onset, and the vortex time to the trailing edge.
  if (s.contains("events/per_cycle")) {
    const EventPhases times = event_phases(s, "t_s"), conv_times = event_phases(s, "t_conv"),
                      phases = event_phases(s, "phase_deg"), alphas = event_phases(s, "alpha_deg");
    const Eigen::VectorXd* lt = s.contains("loads/time_s") ? &s.get<Series>("loads/time_s").values : nullptr;
    auto load_at = [&](const std::string& load, double t) {
      const std::string key = "loads/" + load;
      if (!lt || !s.contains(key) || s.get<Series>(key).values.size() != lt->size()) return kNaN;
      return interpolate(*lt, s.get<Series>(key).values, t);
    };
    Eigen::VectorXd rate_deg_s;
    if (r.alpha_deg.allFinite() && r.alpha_deg.size() >= 8)
      rate_deg_s = LoopModel(r.alpha_deg, r.period_s, r.flow, curve, AttachedLag::kQuasiSteady).alpha_rate_per_conv() *
                   (180.0 / std::numbers::pi / conv);
    std::vector<std::int64_t> cycle;
    std::vector<double> ts, tc, ph, al, rate, cn, cc, cm, te_conv;
    const auto onset = times.find("stall_onset");
    if (onset != times.end())
      for (const auto& [c, t] : onset->second) {
        if (std::find(r.cycle_ids.begin(), r.cycle_ids.end(), c) == r.cycle_ids.end()) continue;
        cycle.push_back(c);
        ts.push_back(t);
        tc.push_back(lookup(conv_times, "stall_onset", c, kNaN));
        ph.push_back(lookup(phases, "stall_onset", c, kNaN));
        al.push_back(lookup(alphas, "stall_onset", c, kNaN));
        rate.push_back(rate_deg_s.size() && std::isfinite(ph.back()) ? periodic_at(r.phase_deg, rate_deg_s, ph.back()) : kNaN);
        cn.push_back(load_at("cn", t));
        cc.push_back(load_at("cc", t));
        cm.push_back(load_at("cm", t));
        double te = kNaN;
        for (const char* e : kTeEvents)
          if (!std::isfinite(te)) te = lookup(times, e, c, kNaN);
        te_conv.push_back((te - t) / conv);
      }
    std::vector<double> finite_cn, finite_te;
    for (double v : cn) if (std::isfinite(v)) finite_cn.push_back(v);
    for (double v : te_conv) if (std::isfinite(v)) finite_te.push_back(v);
    Table t;
    t.add({"cycle", "1", cycle})
        .add({"t_s", "s", ts})
        .add({"t_conv", "1", tc})
        .add({"phase_deg", "deg", ph})
        .add({"alpha_deg", "deg", al})
        .add({"alpha_rate_deg_s", "deg/s", rate})
        .add({"cn", "1", cn})
        .add({"cc", "1", cc})
        .add({"cm", "1", cm})
        .add({"vortex_time_to_te_conv", "1", te_conv});
    s.put("fit/onset", std::move(t),
          {{"csv", std::string("fit_onset_per_cycle.csv")},
           {"critical_cn_mean", finite_cn.empty() ? kNaN : numerics::mean(finite_cn)},
           {"vortex_time_to_te_conv_mean", finite_te.empty() ? kNaN : numerics::mean(finite_te)},
           {"note", std::string("state at each valid cycle's stall onset (events/per_cycle): loads interpolated at "
                                "t_s, alpha_rate from the phase-averaged angle at the onset phase; vortex time to "
                                "the trailing edge from the PIV track, else the taps' convection line")}});
  }
}

}  // namespace stallscope::fit
