#include "stages/piv/vortex_stage.hpp"

#include <algorithm>
#include <cmath>
#include <limits>
#include <map>

#include "pipeline/errors.hpp"
#include "pipeline/perturbation.hpp"
#include "stages/piv/onset_field.hpp"
#include "stages/piv/tracking.hpp"

namespace stallscope {

namespace {

constexpr double kNaN = std::numeric_limits<double>::quiet_NaN();

// A numeric column as doubles, whether stored as numbers or integers.
std::vector<double> as_doubles(const Table& t, const std::string& name) {
  const Column* c = t.find(name);
  if (!c) throw std::logic_error("table has no column '" + name + "'");
  if (const auto* d = std::get_if<std::vector<double>>(&c->data)) return *d;
  if (const auto* i = std::get_if<std::vector<std::int64_t>>(&c->data)) return {i->begin(), i->end()};
  throw std::logic_error("table column '" + name + "' is not numeric");
}

double interpolate(const Eigen::VectorXd& t, const Eigen::VectorXd& y, double tq, bool wrap_degrees = false) {
  const Eigen::Index n = t.size();
  if (n < 2 || y.size() != n || !(tq >= t[0] && tq <= t[n - 1])) return kNaN;
  const auto* it = std::upper_bound(t.data(), t.data() + n, tq);
  const Eigen::Index k = std::clamp<Eigen::Index>(it - t.data(), 1, n - 1);
  const double w = (tq - t[k - 1]) / (t[k] - t[k - 1]);
  double d = y[k] - y[k - 1];
  if (wrap_degrees) d -= 360.0 * std::round(d / 360.0);
  double v = y[k - 1] + w * d;
  if (wrap_degrees) v = std::fmod(v + 360.0, 360.0);
  return v;
}

// This Monte Carlo replica's error of the frame times on the DAQ clock at t:
// the camera-trigger fit's offset and drift errors and any latency beyond it.
// Zero in the nominal reduction.
struct ClockError {
  double offset = 0, drift = 0, centre = 0;
  ClockError(const RunContext& context, const RunStore& store) {
    const Perturbation* p = context.perturbation();
    if (!p) return;
    auto scalar = [&](const char* key) { return store.contains(key) ? store.get<Scalar>(key).value : 0.0; };
    const bool fit = p->model().piv_clock_fit;
    offset = p->error(fit ? scalar("piv/sync_offset_uncertainty_s") : 0.0, "piv_clock_offset") +
             p->error(p->model().piv_delay_s, "piv_delay");
    drift = p->error(fit ? scalar("piv/sync_drift_uncertainty") : 0.0, "piv_clock_drift");
    centre = scalar("piv/sync_centre_s");
  }
  double operator()(double t) const { return offset + drift * (t - centre); }
};

struct Cycle {
  std::int64_t number = 0;
  double t_start = 0, t_end = 0;
};

struct Event {
  std::int64_t cycle;
  std::string event, status, reason;
  double t_s = kNaN, t_uncertainty_s = kNaN, value = kNaN;
};

}  // namespace

void VortexStage::configure(ConfigSection& s) {
  Options& o = options_;
  o.gate_over_c = s.number("gate_over_c", o.gate_over_c);
  s.require(o.gate_over_c >= 0 && o.gate_over_c < 2, "gate_over_c",
            "expected a search radius in chords below 2 (0: from the frame interval)");
  o.max_gap_frames = s.integer("max_gap_frames", o.max_gap_frames);
  s.require(o.max_gap_frames >= 0 && o.max_gap_frames <= 100, "max_gap_frames", "expected 0 to 100 frames");
  o.min_track_frames = s.integer("min_track_frames", o.min_track_frames);
  s.require(o.min_track_frames >= 1, "min_track_frames", "expected at least 1 frame");
  o.le_sign = s.integer("le_sign", o.le_sign);
  s.require(o.le_sign == 1 || o.le_sign == -1, "le_sign", "expected -1 (clockwise) or 1 (counter-clockwise)");
  o.le_birth_max_x_over_c = s.number("le_birth_max_x_over_c", o.le_birth_max_x_over_c);
  s.require(o.le_birth_max_x_over_c > -0.5 && o.le_birth_max_x_over_c < 1, "le_birth_max_x_over_c",
            "expected a chordwise position, below 1");
  o.secondary_distance_over_c = s.number("secondary_distance_over_c", o.secondary_distance_over_c);
  s.require(o.secondary_distance_over_c > 0, "secondary_distance_over_c", "expected a distance in chords, > 0");
  o.convection_window_x_over_c = s.numbers("convection_window_x_over_c", o.convection_window_x_over_c);
  s.require(o.convection_window_x_over_c.size() == 2 &&
                o.convection_window_x_over_c[0] < o.convection_window_x_over_c[1],
            "convection_window_x_over_c", "expected [x_start, x_end] in chords, increasing");
  o.te_x_over_c = s.number("te_x_over_c", o.te_x_over_c);
  s.require(o.te_x_over_c > 0, "te_x_over_c", "expected the trailing edge position in chords, > 0");
  o.mode = s.choice("mode", {"time_resolved", "phase_locked"}, o.mode);
  o.phase_bin_deg = s.number("phase_bin_deg", o.phase_bin_deg);
  s.require(o.phase_bin_deg > 0 && o.phase_bin_deg <= 90, "phase_bin_deg", "expected a bin width in degrees, 0 to 90");
  o.shedding_min_circulation_ratio = s.number("shedding_min_circulation_ratio", o.shedding_min_circulation_ratio);
  s.require(o.shedding_min_circulation_ratio >= 0 && o.shedding_min_circulation_ratio <= 1,
            "shedding_min_circulation_ratio", "expected a fraction of the first vortex's circulation, 0 to 1");
  o.plausible_speed = s.numbers("plausible_speed", o.plausible_speed);
  s.require(o.plausible_speed.size() == 2 && o.plausible_speed[0] < o.plausible_speed[1], "plausible_speed",
            "expected [low, high] in units of U");
}

std::vector<std::string> VortexStage::inputs() const {
  std::vector<std::string> in = {"piv/detections", "piv/frames", "piv/grid_x_m", "piv/grid_y_m", "run/chord_m",
                                 "run/U_inf_m_s"};
  if (options_.mode == "phase_locked") in.insert(in.end(), {"signals/time_s", "motion/phase_deg"});
  return in;
}

std::vector<std::string> VortexStage::optional_inputs() const {
  return {"cycles", "signals/time_s", "motion/phase_deg", "motion/alpha_deg", "piv/processing", "run/airfoil",
          "run/pivot_x_over_c", "piv/sync_centre_s", "piv/sync_offset_uncertainty_s", "piv/sync_drift_uncertainty"};
}

std::vector<std::string> VortexStage::outputs() const {
  if (options_.mode == "phase_locked") return {"vortex/phase_locked"};
  return {"vortex/tracks", "vortex/per_track", "vortex/events_per_cycle", "vortex/onset_swirl"};
}

void VortexStage::run_phase_locked(RunContext& context) {
  const Options& o = options_;
  RunStore& store = context.store();
  const Table& det = store.get<Table>("piv/detections");
  const Table& frames = store.get<Table>("piv/frames");
  const Eigen::VectorXd& t = store.get<Series>("signals/time_s").values;
  const Eigen::VectorXd& phase = store.get<Series>("motion/phase_deg").values;
  // The LE vortex of each searched snapshot: the strongest detection of the
  // LE sign on the suction side.
  std::map<std::int64_t, std::size_t> strongest;
  const auto &fr = det.integers("frame"), &sg = det.integers("sign");
  const auto &yc = det.numbers("y_over_c"), &circ = det.numbers("circulation");
  for (std::size_t k = 0; k < det.rows(); ++k) {
    if (sg[k] != o.le_sign || yc[k] < 0) continue;
    auto it = strongest.find(fr[k]);
    if (it == strongest.end() || std::abs(circ[k]) > std::abs(circ[it->second])) strongest[fr[k]] = k;
  }
  const auto bins = static_cast<std::size_t>(std::ceil(360.0 / o.phase_bin_deg));
  struct Sums {
    std::int64_t snapshots = 0, n = 0;
    double x = 0, xx = 0, y = 0, yy = 0, c = 0, cc = 0, p = 0;
  };
  std::vector<Sums> sums(bins);
  const auto &frame_no = frames.integers("frame");
  const auto &status = frames.texts("status");
  const auto &frame_t = frames.numbers("t_s");
  const auto &xc = det.numbers("x_over_c"), &peak = det.numbers("peak_swirl");
  for (std::size_t k = 0; k < frame_no.size(); ++k) {
    if (status[k] == "flagged") continue;
    const double ph = interpolate(t, phase, frame_t[k], true);
    if (!std::isfinite(ph)) continue;
    Sums& b = sums[std::min(bins - 1, static_cast<std::size_t>(ph / o.phase_bin_deg))];
    ++b.snapshots;
    auto it = strongest.find(frame_no[k]);
    if (it == strongest.end()) continue;
    const std::size_t d = it->second;
    ++b.n;
    b.x += xc[d], b.xx += xc[d] * xc[d], b.y += yc[d], b.yy += yc[d] * yc[d];
    b.c += circ[d], b.cc += circ[d] * circ[d], b.p += peak[d];
  }
  std::vector<double> centre, x, xs, y, ys, c, cs, p;
  std::vector<std::int64_t> snapshots, n;
  auto sd = [](double s, double ss, std::int64_t m) {
    return m > 1 ? std::sqrt(std::max(0.0, (ss - s * s / m) / (m - 1))) : kNaN;
  };
  for (std::size_t b = 0; b < bins; ++b) {
    const Sums& s = sums[b];
    if (s.snapshots == 0) continue;
    centre.push_back((b + 0.5) * o.phase_bin_deg);
    snapshots.push_back(s.snapshots);
    n.push_back(s.n);
    const double m = static_cast<double>(s.n);
    x.push_back(s.n ? s.x / m : kNaN);
    xs.push_back(sd(s.x, s.xx, s.n));
    y.push_back(s.n ? s.y / m : kNaN);
    ys.push_back(sd(s.y, s.yy, s.n));
    c.push_back(s.n ? s.c / m : kNaN);
    cs.push_back(sd(s.c, s.cc, s.n));
    p.push_back(s.n ? s.p / m : kNaN);
  }
  Table out;
  out.add({"phase_deg", "deg", centre}).add({"snapshots", "1", snapshots}).add({"detected", "1", n})
      .add({"x_over_c", "1", x}).add({"x_over_c_std", "1", xs}).add({"y_over_c", "1", y}).add({"y_over_c_std", "1", ys})
      .add({"circulation", "1", c}).add({"circulation_std", "1", cs}).add({"peak_swirl", "1", p});
  store.put("vortex/phase_locked", std::move(out),
            {{"phase_origin", std::string("cycle start at minimum angle (motion/phase_deg)")},
             {"normalised_by", std::string("circulation by U_inf c, peak_swirl by U_inf/c")},
             {"phase_bin_deg", o.phase_bin_deg}});
}

void VortexStage::run(RunContext& context) {
  if (options_.mode == "phase_locked") return run_phase_locked(context);
  const Options& o = options_;
  RunStore& store = context.store();
  const double chord = store.get<Scalar>("run/chord_m").value, speed = store.get<Scalar>("run/U_inf_m_s").value;
  const double to_conv = speed / chord;  // t U / c per second
  const Table& det = store.get<Table>("piv/detections");
  const Table& frames = store.get<Table>("piv/frames");
  const ClockError clock(context, store);

  // Observations and the frames that were searched.
  std::vector<piv::Observation> obs(det.rows());
  {
    const auto& fr = det.integers("frame");
    const auto& sg = det.integers("sign");
    const auto &t = det.numbers("t_s"), &xc = det.numbers("x_over_c"), &yc = det.numbers("y_over_c");
    const auto &xm = det.numbers("x_m"), &ym = det.numbers("y_m"), &rad = det.numbers("radius_over_c");
    const auto& circ = det.numbers("circulation");
    for (std::size_t k = 0; k < obs.size(); ++k)
      obs[k] = {fr[k], t[k] + clock(t[k]), static_cast<int>(sg[k]), xc[k], yc[k], xm[k], ym[k], rad[k] * chord, circ[k]};
  }
  std::vector<std::int64_t> searched;
  std::vector<double> searched_t;
  {
    const auto& fr = frames.integers("frame");
    const auto& st = frames.texts("status");
    const auto& t = frames.numbers("t_s");
    for (std::size_t k = 0; k < fr.size(); ++k)
      if (st[k] != "flagged") searched.push_back(fr[k]), searched_t.push_back(t[k] + clock(t[k]));
  }
  const Eigen::VectorXd &gx = store.get<Series>("piv/grid_x_m").values, &gy = store.get<Series>("piv/grid_y_m").values;
  piv::FieldOfView view{gx.minCoeff(), gx.maxCoeff(), gy.minCoeff(), gy.maxCoeff()};
  double frame_dt = kNaN;
  if (searched_t.size() >= 2) {
    std::vector<double> d;
    for (std::size_t k = 1; k < searched_t.size(); ++k) d.push_back(searched_t[k] - searched_t[k - 1]);
    std::nth_element(d.begin(), d.begin() + static_cast<std::ptrdiff_t>(d.size() / 2), d.end());
    frame_dt = d[d.size() / 2];
  }
  // A newborn track has no velocity to predict with, so the gate must reach
  // as far as the fastest plausible vortex moves in one frame.
  double gate = o.gate_over_c;
  if (gate == 0)
    gate = std::isfinite(frame_dt) ? std::max(0.1, o.plausible_speed[1] * speed * frame_dt / chord) : 0.1;
  piv::TrackingOptions topt{gate, static_cast<int>(o.max_gap_frames)};
  std::vector<piv::Track> all = piv::track_vortices(obs, searched, view, topt);
  std::vector<piv::Track> tracks;
  for (auto& t : all)
    if (static_cast<std::int64_t>(t.observations.size()) >= o.min_track_frames) tracks.push_back(std::move(t));

  // Cycles: from [cycles] when it ran, else the whole PIV record as cycle 0.
  std::vector<Cycle> cycles;
  if (store.contains("cycles")) {
    const Table& ct = store.get<Table>("cycles");
    const auto n = as_doubles(ct, "cycle"), a = as_doubles(ct, "t_start_s"), b = as_doubles(ct, "t_end_s");
    for (std::size_t k = 0; k < n.size(); ++k) cycles.push_back({static_cast<std::int64_t>(n[k]), a[k], b[k]});
  } else if (!searched_t.empty()) {
    cycles.push_back({0, searched_t.front(), searched_t.back() + (std::isfinite(frame_dt) ? frame_dt : 0.0)});
  }
  auto cycle_of = [&](double t) -> const Cycle* {
    for (const auto& c : cycles)
      if (t >= c.t_start && t < c.t_end) return &c;
    return nullptr;
  };
  const bool have_motion = store.contains("signals/time_s");
  auto phase_at = [&](double t) {
    if (!have_motion || !store.contains("motion/phase_deg")) return kNaN;
    return interpolate(store.get<Series>("signals/time_s").values, store.get<Series>("motion/phase_deg").values, t, true);
  };
  auto alpha_at = [&](double t) {
    if (!have_motion || !store.contains("motion/alpha_deg")) return kNaN;
    return interpolate(store.get<Series>("signals/time_s").values, store.get<Series>("motion/alpha_deg").values, t);
  };

  // Per-track analysis.
  struct Analysis {
    std::int64_t cycle = -1;
    double max_abs_circulation = 0;
    double detachment_t = kNaN, detachment_value = kNaN;
    std::string detachment_how, detachment_missing;
    double te_t = kNaN, te_value = kNaN;
    piv::SpeedFit fit;
    double fit_t = kNaN;
    bool le = false;
  };
  std::vector<Analysis> an(tracks.size());
  for (std::size_t k = 0; k < tracks.size(); ++k) {
    const auto& ob = tracks[k].observations;
    const piv::Observation& birth = obs[ob.front()];
    const Cycle* c = cycle_of(birth.t_s);
    an[k].cycle = c ? c->number : -1;
    for (auto i : ob) an[k].max_abs_circulation = std::max(an[k].max_abs_circulation, std::abs(obs[i].circulation));
  }
  for (std::size_t k = 0; k < tracks.size(); ++k) {
    const piv::Track& tr = tracks[k];
    const auto& ob = tr.observations;
    Analysis& a = an[k];
    // End of circulation growth: the maximum of |Gamma| smoothed over 3 frames.
    std::size_t peak = 0;
    double best = -1;
    for (std::size_t i = 0; i < ob.size(); ++i) {
      double sum = 0;
      int n = 0;
      for (std::size_t m = i ? i - 1 : 0; m <= std::min(i + 1, ob.size() - 1); ++m) sum += std::abs(obs[ob[m]].circulation), ++n;
      if (sum / n > best) best = sum / n, peak = i;
    }
    double growth_t = kNaN;
    if (peak + 1 < ob.size()) growth_t = obs[ob[peak]].t_s;
    // Eruption: an opposite-sign track born close beneath this one while it lives.
    double eruption_t = kNaN;
    for (std::size_t m = 0; m < tracks.size(); ++m) {
      if (tracks[m].sign == tr.sign) continue;
      const piv::Observation& b = obs[tracks[m].observations.front()];
      for (auto i : ob) {
        const piv::Observation& p = obs[i];
        if (p.frame != b.frame) continue;
        if (b.y_over_c < p.y_over_c && std::hypot(b.x_over_c - p.x_over_c, b.y_over_c - p.y_over_c) <= o.secondary_distance_over_c &&
            !(eruption_t <= b.t_s))
          eruption_t = b.t_s;
      }
    }
    if (std::isfinite(eruption_t) && !(growth_t < eruption_t)) {
      a.detachment_t = eruption_t, a.detachment_how = "secondary vortex eruption beneath it";
    } else if (std::isfinite(growth_t)) {
      a.detachment_t = growth_t, a.detachment_how = "end of circulation growth";
    } else {
      a.detachment_missing = "circulation still growing when the track ended (" + tr.end_reason + ")";
    }
    if (std::isfinite(a.detachment_t))
      for (auto i : ob)
        if (obs[i].t_s == a.detachment_t) a.detachment_value = obs[i].circulation;
    // Trailing-edge passage: the first crossing of x/c = te, interpolated in time.
    for (std::size_t i = 1; i < ob.size(); ++i) {
      const piv::Observation &p = obs[ob[i - 1]], &q = obs[ob[i]];
      if (p.x_over_c < o.te_x_over_c && q.x_over_c >= o.te_x_over_c) {
        const double w = (o.te_x_over_c - p.x_over_c) / (q.x_over_c - p.x_over_c);
        a.te_t = p.t_s + w * (q.t_s - p.t_s);
        a.te_value = p.circulation + w * (q.circulation - p.circulation);
        break;
      }
    }
    // Convection speed over the window, after detachment when it is known.
    std::vector<double> tc, xc;
    for (auto i : ob) {
      const piv::Observation& p = obs[i];
      if (p.x_over_c < o.convection_window_x_over_c[0] || p.x_over_c > o.convection_window_x_over_c[1]) continue;
      if (std::isfinite(a.detachment_t) && p.t_s < a.detachment_t) continue;
      tc.push_back(p.t_s * to_conv);
      xc.push_back(p.x_over_c);
    }
    a.fit = piv::fit_convection_speed(tc, xc);
    if (!tc.empty()) a.fit_t = 0.5 * (tc.front() + tc.back()) / to_conv;
  }
  // The leading-edge vortex of each cycle: LE sign, born near the leading
  // edge on the suction side; the strongest such track.
  std::map<std::int64_t, std::size_t> le_of_cycle;
  for (std::size_t k = 0; k < tracks.size(); ++k) {
    const piv::Observation& birth = obs[tracks[k].observations.front()];
    if (tracks[k].sign != o.le_sign || birth.x_over_c > o.le_birth_max_x_over_c || birth.y_over_c < 0 || an[k].cycle < 0)
      continue;
    auto it = le_of_cycle.find(an[k].cycle);
    if (it == le_of_cycle.end() || an[k].max_abs_circulation > an[it->second].max_abs_circulation)
      le_of_cycle[an[k].cycle] = k;
  }
  for (const auto& [c, k] : le_of_cycle) an[k].le = true;

  // The field at onset of a typical cycle: the one whose LE vortex appeared
  // at the median time into its cycle (an outlier cycle would mislead).
  if (!le_of_cycle.empty() && store.contains("piv/processing") && !context.perturbation()) {
    std::vector<std::pair<double, std::size_t>> delay;  // (birth - cycle start, track)
    for (const auto& [c, k] : le_of_cycle) {
      const double birth = obs[tracks[k].observations.front()].t_s;
      for (const Cycle& cy : cycles)
        if (cy.number == c) delay.emplace_back(birth - cy.t_start, k);
    }
    if (!delay.empty()) {
      std::sort(delay.begin(), delay.end());
      const std::size_t k = delay[(delay.size() - 1) / 2].second;
      piv::store_onset_swirl(context, obs[tracks[k].observations.front()].frame,
                             {{"cycle", an[k].cycle},
                              {"track", static_cast<std::int64_t>(k)},
                              {"chosen", std::string("first frame of the leading-edge vortex of the cycle with the "
                                                     "median detection time into its cycle")}});
    }
  }

  // vortex/tracks
  {
    std::vector<std::int64_t> id, frame, sign;
    std::vector<double> t, x, y, circ, peak, radius, sens, xm, ym;
    const auto &peak_col = det.numbers("peak_swirl"), &sens_col = det.numbers("circulation_sensitivity");
    const auto& rad_col = det.numbers("radius_over_c");
    for (std::size_t k = 0; k < tracks.size(); ++k)
      for (auto i : tracks[k].observations) {
        id.push_back(static_cast<std::int64_t>(k));
        frame.push_back(obs[i].frame);
        sign.push_back(obs[i].sign);
        t.push_back(obs[i].t_s);
        x.push_back(obs[i].x_over_c);
        y.push_back(obs[i].y_over_c);
        xm.push_back(obs[i].x_m);
        ym.push_back(obs[i].y_m);
        circ.push_back(obs[i].circulation);
        peak.push_back(peak_col[i]);
        sens.push_back(sens_col[i]);
        radius.push_back(rad_col[i]);
      }
    Table tt;
    tt.add({"track", "1", id}).add({"frame", "1", frame}).add({"t_s", "s", t}).add({"x_over_c", "1", x})
        .add({"y_over_c", "1", y}).add({"circulation", "1", circ}).add({"peak_swirl", "1", peak})
        .add({"sign", "1", sign}).add({"radius_over_c", "1", radius}).add({"circulation_sensitivity", "1", sens})
        .add({"x_m", "m", xm}).add({"y_m", "m", ym});
    store.put("vortex/tracks", std::move(tt),
              {{"normalised_by", std::string("circulation by U_inf c, peak_swirl by U_inf/c")},
               {"circulation_sign", std::string("counter-clockwise positive (x downstream, y toward the suction side)")}});
  }
  // vortex/per_track
  {
    std::vector<std::int64_t> id, sign, cycle, n, first, last, le, points;
    std::vector<double> tb, te, life, bx, by, ex, maxc, spd, spd_u, det_t, te_t;
    std::vector<std::string> reason, det_how;
    for (std::size_t k = 0; k < tracks.size(); ++k) {
      const auto& ob = tracks[k].observations;
      const piv::Observation &b = obs[ob.front()], &e = obs[ob.back()];
      id.push_back(static_cast<std::int64_t>(k));
      sign.push_back(tracks[k].sign);
      cycle.push_back(an[k].cycle);
      n.push_back(static_cast<std::int64_t>(ob.size()));
      first.push_back(b.frame);
      last.push_back(e.frame);
      tb.push_back(b.t_s);
      te.push_back(e.t_s);
      life.push_back(e.t_s - b.t_s);
      bx.push_back(b.x_over_c);
      by.push_back(b.y_over_c);
      ex.push_back(e.x_over_c);
      maxc.push_back(an[k].max_abs_circulation);
      spd.push_back(an[k].fit.ok ? an[k].fit.speed : kNaN);
      spd_u.push_back(an[k].fit.ok ? an[k].fit.uncertainty : kNaN);
      points.push_back(static_cast<std::int64_t>(an[k].fit.points));
      det_t.push_back(an[k].detachment_t);
      det_how.push_back(std::isfinite(an[k].detachment_t) ? an[k].detachment_how : an[k].detachment_missing);
      te_t.push_back(an[k].te_t);
      reason.push_back(tracks[k].end_reason);
      le.push_back(an[k].le ? 1 : 0);
    }
    Table pt;
    pt.add({"track", "1", id}).add({"sign", "1", sign}).add({"cycle", "1", cycle}).add({"frames", "1", n})
        .add({"first_frame", "1", first}).add({"last_frame", "1", last}).add({"t_birth_s", "s", tb})
        .add({"t_end_s", "s", te}).add({"lifetime_s", "s", life}).add({"birth_x_over_c", "1", bx})
        .add({"birth_y_over_c", "1", by}).add({"end_x_over_c", "1", ex}).add({"max_abs_circulation", "1", maxc})
        .add({"convection_speed", "1", spd}).add({"convection_speed_uncertainty", "1", spd_u})
        .add({"convection_points", "1", points}).add({"detachment_t_s", "s", det_t})
        .add({"detachment", "", det_how}).add({"te_passage_t_s", "s", te_t}).add({"end_reason", "", reason})
        .add({"le_vortex", "1", le});
    store.put("vortex/per_track", std::move(pt),
              {{"normalised_by", std::string("convection speed by U_inf (slope of x/c against t U/c)")},
               {"gate_over_c", gate},
               {"convection_window_x_over_c",
                std::to_string(o.convection_window_x_over_c[0]) + " to " + std::to_string(o.convection_window_x_over_c[1]) +
                    ", after detachment when known"}});
  }
  // vortex/events_per_cycle
  std::vector<Event> events;
  const double t_first = searched_t.empty() ? kNaN : searched_t.front();
  const double t_last = searched_t.empty() ? kNaN : searched_t.back();
  for (const Cycle& c : cycles) {
    if (!(c.t_end > t_first && c.t_start <= t_last)) continue;  // no PIV frame in this cycle
    auto it = le_of_cycle.find(c.number);
    if (it == le_of_cycle.end()) {
      const std::string why = c.t_start < t_first || c.t_end > t_last + frame_dt
                                  ? "no leading-edge vortex in the part of the cycle the PIV record covers"
                                  : "no leading-edge vortex detected";
      for (const char* e : {"vortex_detection", "vortex_detachment", "vortex_te_passage", "convection_speed",
                            "vortex_shedding"})
        events.push_back({c.number, e, "missing", why});
      continue;
    }
    const std::size_t k = it->second;
    const Analysis& a = an[k];
    const piv::Observation& birth = obs[tracks[k].observations.front()];
    events.push_back({c.number, "vortex_detection", "ok", "", birth.t_s, frame_dt, birth.x_over_c});
    if (std::isfinite(a.detachment_t))
      events.push_back({c.number, "vortex_detachment", "ok", a.detachment_how, a.detachment_t, frame_dt, a.detachment_value});
    else
      events.push_back({c.number, "vortex_detachment", "missing", a.detachment_missing});
    if (std::isfinite(a.te_t))
      events.push_back({c.number, "vortex_te_passage", "ok", "", a.te_t, frame_dt, a.te_value});
    else
      events.push_back({c.number, "vortex_te_passage", "missing", tracks[k].end_reason + " before x/c = " +
                                                                      std::to_string(o.te_x_over_c)});
    if (a.fit.ok) {
      const bool plausible = a.fit.speed >= o.plausible_speed[0] && a.fit.speed <= o.plausible_speed[1];
      events.push_back({c.number, "convection_speed", plausible ? "ok" : "suspect",
                        plausible ? "" : "outside the plausible range of convection speeds", a.fit_t, kNaN, a.fit.speed});
    } else {
      events.push_back({c.number, "convection_speed", "missing",
                        "fewer than 3 positions in the window x/c " + std::to_string(o.convection_window_x_over_c[0]) +
                            " to " + std::to_string(o.convection_window_x_over_c[1])});
    }
    // Later vortices shed from the leading edge in the same cycle: LE sign, born
    // there after the first, and strong enough not to be a shear-layer blob.
    std::size_t shed = 0;
    for (std::size_t m = 0; m < tracks.size(); ++m) {
      const piv::Observation& b = obs[tracks[m].observations.front()];
      if (m == k || an[m].cycle != c.number || tracks[m].sign != o.le_sign || b.x_over_c > o.le_birth_max_x_over_c ||
          b.y_over_c < 0 || !(b.t_s > birth.t_s) ||
          an[m].max_abs_circulation < o.shedding_min_circulation_ratio * a.max_abs_circulation)
        continue;
      events.push_back({c.number, "vortex_shedding", "ok", "", b.t_s, frame_dt, an[m].max_abs_circulation});
      ++shed;
    }
    if (shed == 0)
      events.push_back({c.number, "vortex_shedding", "missing", "no later leading-edge vortex in this cycle"});
  }
  {
    std::vector<std::int64_t> cycle;
    std::vector<std::string> event, status, reason;
    std::vector<double> t, tconv, tu, phase, alpha, value;
    for (const Event& e : events) {
      cycle.push_back(e.cycle);
      event.push_back(e.event);
      status.push_back(e.status);
      reason.push_back(e.reason);
      t.push_back(e.t_s);
      double start = kNaN;
      for (const Cycle& c : cycles)
        if (c.number == e.cycle) start = c.t_start;
      tconv.push_back((e.t_s - start) * to_conv);
      tu.push_back(e.t_uncertainty_s);
      phase.push_back(std::isfinite(e.t_s) ? phase_at(e.t_s) : kNaN);
      alpha.push_back(std::isfinite(e.t_s) ? alpha_at(e.t_s) : kNaN);
      value.push_back(e.value);
    }
    Table et;
    et.add({"cycle", "1", cycle}).add({"event", "", event}).add({"status", "", status}).add({"reason", "", reason})
        .add({"t_s", "s", t}).add({"t_conv", "1", tconv}).add({"t_uncertainty_s", "s", tu})
        .add({"phase_deg", "deg", phase}).add({"alpha_deg", "deg", alpha}).add({"value", "1", value});
    store.put("vortex/events_per_cycle", std::move(et),
              {{"t_conv", std::string("(t - cycle start) U_inf / c")},
               {"value", std::string("vortex_detection: x/c at birth; vortex_detachment, vortex_te_passage: "
                                     "circulation / (U_inf c); convection_speed: speed / U_inf; vortex_shedding "
                                     "(birth of each later LE vortex): its largest |circulation| / (U_inf c)")}});
  }
}

}  // namespace stallscope
