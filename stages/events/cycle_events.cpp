#include "stages/events/cycle_events.hpp"

#include <algorithm>
#include <cmath>
#include <cstdio>

namespace stallscope::events {

namespace {

std::string num(double v, int digits = 4) {
  char buf[64];
  std::snprintf(buf, sizeof buf, "%.*g", digits, v);
  return buf;
}

// Linear interpolation of y at time tq on the trace's time base.
double value_at(const Trace& tr, double tq) {
  const Eigen::Index n = tr.t.size();
  const Eigen::Index k = std::clamp<Eigen::Index>(index_at(tr.t, tq), 1, n - 1);
  const double w = (tq - tr.t[k - 1]) / (tr.t[k] - tr.t[k - 1]);
  return tr.y[k - 1] + w * (tr.y[k] - tr.y[k - 1]);
}

// The time of the largest angle in [lo, hi] (sampled; harmonics may move it off mid-cycle).
double time_of_max_angle(const std::function<double(double)>& alpha, double lo, double hi) {
  constexpr int kSamples = 720;
  double best_t = lo, best = alpha(lo);
  for (int i = 1; i <= kSamples; ++i) {
    const double t = lo + (hi - lo) * i / kSamples, a = alpha(t);
    if (a > best) best = a, best_t = t;
  }
  return best_t;
}

}  // namespace

const std::vector<std::string>& cycle_event_names() {
  static const std::vector<std::string> kNames = {
      "static_stall_crossing", "lift_peak",      "normal_force_peak",     "moment_stall",   "cm_min",
      "le_suction_collapse",   "stall_onset",    "stall_delay",           "stall_delay_s",  "stall_delay_deg",
      "secondary_peak",        "reattachment",   "reattachment_loads",    "reattachment_pressure",
      "taps_convection_speed", "taps_te_passage"};
  return kNames;
}

double motion_crossing(const std::function<double(double)>& alpha, double lo, double hi, double level, bool rising) {
  constexpr int kSamples = 720;
  auto f = [&](double t) { return rising ? alpha(t) - level : level - alpha(t); };
  double a = lo, fa = f(lo);
  for (int i = 1; i <= kSamples; ++i) {
    const double b = lo + (hi - lo) * i / kSamples, fb = f(b);
    if (fa < 0 && fb >= 0) {
      double x = a, y = b;
      for (int k = 0; k < 200 && y - x > 1e-12 * std::abs(hi - lo); ++k) {
        const double m = 0.5 * (x + y);
        (f(m) < 0 ? x : y) = m;
      }
      return 0.5 * (x + y);
    }
    a = b;
    fa = fb;
  }
  return kNaN;
}

std::vector<EventRow> detect_cycle_events(const CycleInputs& in, const CycleWindow& w, const Thresholds& th) {
  std::vector<EventRow> rows;
  auto add = [&](const std::string& name, const Detection& d) -> const EventRow& {
    EventRow r;
    r.cycle = w.cycle;
    r.event = name;
    r.status = d.found ? "ok" : "missing";
    r.reason = d.reason;
    if (d.found) {
      r.t_s = d.t_s;
      r.t_uncertainty_s = d.sigma_s;
      r.value = d.value;
    }
    rows.push_back(std::move(r));
    return rows.back();
  };
  const Eigen::VectorXd& t = in.cl->t;
  const Eigen::Index i0 = index_at(t, w.t_start), i1 = index_at(t, w.t_end);
  const double a_ss = in.static_stall_angle_deg;

  // Static-stall crossing on the upstroke (the fitted motion).
  const double t_top = w.ramp ? w.t_end : time_of_max_angle(in.alpha_deg, w.t_start, w.t_end);
  Detection crossing;
  {
    const double t_x = motion_crossing(in.alpha_deg, w.t_start, t_top, a_ss, true);
    if (std::isfinite(t_x)) {
      crossing = {true, "", t_x, in.crossing_sigma_s, in.rate_deg_s(t_x)};
    } else {
      const double a_top = in.alpha_deg(t_top);
      crossing = Detection::missing(a_top < a_ss ? "the angle never exceeded the static stall angle (" + num(a_ss) +
                                                       " deg; maximum " + num(a_top) + " deg)"
                                                 : "the angle was already above the static stall angle (" +
                                                       num(a_ss) + " deg) at the start of the upstroke");
    }
    add("static_stall_crossing", crossing);
  }

  const Detection lift = locate_extremum(*in.cl, i0, i1, true);
  add("lift_peak", lift);
  const Detection normal = locate_extremum(*in.cn, i0, i1, true);
  add("normal_force_peak", normal);

  // Moment stall: Cm falls moment_stall_delta below its running maximum (from the cycle start).
  Detection moment;
  if (!crossing.found) {
    moment = Detection::missing("no static-stall crossing in this cycle");
  } else {
    Eigen::VectorXd threshold = Eigen::VectorXd::Constant(t.size(), kNaN);
    double run_max = -INFINITY;
    for (Eigen::Index i = i0; i < i1; ++i) {
      run_max = std::max(run_max, in.cm->y[i]);
      threshold[i] = run_max - th.moment_stall_delta;
    }
    moment = first_sustained_drop(*in.cm, threshold, std::max(i0 + 1, index_at(t, crossing.t_s)), i1,
                                  th.persistence_s);
    if (moment.found) {
      moment.value += th.moment_stall_delta;  // the running maximum the drop is measured from
      // The running maximum of noisy data stands about two noise levels above the true one, which
      // moves the break early by about 2 noise / slope: that bias joins the uncertainty.
      const double dt = in.cm->dt(), noise_term = std::sqrt(std::max(0.0, moment.sigma_s * moment.sigma_s - dt * dt / 12));
      moment.sigma_s = std::hypot(moment.sigma_s, 2 * noise_term);
    } else {
      moment.reason = "Cm " + moment.reason + " (its running maximum less " + num(th.moment_stall_delta) +
                      ") after the static-stall crossing";
    }
  }
  add("moment_stall", moment);
  add("cm_min", locate_extremum(*in.cm, i0, i1, false));

  // Leading-edge suction: its peak, which must then collapse.
  Detection le;
  if (!in.le_suction) {
    le = Detection::missing(in.no_le_reason);
  } else {
    const Trace& s = *in.le_suction;
    const Eigen::Index j0 = index_at(s.t, w.t_start), j1 = index_at(s.t, w.t_end);
    le = locate_extremum(s, j0, j1, true);
    if (le.found) {
      const Eigen::VectorXd threshold = Eigen::VectorXd::Constant(s.t.size(), (1 - th.le_collapse_fraction) * le.value);
      const Detection fall = first_sustained_drop(s, threshold, index_at(s.t, le.t_s), j1, th.persistence_s);
      if (!fall.found)
        le = Detection::missing("the leading-edge suction peak does not collapse by " +
                                num(100 * th.le_collapse_fraction) + " % within the cycle");
      else
        le.reason = "collapsed at t = " + num(fall.t_s, 8) + " s";
      le.value = -le.value;  // back to Cp
    } else {
      le.reason = "leading-edge suction: " + le.reason;
    }
  }
  add("le_suction_collapse", le);

  // Stall onset: the primary criterion.
  const std::string& c = th.onset_criterion;
  Detection onset = c == "lift_peak" ? lift : c == "normal_force_peak" ? normal : c == "le_suction_collapse" ? le : moment;
  onset.reason = onset.found ? "criterion " + c : "criterion " + c + ": " + onset.reason;
  add("stall_onset", onset);

  // Stall delay.
  if (onset.found && crossing.found) {
    const double dt = onset.t_s - crossing.t_s, sigma = std::hypot(onset.sigma_s, crossing.sigma_s);
    const std::string note = "pitch rate at the crossing " + num(crossing.value) + " deg/s";
    add("stall_delay", {true, note, onset.t_s, sigma, dt * w.convective_per_s});
    add("stall_delay_s", {true, note, onset.t_s, sigma, dt});
    add("stall_delay_deg", {true, note, onset.t_s, sigma, in.alpha_deg(onset.t_s) - a_ss});
  } else {
    const Detection why = Detection::missing(!onset.found ? "no stall onset in this cycle" : crossing.reason);
    for (const char* name : {"stall_delay", "stall_delay_s", "stall_delay_deg"}) add(name, why);
  }

  // Reattachment (found before the secondary peaks, which end there).
  Detection reattach;
  if (w.ramp) {
    reattach = Detection::missing("a ramp has no downstroke");
  } else if (!in.cl_deviation) {
    reattach = Detection::missing(in.no_reference_reason);
  } else if (!onset.found) {
    reattach = Detection::missing("no stall onset in this cycle");
  } else {
    const double t_down = motion_crossing(in.alpha_deg, t_top, w.t_end, a_ss, false);
    if (!std::isfinite(t_down)) {
      reattach = Detection::missing("the angle never fell below the static stall angle on the downstroke");
    } else {
      const Trace& dev = *in.cl_deviation;
      const Eigen::VectorXd tol = Eigen::VectorXd::Constant(t.size(), th.reattachment_tolerance);
      reattach = first_sustained_drop(dev, tol, index_at(t, std::max(t_down, onset.t_s)), index_at(t, w.search_end),
                                      th.reattachment_sustain_s);
      if (reattach.found) {
        reattach.value = value_at(*in.cl, reattach.t_s);
        if (reattach.t_s > w.t_end) reattach.reason = "in the next cycle's time";
      } else {
        reattach.reason = "Cl within " + num(th.reattachment_tolerance) +
                          " of the attached-flow reference below the static stall angle: " + reattach.reason;
      }
    }
  }

  // Reattachment from the pressures: on the downstroke below the static stall angle, the leading-edge
  // suction and the aft-tap pressure both back to their attached values, which this cycle's own
  // upstroke gives at the same angle (before the static-stall crossing), for the sustain time.
  Detection pressure;
  if (w.ramp) {
    pressure = Detection::missing("a ramp has no downstroke");
  } else if (!in.le_suction || !in.aft_cp) {
    pressure = Detection::missing(!in.le_suction ? in.no_le_reason : in.no_aft_reason);
  } else if (!onset.found || !crossing.found) {
    pressure = Detection::missing(!onset.found ? "no stall onset in this cycle" : crossing.reason);
  } else {
    const double t_down = motion_crossing(in.alpha_deg, t_top, w.t_end, a_ss, false);
    const Trace& le_trace = *in.le_suction;
    const Eigen::VectorXd& tp = le_trace.t;
    // The upstroke's attached values against angle (the fitted angle rises monotonically there).
    std::vector<double> up_alpha, up_suction, up_aft;
    for (Eigen::Index j = index_at(tp, w.t_start); j < tp.size() && tp[j] < crossing.t_s; ++j) {
      const double a = in.alpha_deg(tp[j]);
      if (!up_alpha.empty() && a <= up_alpha.back()) continue;
      up_alpha.push_back(a);
      up_suction.push_back(le_trace.y[j]);
      up_aft.push_back(in.aft_cp->y[j]);
    }
    if (!std::isfinite(t_down)) {
      pressure = Detection::missing("the angle never fell below the static stall angle on the downstroke");
    } else if (up_alpha.size() < 4) {
      pressure = Detection::missing("too few upstroke samples below the static stall angle for an attached reference");
    } else {
      auto upstroke = [&](const std::vector<double>& y, double a) {
        const auto it = std::lower_bound(up_alpha.begin(), up_alpha.end(), a);
        if (it == up_alpha.begin()) return y.front();
        if (it == up_alpha.end()) return y.back();
        const std::size_t k = static_cast<std::size_t>(it - up_alpha.begin());
        const double f = (a - up_alpha[k - 1]) / (up_alpha[k] - up_alpha[k - 1]);
        return y[k - 1] + f * (y[k] - y[k - 1]);
      };
      // Not recovered while either deficit is positive; each is scaled by its own tolerance.
      const double suction_scale = std::max(upstroke(up_suction, a_ss), 1e-6);
      Eigen::VectorXd deficit = Eigen::VectorXd::Ones(tp.size());
      const Eigen::Index j0 = index_at(tp, std::max(t_down, onset.t_s)), j1 = index_at(tp, w.search_end);
      for (Eigen::Index j = j0; j < j1; ++j) {
        const double a = in.alpha_deg(tp[j]);
        const double le_deficit = ((1 - th.reattachment_suction_fraction) * upstroke(up_suction, a) - le_trace.y[j]) /
                                  (th.reattachment_suction_fraction * suction_scale);
        const double aft_deficit = (upstroke(up_aft, a) - th.reattachment_cp_tolerance - in.aft_cp->y[j]) /
                                   th.reattachment_cp_tolerance;
        deficit[j] = std::max(le_deficit, aft_deficit);
      }
      const double noise = std::hypot(le_trace.noise / (th.reattachment_suction_fraction * suction_scale),
                                      in.aft_cp->noise / th.reattachment_cp_tolerance);
      const Trace d{tp, deficit, noise};
      pressure = first_sustained_drop(d, Eigen::VectorXd::Zero(tp.size()), j0, j1, th.reattachment_sustain_s);
      if (pressure.found) {
        pressure.value = value_at(*in.aft_cp, pressure.t_s);
        pressure.reason = pressure.t_s > w.t_end ? "in the next cycle's time; value: aft-tap Cp" : "value: aft-tap Cp";
      } else {
        pressure.reason = "leading-edge suction within " + num(100 * th.reattachment_suction_fraction) +
                          " % and aft-tap Cp within " + num(th.reattachment_cp_tolerance) +
                          " of the upstroke's at the same angle: " + pressure.reason;
      }
    }
  }
  const Detection& chosen = th.reattachment_criterion == "pressure" ? pressure : reattach;

  // Secondary peaks of Cn after the normal-force peak, up to reattachment.
  if (!normal.found) {
    add("secondary_peak", Detection::missing("no normal-force peak in this cycle"));
  } else {
    const double t_stop = chosen.found ? std::min(chosen.t_s, w.t_end) : w.t_end;
    const auto peaks = prominent_peaks(*in.cn, index_at(t, normal.t_s) + 1, index_at(t, t_stop),
                                       th.secondary_peak_prominence);
    if (peaks.empty())
      add("secondary_peak", Detection::missing("no Cn peak of prominence >= " + num(th.secondary_peak_prominence) +
                                               " after the normal-force peak"));
    for (const Detection& p : peaks) add("secondary_peak", p);
  }
  Detection primary = chosen;
  primary.reason = "criterion " + th.reattachment_criterion + (chosen.reason.empty() ? "" : ": " + chosen.reason);
  add("reattachment", primary);
  add("reattachment_loads", reattach);
  add("reattachment_pressure", pressure);

  // Vortex convection from the taps: each tap's suction peak after onset.
  if (in.convection_taps.empty()) {
    add("taps_convection_speed", Detection::missing(in.no_taps_reason));
    add("taps_te_passage", Detection::missing(in.no_taps_reason));
  } else if (!onset.found) {
    add("taps_convection_speed", Detection::missing("no stall onset in this cycle"));
    add("taps_te_passage", Detection::missing("no stall onset in this cycle"));
  } else {
    std::vector<double> times, xs;
    for (const TapTrace& tap : in.convection_taps) {
      const Detection p = locate_extremum(tap.cp, index_at(tap.cp.t, onset.t_s), index_at(tap.cp.t, w.t_end), false);
      if (p.found) times.push_back(p.t_s), xs.push_back(tap.x_over_c);
    }
    const LineFit fit = fit_line(times, xs);
    if (!fit.ok || fit.slope <= 0) {
      const std::string why = !fit.ok ? "suction peaks after onset at only " + std::to_string(times.size()) +
                                            " upper-surface taps (3 needed)"
                                      : "the suction peaks do not move aft (x/c against time falls)";
      add("taps_convection_speed", Detection::missing(why));
      add("taps_te_passage", Detection::missing(why));
    } else {
      const double speed = fit.slope / w.convective_per_s, speed_error = fit.slope_error / w.convective_per_s;
      const std::string note = "line through the suction peaks of " + std::to_string(fit.n) + " taps, x/c " +
                               num(*std::min_element(xs.begin(), xs.end()), 3) + " to " +
                               num(*std::max_element(xs.begin(), xs.end()), 3) + "; speed standard error " +
                               num(speed_error, 3) + " U";
      add("taps_convection_speed", {true, note, fit.t_mean, fit.time_at_error(fit.x0), speed});
      add("taps_te_passage", {true, note + "; value: x/c of the aftmost tap used", fit.time_at(th.te_x_over_c),
                              fit.time_at_error(th.te_x_over_c), *std::max_element(xs.begin(), xs.end())});
    }
  }
  return rows;
}

}  // namespace stallscope::events
