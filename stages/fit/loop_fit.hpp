#pragma once
// Fitting tau1, tau2 (convective times) of the Goman-Khrabrov model to measured
// loops: one loop by bounded least squares over a fit window, and the
// uncertainty from the cycles -- each cycle's own fit, and a bootstrap over
// cycles (resample cycles with replacement, average their loops, refit;
// Efron & Tibshirani 1993, ch. 13, percentile intervals). With vortex_lift the
// Leishman-Beddoes vortex term (vortex_lift.hpp) is fitted as well: T_v and
// T_vl beside tau1 and tau2, from the loop's stall onset.
#include <Eigen/Core>
#include <cstdint>
#include <string>
#include <vector>

#include "stages/fit/loop_model.hpp"

namespace stallscope::fit {

struct FitOptions {
  double tau1_bounds[2] = {0.0, 20.0};  // c/U
  double tau2_bounds[2] = {0.0, 20.0};
  int grid_points = 9;                  // start: the best of a grid_points^2 grid over the bounds
  double min_separation_drop = 0.2;     // the loop must take x0 below 1 - this, else it never stalls
  int min_window_points = 8;
  AttachedLag lag = AttachedLag::kTheodorsen;
  bool vortex_lift = false;             // fit the vortex-lift term too
  double t_v_bounds[2] = {0.2, 12.0};   // c/U: decay time constant T_v
  double t_vl_bounds[2] = {0.2, 12.0};  // c/U: time on the chord after onset T_vl
  int vortex_grid_points = 7;           // start: (T_v, T_vl) on a grid of this^2, after (tau1, tau2) on theirs
};

struct LoopFit {
  bool fitted = false;
  std::string reason;          // why not fitted, or a flag (a constant at its bound)
  double tau1 = NAN, tau2 = NAN;  // c/U
  double rms_residual = NAN;   // over the window
  std::int64_t points = 0;
  Eigen::VectorXd cn_fitted, x_fitted;  // over the whole loop
  // The vortex-lift term, when fitted: its constants (c/U), its onset and its share of cn_fitted.
  bool vortex_lift = false;
  double t_v = NAN, t_vl = NAN, vortex_onset_conv = NAN;
  Eigen::VectorXd cn_vortex;
};

// in_window: the bins fitted (false for the excluded stretch). onset_phase_deg:
// the loop's stall onset, where the vortex-lift term starts; without one (NaN)
// a vortex_lift fit falls back to the plain model and says so in the reason.
LoopFit fit_loop(const Eigen::VectorXd& alpha_deg, const Eigen::VectorXd& cn, const std::vector<bool>& in_window,
                 double period_s, const FlowScales& flow, const StaticSeparation& x0, const FitOptions& options,
                 const LoopFit* start = nullptr, double onset_phase_deg = NAN);

struct BootstrapFit {
  std::vector<double> tau1, tau2;  // fitted resamples only
  std::int64_t requested = 0, failed = 0;
  double tau1_ci[2] = {NAN, NAN}, tau2_ci[2] = {NAN, NAN};  // 95 % intervals (see bootstrap_over_cycles)
  double tau1_se = NAN, tau2_se = NAN;  // bootstrap standard errors
  double percentile_tau1[2] = {NAN, NAN}, percentile_tau2[2] = {NAN, NAN};  // 2.5 and 97.5 percentiles
  double correlation = NAN;
  std::string note;
  // The vortex-lift constants of the same resamples (empty without the term).
  std::vector<double> t_v, t_vl;
  double t_v_ci[2] = {NAN, NAN}, t_vl_ci[2] = {NAN, NAN};
  double t_v_se = NAN, t_vl_se = NAN;
  double percentile_t_v[2] = {NAN, NAN}, percentile_t_vl[2] = {NAN, NAN};
};

// The interval is the centre fit -+ t(0.975, n-1) sqrt(n/(n-1)) se: the
// bootstrap standard error with the small-sample factors of a mean over n
// cycles (the plain percentile interval, also kept, is too narrow for the 5-20
// cycles of a run). alpha_deg, cn: bins x cycles (valid cycles only). The resampling indices are
// drawn from one seeded stream before any fit, so results do not depend on threads.
BootstrapFit bootstrap_over_cycles(const Eigen::MatrixXd& alpha_deg, const Eigen::MatrixXd& cn,
                                   const std::vector<bool>& in_window, double period_s, const FlowScales& flow,
                                   const StaticSeparation& x0, const FitOptions& options, const LoopFit& centre,
                                   std::int64_t resamples, std::uint64_t seed, int threads = 1,
                                   double onset_phase_deg = NAN);

// Intervals, standard errors and correlation from out.tau1/tau2 about the
// centre fit, for resamples of `units` independent units (cycles or runs).
// False (nothing set) for fewer than 10 fitted resamples or 2 units.
bool summarise_bootstrap(BootstrapFit& out, const LoopFit& centre, Eigen::Index units);

// The bin-wise mean of the chosen columns, skipping non-finite values.
Eigen::VectorXd mean_loop(const Eigen::MatrixXd& loops, const std::vector<Eigen::Index>& columns);

}  // namespace stallscope::fit
