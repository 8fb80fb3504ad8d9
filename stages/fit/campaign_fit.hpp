#pragma once
// Campaign-wide Goman-Khrabrov fit: one (tau1, tau2) pair shared by every run
// (all runs' windowed residuals in one least-squares problem, each run with its
// own static curve and attached lag), an interval from a bootstrap over runs,
// and the trend of the per-run constants with reduced frequency and mean
// angle (least-squares line, slope -+ t(0.975, n-2) se; none when the runs
// span less than 0.005 in k or 0.5 deg in mean angle) -- are they constant?
// Runs fitted with the vortex-lift term keep their own T_v, T_vl (and onset)
// in the shared fit: only tau1 and tau2 are shared.
#include <deque>
#include <string>
#include <vector>

#include "pipeline/values.hpp"
#include "stages/fit/run_fit.hpp"

namespace stallscope::fit {

struct CampaignRun {
  RunLoops loops;
  StaticSeparation curve;
  RunFit fit;
};

struct SharedFit {
  LoopFit fit;  // tau1, tau2, rms over all runs' windows; reason if not fitted
  BootstrapFit bootstrap;
  std::int64_t runs = 0;
};

// Runs whose own fit failed are left out (and named in the reason). The
// bootstrap's resamples are fitted on `threads` threads, with the same result.
SharedFit fit_shared(const std::deque<CampaignRun>& runs, const FitSettings& settings, int threads = 1);

struct Trend {
  std::string constant, regressor;
  double slope = NAN, slope_lo = NAN, slope_hi = NAN, intercept = NAN;
  std::int64_t runs = 0;
  std::string note;
};
std::vector<Trend> constant_trends(const std::deque<CampaignRun>& runs);

// campaign_fit.csv: one row per run and a last row "shared"; campaign_trend.csv.
Table campaign_table(const std::deque<CampaignRun>& runs, const SharedFit& shared);
Table trend_table(const std::vector<Trend>& trends);

}  // namespace stallscope::fit
