#pragma once
// Fitting tau1, tau2 (convective times) of the Goman-Khrabrov model to measured
// loops: one loop by bounded least squares over a fit window, and the
// uncertainty from the cycles -- each cycle's own fit, and a bootstrap over
// cycles (resample cycles with replacement, average their loops, refit;
// Efron & Tibshirani 1993, ch. 13, percentile intervals).
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
};

struct LoopFit {
  bool fitted = false;
  std::string reason;          // why not fitted, or a flag (a constant at its bound)
  double tau1 = NAN, tau2 = NAN;  // c/U
  double rms_residual = NAN;   // over the window
  std::int64_t points = 0;
  Eigen::VectorXd cn_fitted, x_fitted;  // over the whole loop
};

// in_window: the bins fitted (false for the excluded stretch).
LoopFit fit_loop(const Eigen::VectorXd& alpha_deg, const Eigen::VectorXd& cn, const std::vector<bool>& in_window,
                 double period_s, const FlowScales& flow, const StaticSeparation& x0, const FitOptions& options,
                 const LoopFit* start = nullptr);

struct BootstrapFit {
  std::vector<double> tau1, tau2;  // fitted resamples only
  std::int64_t requested = 0, failed = 0;
  double tau1_ci[2] = {NAN, NAN}, tau2_ci[2] = {NAN, NAN};  // 95 % intervals (see bootstrap_over_cycles)
  double tau1_se = NAN, tau2_se = NAN;  // bootstrap standard errors
  double percentile_tau1[2] = {NAN, NAN}, percentile_tau2[2] = {NAN, NAN};  // 2.5 and 97.5 percentiles
  double correlation = NAN;
  std::string note;
};

// The interval is the centre fit -+ t(0.975, n-1) sqrt(n/(n-1)) se: the
// bootstrap standard error with the small-sample factors of a mean over n
// cycles (the plain percentile interval, also kept, is too narrow for the 5-20
// cycles of a run). alpha_deg, cn: bins x cycles (valid cycles only). The resampling indices are
// drawn from one seeded stream before any fit, so results do not depend on threads.
BootstrapFit bootstrap_over_cycles(const Eigen::MatrixXd& alpha_deg, const Eigen::MatrixXd& cn,
                                   const std::vector<bool>& in_window, double period_s, const FlowScales& flow,
                                   const StaticSeparation& x0, const FitOptions& options, const LoopFit& centre,
                                   std::int64_t resamples, std::uint64_t seed, int threads = 1);

// Intervals, standard errors and correlation from out.tau1/tau2 about the
// centre fit, for resamples of `units` independent units (cycles or runs).
// False (nothing set) for fewer than 10 fitted resamples or 2 units.
bool summarise_bootstrap(BootstrapFit& out, const LoopFit& centre, Eigen::Index units);

// The bin-wise mean of the chosen columns, skipping non-finite values.
Eigen::VectorXd mean_loop(const Eigen::MatrixXd& loops, const std::vector<Eigen::Index>& columns);

}  // namespace stallscope::fit
