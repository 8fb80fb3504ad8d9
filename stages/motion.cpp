#include "stages/motion.hpp"

#include <algorithm>
#include <cmath>
#include <cstdio>
#include <numbers>
#include <optional>
#include <stdexcept>

#include "pipeline/errors.hpp"
#include "stages/numerics/plateaus.hpp"
#include "stages/numerics/sinusoid_fit.hpp"
#include "stages/numerics/spectrum.hpp"
#include "stages/numerics/statistics.hpp"

namespace stallscope {

namespace {

constexpr double kPi = std::numbers::pi;
constexpr double kDegToRad = kPi / 180.0;
constexpr const char* kAngleKey = "signals/alpha_deg";
constexpr const char* kPhaseOrigin = "cycle start at the minimum angle of the fitted fundamental; 180 deg at its maximum";

std::string num(double v, int digits = 4) {
  char buf[64];
  std::snprintf(buf, sizeof buf, "%.*g", digits, v);
  return buf;
}

double attribute_number(const Attributes& a, const std::string& name) {
  auto it = a.find(name);
  if (it == a.end()) throw std::logic_error("motion/fit has no attribute " + name);
  if (const double* d = std::get_if<double>(&it->second)) return *d;
  if (const std::int64_t* i = std::get_if<std::int64_t>(&it->second)) return static_cast<double>(*i);
  throw std::logic_error("motion/fit attribute " + name + " is not a number");
}

// The outcome of trying one kind of motion: whether it fits, and why not.
struct Trial {
  bool fits = false;
  std::string why;
};

struct Record {
  const Eigen::VectorXd& t;
  const Eigen::VectorXd& alpha;
  double chord = 0, speed = 0;
};

// Where the model moves: a tunnel record starts and ends with the model at
// rest (wind-off zeros, settling), which a periodic fit must leave out.
// Samples [first, last), with the rest levels before and after.
struct MotionWindow {
  Eigen::Index first = 0, last = 0;
  double rest_before = NAN, rest_after = NAN;
};

MotionWindow motion_window(const Record& r, const MotionStage::Options& o) {
  MotionWindow w;
  w.last = r.t.size();
  const auto plateaus =
      numerics::find_plateaus(r.t, r.alpha, o.plateau_tolerance_deg, o.plateau_min_duration_s, 0.0, false);
  if (plateaus.empty()) return w;
  const double t0 = r.t[0], t1 = r.t[r.t.size() - 1];
  const auto& head = plateaus.front();
  const auto& tail = plateaus.back();
  // The plateau test looks a little ahead, so it ends a plateau a few
  // samples before the model moves: extend each rest while the angle stays
  // within the band, or the fit would see rest samples as motion.
  const double band = o.plateau_tolerance_deg;
  if (head.t_start - t0 < o.plateau_min_duration_s && head.t_end < t1) {
    w.first = head.end;
    while (w.first < r.t.size() && std::abs(r.alpha[w.first] - head.level) <= band) ++w.first;
    w.rest_before = head.level;
  }
  if (t1 - tail.t_end < o.plateau_min_duration_s && tail.t_start > t0 && (plateaus.size() > 1 || w.first == 0)) {
    w.last = tail.begin;
    while (w.last > w.first && std::abs(r.alpha[w.last - 1] - tail.level) <= band) --w.last;
    w.rest_after = tail.level;
  }
  if (w.last - w.first < 20) return MotionWindow{0, r.t.size(), NAN, NAN};
  return w;
}

// The fundamental's mean crossings (theta = j pi), each placed by the time
// shift that best lays the fitted waveform onto the measured angle over an
// eighth of a period either side of it (Gauss-Newton on the one shift). Each
// search starts from the previous crossing's shift, so a drifting frequency is
// followed crossing by crossing. Crossings whose window leaves the motion, or
// whose fit does not settle, are left out.
void measure_phase_nodes(const Record& r, const MotionWindow& w, MotionFit& m) {
  const MotionFit fitted = m;  // the waveform on the fitted phase, shifted below
  const double f = m.freq_hz, omega = 2 * kPi * f, period = 1 / f;
  const double t_lo = r.t[w.first], t_hi = r.t[w.last - 1];
  const double* begin = r.t.data();
  const double* end = begin + w.last;
  const auto j0 = static_cast<std::int64_t>(std::ceil(fitted.theta(t_lo) / kPi));
  const auto j1 = static_cast<std::int64_t>(std::floor(fitted.theta(t_hi) / kPi));
  double shift = 0;
  for (std::int64_t j = j0; j <= j1; ++j) {
    const double nominal = (static_cast<double>(j) * kPi - m.sine_phase_rad) / omega;
    double s = shift;
    bool settled = false;
    for (int iteration = 0; iteration < 12 && !settled; ++iteration) {
      const double a = nominal + s - period / 8, b = nominal + s + period / 8;
      if (a < t_lo || b > t_hi) break;
      double num = 0, den = 0;
      int used = 0;
      for (const double* p = std::lower_bound(begin + w.first, end, a); p != end && *p <= b; ++p) {
        const double alpha = r.alpha[p - begin];
        if (!std::isfinite(alpha)) continue;
        const double slope = fitted.alpha_rate_deg_s(*p - s);
        num += (alpha - fitted.alpha_deg(*p - s)) * slope;
        den += slope * slope;
        ++used;
      }
      if (used < 8 || !(den > 0)) break;
      const double step = std::clamp(-num / den, -period / 16, period / 16);
      s += step;
      settled = std::abs(step) < 1e-9 * period;
    }
    if (!settled) continue;
    shift = s;
    if (!m.node_t_s.empty() && nominal + s <= m.node_t_s.back()) continue;
    m.node_t_s.push_back(nominal + s);
    m.node_theta_rad.push_back(static_cast<double>(j) * kPi);
  }
  if (m.node_t_s.size() < 2) m.node_t_s.clear(), m.node_theta_rad.clear();
}

// The periodic motion as later stages use it: the fit, the phase (per cycle or
// fitted) and the complete cycles.
MotionFit periodic_motion(const Record& r, const MotionWindow& w, const numerics::SinusoidFit& fit, bool per_cycle) {
  const double f = fit.frequency_hz, period = 1 / f;
  const Eigen::Index n = r.t.size();
  MotionFit m;
  m.freq_hz = f;
  m.alpha_mean_deg = fit.mean;
  m.alpha_amp_deg = fit.amplitude;
  m.sine_phase_rad = fit.phase_rad;
  for (const auto& h : fit.harmonics) {
    m.harmonic_sin_deg.push_back(h.real());
    m.harmonic_cos_deg.push_back(h.imag());
  }
  if (per_cycle) measure_phase_nodes(r, w, m);
  // Cycle 0 starts at the first minimum of the fundamental (theta = -pi/2)
  // of the motion. The rest band takes in the first and last few degrees of
  // phase (a sine leaves its minimum slowly), so a cycle may start up to 0.15
  // of a period before the motion window; one that starts earlier belongs to
  // the model at rest.
  const double margin = 0.15 * period;
  const double t_begin = std::max(r.t[0], r.t[w.first] - (w.first > 0 ? margin : 0.0));
  const double t_end = std::min(r.t[n - 1], r.t[w.last - 1] + (w.last < n ? margin : 0.0));
  const double theta_begin = m.theta(t_begin);
  double lead = std::fmod(-0.5 * kPi - theta_begin, 2 * kPi);
  if (lead < 0) lead += 2 * kPi;
  m.cycle_origin_s = m.time_at_theta(theta_begin + lead);
  m.cycles = std::max<std::int64_t>(
      0, static_cast<std::int64_t>(std::floor((m.theta(t_end) - theta_begin - lead) / (2 * kPi) + 1e-9)));
  return m;
}

// rms of the measured angle about the motion's fundamental (on its phase)
// over the window, as a fraction of the amplitude.
double motion_misfit(const Record& r, const MotionWindow& w, const MotionFit& m) {
  double ss = 0;
  Eigen::Index used = 0;
  for (Eigen::Index i = w.first; i < w.last; ++i)
    if (std::isfinite(r.alpha[i])) {
      const double e = r.alpha[i] - m.alpha_mean_deg - m.alpha_amp_deg * std::sin(m.theta(r.t[i]));
      ss += e * e;
      ++used;
    }
  return used ? std::sqrt(ss / static_cast<double>(used)) / m.alpha_amp_deg : INFINITY;
}

// --- sine ------------------------------------------------------------------

std::optional<numerics::SinusoidFit> try_sine(const Record& r, const MotionWindow& w, const MotionStage::Options& o,
                                              Trial& trial) {
  try {
    numerics::SinusoidFit fit = numerics::fit_sinusoid(r.t.segment(w.first, w.last - w.first),
                                                       r.alpha.segment(w.first, w.last - w.first),
                                                       static_cast<int>(o.harmonics));
    const double misfit = fit.rms_residual_fundamental / fit.amplitude;
    trial.fits = misfit <= o.max_residual_fraction;
    trial.why = "a sine at " + num(fit.frequency_hz) + " Hz leaves an rms misfit of " + num(100 * misfit, 3) +
                " % of its amplitude (max_residual_fraction = " + num(o.max_residual_fraction) + ")";
    if (o.phase == "per_cycle") {
      // A drifting frequency: the fundamental on the phase measured cycle by cycle.
      const double local = motion_misfit(r, w, periodic_motion(r, w, fit, true));
      if (local < misfit) fit.rms_residual_fundamental = local * fit.amplitude;
      trial.fits = trial.fits || local <= o.max_residual_fraction;
      trial.why += ", " + num(100 * local, 3) + " % on the phase measured cycle by cycle";
    }
    return fit;
  } catch (const std::invalid_argument& e) {
    trial.why = std::string("no sine fits (") + e.what() + ")";
    return std::nullopt;
  }
}

void write_sine(RunStore& s, const Record& r, const MotionWindow& w, const numerics::SinusoidFit& fit,
                bool per_cycle) {
  const double f = fit.frequency_hz, omega = 2 * kPi * f;
  const Eigen::Index n = r.t.size();
  const MotionFit m = periodic_motion(r, w, fit, per_cycle);

  // Outside the motion the model rests: its rest level, no rate, no phase.
  Eigen::VectorXd alpha(n), rate(n), phase(n), cycle(n);
  for (Eigen::Index i = 0; i < n; ++i) {
    const bool resting = i < w.first || i >= w.last;
    alpha[i] = resting ? (i < w.first ? w.rest_before : w.rest_after) : m.alpha_deg(r.t[i]);
    rate[i] = resting ? 0.0 : m.alpha_rate_deg_s(r.t[i]);
    phase[i] = resting ? NAN : m.phase_deg(r.t[i]);
    cycle[i] = static_cast<double>(m.cycle(r.t[i]));
  }
  const double k = kPi * f * r.chord / r.speed;

  // The fit itself: one row per harmonic, the summary as attributes.
  std::vector<std::int64_t> order{1};
  std::vector<double> amplitude{fit.amplitude}, rel_phase{0.0}, a{fit.amplitude}, b{0.0};
  for (std::size_t j = 0; j < fit.harmonics.size(); ++j) {
    order.push_back(static_cast<std::int64_t>(j + 2));
    amplitude.push_back(std::abs(fit.harmonics[j]));
    rel_phase.push_back(std::arg(fit.harmonics[j]) / kDegToRad);
    a.push_back(fit.harmonics[j].real());
    b.push_back(fit.harmonics[j].imag());
  }
  Table table;
  table.add({"harmonic", "1", order})
      .add({"amplitude_deg", "deg", amplitude})
      .add({"phase_deg", "deg", rel_phase})
      .add({"sin_deg", "deg", a})
      .add({"cos_deg", "deg", b});
  Attributes attrs{
      {"model", std::string("alpha = alpha_mean + alpha_amp sin(theta) + sum over h >= 2 of sin_deg sin(h theta) + "
                            "cos_deg cos(h theta), theta = 2 pi freq t + sine_phase_rad")},
      {"phase_origin", std::string(kPhaseOrigin)},
      {"freq_hz", f},
      {"freq_error_hz", fit.frequency_error_hz},
      {"k", k},
      {"alpha_mean_deg", fit.mean},
      {"alpha_mean_error_deg", fit.mean_error},
      {"alpha_amp_deg", fit.amplitude},
      {"alpha_amp_error_deg", fit.amplitude_error},
      {"sine_phase_rad", fit.phase_rad},
      {"sine_phase_error_deg", fit.phase_error_rad / kDegToRad},
      {"cycle_origin_s", m.cycle_origin_s},
      {"motion_start_s", r.t[w.first]},
      {"motion_end_s", r.t[w.last - 1]},
      {"cycles", m.cycles},
      {"residual_deg", fit.rms_residual},
      {"residual_fundamental_deg", fit.rms_residual_fundamental},
      {"harmonic_distortion", fit.distortion},
      {"max_pitch_rate_deg_s", fit.amplitude * omega},
      {"max_pitch_rate_nondim", fit.amplitude * kDegToRad * k},  // r = alpha_dot c / (2U) at its peak
      {"phase", std::string(m.node_t_s.empty() ? "fitted: one frequency" : "per cycle: motion/phase_nodes")},
  };
  s.put("motion/fit", std::move(table), std::move(attrs));
  if (!m.node_t_s.empty()) {
    // The measured phase, for the record and for the stages that place their samples in it.
    Table nodes;
    nodes.add({"t_s", "s", m.node_t_s}).add({"theta_rad", "rad", m.node_theta_rad});
    s.put("motion/phase_nodes", std::move(nodes),
          {{"definition", std::string("the fundamental's phase variable theta measured at the angle's mean crossings "
                                      "(theta = 0, pi mod 2 pi); linear between them, the fitted frequency beyond")}});
  }
  s.put("motion/alpha_deg", Series{std::move(alpha), "deg"}, {{"source", std::string("fitted motion")}});
  s.put("motion/alpha_rate_deg_s", Series{std::move(rate), "deg/s"}, {{"source", std::string("fitted motion")}});
  s.put("motion/phase_deg", Series{std::move(phase), "deg"},
        {{"phase_origin", std::string(kPhaseOrigin)}, {"note", std::string("NaN while the model rests")}});
  s.put("motion/cycle", Series{std::move(cycle), "1"},
        {{"note", std::string("cycle 0 is the first complete cycle; -1 outside complete cycles")}});
  s.put("run/motion", Text{"sine"});
  s.put("run/alpha_mean_deg", Scalar{fit.mean, "deg"});
  s.put("run/alpha_amp_deg", Scalar{fit.amplitude, "deg"});
  s.put("run/freq_hz", Scalar{f, "Hz"});
  s.put("run/k", Scalar{k, "1"});
}

// --- ramp ------------------------------------------------------------------

std::optional<numerics::RampFit> try_ramp(const Record& r, const MotionStage::Options& o, Trial& trial) {
  try {
    numerics::RampFit ramp = numerics::fit_ramp(r.t, r.alpha);
    const double misfit = ramp.rms_residual / std::abs(ramp.level_end - ramp.level_start);
    trial.fits = misfit <= o.max_residual_fraction && ramp.t_start >= r.t[0] && ramp.t_end <= r.t[r.t.size() - 1];
    trial.why = "a ramp from " + num(ramp.level_start) + " to " + num(ramp.level_end) + " deg leaves an rms misfit of " +
                num(100 * misfit, 3) + " % of its excursion";
    return ramp;
  } catch (const std::invalid_argument& e) {
    trial.why = std::string("no ramp fits (") + e.what() + ")";
    return std::nullopt;
  }
}

void write_ramp(RunStore& s, const Record& r, const numerics::RampFit& ramp) {
  const Eigen::Index n = r.t.size();
  Eigen::VectorXd alpha(n), rate(n);
  for (Eigen::Index i = 0; i < n; ++i) {
    alpha[i] = ramp.value(r.t[i]);
    rate[i] = ramp.derivative(r.t[i]);
  }
  s.put("motion/alpha_deg", Series{std::move(alpha), "deg"}, {{"source", std::string("fitted ramp")}});
  s.put("motion/alpha_rate_deg_s", Series{std::move(rate), "deg/s"}, {{"source", std::string("fitted ramp")}});
  s.put("motion/ramp_start_s", Scalar{ramp.t_start, "s"});
  s.put("motion/ramp_end_s", Scalar{ramp.t_end, "s"});
  s.put("motion/ramp_alpha_start_deg", Scalar{ramp.level_start, "deg"});
  s.put("motion/ramp_alpha_end_deg", Scalar{ramp.level_end, "deg"});
  s.put("motion/ramp_rate_deg_s", Scalar{ramp.rate, "deg/s"});
  // Non-dimensional pitch rate r = alpha_dot c / (2U), alpha_dot in rad/s.
  s.put("motion/ramp_rate_nondim", Scalar{ramp.rate * kDegToRad * r.chord / (2 * r.speed), "1"});
  s.put("motion/ramp_residual_deg", Scalar{ramp.rms_residual, "deg"});
  s.put("run/motion", Text{"ramp"});
  s.put("run/alpha_mean_deg", Scalar{0.5 * (ramp.level_start + ramp.level_end), "deg"});
  s.put("run/alpha_amp_deg", Scalar{0.5 * std::abs(ramp.level_end - ramp.level_start), "deg"});
  s.put("run/freq_hz", Scalar{0.0, "Hz"});
  s.put("run/k", Scalar{0.0, "1"});
}

// --- periodic ramps ----------------------------------------------------------

// Ramp up, hold, ramp down, hold, cycle after cycle. The periodic fit needs
// many harmonics for the corners; the ramps themselves are fitted per cycle.
constexpr int kRampHarmonics = 25;

struct PeriodicRamp {
  numerics::SinusoidFit fit;
  MotionFit motion;  // cycles as the sine path would cut them
  std::vector<std::int64_t> cycle;
  std::vector<std::string> stroke;
  std::vector<numerics::RampFit> ramps;
  double rms_misfit = 0;
};

// The periodic fit with kRampHarmonics; it also cuts the cycles.
std::optional<numerics::SinusoidFit> fit_ramp_series(const Record& r, const MotionWindow& w, Trial& trial) {
  try {
    return numerics::fit_sinusoid(r.t.segment(w.first, w.last - w.first), r.alpha.segment(w.first, w.last - w.first),
                                  kRampHarmonics);
  } catch (const std::invalid_argument& e) {
    trial.why = std::string("no periodic ramp fits (") + e.what() + ")";
    return std::nullopt;
  }
}

// Ramps fitted half-cycle by half-cycle on the cycles that `fit` cuts.
std::optional<PeriodicRamp> try_periodic_ramp(const Record& r, const MotionWindow& w, const numerics::SinusoidFit& fit,
                                              Trial& trial, const MotionStage::Options& o) {
  PeriodicRamp p;
  p.fit = fit;
  // Cycle boundaries as for a sine: the fundamental's minimum, mid-way along the bottom hold.
  const double f = p.fit.frequency_hz, period = 1 / f;
  const double t_begin = std::max(r.t[0], r.t[w.first] - (w.first > 0 ? 0.15 * period : 0.0));
  const double t_end = std::min(r.t[r.t.size() - 1], r.t[w.last - 1] + (w.last < r.t.size() ? 0.15 * period : 0.0));
  double lead = std::fmod(-0.5 * kPi - p.fit.theta(t_begin), 2 * kPi);
  if (lead < 0) lead += 2 * kPi;
  p.motion.freq_hz = f;
  p.motion.cycle_origin_s = t_begin + lead / (2 * kPi * f);
  p.motion.cycles =
      std::max<std::int64_t>(0, static_cast<std::int64_t>(std::floor((t_end - p.motion.cycle_origin_s) * f + 1e-9)));
  double ss = 0, excursion = 0;
  Eigen::Index count = 0;
  for (std::int64_t c = 0; c < p.motion.cycles; ++c) {
    const double cs = p.motion.cycle_start_s(c);
    for (int half = 0; half < 2; ++half) {
      const double a = cs + 0.5 * half * period, b = a + 0.5 * period;
      const double* begin = r.t.data();
      const auto i0 = std::lower_bound(begin, begin + r.t.size(), a) - begin;
      const auto i1 = std::lower_bound(begin, begin + r.t.size(), b) - begin;
      try {
        numerics::RampFit ramp = numerics::fit_ramp(r.t.segment(i0, i1 - i0), r.alpha.segment(i0, i1 - i0));
        ss += ramp.rms_residual * ramp.rms_residual * static_cast<double>(i1 - i0);
        count += i1 - i0;
        excursion = std::max(excursion, std::abs(ramp.level_end - ramp.level_start));
        p.cycle.push_back(c);
        p.stroke.push_back(half == 0 ? "up" : "down");
        p.ramps.push_back(ramp);
      } catch (const std::invalid_argument& e) {
        trial.why = "no ramp in cycle " + std::to_string(c) + " (" + e.what() + ")";
        return p;
      }
    }
  }
  if (p.ramps.empty()) {
    trial.why = "no complete ramp cycle";
    return p;
  }
  p.rms_misfit = std::sqrt(ss / static_cast<double>(count));
  const double misfit = p.rms_misfit / excursion;
  trial.fits = misfit <= o.max_residual_fraction;
  trial.why = "ramps fitted cycle by cycle leave an rms misfit of " + num(100 * misfit, 3) + " % of their excursion";
  return p;
}

void write_periodic_ramp(RunStore& s, const Record& r, const MotionWindow& w, const PeriodicRamp& p) {
  // motion/fit, phase and cycle as for any periodic motion, on the fitted phase
  // (the ramps were fitted on its cycles).
  write_sine(s, r, w, p.fit, false);
  const MotionFit m = MotionFit::from_store(s, "motion");
  const double period = m.period_s();
  // Within complete cycles the angle and rate are the cycle's own ramps and holds.
  Eigen::VectorXd& alpha = s.get_mutable<Series>("motion/alpha_deg").values;
  Eigen::VectorXd& rate = s.get_mutable<Series>("motion/alpha_rate_deg_s").values;
  for (Eigen::Index i = 0; i < r.t.size(); ++i) {
    const std::int64_t c = m.cycle(r.t[i]);
    if (c < 0) continue;
    const auto half = static_cast<std::size_t>(r.t[i] - m.cycle_start_s(c) >= 0.5 * period ? 1 : 0);
    const auto j = static_cast<std::size_t>(2 * c) + half;
    if (j >= p.ramps.size()) continue;
    alpha[i] = p.ramps[j].value(r.t[i]);
    rate[i] = p.ramps[j].derivative(r.t[i]);
  }
  s.attributes("motion/alpha_deg")["source"] = std::string("fitted ramps and holds, cycle by cycle");
  s.attributes("motion/alpha_rate_deg_s")["source"] = std::string("fitted ramps, cycle by cycle");
  s.attributes("motion/fit")["shape"] = std::string("periodic ramp: ramp up, hold, ramp down, hold");

  std::vector<double> t0, t1, a0, a1, rates, nondim, misfit, lows, highs, up_rates;
  for (const auto& ramp : p.ramps) {
    t0.push_back(ramp.t_start);
    t1.push_back(ramp.t_end);
    a0.push_back(ramp.level_start);
    a1.push_back(ramp.level_end);
    rates.push_back(ramp.rate);
    nondim.push_back(ramp.rate * kDegToRad * r.chord / (2 * r.speed));
    misfit.push_back(ramp.rms_residual);
  }
  for (std::size_t j = 0; j < p.ramps.size(); ++j)
    if (p.stroke[j] == "up") {
      lows.push_back(a0[j]);
      highs.push_back(a1[j]);
      up_rates.push_back(rates[j]);
    }
  Table table;
  table.add({"cycle", "1", p.cycle})
      .add({"stroke", "", p.stroke})
      .add({"t_start_s", "s", t0})
      .add({"t_end_s", "s", t1})
      .add({"alpha_start_deg", "deg", a0})
      .add({"alpha_end_deg", "deg", a1})
      .add({"rate_deg_s", "deg/s", rates})
      .add({"rate_nondim", "1", nondim})
      .add({"misfit_deg", "deg", misfit});
  s.put("motion/ramps", std::move(table),
        {{"rate_nondim", std::string("r = alpha_dot c / (2U), alpha_dot in rad/s")}});
  const double low = numerics::percentile(lows, 0.5), high = numerics::percentile(highs, 0.5);
  const double up = numerics::percentile(up_rates, 0.5);
  s.put("motion/ramp_rate_deg_s", Scalar{up, "deg/s"});
  s.put("motion/ramp_rate_nondim", Scalar{up * kDegToRad * r.chord / (2 * r.speed), "1"});
  s.put("run/motion", Text{"ramp"});
  s.put("run/alpha_mean_deg", Scalar{0.5 * (low + high), "deg"});
  s.put("run/alpha_amp_deg", Scalar{0.5 * (high - low), "deg"});
}

// --- static angle and staircase ----------------------------------------------

// The angle stays within +- tolerance (1st to 99th percentile) over the whole record.
Trial try_static(const Record& r, const MotionStage::Options& o) {
  std::vector<double> v;
  for (double a : r.alpha)
    if (std::isfinite(a)) v.push_back(a);
  const double range = numerics::percentile(v, 0.99) - numerics::percentile(v, 0.01);
  Trial trial;
  trial.fits = range <= 2 * o.plateau_tolerance_deg;
  trial.why = "the angle spans " + num(range) + " deg (1st to 99th percentile), a steady angle at most " +
              num(2 * o.plateau_tolerance_deg) + " (2 plateau_tolerance_deg)";
  return trial;
}

std::vector<numerics::Plateau> try_staircase(const Record& r, const MotionStage::Options& o, bool forced,
                                             Trial& trial) {
  auto plateaus = numerics::find_plateaus(r.t, r.alpha, o.plateau_tolerance_deg, o.plateau_min_duration_s,
                                          o.plateau_settle_s);
  double covered = 0;
  for (const auto& p : plateaus) covered += p.t_end - p.t_start;
  const double fraction = covered / (r.t[r.t.size() - 1] - r.t[0]);
  // Unforced, a staircase must be mostly steady; forced, two plateaus will do.
  trial.fits = plateaus.size() >= 2 && (forced || fraction >= 0.5);
  trial.why = std::to_string(plateaus.size()) + " steady plateaus (within +-" + num(o.plateau_tolerance_deg) +
              " deg for at least " + num(o.plateau_min_duration_s) + " s) cover " + num(100 * fraction, 3) +
              " % of the record";
  return plateaus;
}

void write_plateaus(RunStore& s, const Record& r, const std::vector<numerics::Plateau>& plateaus,
                    const std::string& motion) {
  const std::size_t m = plateaus.size();
  std::vector<std::int64_t> index, samples;
  std::vector<double> t0, t1, t_avg, level, spread;
  std::vector<std::string> direction;
  for (std::size_t j = 0; j < m; ++j) {
    const auto& p = plateaus[j];
    index.push_back(static_cast<std::int64_t>(j));
    samples.push_back(static_cast<std::int64_t>(p.end - p.begin));
    t0.push_back(p.t_start);
    t1.push_back(p.t_end);
    t_avg.push_back(r.t[p.begin]);
    level.push_back(p.level);
    spread.push_back(p.std);
    // The sweep direction in which the plateau was reached (the first: the way the sweep goes on).
    const double step = j > 0 ? p.level - plateaus[j - 1].level : (m > 1 ? plateaus[1].level - p.level : 0.0);
    direction.push_back(step > 0 ? "up" : step < 0 ? "down" : "steady");
  }
  // The fitted angle: each plateau's level, joined by straight lines between
  // plateaus, held before the first and after the last.
  std::vector<double> knot_t, knot_a;
  for (const auto& p : plateaus) {
    knot_t.insert(knot_t.end(), {p.t_start, p.t_end});
    knot_a.insert(knot_a.end(), {p.level, p.level});
  }
  const Eigen::Index n = r.t.size();
  Eigen::VectorXd alpha(n), rate(n);
  for (Eigen::Index i = 0; i < n; ++i) {
    const auto hi = std::upper_bound(knot_t.begin(), knot_t.end(), r.t[i]) - knot_t.begin();
    if (hi == 0 || hi == static_cast<std::ptrdiff_t>(knot_t.size())) {
      alpha[i] = hi == 0 ? knot_a.front() : knot_a.back();
      rate[i] = 0;
      continue;
    }
    const auto lo = static_cast<std::size_t>(hi - 1), up = static_cast<std::size_t>(hi);
    rate[i] = (knot_a[up] - knot_a[lo]) / (knot_t[up] - knot_t[lo]);
    alpha[i] = knot_a[lo] + rate[i] * (r.t[i] - knot_t[lo]);
  }
  Table table;
  table.add({"plateau", "1", index})
      .add({"t_start_s", "s", t0})
      .add({"t_end_s", "s", t1})
      .add({"t_average_start_s", "s", t_avg})
      .add({"alpha_deg", "deg", level})
      .add({"alpha_std_deg", "deg", spread})
      .add({"samples", "1", samples})
      .add({"direction", "", direction});
  s.put("motion/plateaus", std::move(table));
  s.put("motion/alpha_deg", Series{std::move(alpha), "deg"}, {{"source", std::string("plateau levels")}});
  s.put("motion/alpha_rate_deg_s", Series{std::move(rate), "deg/s"}, {{"source", std::string("plateau levels")}});
  double lo = level.front(), hi = level.front(), sum = 0;
  for (double l : level) {
    lo = std::min(lo, l);
    hi = std::max(hi, l);
    sum += l;
  }
  s.put("run/motion", Text{motion});
  s.put("run/alpha_mean_deg", Scalar{sum / static_cast<double>(m), "deg"});
  s.put("run/alpha_amp_deg", Scalar{0.5 * (hi - lo), "deg"});
  s.put("run/freq_hz", Scalar{0.0, "Hz"});
  s.put("run/k", Scalar{0.0, "1"});
}

}  // namespace

// --- MotionFit ---------------------------------------------------------------

// theta(t) with node interval k (nt[k-1] <= t < nt[k]) found from a first
// guess; `k` is updated, so a caller walking ascending times searches little.
double MotionFit::theta_near(double t, std::size_t& k) const {
  const double omega = 2 * kPi * freq_hz;
  const auto& nt = node_t_s;
  if (nt.empty()) return omega * t + sine_phase_rad;
  if (t <= nt.front()) return node_theta_rad.front() + omega * (t - nt.front());
  if (t >= nt.back()) return node_theta_rad.back() + omega * (t - nt.back());
  if (k < 1 || k >= nt.size() || t < nt[k - 1])
    k = static_cast<std::size_t>(std::upper_bound(nt.begin(), nt.end(), t) - nt.begin());
  while (nt[k] <= t) ++k;
  const double u = (t - nt[k - 1]) / (nt[k] - nt[k - 1]);
  return node_theta_rad[k - 1] + u * (node_theta_rad[k] - node_theta_rad[k - 1]);
}

double MotionFit::theta(double t) const {
  std::size_t k = 0;
  return theta_near(t, k);
}

double MotionFit::theta_rate(double t) const {
  const auto& nt = node_t_s;
  if (nt.empty() || t <= nt.front() || t >= nt.back()) return 2 * kPi * freq_hz;
  const auto k = static_cast<std::size_t>(std::upper_bound(nt.begin(), nt.end(), t) - nt.begin());
  return (node_theta_rad[k] - node_theta_rad[k - 1]) / (nt[k] - nt[k - 1]);
}

double MotionFit::time_at_theta(double th) const {
  const double omega = 2 * kPi * freq_hz;
  const auto& nh = node_theta_rad;
  if (nh.empty()) return (th - sine_phase_rad) / omega;
  if (th <= nh.front()) return node_t_s.front() + (th - nh.front()) / omega;
  if (th >= nh.back()) return node_t_s.back() + (th - nh.back()) / omega;
  const auto k = static_cast<std::size_t>(std::upper_bound(nh.begin(), nh.end(), th) - nh.begin());
  const double u = (th - nh[k - 1]) / (nh[k] - nh[k - 1]);
  return node_t_s[k - 1] + u * (node_t_s[k] - node_t_s[k - 1]);
}

MotionFit::CyclePhase MotionFit::from_turns(double turns) const {
  const auto c = static_cast<std::int64_t>(std::floor(turns + 1e-9));
  const double p = 360.0 * (turns - std::floor(turns));
  return {c >= 0 && c < cycles ? c : -1, p >= 360.0 ? 0.0 : p};
}

MotionFit::CyclePhase MotionFit::at(double t) const {
  return from_turns((theta(t) - theta(cycle_origin_s)) / (2 * kPi));
}

std::vector<MotionFit::CyclePhase> MotionFit::at(std::span<const double> t) const {
  const double origin = theta(cycle_origin_s);
  std::vector<CyclePhase> out(t.size());
  std::size_t k = 0;
  for (std::size_t i = 0; i < t.size(); ++i) out[i] = from_turns((theta_near(t[i], k) - origin) / (2 * kPi));
  return out;
}

double MotionFit::cycle_start_s(std::int64_t c) const {
  if (node_t_s.empty()) return cycle_origin_s + static_cast<double>(c) / freq_hz;
  return time_at_theta(theta(cycle_origin_s) + 2 * kPi * static_cast<double>(c));
}

double MotionFit::alpha_deg(double t) const {
  const double th = theta(t);
  double a = alpha_mean_deg + alpha_amp_deg * std::sin(th);
  for (std::size_t j = 0; j < harmonic_sin_deg.size(); ++j) {
    const double h = static_cast<double>(j + 2);
    a += harmonic_sin_deg[j] * std::sin(h * th) + harmonic_cos_deg[j] * std::cos(h * th);
  }
  return a;
}

double MotionFit::alpha_rate_deg_s(double t) const {
  const double th = theta(t);
  double d = alpha_amp_deg * std::cos(th);
  for (std::size_t j = 0; j < harmonic_sin_deg.size(); ++j) {
    const double h = static_cast<double>(j + 2);
    d += h * (harmonic_sin_deg[j] * std::cos(h * th) - harmonic_cos_deg[j] * std::sin(h * th));
  }
  return theta_rate(t) * d;
}

MotionFit MotionFit::from_store(const RunStore& store, const std::string& needed_by) {
  if (!store.contains("motion/fit")) {
    const std::string motion = store.contains("run/motion") ? store.get<Text>("run/motion").value : "unknown";
    throw InputError("[" + needed_by + "]", "needs a periodic pitch motion, but [motion] found the run's motion to be '" +
                                                motion + "' (disable [" + needed_by + "] for this run)");
  }
  const Entry& e = store.entry("motion/fit");
  MotionFit m;
  m.freq_hz = attribute_number(e.attributes, "freq_hz");
  m.alpha_mean_deg = attribute_number(e.attributes, "alpha_mean_deg");
  m.alpha_amp_deg = attribute_number(e.attributes, "alpha_amp_deg");
  m.sine_phase_rad = attribute_number(e.attributes, "sine_phase_rad");
  m.cycle_origin_s = attribute_number(e.attributes, "cycle_origin_s");
  m.cycles = static_cast<std::int64_t>(attribute_number(e.attributes, "cycles"));
  const Table& table = std::get<Table>(e.value);
  const auto& order = table.integers("harmonic");
  for (std::size_t i = 0; i < order.size(); ++i) {
    if (order[i] < 2) continue;
    m.harmonic_sin_deg.push_back(table.numbers("sin_deg")[i]);
    m.harmonic_cos_deg.push_back(table.numbers("cos_deg")[i]);
  }
  if (store.contains("motion/phase_nodes")) {
    const Table& nodes = store.get<Table>("motion/phase_nodes");
    m.node_t_s = nodes.numbers("t_s");
    m.node_theta_rad = nodes.numbers("theta_rad");
  }
  return m;
}

// --- MotionStage -------------------------------------------------------------

void MotionStage::configure(ConfigSection& s) {
  type_where_ = s.where("type");
  options_.type = s.choice("type", {"auto", "sine", "ramp", "static", "staircase"}, options_.type);
  options_.harmonics = s.integer("harmonics", options_.harmonics);
  s.require(options_.harmonics >= 1 && options_.harmonics <= 20, "harmonics",
            "expected the number of terms of the periodic fit, fundamental included, from 1 to 20");
  options_.max_residual_fraction = s.number("max_residual_fraction", options_.max_residual_fraction);
  s.require(options_.max_residual_fraction > 0 && options_.max_residual_fraction < 1, "max_residual_fraction",
            "expected a fraction between 0 and 1");
  options_.plateau_tolerance_deg = s.number("plateau_tolerance_deg", options_.plateau_tolerance_deg);
  s.require(options_.plateau_tolerance_deg > 0 && options_.plateau_tolerance_deg < 10, "plateau_tolerance_deg",
            "expected an angle band in degrees, > 0 and < 10");
  options_.plateau_min_duration_s = s.number("plateau_min_duration_s", options_.plateau_min_duration_s);
  s.require(options_.plateau_min_duration_s > 0, "plateau_min_duration_s", "expected a duration > 0 s");
  options_.phase = s.choice("phase", {"per_cycle", "fitted"}, options_.phase);
  options_.plateau_settle_s = s.number("plateau_settle_s", options_.plateau_settle_s);
  s.require(options_.plateau_settle_s >= 0 && options_.plateau_settle_s < options_.plateau_min_duration_s,
            "plateau_settle_s", "expected a settling time >= 0 and shorter than plateau_min_duration_s");
}

std::vector<std::string> MotionStage::inputs() const {
  return {"signals/time_s", kAngleKey, "run/chord_m", "run/U_inf_m_s"};
}

std::vector<std::string> MotionStage::outputs() const {
  std::vector<std::string> out = {"motion/alpha_deg", "motion/alpha_rate_deg_s", "run/motion", "run/alpha_mean_deg",
                                  "run/alpha_amp_deg", "run/freq_hz", "run/k"};
  const std::string& t = options_.type;
  if (t == "auto" || t == "sine" || t == "ramp")
    out.insert(out.end(), {"motion/fit", "motion/phase_deg", "motion/cycle", "motion/phase_nodes"});
  if (t == "auto" || t == "ramp") out.push_back("motion/ramps");
  if (t == "auto" || t == "static" || t == "staircase") out.push_back("motion/plateaus");
  if (t == "auto" || t == "ramp")
    out.insert(out.end(), {"motion/ramp_start_s", "motion/ramp_end_s", "motion/ramp_alpha_start_deg",
                           "motion/ramp_alpha_end_deg", "motion/ramp_rate_deg_s", "motion/ramp_rate_nondim",
                           "motion/ramp_residual_deg"});
  return out;
}

void MotionStage::run(RunContext& context) {
  RunStore& s = context.store();
  const Eigen::VectorXd& t = s.get<Series>("signals/time_s").values;
  const Eigen::VectorXd& alpha = s.get<Series>(kAngleKey).values;
  // The DAQ file and channel the angle came from, when the producer says.
  const Attributes& angle_attributes = s.entry(kAngleKey).attributes;
  const auto source = angle_attributes.find("source");
  const std::string where = source != angle_attributes.end() && std::holds_alternative<std::string>(source->second)
                                ? std::get<std::string>(source->second) + " (role angle)"
                                : std::string(kAngleKey);
  if (alpha.size() != t.size())
    throw std::logic_error("signals/alpha_deg and signals/time_s differ in length");
  Eigen::Index finite = 0;
  double lo = INFINITY, hi = -INFINITY;
  for (double a : alpha)
    if (std::isfinite(a)) {
      ++finite;
      lo = std::min(lo, a);
      hi = std::max(hi, a);
    }
  if (finite < 20 || 2 * finite < alpha.size())
    throw InputError(where, "only " + std::to_string(finite) + " of " + std::to_string(alpha.size()) +
                                    " angle samples are finite numbers (angle channel dead or missing?)");
  const std::string& type = options_.type;
  if (hi == lo && type != "static")
    throw InputError(where, "the angle is exactly constant (" + num(lo) + " deg over " +
                                    std::to_string(alpha.size()) +
                                    " samples): a dead encoder? If the run is static, set [motion] type = \"static\"");
  const Record r{t, alpha, s.get<Scalar>("run/chord_m").value, s.get<Scalar>("run/U_inf_m_s").value};

  std::vector<std::string> reasons;
  if (type == "static" || type == "auto") {
    Trial trial = try_static(r, options_);
    if (trial.fits) {
      std::vector<double> v;
      for (double a : alpha)
        if (std::isfinite(a)) v.push_back(a);
      numerics::Plateau whole;
      whole.begin = 0;
      whole.end = alpha.size();
      whole.t_start = t[0];
      whole.t_end = t[t.size() - 1];
      whole.level = numerics::mean(v);
      whole.std = numerics::sample_std(v);
      write_plateaus(s, r, {whole}, "static");
      return;
    }
    reasons.push_back(trial.why);
  }
  const MotionWindow window = motion_window(r, options_);
  if (type == "sine" || type == "auto") {
    Trial trial;
    auto fit = try_sine(r, window, options_, trial);
    if (trial.fits) {
      // A ramp-and-hold motion is close enough to a sine to pass: it is a
      // ramp when ramps fitted cycle by cycle leave less than half the misfit.
      if (type == "auto") {
        Trial ramp_trial;
        auto ramps = try_periodic_ramp(r, window, *fit, ramp_trial, options_);
        if (ramp_trial.fits && ramps->rms_misfit < 0.5 * fit->rms_residual_fundamental) {
          Trial series_trial;
          if (auto series = fit_ramp_series(r, window, series_trial)) {
            auto refined = try_periodic_ramp(r, window, *series, series_trial, options_);
            if (series_trial.fits) return write_periodic_ramp(s, r, window, *refined);
          }
        }
      }
      return write_sine(s, r, window, *fit, options_.phase == "per_cycle");
    }
    reasons.push_back(trial.why);
  }
  if (type == "ramp" || type == "auto") {
    // A periodic ramp first; a single ramp between two holds is tried last.
    Trial trial;
    if (auto series = fit_ramp_series(r, window, trial)) {
      auto ramps = try_periodic_ramp(r, window, *series, trial, options_);
      if (trial.fits) return write_periodic_ramp(s, r, window, *ramps);
    }
    reasons.push_back(trial.why);
  }
  if (type == "staircase" || type == "auto") {
    Trial trial;
    auto plateaus = try_staircase(r, options_, type == "staircase", trial);
    if (trial.fits) return write_plateaus(s, r, plateaus, "staircase");
    reasons.push_back(trial.why);
  }
  if (type == "ramp" || type == "auto") {
    Trial trial;
    auto ramp = try_ramp(r, options_, trial);
    if (trial.fits) return write_ramp(s, r, *ramp);
    reasons.push_back(trial.why);
  }
  std::string why;
  for (const auto& reason : reasons) why += (why.empty() ? "" : "; ") + reason;
  if (type == "auto")
    throw InputError(where, "the pitch motion is none of sine, ramp, static angle or staircase: " + why +
                                    ". Check the angle channel, or force a type with [motion] type = ...");
  throw InputError(type_where_, "type = \"" + type + "\" does not fit the angle (" + where + "): " + why);
}

}  // namespace stallscope
