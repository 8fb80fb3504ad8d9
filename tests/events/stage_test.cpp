// The events stage on runs built in the store from closed forms: hand-built
// loops with a known moment-stall time, synthetic cycles with jittered stall
// whose onset, peaks, reattachment and convection are known, the coverage of
// the intervals over many seeds, and bad input.
#include <gtest/gtest.h>

#include <cmath>
#include <map>
#include <numbers>
#include <random>

#include "pipeline/archive.hpp"
#include "pipeline/config.hpp"
#include "pipeline/errors.hpp"
#include "pipeline/run_context.hpp"
#include "stages/events/cycle_events.hpp"
#include "stages/events/events_stage.hpp"
#include "stages/theory/theodorsen.hpp"
#include "tests/support/test_support.hpp"

namespace stallscope {
namespace {

constexpr double kPi = std::numbers::pi;
constexpr double kNaN = std::numeric_limits<double>::quiet_NaN();

double logistic(double x) { return 1 / (1 + std::exp(-x)); }

// A pitching run in the store: alpha = mean + amp sin(omega t + phi), minimum at t = origin.
struct SyntheticRun {
  double chord = 0.3, speed = 20, k = 0.1, mean_deg = 10, amp_deg = 10, rate_hz = 2000;
  double origin_s = 0.05;
  int cycles = 12;
  double static_stall_deg = 14;
  double lift_slope = 5.7;           // per rad
  double noise = 0.01;               // on Cl, Cn, Cm
  double delay_conv = 4, jitter_conv = 0.6;  // stall delay after the static-stall crossing
  double cm_drop = 0.25, cm_tau_conv = 0.8;
  double bump = 0.6, bump_width_conv = 2.5, bump_lag_conv = 3;
  double lift_loss = 0.7, loss_tau_conv = 1.5;
  double recovery_lag_conv = 3;      // stall terms decay this long after the downstroke crossing
  double secondary = 0.25, secondary_lag_conv = 9, secondary_width_conv = 1.2;
  double le_collapse_lag_conv = 0.5, vortex_speed = 0.35;  // of U
  bool taps = true;
  unsigned seed = 1;

  double freq() const { return k * speed / (kPi * chord); }
  double omega() const { return 2 * kPi * freq(); }
  double conv() const { return chord / speed; }  // one convective time, s
  double phi() const { return -kPi / 2 - omega() * origin_s; }
  double alpha(double t) const { return mean_deg + amp_deg * std::sin(omega() * t + phi()); }
  double t_start(int c) const { return origin_s + c / freq(); }
  // Upstroke and downstroke crossings of the static stall angle in cycle c (closed form).
  double t_up(int c) const {
    return t_start(c) + (std::asin((static_stall_deg - mean_deg) / amp_deg) + kPi / 2) / omega();
  }
  double t_down(int c) const {
    return t_start(c) + (kPi - std::asin((static_stall_deg - mean_deg) / amp_deg) + kPi / 2) / omega();
  }

  std::vector<double> breaks;  // t of the Cm break start per cycle (jittered)

  double attached_cl(double t) const {
    theory::SinusoidalPitch m{mean_deg * kPi / 180, amp_deg * kPi / 180, omega(), k, 0.25};
    return theory::attached_pitch_loads(m, {lift_slope, 0, 0}, t + phi() / omega()).cl;
  }
  // The stall terms of cycle c at time t.
  double cm_stall(int c, double t) const {
    const double tb = breaks[c], tr = t_down(c) + recovery_lag_conv * conv(), tau = cm_tau_conv * conv();
    return -cm_drop * (logistic((t - tb) / tau - 4) - logistic((t - tr) / tau));
  }
  double cl_stall(int c, double t) const {
    const double tp = breaks[c] + bump_lag_conv * conv(), tr = t_down(c) + recovery_lag_conv * conv();
    const double w = bump_width_conv * conv(), tau = loss_tau_conv * conv();
    return bump * std::exp(-std::pow((t - tp) / w, 2)) -
           lift_loss * (logistic((t - tp) / tau - 2) - logistic((t - tr) / tau));
  }
  double cn_extra(int c, double t) const {
    const double ts = breaks[c] + secondary_lag_conv * conv();
    return secondary * std::exp(-std::pow((t - ts) / (secondary_width_conv * conv()), 2));
  }
  // Which cycle's stall terms act at t: the one whose cycle began last (with its recovery running on).
  int cycle_at(double t) const {
    const int c = static_cast<int>(std::floor((t - origin_s) * freq()));
    return std::clamp(c, 0, cycles - 1);
  }
  double cl(double t) const {
    double v = attached_cl(t);
    for (int c = 0; c < cycles; ++c) v += cl_stall(c, t);
    return v;
  }
  double cm(double t) const {
    double v = -0.01;
    for (int c = 0; c < cycles; ++c) v += cm_stall(c, t);
    return v;
  }
  double cn(double t) const {
    double v = 1.02 * cl(t);
    for (int c = 0; c < cycles; ++c) v += cn_extra(c, t);
    return v;
  }
  // Leading-edge suction grows with the angle, collapses after the break and recovers on the downstroke.
  double le_suction(double t) const {
    const int c = cycle_at(t);
    const double collapse = logistic((t - breaks[c] - le_collapse_lag_conv * conv()) / (0.5 * conv()));
    const double recovery = logistic((t - t_down(c) - recovery_lag_conv * conv()) / conv());
    return (0.5 + 0.4 * alpha(t)) * (1 - 0.8 * collapse * (1 - recovery));
  }
  // The vortex's suction bump leaves x/c = 0.1 2.5 c/U after the break and convects at vortex_speed U.
  double tap_arrival(int c, double x) const {
    return breaks[c] + 2.5 * conv() + (x - 0.1) * chord / (vortex_speed * speed);
  }

  void put(RunStore& s) {
    std::mt19937 gen(seed);
    std::normal_distribution<double> jitter(0, jitter_conv), noise_n(0, 1);
    breaks.clear();
    for (int c = 0; c < cycles; ++c) breaks.push_back(t_up(c) + (delay_conv + jitter(gen)) * conv());
    const double duration = origin_s + (cycles + 0.4) / freq();
    const auto n = static_cast<Eigen::Index>(duration * rate_hz);
    Eigen::VectorXd t(n), a(n), vcl(n), vcn(n), vcm(n);
    for (Eigen::Index i = 0; i < n; ++i) {
      t[i] = i / rate_hz;
      a[i] = alpha(t[i]);
      vcl[i] = cl(t[i]) + noise * noise_n(gen);
      vcn[i] = cn(t[i]) + noise * noise_n(gen);
      vcm[i] = cm(t[i]) + noise * noise_n(gen);
    }
    s.put("run/chord_m", Scalar{chord, "m"});
    s.put("run/U_inf_m_s", Scalar{speed, "m/s"});
    s.put("run/pivot_x_over_c", Scalar{0.25, "1"});
    s.put("run/motion", Text{"sine"});
    s.put("loads/time_s", Series{t, "s"});
    s.put("loads/cl", Series{vcl, "1"});
    s.put("loads/cn", Series{vcn, "1"});
    s.put("loads/cm", Series{vcm, "1"});
    Table fit;
    fit.add({"harmonic", "1", std::vector<std::int64_t>{1}})
        .add({"sin_deg", "deg", std::vector<double>{amp_deg}})
        .add({"cos_deg", "deg", std::vector<double>{0.0}});
    s.put("motion/fit", std::move(fit),
          {{"freq_hz", freq()}, {"alpha_mean_deg", mean_deg}, {"alpha_amp_deg", amp_deg}, {"sine_phase_rad", phi()},
           {"cycle_origin_s", origin_s}, {"cycles", std::int64_t{cycles}}, {"sine_phase_error_deg", 0.0}});
    std::vector<std::int64_t> number, valid;
    std::vector<double> t0, t1, u;
    std::vector<std::string> reason;
    for (int c = 0; c < cycles; ++c) {
      number.push_back(c);
      valid.push_back(1);
      t0.push_back(t_start(c));
      t1.push_back(t_start(c + 1));
      u.push_back(speed);
      reason.push_back("");
    }
    Table ct;
    ct.add({"cycle", "1", number}).add({"t_start_s", "s", t0}).add({"t_end_s", "s", t1})
        .add({"valid", "1", valid}).add({"reason", "", reason}).add({"U_m_s", "m/s", u});
    s.put("cycles", std::move(ct));
    if (!taps) return;
    // Taps: one at the leading edge, eight aft where the vortex's suction bump passes.
    std::vector<std::string> names = {"p01"}, surface = {"upper"}, status = {"ok"};
    std::vector<double> xs = {0.01}, ys = {0.02};
    for (int j = 0; j < 8; ++j) {
      names.push_back("p" + std::to_string(10 + j));
      xs.push_back(0.2 + 0.1 * j);
      ys.push_back(0.05);
      surface.push_back("upper");
      status.push_back("ok");
    }
    Eigen::MatrixXd cp(n, static_cast<Eigen::Index>(names.size()));
    for (Eigen::Index i = 0; i < n; ++i) {
      cp(i, 0) = -le_suction(t[i]) + 0.02 * noise_n(gen);
      for (int j = 1; j < static_cast<int>(names.size()); ++j) {
        double v = -0.4;
        for (int c = 0; c < cycles; ++c)
          v -= 1.2 * std::exp(-std::pow((t[i] - tap_arrival(c, xs[j])) / (1.5 * conv()), 2));
        cp(i, j) = v + 0.02 * noise_n(gen);
      }
    }
    Table taps_table;
    taps_table.add({"tap", "", names}).add({"x_over_c", "1", xs}).add({"y_over_c", "1", ys})
        .add({"surface", "", surface}).add({"status", "", status});
    s.put("pressure/time_s", Series{t, "s"});
    s.put("pressure/cp", Matrix{cp, "1", names});
    s.put("pressure/taps", std::move(taps_table));
  }

  // Truth by dense evaluation of the noise-free closed forms (1 us steps).
  double true_moment_stall(int c, double delta) const {
    double run_max = -INFINITY, prev_t = t_start(c), prev_d = 0;
    for (double t = t_start(c); t < t_start(c + 1); t += 1e-6) {
      const double v = cm(t);
      run_max = std::max(run_max, v);
      const double d = v - (run_max - delta);
      if (t >= t_up(c) && d < 0) return prev_t + (t - prev_t) * prev_d / (prev_d - d);
      prev_t = t;
      prev_d = d;
    }
    return kNaN;
  }
  double true_peak(double (SyntheticRun::*f)(double) const, double lo, double hi) const {
    double best_t = lo, best = -INFINITY;
    for (double t = lo; t < hi; t += 1e-6)
      if ((this->*f)(t) > best) best = (this->*f)(t), best_t = t;
    return best_t;
  }
  double true_reattachment(int c, double tol, double sustain) const {
    double start = NAN;
    for (double t = std::max(t_down(c), breaks[c]); t < t_start(c + 1) + 0.5 / freq(); t += 1e-6) {
      const bool in = std::abs(cl(t) - attached_cl(t)) <= tol;
      if (in && std::isnan(start)) start = t;
      if (!in) start = NAN;
      if (!std::isnan(start) && t - start >= sustain) return start;
    }
    return kNaN;
  }
};

struct Harness {
  RunStore store;
  Provenance provenance;
  Progress quiet{Progress::Mode::kQuiet};
  RunContext context{store, provenance, quiet};
  void run(const std::string& toml) {
    EventsStage stage;
    ConfigFile f = ConfigFile::parse("[events]\n" + toml, "run.toml");
    ConfigSection s(f, "events");
    stage.configure(s);
    s.reject_unknown_keys();
    stage.run(context);
  }
  // Rows of one event: cycle -> (status, t_s, t_uncertainty_s, value).
  struct Row {
    std::string status, reason;
    double t = 0, sigma = 0, value = 0, t_conv = 0, alpha = 0;
  };
  std::multimap<std::int64_t, Row> rows(const std::string& event) const {
    const Table& t = store.get<Table>("events/per_cycle");
    std::multimap<std::int64_t, Row> out;
    for (std::size_t r = 0; r < t.rows(); ++r)
      if (t.texts("event")[r] == event)
        out.insert({t.integers("cycle")[r],
                    {t.texts("status")[r], t.texts("reason")[r], t.numbers("t_s")[r], t.numbers("t_uncertainty_s")[r],
                     t.numbers("value")[r], t.numbers("t_conv")[r], t.numbers("alpha_deg")[r]}});
    return out;
  }
  double summary(const std::string& event, const std::string& quantity, const std::string& column) const {
    const Table& t = store.get<Table>("events/summary");
    for (std::size_t r = 0; r < t.rows(); ++r)
      if (t.texts("event")[r] == event && t.texts("quantity")[r] == quantity) {
        if (const auto* d = std::get_if<std::vector<double>>(&t.find(column)->data)) return (*d)[r];
        return static_cast<double>(t.integers(column)[r]);
      }
    ADD_FAILURE() << "no summary row " << event << " " << quantity;
    return kNaN;
  }
};

const std::string kConfig =
    "static_stall_angle_deg = 14\nlift_slope_per_rad = 5.7\nlowpass_harmonics = 20\n";

TEST(EventsTable, HasExactlyTheAgreedColumnsAndCsvNames) {
  Harness h;
  SyntheticRun run;
  run.put(h.store);
  h.run(kConfig);
  const Entry& e = h.store.entry("events/per_cycle");
  const Table& t = std::get<Table>(e.value);
  std::vector<std::string> names;
  for (const auto& c : t.columns) names.push_back(c.name);
  EXPECT_EQ(names, (std::vector<std::string>{"cycle", "event", "status", "reason", "t_s", "t_conv", "t_uncertainty_s",
                                             "phase_deg", "alpha_deg", "value"}));
  EXPECT_EQ(std::get<std::string>(e.attributes.at("csv")), "events_per_cycle.csv");
  EXPECT_NEAR(std::get<double>(e.attributes.at("lowpass_cutoff_hz")), 20 * run.freq(), 1e-9);
  const Entry& summary = h.store.entry("events/summary");
  EXPECT_EQ(std::get<std::string>(summary.attributes.at("csv")), "events_summary.csv");
  for (const char* c : {"event", "quantity", "n", "mean", "std", "median", "p05", "p95", "ci95_lo", "ci95_hi"})
    EXPECT_NE(std::get<Table>(summary.value).find(c), nullptr) << c;
  EXPECT_TRUE(h.store.contains("events/running_mean"));
  EXPECT_EQ(h.store.get<Table>("events/alignment").rows(), 12u);
}

TEST(MomentStall, HandBuiltLoopGivesTheExactBreakTime) {
  // Cm = 0.02 until t_b, then falling linearly at 2 per second; the break (0.05 below the running
  // maximum 0.02) is at t_b + 0.025 s exactly, between samples; the trace is used unfiltered.
  const double dt = 1e-3, tb = 0.3127;
  Eigen::VectorXd t(1000), cm(1000), flat = Eigen::VectorXd::Zero(1000);
  for (Eigen::Index i = 0; i < t.size(); ++i) {
    t[i] = i * dt;
    cm[i] = t[i] < tb ? 0.02 : 0.02 - 2 * (t[i] - tb);
  }
  const events::Trace cm_trace{t, cm, 0.0}, zero{t, flat, 0.0};
  events::CycleInputs in;
  in.cl = in.cn = &zero;
  in.cm = &cm_trace;
  in.alpha_deg = [](double x) { return 10 + 10 * std::sin(2 * kPi * x - kPi / 2); };
  in.rate_deg_s = [](double x) { return 20 * kPi * std::cos(2 * kPi * x - kPi / 2); };
  in.static_stall_angle_deg = 14;
  events::CycleWindow w{0, 0.0, 0.999, 0.999, 1.0, false};
  events::Thresholds th;
  th.persistence_s = 0.01;
  const auto rows = events::detect_cycle_events(in, w, th);
  const auto it = std::find_if(rows.begin(), rows.end(), [](const auto& r) { return r.event == "moment_stall"; });
  ASSERT_NE(it, rows.end());
  ASSERT_EQ(it->status, "ok") << it->reason;
  EXPECT_NEAR(it->t_s, tb + 0.025, 1e-12);
  EXPECT_NEAR(it->value, 0.02, 1e-12);  // the running maximum it fell from
  // The static-stall crossing is the closed form asin(0.4) on the upstroke.
  const auto x = std::find_if(rows.begin(), rows.end(), [](const auto& r) { return r.event == "static_stall_crossing"; });
  EXPECT_NEAR(x->t_s, (std::asin(0.4) + kPi / 2) / (2 * kPi), 1e-10);
}

TEST(Reattachment, HandBuiltPressuresGiveTheExactRecoveryTime) {
  // alpha = 10 - 10 cos(2 pi t) over one 1 s cycle; static stall 14 deg, downstroke crossing at 0.6845 s.
  // Leading-edge suction (0.5 + 0.4 alpha)(1 - d): d = 0.8 from 0.45 s, falling linearly to 0 over
  // 0.70..0.80 s, so within 15 % of the upstroke's at 0.70 + 0.1 (1 - 0.15/0.8) = 0.78125 s. Aft-tap Cp
  // 0.1 attached, -0.6 from 0.45 s, rising linearly over 0.72..0.82 s, within 0.05 of 0.1 at
  // 0.72 + 0.1 (0.65/0.7) s: the later of the two is the reattachment. Traces unfiltered.
  const double dt = 1e-3;
  const Eigen::Index n = 1000;
  Eigen::VectorXd t(n), cm(n), le(n), aft(n), flat = Eigen::VectorXd::Zero(n);
  auto alpha = [](double x) { return 10 - 10 * std::cos(2 * kPi * x); };
  for (Eigen::Index i = 0; i < n; ++i) {
    const double x = t[i] = i * dt;
    cm[i] = x < 0.4 ? 0.02 : 0.02 - 2 * (x - 0.4);
    const double d = x < 0.45 ? 0 : x < 0.70 ? 0.8 : x < 0.80 ? 0.8 * (1 - (x - 0.70) / 0.1) : 0;
    le[i] = (0.5 + 0.4 * alpha(x)) * (1 - d);
    aft[i] = x < 0.45 ? 0.1 : x < 0.72 ? -0.6 : x < 0.82 ? -0.6 + 0.7 * (x - 0.72) / 0.1 : 0.1;
  }
  const events::Trace cm_trace{t, cm, 0.0}, zero{t, flat, 0.0}, le_trace{t, le, 0.0}, aft_trace{t, aft, 0.0};
  events::CycleInputs in;
  in.cl = in.cn = &zero;
  in.cm = &cm_trace;
  in.le_suction = &le_trace;
  in.aft_cp = &aft_trace;
  in.no_reference_reason = "no reference";
  in.alpha_deg = alpha;
  in.rate_deg_s = [](double x) { return 20 * kPi * std::sin(2 * kPi * x); };
  in.static_stall_angle_deg = 14;
  events::CycleWindow w{0, 0.0, 0.999, 0.999, 1.0, false};
  events::Thresholds th;
  th.reattachment_sustain_s = 0.05;
  auto find = [](const std::vector<events::EventRow>& rows, const std::string& name) {
    return *std::find_if(rows.begin(), rows.end(), [&](const auto& r) { return r.event == name; });
  };
  const auto rows = events::detect_cycle_events(in, w, th);
  const auto p = find(rows, "reattachment_pressure");
  ASSERT_EQ(p.status, "ok") << p.reason;
  EXPECT_NEAR(p.t_s, 0.72 + 0.1 * 0.65 / 0.7, 1e-9);
  EXPECT_NEAR(p.value, 0.05, 1e-9);  // the aft-tap Cp there
  EXPECT_DOUBLE_EQ(find(rows, "reattachment").t_s, p.t_s);  // the default criterion
  EXPECT_EQ(find(rows, "reattachment_loads").status, "missing");
  // With the aft tap recovering first, the leading-edge suction decides.
  for (Eigen::Index i = 0; i < n; ++i) aft[i] = t[i] < 0.45 ? 0.1 : t[i] < 0.72 ? -0.6 : 0.1;
  // (to 1e-5 s: that deficit is (0.5 + 0.4 alpha)(d - 0.15), curved between samples.)
  EXPECT_NEAR(find(events::detect_cycle_events(in, w, th), "reattachment_pressure").t_s, 0.78125, 1e-5);
  // The loads criterion chosen: the reattachment row is the loads one (missing here, no reference).
  th.reattachment_criterion = "loads";
  const auto loads = find(events::detect_cycle_events(in, w, th), "reattachment");
  EXPECT_EQ(loads.status, "missing");
  EXPECT_NE(loads.reason.find("criterion loads: no reference"), std::string::npos) << loads.reason;
}

TEST(MomentStall, HandBuiltLoopThroughTheStageMatchesTheClosedForm) {
  // Cm = 0.02 - B sin^2(pi (t - tb) / (2 Td)) over Td, held, and recovering on the downstroke:
  // Cm = 0.02 - 0.05 at tb + (2 Td / pi) asin(sqrt(0.05 / B)). Noise-free, filtered at 20 x f.
  Harness h;
  SyntheticRun run;
  run.taps = false;
  run.noise = 0;
  run.put(h.store);
  const double b = 0.2, td = 0.05;
  Eigen::VectorXd cm = h.store.get<Series>("loads/time_s").values;
  std::vector<double> expected;
  for (int c = 0; c < run.cycles; ++c) expected.push_back(run.breaks[c] + 2 * td / kPi * std::asin(std::sqrt(0.05 / b)));
  for (Eigen::Index i = 0; i < cm.size(); ++i) {
    const double t = cm[i];
    const int c = run.cycle_at(t);
    const double tb = run.breaks[c], tr = run.t_down(c) + 0.02;
    double v = 0.02;
    if (t >= tb && t < tr) v -= b * std::pow(std::sin(kPi / 2 * std::min(1.0, (t - tb) / td)), 2);
    if (t >= tr) v -= b * std::pow(std::cos(kPi / 2 * std::min(1.0, (t - tr) / td)), 2);
    cm[i] = v;
  }
  h.store.put("loads/cm", Series{cm, "1"});
  h.run(kConfig);
  // The filter (20 x f) rounds the start of the drop, where the second derivative jumps: measured
  // 1.9e-4 s early in every cycle; stated tolerance half the 0.5 ms sample interval.
  constexpr double kTolerance = 2.5e-4;
  for (const auto& [c, r] : h.rows("moment_stall")) {
    ASSERT_EQ(r.status, "ok") << r.reason;
    EXPECT_NEAR(r.t, expected[static_cast<std::size_t>(c)], kTolerance) << "cycle " << c;
  }
}

TEST(SyntheticCycles, OnsetPeaksReattachmentAndConvectionAreRecovered) {
  Harness h;
  SyntheticRun run;
  run.put(h.store);
  h.run(kConfig + "reattachment_tolerance = 0.1\nreattachment_sustain_conv = 2\n");
  const double conv = run.conv();
  // Stated tolerances in convective times (c/U = 15 ms here), for noise 0.01 in the loads and a
  // filter at 20 x the pitch frequency. The zero-phase filter adds no lag; the moment stall is
  // expected early by about 2 noise / |dCm/dt| (0.06 c/U here; measured -0.02 to -0.19).
  constexpr double kMomentTolerance = 0.25, kPeakTolerance = 0.3, kReattachTolerance = 0.5, kTapsTolerance = 0.2;
  double worst_moment = 0, worst_lift = 0, worst_reattach = 0, worst_le = 0;
  for (int c = 0; c < run.cycles; ++c) {
    const auto moment = h.rows("moment_stall").find(c)->second;
    ASSERT_EQ(moment.status, "ok") << moment.reason;
    const double err = (moment.t - run.true_moment_stall(c, 0.05)) / conv;
    worst_moment = std::max(worst_moment, std::abs(err));
    EXPECT_LT(std::abs(err), kMomentTolerance) << "cycle " << c;
    const auto onset = h.rows("stall_onset").find(c)->second;
    EXPECT_DOUBLE_EQ(onset.t, moment.t);

    const double lo = run.t_start(c), hi = run.t_start(c + 1);
    const auto lift = h.rows("lift_peak").find(c)->second;
    ASSERT_EQ(lift.status, "ok") << lift.reason;
    const double lift_err = (lift.t - run.true_peak(&SyntheticRun::cl, lo, hi)) / conv;
    worst_lift = std::max(worst_lift, std::abs(lift_err));
    EXPECT_LT(std::abs(lift_err), kPeakTolerance) << "cycle " << c;

    const auto re = h.rows("reattachment_loads").find(c)->second;
    ASSERT_EQ(re.status, "ok") << re.reason;
    const double re_err = (re.t - run.true_reattachment(c, 0.1, 2 * conv)) / conv;
    worst_reattach = std::max(worst_reattach, std::abs(re_err));
    EXPECT_LT(std::abs(re_err), kReattachTolerance) << "cycle " << c;
    EXPECT_LT(re.alpha, 14.0);

    const auto le = h.rows("le_suction_collapse").find(c)->second;
    ASSERT_EQ(le.status, "ok") << le.reason;
    const double le_err = (le.t - run.true_peak(&SyntheticRun::le_suction, lo, hi)) / conv;
    worst_le = std::max(worst_le, std::abs(le_err));
    EXPECT_LT(std::abs(le_err), kPeakTolerance) << "cycle " << c;

    const auto speed = h.rows("taps_convection_speed").find(c)->second;
    ASSERT_EQ(speed.status, "ok") << speed.reason;
    // The convection taps are filtered at f c / U = 2, which lets more noise through than the loads'
    // filter: measured up to 0.026 U off.
    EXPECT_NEAR(speed.value, run.vortex_speed, 0.035) << "cycle " << c;
    const auto te = h.rows("taps_te_passage").find(c)->second;
    EXPECT_LT(std::abs(te.t - run.tap_arrival(c, 1.0)) / conv, kTapsTolerance) << "cycle " << c;

    const auto delay = h.rows("stall_delay").find(c)->second;
    EXPECT_NEAR(delay.value, (moment.t - run.t_up(c)) / conv, 1e-9);
    EXPECT_GE(h.rows("secondary_peak").count(c), 1u);
    EXPECT_GT(moment.sigma, 0);
  }
  std::printf("worst errors (c/U): moment stall %.4f, lift peak %.4f, reattachment %.4f, LE suction peak %.4f\n",
              worst_moment, worst_lift, worst_reattach, worst_le);
  EXPECT_EQ(h.summary("moment_stall", "t_conv", "n"), 12);
}

TEST(SyntheticCycles, IntervalsOfTheMeanStallTimeCoverTheTruthAtAboutTheStatedRate) {
  // 60 runs of 12 cycles with a stall delay jittered N(0, 0.6 c/U): the Student-t 95 % interval of the
  // mean moment-stall time must cover the population mean (the jitter-free cycle's truth). The
  // binomial standard deviation of the rate is 0.028, so 0.85 is about 3.5 sigma below 0.95.
  constexpr int kSeeds = 60;
  int covered = 0;
  for (int seed = 1; seed <= kSeeds; ++seed) {
    Harness h;
    SyntheticRun run;
    run.taps = false;
    run.seed = static_cast<unsigned>(seed);
    run.put(h.store);
    h.run(kConfig);
    SyntheticRun ideal = run;
    ideal.jitter_conv = 0;
    for (int c = 0; c < run.cycles; ++c) ideal.breaks[c] = run.t_up(c) + run.delay_conv * run.conv();
    const double truth = (ideal.true_moment_stall(5, 0.05) - run.t_start(5)) / run.conv();
    covered += h.summary("moment_stall", "t_conv", "ci95_lo") <= truth &&
               truth <= h.summary("moment_stall", "t_conv", "ci95_hi");
  }
  std::printf("coverage %d of %d\n", covered, kSeeds);
  EXPECT_GE(covered, static_cast<int>(0.85 * kSeeds));
}

TEST(MissingEvents, AreRecordedWithAReasonNeverAGuess) {
  Harness h;
  SyntheticRun run;
  run.taps = false;
  run.put(h.store);
  h.run("static_stall_angle_deg = 25\nlowpass_harmonics = 20\n");
  for (const auto& [c, r] : h.rows("static_stall_crossing")) {
    EXPECT_EQ(r.status, "missing");
    EXPECT_NE(r.reason.find("never exceeded"), std::string::npos) << r.reason;
    EXPECT_TRUE(std::isnan(r.t));
  }
  for (const auto& [c, r] : h.rows("moment_stall")) EXPECT_EQ(r.status, "missing");
  for (const auto& [c, r] : h.rows("le_suction_collapse")) EXPECT_NE(r.reason.find("no pressure taps"), std::string::npos);
  EXPECT_EQ(h.summary("moment_stall", "t_conv", "n"), 0);
  EXPECT_EQ(h.summary("moment_stall", "t_conv", "n_missing"), 12);
}

TEST(InvalidCycles, StayInTheTableButOutOfTheStatistics) {
  Harness h;
  SyntheticRun run;
  run.taps = false;
  run.put(h.store);
  Table cycles = h.store.get<Table>("cycles");
  auto& valid = std::get<std::vector<std::int64_t>>(cycles.columns[3].data);
  auto& reason = std::get<std::vector<std::string>>(cycles.columns[4].data);
  valid[2] = 0;
  reason[2] = "q drift 5 %";
  h.store.put("cycles", cycles);
  h.run(kConfig);
  const auto r = h.rows("lift_peak").find(2)->second;
  EXPECT_EQ(r.status, "missing");
  EXPECT_NE(r.reason.find("q drift"), std::string::npos);
  EXPECT_EQ(h.summary("lift_peak", "t_conv", "n"), 11);
}

TEST(NonFiniteLoads, MakeTheirCycleSuspectAndNeverReachTheTableAsNaN) {
  Harness h;
  SyntheticRun run;
  run.taps = false;
  run.put(h.store);
  // A DAQ dropout: Cl, Cn and Cm not finite over a tenth of a period around cycle 3's stall.
  const Eigen::VectorXd& t = h.store.get<Series>("loads/time_s").values;
  int dropped = 0;
  for (const char* key : {"loads/cl", "loads/cn", "loads/cm"}) {
    Eigen::VectorXd& y = h.store.get_mutable<Series>(key).values;
    dropped = 0;
    for (Eigen::Index i = 0; i < t.size(); ++i)
      if (std::abs(t[i] - run.breaks[3]) < 0.05 / run.freq()) y[i] = kNaN, ++dropped;
  }
  ASSERT_GT(dropped, 10);
  h.run(kConfig);
  const Table& table = h.store.get<Table>("events/per_cycle");
  for (std::size_t r = 0; r < table.rows(); ++r) {
    SCOPED_TRACE(table.texts("event")[r] + " in cycle " + std::to_string(table.integers("cycle")[r]));
    const std::string& status = table.texts("status")[r];
    EXPECT_TRUE(status == "missing" || std::isfinite(table.numbers("t_s")[r]));
    if (table.integers("cycle")[r] != 3) continue;
    EXPECT_NE(status, "ok");
    EXPECT_TRUE(status != "suspect" || table.texts("reason")[r].find("not finite and were bridged") != std::string::npos)
        << table.texts("reason")[r];
  }
  EXPECT_EQ(std::get<std::int64_t>(h.store.entry("events/per_cycle").attributes.at("bridged_load_samples")), dropped);
  EXPECT_EQ(h.rows("lift_peak").find(4)->second.status, "ok");
  EXPECT_EQ(h.summary("lift_peak", "t_conv", "n"), 11);  // the suspect cycle stays out of the statistics
  EXPECT_TRUE(std::isfinite(h.summary("lift_peak", "t_conv", "mean")));
}

TEST(VortexEvents, FromThePivPathJoinTheTableAndTheSummary) {
  Harness h;
  SyntheticRun run;
  run.taps = false;
  run.put(h.store);
  Table v;
  std::vector<std::int64_t> cycle;
  std::vector<std::string> event, status, reason;
  std::vector<double> t, nan;
  for (int c = 0; c < run.cycles; ++c) {
    cycle.push_back(c);
    event.push_back("vortex_detachment");
    status.push_back("ok");
    reason.push_back("");
    t.push_back(run.breaks[c] + 0.01);
    nan.push_back(kNaN);
  }
  v.add({"cycle", "1", cycle}).add({"event", "", event}).add({"status", "", status}).add({"reason", "", reason})
      .add({"t_s", "s", t}).add({"t_conv", "1", nan}).add({"t_uncertainty_s", "s", nan})
      .add({"phase_deg", "deg", nan}).add({"alpha_deg", "deg", nan}).add({"value", "1", nan});
  h.store.put("vortex/events_per_cycle", v);
  h.run(kConfig);
  const auto rows = h.rows("vortex_detachment");
  ASSERT_EQ(rows.size(), 12u);
  EXPECT_NEAR(rows.find(3)->second.t_conv, (run.breaks[3] + 0.01 - run.t_start(3)) / run.conv(), 1e-9);
  EXPECT_EQ(h.summary("vortex_detachment", "t_conv", "n"), 12);
}

TEST(StaticPolar, FromTheStoreGivesTheStaticStallAngle) {
  Harness h;
  SyntheticRun run;
  run.taps = false;
  run.put(h.store);
  Table polar;
  polar.add({"direction", "", std::vector<std::string>{"up", "down"}})
      .add({"lift_slope_per_rad", "1/rad", std::vector<double>{5.7, 5.6}})
      .add({"zero_lift_angle_deg", "deg", std::vector<double>{0.0, 0.0}})
      .add({"alpha_cl_max_deg", "deg", std::vector<double>{14.0, 12.0}})
      .add({"alpha_cm_break_deg", "deg", std::vector<double>{15.0, 13.0}});
  h.store.put("static_polar/summary", polar, {{"static_stall_angle_deg", 14.0}});
  h.run("lowpass_harmonics = 20\nstatic_stall_criterion = \"cm_break\"\n");
  const Entry& e = h.store.entry("events/per_cycle");
  EXPECT_DOUBLE_EQ(std::get<double>(e.attributes.at("static_stall_angle_deg")), 15.0);
  EXPECT_DOUBLE_EQ(std::get<double>(e.attributes.at("lift_slope_per_rad")), 5.7);
  const auto x = h.rows("static_stall_crossing").find(0)->second;
  EXPECT_NEAR(x.alpha, 15.0, 1e-9);
}

TEST(StaticPolar, FromTheArchiveOfAReducedStaticRunNamedInTheConfig) {
  // The static run's archive, as the archive writer leaves it: /static_polar/summary.
  testing::ScratchDir dir;
  RunStore static_run;
  Table polar;
  polar.add({"direction", "", std::vector<std::string>{"up", "down"}})
      .add({"lift_slope_per_rad", "1/rad", std::vector<double>{5.9, 5.8}})
      .add({"zero_lift_angle_deg", "deg", std::vector<double>{-0.2, -0.1}})
      .add({"alpha_cl_max_deg", "deg", std::vector<double>{13.5, 11.0}})
      .add({"alpha_cm_break_deg", "deg", std::vector<double>{14.5, 12.0}})
      .add({"alpha_linearity_deg", "deg", std::vector<double>{10.5, 9.0}});
  static_run.put("static_polar/summary", polar, {{"static_stall_angle_deg", 13.5}});
  const auto archive = write_archive(static_run, Provenance{}, {dir.path(), "static_run", false});

  Harness h;
  SyntheticRun run;
  run.taps = false;
  run.put(h.store);
  h.run("lowpass_harmonics = 20\nstatic_polar = \"" + archive.string() + "\"\nstatic_stall_criterion = \"linearity\"\n");
  const Entry& e = h.store.entry("events/per_cycle");
  EXPECT_DOUBLE_EQ(std::get<double>(e.attributes.at("static_stall_angle_deg")), 10.5);  // up sweep, linearity
  EXPECT_DOUBLE_EQ(std::get<double>(e.attributes.at("lift_slope_per_rad")), 5.9);
  EXPECT_DOUBLE_EQ(std::get<double>(e.attributes.at("zero_lift_angle_deg")), -0.2);
  EXPECT_NE(std::get<std::string>(e.attributes.at("static_stall_source")).find("static_run.h5"), std::string::npos);
  EXPECT_NEAR(h.rows("static_stall_crossing").find(0)->second.alpha, 10.5, 1e-9);
  // The archive is a raw input of this reduction: hashed into provenance.
  ASSERT_EQ(h.provenance.inputs.size(), 1u);
  EXPECT_EQ(h.provenance.inputs[0].role, "static polar");
  EXPECT_EQ(h.provenance.inputs[0].sha256.size(), 64u);

  // The config's angle still wins over the archive's; the archive's lift slope is kept.
  Harness g;
  run.put(g.store);
  g.run("lowpass_harmonics = 20\nstatic_stall_angle_deg = 12\nstatic_polar = \"" + archive.string() + "\"\n");
  const Entry& f = g.store.entry("events/per_cycle");
  EXPECT_DOUBLE_EQ(std::get<double>(f.attributes.at("static_stall_angle_deg")), 12.0);
  EXPECT_DOUBLE_EQ(std::get<double>(f.attributes.at("lift_slope_per_rad")), 5.9);

  // An archive without a static polar is bad input naming the key.
  RunStore other;
  other.put("run/name", Text{"dynamic"});
  const auto wrong = write_archive(other, Provenance{}, {dir.path(), "dynamic_run", false});
  Harness k;
  run.put(k.store);
  try {
    k.run("lowpass_harmonics = 20\nstatic_polar = \"" + wrong.string() + "\"\n");
    ADD_FAILURE() << "expected an InputError";
  } catch (const InputError& err) {
    EXPECT_NE(std::string(err.what()).find("static_polar"), std::string::npos) << err.what();
    EXPECT_NE(std::string(err.what()).find("no /static_polar/summary"), std::string::npos) << err.what();
  }
}

TEST(Ramp, IsOneCycleTimedFromTheStartOfTheRamp) {
  Harness h;
  const double c = 0.3, u = 20, ts = 0.2, te = 0.5, a0 = 0, a1 = 30;
  const double rate = (a1 - a0) / (te - ts);
  Eigen::VectorXd t(2000), cl(2000), cm(2000);
  const double t_ss = ts + (14 - a0) / rate, t_break = t_ss + 0.06;
  for (Eigen::Index i = 0; i < t.size(); ++i) {
    t[i] = i / 2000.0;
    const double a = std::clamp(a0 + rate * (t[i] - ts), a0, a1);
    cl[i] = 0.1 * a - 1.2 * logistic((t[i] - t_break - 0.03) / 0.01) + 0.8 * std::exp(-std::pow((t[i] - t_break - 0.02) / 0.02, 2));
    cm[i] = -0.01 - 0.3 * logistic((t[i] - t_break) / 0.01 - 4);
  }
  h.store.put("run/chord_m", Scalar{c, "m"});
  h.store.put("run/U_inf_m_s", Scalar{u, "m/s"});
  h.store.put("run/motion", Text{"ramp"});
  h.store.put("motion/ramp_start_s", Scalar{ts, "s"});
  h.store.put("motion/ramp_end_s", Scalar{te, "s"});
  h.store.put("motion/ramp_alpha_start_deg", Scalar{a0, "deg"});
  h.store.put("motion/ramp_alpha_end_deg", Scalar{a1, "deg"});
  h.store.put("loads/time_s", Series{t, "s"});
  h.store.put("loads/cl", Series{cl, "1"});
  h.store.put("loads/cn", Series{cl, "1"});
  h.store.put("loads/cm", Series{cm, "1"});
  h.run("static_stall_angle_deg = 14\nlowpass_harmonics = 20\n");
  const auto x = h.rows("static_stall_crossing").find(0)->second;
  ASSERT_EQ(x.status, "ok") << x.reason;
  EXPECT_NEAR(x.t, t_ss, 1e-9);
  EXPECT_NEAR(x.t_conv, (t_ss - ts) * u / c, 1e-6);
  EXPECT_NEAR(x.value, rate, 1e-9);
  const auto m = h.rows("moment_stall").find(0)->second;
  ASSERT_EQ(m.status, "ok") << m.reason;
  // Cm = -0.06 where the logistic reaches 1/6: t_break + 0.01 (4 - ln 5).
  EXPECT_NEAR(m.t, t_break + 0.01 * (4 - std::log(5.0)), 5e-4);
  EXPECT_EQ(h.rows("reattachment_loads").find(0)->second.reason, "a ramp has no downstroke");
}

TEST(Ramp, PeriodicRampAndHoldTakesItsAngleFromTheRampsTable) {
  Harness h;
  SyntheticRun run;
  run.taps = false;
  run.put(h.store);
  // Each cycle: up from 0 to 20 deg over the first 40 % of the period, hold, down over the next 40 %, hold.
  const double period = 1 / run.freq();
  std::vector<std::int64_t> cycle;
  std::vector<std::string> stroke;
  std::vector<double> t0, t1, a0, a1;
  for (int c = 0; c < run.cycles; ++c) {
    const double ts = run.t_start(c);
    cycle.insert(cycle.end(), {c, c});
    stroke.insert(stroke.end(), {"up", "down"});
    t0.insert(t0.end(), {ts, ts + 0.5 * period});
    t1.insert(t1.end(), {ts + 0.4 * period, ts + 0.9 * period});
    a0.insert(a0.end(), {0.0, 20.0});
    a1.insert(a1.end(), {20.0, 0.0});
  }
  Table ramps;
  ramps.add({"cycle", "1", cycle}).add({"stroke", "", stroke}).add({"t_start_s", "s", t0}).add({"t_end_s", "s", t1})
      .add({"alpha_start_deg", "deg", a0}).add({"alpha_end_deg", "deg", a1});
  h.store.put("motion/ramps", ramps);
  h.store.put("run/motion", Text{"ramp"});
  h.run(kConfig);
  for (const auto& [c, r] : h.rows("static_stall_crossing")) {
    ASSERT_EQ(r.status, "ok") << r.reason;
    // 14 deg of a 20 deg ramp over 0.4 periods: 0.28 periods after the cycle start.
    EXPECT_NEAR(r.t, run.t_start(static_cast<int>(c)) + 0.28 * period, 1e-9);
    EXPECT_NEAR(r.value, 20 / (0.4 * period), 1e-6);
  }
  EXPECT_NE(h.rows("reattachment_loads").find(0)->second.reason.find("ramp-and-hold"), std::string::npos);
}

// --- bad input --------------------------------------------------------------

template <typename F>
std::string input_error(F&& f) {
  try {
    f();
  } catch (const InputError& e) {
    return e.what();
  }
  return "";
}

TEST(BadInput, NoValidCyclesIsAnErrorNamingTheCycles) {
  Harness h;
  SyntheticRun run;
  run.taps = false;
  run.put(h.store);
  Table cycles = h.store.get<Table>("cycles");
  for (auto& v : std::get<std::vector<std::int64_t>>(cycles.columns[3].data)) v = 0;
  h.store.put("cycles", cycles);
  const std::string what = input_error([&] { h.run(kConfig); });
  EXPECT_NE(what.find("cycles"), std::string::npos) << what;
  EXPECT_NE(what.find("none of the 12 cycles is valid"), std::string::npos) << what;
  EXPECT_FALSE(h.store.contains("events/per_cycle"));
}

TEST(BadInput, NoStaticStallAngleAndNoPolarIsAnErrorNamingTheKey) {
  Harness h;
  SyntheticRun run;
  run.taps = false;
  run.put(h.store);
  const std::string what = input_error([&] { h.run("lowpass_harmonics = 20\n"); });
  EXPECT_NE(what.find("static_stall_angle_deg"), std::string::npos) << what;
  EXPECT_NE(what.find("static_polar"), std::string::npos) << what;
}

TEST(BadInput, ThresholdsOutsideTheirSensibleRangeAreErrorsNamingTheKey) {
  for (const std::string key : {"moment_stall_delta = 0.9", "lowpass_harmonics = 1", "persistence_conv = -1",
                                "reattachment_tolerance = 0", "reattachment_sustain_conv = 100",
                                "le_collapse_fraction = 1.5", "secondary_peak_prominence = 0",
                                "static_stall_angle_deg = 95", "convection_taps_x_over_c = [0.8, 0.2]",
                                "bootstrap_resamples = 5", "le_region_x_over_c = 0.6",
                                "reattachment_suction_fraction = 1.5", "reattachment_cp_tolerance = 0",
                                "reattachment_aft_x_over_c = 0.2", "reattachment_criterion = \"static\"",
                                "convection_cutoff_strouhal = 10"}) {
    EventsStage stage;
    ConfigFile f = ConfigFile::parse("[events]\n" + key + "\n", "run.toml");
    ConfigSection s(f, "events");
    const std::string what = input_error([&] { stage.configure(s); });
    EXPECT_NE(what.find(key.substr(0, key.find(' '))), std::string::npos) << key << ": " << what;
  }
}

TEST(BadInput, ACutOffAboveNyquistIsAnErrorNamingLowpassHarmonics) {
  Harness h;
  SyntheticRun run;
  run.taps = false;
  run.rate_hz = 100;  // Nyquist 50 Hz; 30 x 2.1 Hz = 64 Hz
  run.put(h.store);
  const std::string what = input_error([&] { h.run("static_stall_angle_deg = 14\nlowpass_harmonics = 30\n"); });
  EXPECT_NE(what.find("lowpass_harmonics"), std::string::npos) << what;
}

TEST(BadInput, AStaticRunHasNoEvents) {
  Harness h;
  SyntheticRun run;
  run.taps = false;
  run.put(h.store);
  h.store.put("run/motion", Text{"staircase"});
  const std::string what = input_error([&] { h.run(kConfig); });
  EXPECT_NE(what.find("staircase"), std::string::npos) << what;
}

}  // namespace
}  // namespace stallscope
