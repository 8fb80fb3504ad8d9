#pragma once
// One run's Goman-Khrabrov fit, from a run store (this reduction's, or an
// archive read back): the loops and their fit window, the fits (phase
// average, each cycle, bootstrap over cycles, sensitivity to x0 and to the
// attached lag), and the fit/* entries of the archive layout.
//
// Fit window: the Kirchhoff-GK form has no vortex lift, so by default
// (exclude = "vortex_lift") each loop leaves out the stretch from stall onset
// until the dynamic-stall vortex has left the chord: the vortex
// trailing-edge passage (from the PIV track, else the taps' convection line)
// plus vortex_clearance_conv, or, with neither, onset + vortex_lift_conv
// convective times. exclude = "stalled" leaves out onset to reattachment;
// "none" fits the whole loop. The phase-averaged loop uses the mean phases of
// the events over valid cycles, each cycle its own (the mean where missing).
// With fit.vortex_lift the overshoot is modelled (Leishman-Beddoes vortex lift
// from the same stall onset), so the default window is then "none".
#include <cstdint>
#include <string>
#include <vector>

#include "pipeline/run_store.hpp"
#include "stages/fit/loop_fit.hpp"

namespace stallscope::fit {

struct FitSettings {
  StaticCurveOptions curve;
  FitOptions fit;
  std::string exclude = "vortex_lift";  // vortex_lift | stalled | none
  double vortex_lift_conv = 6.0;        // excluded after onset when no trailing-edge passage is known
  double vortex_clearance_conv = 1.0;   // excluded after the trailing-edge passage
  std::int64_t bootstrap_resamples = 200;
  std::uint64_t bootstrap_seed = 1;
  bool sensitivity = true;
};

struct StaticPolarPoints {
  std::vector<double> alpha_deg, cn;
  std::string source;  // where they came from, for the archive
};

// What a fit needs from one run.
struct RunLoops {
  std::string run;
  FlowScales flow;
  double period_s = 0, reduced_frequency = 0, alpha_mean_deg = NAN;
  Eigen::VectorXd phase_deg, alpha_deg, cn;          // the phase average
  Eigen::MatrixXd cycle_alpha_deg, cycle_cn;         // valid cycles, bins x cycles
  std::vector<std::int64_t> cycle_ids;
  std::vector<bool> window;                          // phase average
  std::vector<std::vector<bool>> cycle_windows;
  std::string window_note;
  double onset_deg = NAN;                 // stall onset phase (phase average; NaN: none among the events)
  std::vector<double> cycle_onset_deg;    // each cycle's own (the mean where missing)
};

// Throws InputError naming the store key when the run lacks a loop.
RunLoops read_run_loops(const RunStore& store, const FitSettings& settings);

struct SensitivityFit {
  std::string variant;
  LoopFit fit;
};

struct RunFit {
  LoopFit main;
  BootstrapFit bootstrap;
  std::vector<LoopFit> cycles;  // as cycle_ids
  std::vector<SensitivityFit> sensitivity;
  Eigen::VectorXd cn_static;    // at the loop's angles
};

RunFit fit_run(const RunLoops& loops, const StaticSeparation& curve, const StaticPolarPoints& polar,
               const FitSettings& settings, int threads = 1);

// The phase-average fit and its bootstrap intervals as the run's reduction
// stored them (fit/summary): what a campaign-wide fit takes from each run, so
// a campaign does not redo fits its runs have made. Not the per-cycle fits nor
// the loop curves. Throws InputError naming `where` if fit/summary is missing
// or lacks a column.
RunFit stored_run_fit(const RunStore& store, const RunLoops& loops, const std::string& where);

// The fit/* entries: fit/summary (fit_summary.csv), fit/loop (fit_loop.csv),
// fit/static_separation (fit_static_separation.csv), fit/static_polar (the
// points used, so a refit needs nothing else), fit/bootstrap, fit/onset
// (fit_onset_per_cycle.csv).
void put_fit(RunStore& store, const RunLoops& loops, const StaticSeparation& curve, const StaticPolarPoints& polar,
             const RunFit& fit, const FitSettings& settings);

}  // namespace stallscope::fit
