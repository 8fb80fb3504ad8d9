#include "stages/events/events_stage.hpp"

#include <algorithm>
#include <cmath>
#include <cstdio>
#include <map>
#include <numbers>

#include "pipeline/errors.hpp"
#include "pipeline/hdf5.hpp"
#include "stages/events/cycle_events.hpp"
#include "stages/events/event_summary.hpp"
#include "stages/events/lowpass.hpp"
#include "stages/motion.hpp"
#include "stages/theory/theodorsen.hpp"

namespace stallscope {

namespace {

using events::kNaN;
constexpr double kDegToRad = std::numbers::pi / 180.0;

std::string num(double v, int digits = 4) {
  char buf[64];
  std::snprintf(buf, sizeof buf, "%.*g", digits, v);
  return buf;
}

// A numeric column as doubles, whether stored as numbers or integers.
std::vector<double> as_doubles(const Table& t, const std::string& name, const std::string& key) {
  const Column* c = t.find(name);
  if (!c) throw InputError(key, "table has no column '" + name + "'");
  if (const auto* d = std::get_if<std::vector<double>>(&c->data)) return *d;
  if (const auto* i = std::get_if<std::vector<std::int64_t>>(&c->data)) return {i->begin(), i->end()};
  throw InputError(key, "column '" + name + "' is not numeric");
}

double attribute_number(const Attributes& a, const std::string& name) {
  auto it = a.find(name);
  if (it == a.end()) return kNaN;
  if (const double* d = std::get_if<double>(&it->second)) return *d;
  if (const std::int64_t* i = std::get_if<std::int64_t>(&it->second)) return static_cast<double>(*i);
  return kNaN;
}

// Non-finite samples are bridged linearly so the filter can run; returns how many.
std::int64_t bridge_gaps(Eigen::VectorXd& y) {
  std::int64_t bridged = 0;
  const Eigen::Index n = y.size();
  Eigen::Index last = -1;
  for (Eigen::Index i = 0; i < n; ++i) {
    if (!std::isfinite(y[i])) continue;
    if (last < 0) {
      for (Eigen::Index j = 0; j < i; ++j) y[j] = y[i];
      bridged += i;
    } else if (i - last > 1) {
      for (Eigen::Index j = last + 1; j < i; ++j)
        y[j] = y[last] + (y[i] - y[last]) * static_cast<double>(j - last) / static_cast<double>(i - last);
      bridged += i - last - 1;
    }
    last = i;
  }
  if (last < 0) return -1;
  for (Eigen::Index j = last + 1; j < n; ++j) y[j] = y[last], ++bridged;
  return bridged;
}

// A signal filtered once, with the noise left in it.
struct Filtered {
  Eigen::VectorXd y;
  double noise = 0;
};
Filtered filter_signal(const events::ZeroPhaseLowpass& f, Eigen::VectorXd raw, const std::string& key) {
  if (bridge_gaps(raw) < 0) throw InputError(key, "no finite sample to detect events on");
  Filtered out;
  out.y = f.apply(raw);
  const double rms = std::sqrt((raw - out.y).squaredNorm() / static_cast<double>(raw.size()));
  out.noise = rms * f.white_noise_gain();
  return out;
}

double sample_rate(const Eigen::VectorXd& t, const std::string& key) {
  if (t.size() < 16 || !(t[t.size() - 1] > t[0])) throw InputError(key, "too few samples, or time not increasing");
  return static_cast<double>(t.size() - 1) / (t[t.size() - 1] - t[0]);
}

// The static stall angle and lift slope the events are measured against, and where they came from.
struct StaticReference {
  double stall_angle_deg = kNaN;
  std::string stall_source;
  double lift_slope_per_rad = kNaN, zero_lift_deg = kNaN;
  std::string slope_source;
};

// From a static_polar/summary table (store or archive): the up-sweep row.
void from_polar(const Table& summary, const std::string& criterion, double primary_angle, const std::string& where,
                StaticReference& r) {
  const auto& dir = summary.texts("direction");
  std::size_t row = dir.size();
  for (std::size_t i = 0; i < dir.size(); ++i)
    if (dir[i] == "up") row = i;
  if (row == dir.size()) row = 0;
  if (dir.empty()) return;
  const std::string column = "alpha_" + criterion + "_deg";
  if (!std::isfinite(r.stall_angle_deg)) {
    const double a = summary.find(column) ? summary.numbers(column)[row] : primary_angle;
    if (std::isfinite(a)) {
      r.stall_angle_deg = a;
      r.stall_source = where + " (" + dir[row] + " sweep, criterion " + criterion + ")";
    }
  }
  if (!std::isfinite(r.lift_slope_per_rad) && summary.find("lift_slope_per_rad")) {
    r.lift_slope_per_rad = summary.numbers("lift_slope_per_rad")[row];
    r.zero_lift_deg = summary.numbers("zero_lift_angle_deg")[row];
    r.slope_source = where + " (" + dir[row] + " sweep)";
  }
}

// /static_polar/summary of a reduced static run's archive (only what the events use).
Table read_polar_summary(const std::filesystem::path& path, const std::string& where) {
  h5::File file = h5::File::open_read(path);
  const std::string g = "static_polar/summary";
  if (!h5::exists(file.id(), g))
    throw InputError(where, path.string() + " holds no /static_polar/summary (is it the archive of a reduced static run?)");
  Table t;
  t.add({"direction", "", h5::read_texts(file.id(), g + "/direction", file.name())});
  for (const char* c : {"lift_slope_per_rad", "zero_lift_angle_deg", "alpha_cl_max_deg", "alpha_cm_break_deg",
                        "alpha_linearity_deg"})
    if (h5::exists(file.id(), g + "/" + c)) t.add({c, "", h5::read_numbers(file.id(), g + "/" + c, file.name())});
  return t;
}

double read_polar_stall_angle(const std::filesystem::path& path) {
  h5::File file = h5::File::open_read(path);
  const auto v = h5::read_attribute(file.id(), "static_polar/summary", "static_stall_angle_deg");
  return v && std::holds_alternative<double>(*v) ? std::get<double>(*v) : kNaN;
}

}  // namespace

void EventsStage::configure(ConfigSection& s) {
  Options& o = options_;
  lowpass_where_ = s.where("lowpass_harmonics");
  o.lowpass_harmonics = s.number("lowpass_harmonics", o.lowpass_harmonics);
  s.require(o.lowpass_harmonics >= 2 && o.lowpass_harmonics <= 100, "lowpass_harmonics",
            "expected the filter cut-off in multiples of the pitch frequency, from 2 to 100");
  o.persistence_conv = s.number("persistence_conv", o.persistence_conv);
  s.require(o.persistence_conv >= 0 && o.persistence_conv <= 5, "persistence_conv",
            "expected a persistence time from 0 to 5 convective times c/U");
  stall_angle_where_ = s.where("static_stall_angle_deg");
  if (s.has("static_stall_angle_deg")) {
    o.static_stall_angle_deg = s.number("static_stall_angle_deg");
    s.require(o.static_stall_angle_deg > -30 && o.static_stall_angle_deg < 60, "static_stall_angle_deg",
              "expected a static stall angle in degrees, between -30 and 60");
  }
  polar_where_ = s.where("static_polar");
  o.static_polar = s.optional_path("static_polar");
  o.static_stall_criterion =
      s.choice("static_stall_criterion", {"cl_max", "cm_break", "linearity"}, o.static_stall_criterion);
  if (s.has("lift_slope_per_rad")) {
    o.lift_slope_per_rad = s.number("lift_slope_per_rad");
    s.require(o.lift_slope_per_rad > 1 && o.lift_slope_per_rad < 10, "lift_slope_per_rad",
              "expected a lift-curve slope per radian between 1 and 10 (thin-airfoil theory: 2 pi)");
  }
  if (s.has("zero_lift_angle_deg")) {
    o.zero_lift_angle_deg = s.number("zero_lift_angle_deg");
    s.require(std::abs(o.zero_lift_angle_deg) <= 10, "zero_lift_angle_deg",
              "expected a zero-lift angle within +-10 deg");
  }
  o.moment_stall_delta = s.number("moment_stall_delta", o.moment_stall_delta);
  s.require(o.moment_stall_delta > 0 && o.moment_stall_delta <= 0.5, "moment_stall_delta",
            "expected a drop in Cm greater than 0 and at most 0.5 (common practice 0.05)");
  o.le_region_x_over_c = s.number("le_region_x_over_c", o.le_region_x_over_c);
  s.require(o.le_region_x_over_c > 0 && o.le_region_x_over_c <= 0.3, "le_region_x_over_c",
            "expected a chordwise extent greater than 0 and at most 0.3");
  o.le_collapse_fraction = s.number("le_collapse_fraction", o.le_collapse_fraction);
  s.require(o.le_collapse_fraction > 0 && o.le_collapse_fraction < 1, "le_collapse_fraction",
            "expected a fraction of the suction peak between 0 and 1");
  o.onset_criterion = s.choice("onset_criterion", {"moment_stall", "lift_peak", "normal_force_peak", "le_suction_collapse"},
                               o.onset_criterion);
  o.secondary_peak_prominence = s.number("secondary_peak_prominence", o.secondary_peak_prominence);
  s.require(o.secondary_peak_prominence > 0 && o.secondary_peak_prominence <= 2, "secondary_peak_prominence",
            "expected a prominence in Cn greater than 0 and at most 2");
  o.reattachment_tolerance = s.number("reattachment_tolerance", o.reattachment_tolerance);
  s.require(o.reattachment_tolerance > 0 && o.reattachment_tolerance <= 1, "reattachment_tolerance",
            "expected a tolerance in Cl greater than 0 and at most 1");
  o.reattachment_sustain_conv = s.number("reattachment_sustain_conv", o.reattachment_sustain_conv);
  s.require(o.reattachment_sustain_conv > 0 && o.reattachment_sustain_conv <= 50, "reattachment_sustain_conv",
            "expected a time greater than 0 and at most 50 convective times");
  o.reattachment_search_periods = s.number("reattachment_search_periods", o.reattachment_search_periods);
  s.require(o.reattachment_search_periods >= 0 && o.reattachment_search_periods <= 1, "reattachment_search_periods",
            "expected how far into the next cycle to look, from 0 to 1 period");
  o.convection_taps_x_over_c = s.numbers("convection_taps_x_over_c", o.convection_taps_x_over_c);
  s.require(o.convection_taps_x_over_c.size() == 2 && o.convection_taps_x_over_c[0] >= 0 &&
                o.convection_taps_x_over_c[0] < o.convection_taps_x_over_c[1] && o.convection_taps_x_over_c[1] <= 1,
            "convection_taps_x_over_c", "expected [first, last] x/c of the taps used, 0 <= first < last <= 1");
  o.te_x_over_c = s.number("te_x_over_c", o.te_x_over_c);
  s.require(o.te_x_over_c > 0 && o.te_x_over_c <= 1.5, "te_x_over_c", "expected an x/c greater than 0, at most 1.5");
  o.reattachment_criterion = s.choice("reattachment_criterion", {"loads", "pressure"}, o.reattachment_criterion);
  o.reattachment_suction_fraction = s.number("reattachment_suction_fraction", o.reattachment_suction_fraction);
  s.require(o.reattachment_suction_fraction > 0 && o.reattachment_suction_fraction < 1,
            "reattachment_suction_fraction", "expected a fraction of the upstroke's suction, between 0 and 1");
  o.reattachment_cp_tolerance = s.number("reattachment_cp_tolerance", o.reattachment_cp_tolerance);
  s.require(o.reattachment_cp_tolerance > 0 && o.reattachment_cp_tolerance <= 1, "reattachment_cp_tolerance",
            "expected a tolerance in Cp greater than 0 and at most 1");
  o.reattachment_aft_x_over_c = s.number("reattachment_aft_x_over_c", o.reattachment_aft_x_over_c);
  s.require(o.reattachment_aft_x_over_c >= 0.5 && o.reattachment_aft_x_over_c < 1, "reattachment_aft_x_over_c",
            "expected a chordwise position x/c from 0.5 to 1");
  o.convection_cutoff_strouhal = s.number("convection_cutoff_strouhal", o.convection_cutoff_strouhal);
  s.require(o.convection_cutoff_strouhal >= 0.05 && o.convection_cutoff_strouhal <= 5, "convection_cutoff_strouhal",
            "expected the convection taps' cut-off f c / U from 0.05 to 5");
  o.bootstrap_resamples = s.integer("bootstrap_resamples", o.bootstrap_resamples);
  s.require(o.bootstrap_resamples >= 100 && o.bootstrap_resamples <= 1000000, "bootstrap_resamples",
            "expected from 100 to 1000000 resamples");
  o.bootstrap_seed = s.integer("bootstrap_seed", o.bootstrap_seed);
  s.require(o.bootstrap_seed >= 0, "bootstrap_seed", "expected a seed >= 0");
}

std::vector<std::string> EventsStage::inputs() const {
  return {"loads/time_s", "loads/cl", "loads/cn", "loads/cm", "run/chord_m", "run/U_inf_m_s", "run/motion"};
}

std::vector<std::string> EventsStage::optional_inputs() const {
  return {"cycles",
          "motion/fit",
          "motion/ramp_start_s",
          "motion/ramp_end_s",
          "motion/ramp_alpha_start_deg",
          "motion/ramp_alpha_end_deg",
          "motion/ramp_rate_deg_s",
          "motion/ramp_residual_deg",
          "motion/ramps",
          "pressure/time_s",
          "pressure/cp",
          "pressure/taps",
          "static_polar/summary",
          "vortex/events_per_cycle",
          "run/pivot_x_over_c"};
}

std::vector<std::string> EventsStage::outputs() const {
  return {"events/per_cycle", "events/summary", "events/running_mean", "events/alignment"};
}

void EventsStage::run(RunContext& context) {
  const Options& o = options_;
  RunStore& s = context.store();
  const Eigen::VectorXd& t = s.get<Series>("loads/time_s").values;
  const double fs = sample_rate(t, "loads/time_s");
  const double chord = s.get<Scalar>("run/chord_m").value, speed = s.get<Scalar>("run/U_inf_m_s").value;
  const std::string motion_type = s.get<Text>("run/motion").value;
  // A single ramp is one "cycle"; a periodic ramp-and-hold has cycles like a sine, its angle from its ramps.
  const bool periodic_ramp = motion_type == "ramp" && s.contains("motion/fit") && s.contains("motion/ramps");
  const bool ramp = motion_type == "ramp" && !periodic_ramp;
  if (motion_type != "sine" && !ramp && !periodic_ramp)
    throw InputError("[events]", "needs a periodic or ramp pitch motion, but [motion] found '" + motion_type +
                                     "' (disable [events] for a static run)");

  // The motion: angle, rate, phase and the cycles (a ramp is one).
  std::function<double(double)> alpha, rate, phase;
  double pitch_hz = 0, crossing_sigma = 1 / (fs * std::sqrt(12.0));
  struct Span {
    std::int64_t cycle;
    double t_start, t_end, convective_per_s;
    bool valid;
    std::string reason;
  };
  std::vector<Span> spans;
  std::optional<MotionFit> fit;
  if (!ramp) {
    fit = MotionFit::from_store(s, "events");
    alpha = [m = *fit](double x) { return m.alpha_deg(x); };
    rate = [m = *fit](double x) { return m.alpha_rate_deg_s(x); };
    if (periodic_ramp) {
      // Each stroke a straight line from its start to its end, holds between.
      const Table& r = s.get<Table>("motion/ramps");
      struct Stroke {
        double t0, t1, a0, a1;
      };
      std::vector<Stroke> strokes;
      for (std::size_t i = 0; i < r.rows(); ++i)
        strokes.push_back({r.numbers("t_start_s")[i], r.numbers("t_end_s")[i], r.numbers("alpha_start_deg")[i],
                           r.numbers("alpha_end_deg")[i]});
      std::sort(strokes.begin(), strokes.end(), [](const Stroke& a, const Stroke& b) { return a.t0 < b.t0; });
      if (strokes.empty()) throw InputError("motion/ramps", "a periodic ramp motion without ramps");
      auto stroke_at = [strokes](double x) {
        auto it = std::upper_bound(strokes.begin(), strokes.end(), x, [](double v, const Stroke& st) { return v < st.t0; });
        return it == strokes.begin() ? strokes.front() : *(it - 1);
      };
      alpha = [stroke_at, first = strokes.front()](double x) {
        if (x < first.t0) return first.a0;
        const Stroke st = stroke_at(x);
        return x >= st.t1 ? st.a1 : st.a0 + (st.a1 - st.a0) * (x - st.t0) / (st.t1 - st.t0);
      };
      rate = [stroke_at](double x) {
        const Stroke st = stroke_at(x);
        return x > st.t0 && x < st.t1 ? (st.a1 - st.a0) / (st.t1 - st.t0) : 0.0;
      };
    }
    phase = [m = *fit](double x) { return m.phase_deg(x); };
    pitch_hz = fit->freq_hz;
    const double phase_error_deg = attribute_number(s.entry("motion/fit").attributes, "sine_phase_error_deg");
    if (std::isfinite(phase_error_deg))
      crossing_sigma = std::hypot(crossing_sigma, phase_error_deg / 360.0 / pitch_hz);
    if (!s.contains("cycles"))
      throw InputError("[events]", "needs the cycles of a periodic run: enable [cycles]");
    const Table& cycles = s.get<Table>("cycles");
    const auto number = as_doubles(cycles, "cycle", "cycles"), t0 = as_doubles(cycles, "t_start_s", "cycles"),
               t1 = as_doubles(cycles, "t_end_s", "cycles"), valid = as_doubles(cycles, "valid", "cycles");
    const std::vector<double> u = cycles.find("U_m_s") ? as_doubles(cycles, "U_m_s", "cycles")
                                                       : std::vector<double>(number.size(), speed);
    const std::vector<std::string> reasons = cycles.find("reason") ? cycles.texts("reason")
                                                                   : std::vector<std::string>(number.size());
    std::string why;
    for (std::size_t i = 0; i < number.size(); ++i) {
      spans.push_back({static_cast<std::int64_t>(number[i]), t0[i], t1[i],
                       (std::isfinite(u[i]) && u[i] > 0 ? u[i] : speed) / chord, valid[i] != 0, reasons[i]});
      if (valid[i] == 0 && why.size() < 300) why += "; cycle " + num(number[i]) + ": " + reasons[i];
    }
    if (std::none_of(spans.begin(), spans.end(), [](const Span& sp) { return sp.valid; }))
      throw InputError("cycles", "none of the " + std::to_string(spans.size()) +
                                     " cycles is valid, so there are no events to detect" + why);
  } else {
    if (!s.contains("motion/ramp_start_s") || !s.contains("motion/ramp_end_s"))
      throw InputError("[events]", "the run is a ramp but [motion] gave neither its cycles nor its start and end");
    const double ts = s.get<Scalar>("motion/ramp_start_s").value, te = s.get<Scalar>("motion/ramp_end_s").value;
    const double a0 = s.get<Scalar>("motion/ramp_alpha_start_deg").value;
    const double a1 = s.get<Scalar>("motion/ramp_alpha_end_deg").value;
    const double r = (a1 - a0) / (te - ts);
    alpha = [=](double x) { return x <= ts ? a0 : x >= te ? a1 : a0 + r * (x - ts); };
    rate = [=](double x) { return x > ts && x < te ? r : 0.0; };
    phase = [](double) { return kNaN; };
    // A ramp is half a cycle of a motion of period 2 (te - ts): the filter's reference frequency.
    pitch_hz = 1 / (2 * (te - ts));
    if (s.contains("motion/ramp_residual_deg") && r != 0)
      crossing_sigma = std::hypot(crossing_sigma, s.get<Scalar>("motion/ramp_residual_deg").value / std::abs(r));
    spans.push_back({0, ts, t[t.size() - 1], speed / chord, true, ""});
  }

  // The one low-pass filter.
  const double cutoff = o.lowpass_harmonics * pitch_hz;
  if (!(cutoff < 0.45 * fs))
    throw InputError(lowpass_where_, "a cut-off of " + num(o.lowpass_harmonics) + " x " + num(pitch_hz) + " Hz = " +
                                         num(cutoff) + " Hz is not below 0.45 x the sample rate (" + num(fs) +
                                         " Hz): lower lowpass_harmonics");
  const events::ZeroPhaseLowpass filter(cutoff, fs);
  const Filtered cl = filter_signal(filter, s.get<Series>("loads/cl").values, "loads/cl");
  const Filtered cn = filter_signal(filter, s.get<Series>("loads/cn").values, "loads/cn");
  const Filtered cm = filter_signal(filter, s.get<Series>("loads/cm").values, "loads/cm");
  const events::Trace cl_trace{t, cl.y, cl.noise}, cn_trace{t, cn.y, cn.noise}, cm_trace{t, cm.y, cm.noise};
  // Load samples bridged because Cl, Cn or Cm was not finite there, counted up to each sample:
  // a cycle with any is timed on interpolated loads, so its events are suspect, not ok.
  std::vector<std::int64_t> bridged_before(static_cast<std::size_t>(t.size()) + 1, 0);
  const Eigen::VectorXd &cl_raw = s.get<Series>("loads/cl").values, &cn_raw = s.get<Series>("loads/cn").values,
                        &cm_raw = s.get<Series>("loads/cm").values;
  for (Eigen::Index i = 0; i < t.size(); ++i) {
    const bool gap = !std::isfinite(cl_raw[i]) || !std::isfinite(cn_raw[i]) || !std::isfinite(cm_raw[i]);
    bridged_before[static_cast<std::size_t>(i) + 1] = bridged_before[static_cast<std::size_t>(i)] + (gap ? 1 : 0);
  }
  auto bridged_between = [&](double t0, double t1) {
    return bridged_before[static_cast<std::size_t>(events::index_at(t, t1))] -
           bridged_before[static_cast<std::size_t>(events::index_at(t, t0))];
  };

  // Static stall angle and lift slope: config, then a static-run archive, then this run's polar.
  StaticReference ref;
  if (std::isfinite(o.static_stall_angle_deg)) {
    ref.stall_angle_deg = o.static_stall_angle_deg;
    ref.stall_source = "config static_stall_angle_deg";
  }
  if (std::isfinite(o.lift_slope_per_rad)) {
    ref.lift_slope_per_rad = o.lift_slope_per_rad;
    ref.slope_source = "config lift_slope_per_rad";
  }
  if (o.static_polar) {
    const auto& path = context.raw_input(*o.static_polar, "static polar");
    from_polar(read_polar_summary(path, polar_where_), o.static_stall_criterion,
               read_polar_stall_angle(path), path.filename().string() + " /static_polar/summary", ref);
  }
  if (s.contains("static_polar/summary")) {
    const Entry& e = s.entry("static_polar/summary");
    from_polar(std::get<Table>(e.value), o.static_stall_criterion, attribute_number(e.attributes, "static_stall_angle_deg"),
               "static_polar/summary of this run", ref);
  }
  if (!std::isfinite(ref.stall_angle_deg))
    throw InputError(stall_angle_where_, "no static stall angle: give static_stall_angle_deg, or static_polar = "
                                         "the archive of the reduced static run");
  if (std::isfinite(o.zero_lift_angle_deg)) ref.zero_lift_deg = o.zero_lift_angle_deg;
  if (!std::isfinite(ref.lift_slope_per_rad)) {
    ref.lift_slope_per_rad = 2 * std::numbers::pi;
    ref.slope_source = "thin-airfoil theory, 2 pi per rad (no static polar, no lift_slope_per_rad)";
  }
  if (!std::isfinite(ref.zero_lift_deg)) ref.zero_lift_deg = 0;

  // The attached-flow reference: Theodorsen's lift for each harmonic of the fitted motion, on the static slope.
  Eigen::VectorXd cl_reference, deviation;
  if (fit && !periodic_ramp) {
    const double pivot = s.contains("run/pivot_x_over_c") ? s.get<Scalar>("run/pivot_x_over_c").value : 0.25;
    const double omega = 2 * std::numbers::pi * fit->freq_hz, k = omega * chord / (2 * speed);
    const theory::LinearStaticPolar polar{ref.lift_slope_per_rad, ref.zero_lift_deg * kDegToRad, 0.0};
    const theory::LinearStaticPolar slope_only{ref.lift_slope_per_rad, 0.0, 0.0};
    struct Harmonic {
      theory::SinusoidalPitch motion;
      double shift_s;  // t' = t + shift_s puts the harmonic in the form A sin(omega_h t')
    };
    std::vector<Harmonic> harmonics;
    harmonics.push_back({{fit->alpha_mean_deg * kDegToRad, fit->alpha_amp_deg * kDegToRad, omega, k, pivot},
                         fit->sine_phase_rad / omega});
    for (std::size_t j = 0; j < fit->harmonic_sin_deg.size(); ++j) {
      const double h = static_cast<double>(j + 2), as = fit->harmonic_sin_deg[j], ac = fit->harmonic_cos_deg[j];
      harmonics.push_back({{0.0, std::hypot(as, ac) * kDegToRad, h * omega, h * k, pivot},
                           (h * fit->sine_phase_rad + std::atan2(ac, as)) / (h * omega)});
    }
    cl_reference.resize(t.size());
    for (Eigen::Index i = 0; i < t.size(); ++i) {
      double v = theory::attached_pitch_loads(harmonics[0].motion, polar, t[i] + harmonics[0].shift_s).cl;
      for (std::size_t j = 1; j < harmonics.size(); ++j)
        v += theory::attached_pitch_loads(harmonics[j].motion, slope_only, t[i] + harmonics[j].shift_s).cl;
      cl_reference[i] = v;
    }
    deviation = (cl.y - cl_reference).cwiseAbs();
  }
  const events::Trace deviation_trace{t, deviation, cl.noise};

  // Pressure taps: leading-edge suction and the chordwise suction peaks.
  Eigen::VectorXd le_suction, aft_cp;
  double le_noise = 0, aft_noise = 0;
  std::string no_aft = "no pressure taps in this run";
  std::vector<Filtered> tap_signals;
  std::vector<double> tap_x;
  std::string no_le = "no pressure taps in this run", no_taps = no_le;
  const Eigen::VectorXd* cp_t = nullptr;
  if (s.contains("pressure/cp") && s.contains("pressure/taps") && s.contains("pressure/time_s")) {
    cp_t = &s.get<Series>("pressure/time_s").values;
    const Matrix& cp = s.get<Matrix>("pressure/cp");
    const Table& taps = s.get<Table>("pressure/taps");
    const auto& names = taps.texts("tap");
    const auto& surface = taps.texts("surface");
    const auto& status = taps.texts("status");
    const auto& x = taps.numbers("x_over_c");
    const double cp_fs = sample_rate(*cp_t, "pressure/time_s");
    const events::ZeroPhaseLowpass cp_filter(cutoff, cp_fs);
    const double convection_cutoff =
        std::min(std::max(cutoff, o.convection_cutoff_strouhal * speed / chord), 0.45 * cp_fs);
    const events::ZeroPhaseLowpass convection_filter(convection_cutoff, cp_fs);
    std::vector<Eigen::Index> le_columns;
    std::vector<std::pair<double, Eigen::Index>> aft;
    std::pair<double, Eigen::Index> aftmost{-1.0, -1};
    for (std::size_t r = 0; r < names.size(); ++r) {
      if (surface[r] != "upper" || status[r] != "ok") continue;
      const auto it = std::find(cp.columns.begin(), cp.columns.end(), names[r]);
      if (it == cp.columns.end()) continue;
      const auto col = static_cast<Eigen::Index>(it - cp.columns.begin());
      if (x[r] <= o.le_region_x_over_c) le_columns.push_back(col);
      if (x[r] >= o.convection_taps_x_over_c[0] && x[r] <= o.convection_taps_x_over_c[1]) aft.emplace_back(x[r], col);
      if (x[r] >= o.reattachment_aft_x_over_c && x[r] > aftmost.first) aftmost = {x[r], col};
    }
    if (le_columns.empty()) {
      no_le = "no working upper-surface tap at x/c <= " + num(o.le_region_x_over_c) + " (le_region_x_over_c)";
    } else {
      // The strongest suction among the leading-edge taps, sample by sample.
      Eigen::VectorXd raw(cp.values.rows());
      for (Eigen::Index i = 0; i < raw.size(); ++i) {
        double v = -INFINITY;
        for (Eigen::Index c : le_columns)
          if (std::isfinite(cp.values(i, c))) v = std::max(v, -cp.values(i, c));
        raw[i] = std::isfinite(v) ? v : kNaN;
      }
      Filtered f = filter_signal(cp_filter, raw, "pressure/cp");
      le_suction = std::move(f.y);
      le_noise = f.noise;
    }
    if (aftmost.second < 0) {
      no_aft = "no working upper-surface tap at x/c >= " + num(o.reattachment_aft_x_over_c) +
               " (reattachment_aft_x_over_c)";
    } else {
      Filtered f = filter_signal(cp_filter, cp.values.col(aftmost.second), "pressure/cp");
      aft_cp = std::move(f.y);
      aft_noise = f.noise;
    }
    std::sort(aft.begin(), aft.end());
    if (aft.size() < 3) {
      no_taps = "only " + std::to_string(aft.size()) + " working upper-surface taps in x/c " +
                num(o.convection_taps_x_over_c[0]) + " to " + num(o.convection_taps_x_over_c[1]) + " (3 needed)";
    } else {
      for (const auto& [xc, col] : aft) {
        tap_signals.push_back(filter_signal(convection_filter, cp.values.col(col), "pressure/cp"));
        tap_x.push_back(xc);
      }
    }
  }
  const Eigen::VectorXd empty;
  const events::Trace le_trace{cp_t ? *cp_t : empty, le_suction, le_noise};
  const events::Trace aft_trace{cp_t ? *cp_t : empty, aft_cp, aft_noise};

  events::CycleInputs in;
  in.cl = &cl_trace;
  in.cn = &cn_trace;
  in.cm = &cm_trace;
  in.cl_deviation = cl_reference.size() ? &deviation_trace : nullptr;
  in.no_reference_reason = "no attached-flow reference for a ramp-and-hold motion (the Theodorsen reference "
                           "needs a sinusoidal pitch)";
  in.le_suction = le_suction.size() ? &le_trace : nullptr;
  in.no_le_reason = no_le;
  in.aft_cp = aft_cp.size() ? &aft_trace : nullptr;
  in.no_aft_reason = no_aft;
  for (std::size_t j = 0; j < tap_signals.size(); ++j)
    in.convection_taps.push_back({tap_x[j], events::Trace{*cp_t, tap_signals[j].y, tap_signals[j].noise}});
  in.no_taps_reason = no_taps;
  in.alpha_deg = alpha;
  in.rate_deg_s = rate;
  in.static_stall_angle_deg = ref.stall_angle_deg;
  in.crossing_sigma_s = crossing_sigma;
  events::Thresholds th;
  th.persistence_s = o.persistence_conv * chord / speed;
  th.moment_stall_delta = o.moment_stall_delta;
  th.le_collapse_fraction = o.le_collapse_fraction;
  th.onset_criterion = o.onset_criterion;
  th.secondary_peak_prominence = o.secondary_peak_prominence;
  th.reattachment_tolerance = o.reattachment_tolerance;
  th.reattachment_sustain_s = o.reattachment_sustain_conv * chord / speed;
  th.te_x_over_c = o.te_x_over_c;
  th.reattachment_suction_fraction = o.reattachment_suction_fraction;
  th.reattachment_cp_tolerance = o.reattachment_cp_tolerance;
  th.reattachment_criterion = o.reattachment_criterion;

  // Per cycle.
  std::map<std::int64_t, const Span*> by_cycle;
  for (const Span& sp : spans) by_cycle[sp.cycle] = &sp;
  std::vector<events::EventRecord> records;
  auto record = [&](const events::EventRow& r) {
    const Span* sp = by_cycle.count(r.cycle) ? by_cycle.at(r.cycle) : nullptr;
    events::EventRecord e{r.cycle, r.event, r.status, r.reason, r.t_s, kNaN, r.t_uncertainty_s, kNaN, kNaN, r.value,
                          kNaN};
    // Last guard: a found event has a finite time, never a NaN that the statistics would skip.
    if (e.status != "missing" && !std::isfinite(e.t_s)) {
      e.reason = "its time is not a finite number" + (e.reason.empty() ? "" : " (" + e.reason + ")");
      e.status = "missing";
    }
    if (sp && std::isfinite(r.t_s)) {
      e.t_conv = (r.t_s - sp->t_start) * sp->convective_per_s;
      e.phase_deg = phase(r.t_s);
      e.phase_from_start_deg = ramp ? kNaN : 360.0 * (r.t_s - sp->t_start) * pitch_hz;
      e.alpha_deg = alpha(r.t_s);
    }
    records.push_back(std::move(e));
  };
  const double t_last = t[t.size() - 1];
  std::size_t valid_cycles = 0;
  for (const Span& sp : spans) {
    if (!sp.valid) {
      for (const std::string& name : events::cycle_event_names())
        record({sp.cycle, name, "missing", "cycle not valid: " + sp.reason});
      continue;
    }
    ++valid_cycles;
    events::CycleWindow w;
    w.cycle = sp.cycle;
    w.t_start = sp.t_start;
    w.t_end = std::min(sp.t_end, t_last);
    w.search_end = std::min(sp.t_end + o.reattachment_search_periods * (ramp ? 0.0 : 1 / pitch_hz), t_last);
    w.convective_per_s = sp.convective_per_s;
    w.ramp = ramp;
    for (events::EventRow r : events::detect_cycle_events(in, w, th)) {
      // The cycle, and the next one's start when the event was found there (reattachment).
      const std::int64_t bridged =
          bridged_between(w.t_start, std::isfinite(r.t_s) ? std::max(w.t_end, r.t_s + 1 / fs) : w.t_end);
      if (bridged > 0 && r.status == "ok") {
        r.status = "suspect";
        r.reason = std::to_string(bridged) + " load samples of the cycle were not finite and were bridged" +
                   (r.reason.empty() ? "" : "; " + r.reason);
      }
      record(r);
    }
  }

  // Vortex events from the PIV path join the table as they are.
  std::int64_t vortex_rows = 0;
  if (s.contains("vortex/events_per_cycle")) {
    const Table& v = s.get<Table>("vortex/events_per_cycle");
    const auto cyc = as_doubles(v, "cycle", "vortex/events_per_cycle");
    const auto& ev = v.texts("event");
    const auto& st = v.texts("status");
    const auto& why = v.texts("reason");
    const auto& ts = v.numbers("t_s");
    const auto& tu = v.numbers("t_uncertainty_s");
    const auto& val = v.numbers("value");
    for (std::size_t r = 0; r < v.rows(); ++r) {
      const auto c = static_cast<std::int64_t>(cyc[r]);
      const Span* sp = by_cycle.count(c) ? by_cycle.at(c) : nullptr;
      if (sp && !sp->valid)
        record({c, ev[r], "missing", "cycle not valid: " + sp->reason});
      else
        record({c, ev[r], st[r], why[r], ts[r], tu[r], val[r]});
      ++vortex_rows;
    }
  }

  // Tables.
  const std::map<std::string, std::string> value_units = {
      {"static_stall_crossing", "deg/s"}, {"lift_peak", "1"},       {"normal_force_peak", "1"},
      {"moment_stall", "1"},              {"cm_min", "1"},          {"le_suction_collapse", "1"},
      {"stall_onset", "1"},               {"stall_delay", "1"},     {"stall_delay_s", "s"},
      {"stall_delay_deg", "deg"},         {"secondary_peak", "1"},  {"reattachment", "1"},
      {"reattachment_loads", "1"},        {"reattachment_pressure", "1"},
      {"taps_convection_speed", "1"},     {"taps_te_passage", "1"}, {"vortex_detection", "1"},
      {"vortex_detachment", "1"},         {"vortex_te_passage", "1"}, {"convection_speed", "1"},
      {"vortex_shedding", "1"}};
  const std::string value_meaning =
      "static_stall_crossing: pitch rate at the crossing (deg/s); lift_peak, normal_force_peak: Cl, Cn at the peak; "
      "moment_stall: the running maximum of Cm the drop is measured from; cm_min: Cm; le_suction_collapse: Cp at "
      "the suction peak; stall_onset: the value of its criterion's event; stall_delay: convective times; "
      "stall_delay_s: s; stall_delay_deg: deg of alpha; secondary_peak: Cn; reattachment: as its criterion; "
      "reattachment_loads: Cl; reattachment_pressure: aft-tap Cp; "
      "taps_convection_speed: speed / U_inf; taps_te_passage: x/c of the aftmost tap used; vortex events: as in "
      "vortex/events_per_cycle";
  Attributes per_cycle_attrs{
      {"csv", std::string("events_per_cycle.csv")},
      {"t_conv", std::string("(t - cycle start) U / c, U of the cycle")},
      {"phase_origin", std::string("cycle start at the minimum angle of the fitted fundamental")},
      {"value", value_meaning},
      {"status", std::string("ok | missing (reason says why) | suspect; invalid cycles: missing")},
      {"lowpass", std::string("2nd-order Butterworth run forward and backward (zero phase, -6 dB at the cut-off)")},
      {"lowpass_harmonics", o.lowpass_harmonics},
      {"lowpass_cutoff_hz", cutoff},
      {"convection_cutoff_strouhal", o.convection_cutoff_strouhal},
      {"persistence_s", th.persistence_s},
      {"noise_cl", cl.noise},
      {"noise_cn", cn.noise},
      {"noise_cm", cm.noise},
      {"static_stall_angle_deg", ref.stall_angle_deg},
      {"static_stall_source", ref.stall_source},
      {"lift_slope_per_rad", ref.lift_slope_per_rad},
      {"zero_lift_angle_deg", ref.zero_lift_deg},
      {"lift_slope_source", ref.slope_source},
      {"onset_criterion", o.onset_criterion},
      {"moment_stall_delta", o.moment_stall_delta},
      {"reattachment", std::string("criterion " + o.reattachment_criterion)},
      {"reattachment_loads", std::string("Cl within reattachment_tolerance of the attached-flow reference "
                                         "(Theodorsen, static lift slope) for reattachment_sustain_conv, below the "
                                         "static stall angle")},
      {"reattachment_pressure", std::string("leading-edge suction within reattachment_suction_fraction and aft-tap "
                                            "Cp within reattachment_cp_tolerance of the cycle's upstroke values at "
                                            "the same angle, for reattachment_sustain_conv, below the static stall "
                                            "angle")},
      {"reattachment_suction_fraction", o.reattachment_suction_fraction},
      {"reattachment_cp_tolerance", o.reattachment_cp_tolerance},
      {"reattachment_tolerance", o.reattachment_tolerance},
      {"reattachment_sustain_s", th.reattachment_sustain_s},
      {"vortex_rows", vortex_rows},
      {"bridged_load_samples", bridged_before.back()},
      {"motion", motion_type}};
  if (ramp) per_cycle_attrs["ramp"] = std::string("one cycle from the start of the ramp; t_conv from the ramp start");

  std::vector<events::EventRecord> valid_records;
  std::vector<std::int64_t> align_cycle;
  std::vector<double> align_t;
  for (const events::EventRecord& r : records) {
    const Span* sp = by_cycle.count(r.cycle) ? by_cycle.at(r.cycle) : nullptr;
    if (!sp || !sp->valid) continue;
    valid_records.push_back(r);
    if (r.event == "stall_onset" && r.status == "ok") {
      align_cycle.push_back(r.cycle);
      align_t.push_back(r.t_s);
    }
  }
  numerics::SummaryOptions so;
  so.bootstrap_resamples = static_cast<int>(o.bootstrap_resamples);
  so.bootstrap_seed = static_cast<std::uint64_t>(o.bootstrap_seed);
  events::EventStatistics stats = events::event_statistics(valid_records, value_units, so);

  s.put("events/per_cycle", events::per_cycle_table(records), std::move(per_cycle_attrs));
  s.put("events/summary", std::move(stats.summary),
        {{"csv", std::string("events_summary.csv")},
         {"valid_cycles", static_cast<std::int64_t>(valid_cycles)},
         {"spread", std::string("std and p05-p95: cycle-to-cycle spread of the quantity")},
         {"uncertainty_of_mean", std::string("ci95: Student-t 95 % interval of the mean; bootstrap95: percentile "
                                             "bootstrap 95 % interval of the mean")},
         {"phase_deg", std::string("phase from the cycle start, unwrapped (may pass 360 in the next cycle); "
                                   "circular_mean, circular_std, resultant_length: circular statistics of the "
                                   "phase (Mardia & Jupp), right where the phases straddle the cycle boundary")},
         {"flags", std::string("autocorrelated: |lag-1 r| > 1.96/sqrt(n); bimodal: Sarle's coefficient > 5/9 and "
                               "Ashman's D > 2; converged: the running mean over the last half of the cycles "
                               "stays inside the final 95 % interval; flags need n >= 10")},
         {"bootstrap_resamples", o.bootstrap_resamples},
         {"bootstrap_seed", o.bootstrap_seed}});
  s.put("events/running_mean", std::move(stats.running_mean),
        {{"definition", std::string("mean and Student-t 95 % half-width of the first n valid cycles")}});
  Table align;
  align.add({"cycle", "1", align_cycle}).add({"t_s", "s", align_t});
  s.put("events/alignment", std::move(align), {{"event", std::string("stall_onset")}});
  if (cl_reference.size())
    s.put("events/attached_cl", Series{cl_reference, "1"},
          {{"definition", std::string("attached-flow Cl: Theodorsen per harmonic of the fitted motion, static lift "
                                      "slope; on loads/time_s")}});
}

}  // namespace stallscope
