#pragma once
// Small archives for the report tests, written with the agreed store keys:
// a sinusoidal run of eight cycles (one invalid), its loads, phase averages,
// taps and Cp, events, damping, and optionally a PIV vortex track per cycle.
#include <cmath>
#include <filesystem>
#include <map>

#include <fmt/format.h>
#include <numbers>
#include <string>

#include "pipeline/archive.hpp"
#include "stages/numerics/statistics.hpp"
#include "stages/theory/naca4.hpp"
#include "tests/support/test_support.hpp"

namespace stallscope::testing {

struct FixtureRun {
  static constexpr int kCycles = 8;
  static constexpr int kInvalidCycle = 3;
  static constexpr int kBins = 36;
  static constexpr double kChord = 0.25, kSpeed = 30.0, kFreq = 3.82, kMean = 10.0, kAmp = 8.0;
  static constexpr double kRate = 2000.0;  // samples per second
  static double k() { return std::numbers::pi * kFreq * kChord / kSpeed; }
  static double alpha(double t) { return kMean - kAmp * std::cos(2 * std::numbers::pi * kFreq * t); }
  // A loop with hysteresis and a per-cycle wobble, so cycles differ.
  static double cl(double t, int cycle) {
    const double th = 2 * std::numbers::pi * kFreq * t;
    return 0.1 * alpha(t) + 0.25 * std::sin(th) + 0.03 * std::sin(3.0 * cycle + 1.0) * std::sin(2 * th);
  }
  static double cm(double t, int cycle) {
    const double th = 2 * std::numbers::pi * kFreq * t;
    return -0.01 - 0.04 * std::sin(th) * (1 + 0.1 * std::cos(cycle)) - 0.05 * std::max(0.0, std::sin(th - 1.2));
  }
};

inline RunStore fixture_minimal_store() {
  RunStore s;
  s.put("run/name", Text{"tr07"});
  s.put("run/airfoil", Text{"NACA 0012"});
  s.put("run/chord_m", Scalar{FixtureRun::kChord, "m"});
  s.put("run/span_m", Scalar{0.6, "m"});
  s.put("run/pivot_x_over_c", Scalar{0.25, "1"});
  s.put("run/U_inf_m_s", Scalar{FixtureRun::kSpeed, "m/s"});
  s.put("run/rho_kg_m3", Scalar{1.2041, "kg/m^3"});
  s.put("run/q_pa", Scalar{0.5 * 1.2041 * FixtureRun::kSpeed * FixtureRun::kSpeed, "Pa"});
  s.put("run/Re", Scalar{512345.0, "1"});
  s.put("run/Mach", Scalar{0.08741, "1"});
  s.put("run/T_K", Scalar{293.15, "K"});
  return s;
}

inline RunStore fixture_store(bool with_piv) {
  using R = FixtureRun;
  RunStore s = fixture_minimal_store();
  s.put("run/motion", Text{"sine"});
  s.put("run/alpha_mean_deg", Scalar{R::kMean, "deg"});
  s.put("run/alpha_amp_deg", Scalar{R::kAmp, "deg"});
  s.put("run/freq_hz", Scalar{R::kFreq, "Hz"});
  s.put("run/k", Scalar{R::k(), "1"});

  const double period = 1.0 / R::kFreq;
  const int n = static_cast<int>(R::kCycles * period * R::kRate);
  Eigen::VectorXd t(n), a(n), cl(n), cm(n);
  for (int i = 0; i < n; ++i) {
    t[i] = i / R::kRate;
    const int c = std::min(R::kCycles - 1, static_cast<int>(t[i] / period));
    a[i] = R::alpha(t[i]);
    cl[i] = R::cl(t[i], c);
    cm[i] = R::cm(t[i], c);
  }
  s.put("loads/time_s", Series{t, "s"});
  s.put("loads/alpha_deg", Series{a, "deg"});
  s.put("loads/cl", Series{cl, "1"});
  s.put("loads/cm", Series{cm, "1"}, {{"moment_ref_x_over_c", 0.25}});

  std::vector<std::int64_t> index, valid;
  std::vector<double> t0, t1;
  std::vector<std::string> reason;
  for (int c = 0; c < R::kCycles; ++c) {
    index.push_back(c);
    t0.push_back(c * period);
    t1.push_back((c + 1) * period);
    valid.push_back(c == R::kInvalidCycle ? 0 : 1);
    reason.push_back(c == R::kInvalidCycle ? "q drift 3 % from the run's median cycle" : "");
  }
  Table cycles;
  cycles.add({"cycle", "1", index}).add({"t_start_s", "s", t0}).add({"t_end_s", "s", t1}).add({"valid", "1", valid})
      .add({"reason", "", reason});
  s.put("cycles", cycles, {{"valid_cycles", std::int64_t{R::kCycles - 1}}});

  // Phase averages over the valid cycles, bin by bin from the same formulas.
  Eigen::VectorXd bins(R::kBins), am(R::kBins), clm(R::kBins), cl05(R::kBins), cl95(R::kBins), cmm(R::kBins),
      cm05(R::kBins), cm95(R::kBins);
  for (int b = 0; b < R::kBins; ++b) {
    bins[b] = (b + 0.5) * 360.0 / R::kBins;
    const double tb = bins[b] / 360.0 * period;
    am[b] = R::alpha(tb);
    std::vector<double> l, m;
    for (int c = 0; c < R::kCycles; ++c)
      if (c != R::kInvalidCycle) {
        l.push_back(R::cl(tb, c));
        m.push_back(R::cm(tb, c));
      }
    clm[b] = numerics::mean(l);
    cmm[b] = numerics::mean(m);
    cl05[b] = numerics::percentile(l, 0.05);
    cl95[b] = numerics::percentile(l, 0.95);
    cm05[b] = numerics::percentile(m, 0.05);
    cm95[b] = numerics::percentile(m, 0.95);
  }
  s.put("phase/bin_deg", Series{bins, "deg"});
  s.put("phase/alpha_deg/mean", Series{am, "deg"});
  s.put("phase/cl/mean", Series{clm, "1"});
  s.put("phase/cl/p05", Series{cl05, "1"});
  s.put("phase/cl/p95", Series{cl95, "1"});
  s.put("phase/cm/mean", Series{cmm, "1"}, {{"moment_ref_x_over_c", 0.25}});
  s.put("phase/cm/p05", Series{cm05, "1"});
  s.put("phase/cm/p95", Series{cm95, "1"});

  // Taps on a NACA 0012 and a Cp field with a suction peak that collapses
  // and a bump that travels aft after the maximum angle.
  const auto section = theory::parse_naca4("0012");
  const auto layout = theory::naca4_tap_layout(section, 10);
  std::vector<std::string> names, surface, status;
  std::vector<double> xs, ys;
  for (std::size_t j = 0; j < layout.size(); ++j) {
    names.push_back(fmt::format("p{:02d}", j + 1));
    xs.push_back(layout[j].x_over_c);
    ys.push_back(layout[j].y_over_c);
    surface.push_back(layout[j].surface == theory::Surface::kUpper ? "upper" : "lower");
    status.push_back(j == 4 ? "dead" : "ok");
  }
  Table taps;
  taps.add({"tap", "", names}).add({"x_over_c", "1", xs}).add({"y_over_c", "1", ys}).add({"surface", "", surface})
      .add({"status", "", status});
  s.put("pressure/taps", taps);
  auto cp_at = [&](double phase_deg, std::size_t j) {
    const double x = xs[j], al = R::alpha(phase_deg / 360.0 * period) * std::numbers::pi / 180;
    if (surface[j] == "lower") return 1.0 - 2.0 * std::sqrt(1 - x) * (0.5 + 0.4 * std::cos(al));
    const double peak = phase_deg < 200 ? 1.0 : 0.2;
    const double bump_x = std::clamp((phase_deg - 160) / 120.0, 0.0, 1.2);
    return 1.0 - 2.0 * std::sqrt(1 - x) - peak * 8.0 * al / (1 + 40 * x) -
           (phase_deg > 160 ? 2.0 * std::exp(-std::pow((x - bump_x) / 0.12, 2)) : 0.0);
  };
  Eigen::MatrixXd cpm(R::kBins, static_cast<Eigen::Index>(names.size()));
  for (int b = 0; b < R::kBins; ++b)
    for (std::size_t j = 0; j < names.size(); ++j) cpm(b, static_cast<Eigen::Index>(j)) = cp_at(bins[b], j);
  s.put("phase/cp/mean", Matrix{cpm, "1", names});

  // Events: three per cycle, the invalid cycle included (the report must leave it out).
  std::vector<std::int64_t> ec;
  std::vector<std::string> ev, st, why;
  std::vector<double> ets, ephase, ealpha, etconv;
  const char* kinds[] = {"static_stall_crossing", "stall_onset", "reattachment"};
  const double base[] = {100.0, 150.0, 300.0};
  std::map<std::string, std::vector<double>> phases;
  for (int c = 0; c < R::kCycles; ++c)
    for (int e = 0; e < 3; ++e) {
      const double ph = base[e] + 6.0 * std::sin(1.7 * c + e);
      ec.push_back(c);
      ev.push_back(kinds[e]);
      const bool missing = c == 5 && e == 2;
      st.push_back(missing ? "missing" : "ok");
      why.push_back(missing ? "the loads never rejoin the attached-flow reference" : "");
      const double te = c * period + ph / 360.0 * period;
      ets.push_back(missing ? NAN : te);
      ephase.push_back(missing ? NAN : ph);
      ealpha.push_back(missing ? NAN : R::alpha(te));
      etconv.push_back(missing ? NAN : (te - c * period) * R::kSpeed / R::kChord);
      if (!missing && c != R::kInvalidCycle) phases[kinds[e]].push_back(ph);
    }
  Table per_cycle;
  per_cycle.add({"cycle", "1", ec}).add({"event", "", ev}).add({"status", "", st}).add({"reason", "", why})
      .add({"t_s", "s", ets}).add({"t_conv", "1", etconv}).add({"phase_deg", "deg", ephase})
      .add({"alpha_deg", "deg", ealpha});
  s.put("events/per_cycle", per_cycle, {{"csv", std::string("events_per_cycle.csv")}});
  std::vector<std::string> sev, sq;
  std::vector<std::int64_t> sn;
  std::vector<double> smean, sstd, smed, s05, s95, slo, shi;
  for (const char* k : kinds) {
    std::vector<double> v = phases[k];
    const auto mi = numerics::mean_interval95(v);
    sev.push_back(k);
    sq.push_back("phase_deg");
    sn.push_back(static_cast<std::int64_t>(v.size()));
    smean.push_back(mi.mean);
    sstd.push_back(mi.std);
    slo.push_back(mi.lo);
    shi.push_back(mi.hi);
    s05.push_back(numerics::percentile(v, 0.05));
    s95.push_back(numerics::percentile(v, 0.95));
    smed.push_back(numerics::percentile(v, 0.5));
  }
  Table summary;
  summary.add({"event", "", sev}).add({"quantity", "", sq}).add({"n", "1", sn}).add({"mean", "deg", smean})
      .add({"std", "deg", sstd}).add({"median", "deg", smed}).add({"p05", "deg", s05}).add({"p95", "deg", s95})
      .add({"ci95_lo", "deg", slo}).add({"ci95_hi", "deg", shi});
  s.put("events/summary", summary, {{"csv", std::string("events_summary.csv")}});

  // Damping: two valid cycles negative.
  std::vector<double> xi;
  std::vector<std::int64_t> neg;
  std::vector<double> used;
  for (int c = 0; c < R::kCycles; ++c) {
    xi.push_back(0.02 - 0.03 * std::cos(2.1 * c));
    neg.push_back(xi.back() < 0 ? 1 : 0);
    if (c != R::kInvalidCycle) used.push_back(xi.back());
  }
  const auto mi = numerics::mean_interval95(used);
  Table damping;
  damping.add({"cycle", "1", index}).add({"valid", "1", valid}).add({"xi", "1", xi}).add({"negative_damping", "1", neg});
  s.put("cycles/damping", damping,
        {{"xi_mean", mi.mean}, {"xi_ci95_lo", mi.lo}, {"xi_ci95_hi", mi.hi},
         {"negative_damping", std::string(mi.mean < 0 ? "yes" : "no")}});

  if (with_piv) {
    // One leading-edge vortex per valid cycle convecting at 0.3 U from x/c = 0.1.
    constexpr double kConvection = 0.3;
    std::vector<std::int64_t> track, frame, pt_track, pt_cycle, le;
    std::vector<double> tt, tx, ty, speed, det;
    std::int64_t id = 0;
    for (int c = 0; c < R::kCycles; ++c) {
      if (c == R::kInvalidCycle) continue;
      const double birth_conv = 1.0 + 0.1 * std::sin(c);
      for (int j = 0; j < 12; ++j) {
        const double tc = birth_conv + 0.25 * j;
        track.push_back(id);
        frame.push_back(100 * c + j);
        tt.push_back(c * period + tc * R::kChord / R::kSpeed);
        tx.push_back(0.1 + kConvection * (tc - birth_conv));
        ty.push_back(0.04 + 0.08 * tx.back());
      }
      pt_track.push_back(id++);
      pt_cycle.push_back(c);
      le.push_back(1);
      speed.push_back(kConvection);
      det.push_back(NAN);
    }
    Table tracks;
    tracks.add({"track", "1", track}).add({"frame", "1", frame}).add({"t_s", "s", tt}).add({"x_over_c", "1", tx})
        .add({"y_over_c", "1", ty});
    s.put("vortex/tracks", tracks);
    Table per_track;
    per_track.add({"track", "1", pt_track}).add({"cycle", "1", pt_cycle}).add({"le_vortex", "1", le})
        .add({"convection_speed", "1", speed}).add({"detachment_t_s", "s", det});
    s.put("vortex/per_track", per_track,
          {{"convection_window_x_over_c", std::string("0.200000 to 0.800000, after detachment when known")}});
    // A swirl field at onset: a Gaussian vortex core on a lab grid.
    constexpr int kNx = 40, kNy = 24;
    Eigen::VectorXd gx = Eigen::VectorXd::LinSpaced(kNx, -0.05, 0.30), gy = Eigen::VectorXd::LinSpaced(kNy, -0.05, 0.16);
    Eigen::MatrixXd field(kNy, kNx);
    for (int j = 0; j < kNy; ++j)
      for (int i = 0; i < kNx; ++i)
        field(j, i) = 12.0 * std::exp(-(std::pow(gx[i] - 0.06, 2) + std::pow(gy[j] - 0.05, 2)) / 4e-4) -
                      3.0 * std::exp(-(std::pow(gx[i] - 0.2, 2) + std::pow(gy[j] - 0.01, 2)) / 2e-4);
    s.put("piv/grid_x_m", Series{gx, "m"});
    s.put("piv/grid_y_m", Series{gy, "m"});
    s.put("vortex/onset_swirl", Matrix{field, "1", {}},
          {{"frame", std::int64_t{100}}, {"t_s", 0.3}, {"alpha_deg", 17.0}, {"pivot_x_m", 0.0625},
           {"pivot_y_m", 0.0}});
  }
  return s;
}

inline Provenance fixture_provenance(const std::filesystem::path& raw) {
  Provenance p = Provenance::start("stallscope reduce tr07.toml");
  p.config_path = "/campaign/tr07.toml";
  p.config_toml = "[run]\nname = \"tr07\"\nchord_m = 0.25\n";
  p.add_input(raw, "DAQ file");
  p.calibrations.push_back({"xdcr-2026-11", "/campaign/cal/xdcr.toml", std::string(64, 'a')});
  p.stages.push_back({"run", 0.001, "name = \"tr07\"\n"});
  p.stages.push_back({"loads", 0.25, ""});
  return p;
}

// Writes a fixture archive into dir and returns its path.
inline std::filesystem::path write_fixture_archive(const ScratchDir& dir, const std::string& name, const RunStore& store) {
  const auto raw = dir.write("raw/" + name + "_daq.csv", "time_s,alpha_enc\n0,1.25\n");
  return write_archive(store, fixture_provenance(raw), {dir / name, "tr07", false});
}

}  // namespace stallscope::testing
