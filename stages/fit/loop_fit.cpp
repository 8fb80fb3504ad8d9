#include "stages/fit/loop_fit.hpp"

#include <fmt/format.h>

#include <algorithm>
#include <cmath>
#include <random>
#include <stdexcept>
#include <thread>

#include "stages/fit/least_squares.hpp"
#include "stages/numerics/statistics.hpp"

namespace stallscope::fit {

LoopFit fit_loop(const Eigen::VectorXd& alpha_deg, const Eigen::VectorXd& cn, const std::vector<bool>& in_window,
                 double period_s, const FlowScales& flow, const StaticSeparation& x0, const FitOptions& o,
                 const LoopFit* start, double onset_phase_deg) {
  LoopFit out;
  if (!alpha_deg.allFinite()) {
    out.reason = "the loop has empty phase bins in its angle";
    return out;
  }
  const LoopModel model(alpha_deg, period_s, flow, x0, o.lag);
  const double lowest = model.lowest_static_separation();
  if (lowest > 1.0 - o.min_separation_drop) {
    out.reason = fmt::format(
        "the loop never stalls: the static separation x0 stays at or above {:.3f} over alpha {:.2f} to {:.2f} deg "
        "(needs a drop below {:.3f}), so tau1 and tau2 leave no trace in Cn",
        lowest, alpha_deg.minCoeff(), alpha_deg.maxCoeff(), 1.0 - o.min_separation_drop);
    return out;
  }
  std::vector<Eigen::Index> used;
  for (Eigen::Index b = 0; b < cn.size(); ++b)
    if (in_window[static_cast<std::size_t>(b)] && std::isfinite(cn[b])) used.push_back(b);
  out.points = static_cast<std::int64_t>(used.size());
  if (out.points < o.min_window_points) {
    out.reason = fmt::format("only {} bin(s) in the fit window with a finite Cn (at least {} needed)", out.points,
                             o.min_window_points);
    return out;
  }
  // The vortex term starts at the loop's onset: without one there is nothing to place it by.
  const bool vortex = o.vortex_lift && std::isfinite(onset_phase_deg);
  const double onset_conv = vortex ? onset_phase_deg / 360.0 * model.period_conv() : NAN;
  const auto windowed = [&](const Eigen::VectorXd& model_cn) {
    Eigen::VectorXd r(static_cast<Eigen::Index>(used.size()));
    for (std::size_t j = 0; j < used.size(); ++j) r[static_cast<Eigen::Index>(j)] = model_cn[used[j]] - cn[used[j]];
    return r;
  };
  LeastSquaresResult best;
  Box box;
  if (!vortex) {
    const auto residuals = [&](const Eigen::VectorXd& p) { return windowed(model.normal_force({p[0], p[1]})); };
    box = Box{Eigen::Vector2d(o.tau1_bounds[0], o.tau2_bounds[0]), Eigen::Vector2d(o.tau1_bounds[1], o.tau2_bounds[1])};
    best = start && start->fitted ? bounded_least_squares(residuals, Eigen::Vector2d(start->tau1, start->tau2), box)
                                  : grid_started_least_squares(residuals, box, o.grid_points);
  } else {
    const auto residuals = [&](const Eigen::VectorXd& p) {
      return windowed(model.normal_force({p[0], p[1]}, VortexLiftTerm{onset_conv, {p[2], p[3]}}));
    };
    box = Box{Eigen::Vector4d(o.tau1_bounds[0], o.tau2_bounds[0], o.t_v_bounds[0], o.t_vl_bounds[0]),
              Eigen::Vector4d(o.tau1_bounds[1], o.tau2_bounds[1], o.t_v_bounds[1], o.t_vl_bounds[1])};
    best = start && start->fitted && start->vortex_lift
               ? bounded_least_squares(residuals, Eigen::Vector4d(start->tau1, start->tau2, start->t_v, start->t_vl), box)
               : grid_started_least_squares(residuals, box,
                                            {o.grid_points, o.grid_points, o.vortex_grid_points, o.vortex_grid_points});
  }
  if (!std::isfinite(best.cost)) {
    out.reason = "the model gives no finite Cn anywhere in the bounds";
    return out;
  }
  out.fitted = true;
  out.tau1 = best.parameters[0];
  out.tau2 = best.parameters[1];
  out.rms_residual = std::sqrt(best.cost / double(used.size()));
  if (!vortex) {
    out.cn_fitted = model.normal_force({out.tau1, out.tau2}, &out.x_fitted);
  } else {
    out.vortex_lift = true;
    out.t_v = best.parameters[2];
    out.t_vl = best.parameters[3];
    out.vortex_onset_conv = onset_conv;
    out.cn_fitted = model.normal_force({out.tau1, out.tau2}, VortexLiftTerm{onset_conv, {out.t_v, out.t_vl}},
                                       &out.x_fitted, &out.cn_vortex);
  }
  std::vector<std::string> flags;
  if (o.vortex_lift && !vortex) flags.push_back("no stall onset to start the vortex-lift term: fitted without it");
  static const char* const names[] = {"tau1", "tau2", "T_v", "T_vl"};
  for (Eigen::Index k = 0; k < best.parameters.size(); ++k) {
    const double v = best.parameters[k], lo = box.lower[k], hi = box.upper[k];
    const double tol = 1e-6 * (hi - lo);
    if (v <= lo + tol && lo > 0) flags.push_back(fmt::format("{} at its lower bound", names[k]));
    if (v >= hi - tol) flags.push_back(fmt::format("{} at its upper bound", names[k]));
  }
  if (!best.converged) flags.push_back(fmt::format("not converged in {} iterations", best.iterations));
  for (const auto& f : flags) out.reason += (out.reason.empty() ? "" : "; ") + f;
  return out;
}

Eigen::VectorXd mean_loop(const Eigen::MatrixXd& loops, const std::vector<Eigen::Index>& columns) {
  Eigen::VectorXd sum = Eigen::VectorXd::Zero(loops.rows()), count = Eigen::VectorXd::Zero(loops.rows());
  for (Eigen::Index c : columns)
    for (Eigen::Index b = 0; b < loops.rows(); ++b)
      if (std::isfinite(loops(b, c))) {
        sum[b] += loops(b, c);
        count[b] += 1;
      }
  return sum.cwiseQuotient(count);  // 0/0 = NaN where no cycle fills the bin
}

bool summarise_bootstrap(BootstrapFit& out, const LoopFit& centre, Eigen::Index units) {
  if (out.tau1.size() < 10 || units < 2) return false;
  std::vector<double> sorted1 = out.tau1, sorted2 = out.tau2;
  out.percentile_tau1[0] = numerics::percentile(sorted1, 0.025);
  out.percentile_tau1[1] = numerics::percentile(sorted1, 0.975);
  out.percentile_tau2[0] = numerics::percentile(sorted2, 0.025);
  out.percentile_tau2[1] = numerics::percentile(sorted2, 0.975);
  out.tau1_se = numerics::sample_std(out.tau1);
  out.tau2_se = numerics::sample_std(out.tau2);
  const double n = double(units), half = numerics::student_t_quantile(0.975, n - 1) * std::sqrt(n / (n - 1));
  out.tau1_ci[0] = centre.tau1 - half * out.tau1_se;
  out.tau1_ci[1] = centre.tau1 + half * out.tau1_se;
  out.tau2_ci[0] = centre.tau2 - half * out.tau2_se;
  out.tau2_ci[1] = centre.tau2 + half * out.tau2_se;
  const Eigen::Map<const Eigen::VectorXd> a(out.tau1.data(), static_cast<Eigen::Index>(out.tau1.size()));
  const Eigen::Map<const Eigen::VectorXd> b(out.tau2.data(), static_cast<Eigen::Index>(out.tau2.size()));
  const Eigen::VectorXd da = a.array() - a.mean(), db = b.array() - b.mean();
  const double den = std::sqrt(da.squaredNorm() * db.squaredNorm());
  out.correlation = den > 0 ? da.dot(db) / den : NAN;
  // The vortex-lift constants, the same way, when the resamples carry them.
  if (out.t_v.size() == out.tau1.size() && std::isfinite(centre.t_v)) {
    const auto interval = [&](const std::vector<double>& v, double centre_value, double* ci, double* pct, double& se) {
      std::vector<double> sorted = v;
      pct[0] = numerics::percentile(sorted, 0.025);
      pct[1] = numerics::percentile(sorted, 0.975);
      se = numerics::sample_std(v);
      ci[0] = centre_value - half * se;
      ci[1] = centre_value + half * se;
    };
    interval(out.t_v, centre.t_v, out.t_v_ci, out.percentile_t_v, out.t_v_se);
    interval(out.t_vl, centre.t_vl, out.t_vl_ci, out.percentile_t_vl, out.t_vl_se);
  }
  return true;
}

BootstrapFit bootstrap_over_cycles(const Eigen::MatrixXd& alpha_deg, const Eigen::MatrixXd& cn,
                                   const std::vector<bool>& in_window, double period_s, const FlowScales& flow,
                                   const StaticSeparation& x0, const FitOptions& options, const LoopFit& centre,
                                   std::int64_t resamples, std::uint64_t seed, int threads, double onset_phase_deg) {
  BootstrapFit out;
  out.requested = resamples;
  const Eigen::Index cycles = cn.cols();
  if (cycles < 3) {
    out.note = fmt::format("{} valid cycle(s): a bootstrap over cycles needs at least 3", cycles);
    return out;
  }
  if (!centre.fitted) {
    out.note = "the phase-averaged loop was not fitted";
    return out;
  }
  std::mt19937_64 random(seed);
  std::uniform_int_distribution<Eigen::Index> pick(0, cycles - 1);
  std::vector<std::vector<Eigen::Index>> draws(static_cast<std::size_t>(resamples));
  for (auto& d : draws)
    for (Eigen::Index c = 0; c < cycles; ++c) d.push_back(pick(random));
  std::vector<LoopFit> fits(draws.size());
  const auto work = [&](std::size_t first, std::size_t stride) {
    for (std::size_t j = first; j < draws.size(); j += stride) {
      LoopFit f = fit_loop(mean_loop(alpha_deg, draws[j]), mean_loop(cn, draws[j]), in_window, period_s, flow, x0,
                           options, &centre, onset_phase_deg);
      f.cn_fitted.resize(0);
      f.x_fitted.resize(0);
      f.cn_vortex.resize(0);
      fits[j] = std::move(f);
    }
  };
  const auto workers = static_cast<std::size_t>(std::clamp<std::int64_t>(threads, 1, resamples));
  std::vector<std::thread> pool;
  for (std::size_t w = 1; w < workers; ++w) pool.emplace_back(work, w, workers);
  work(0, workers);
  for (auto& t : pool) t.join();
  for (const LoopFit& f : fits) {
    if (!f.fitted) {
      ++out.failed;
      continue;
    }
    out.tau1.push_back(f.tau1);
    out.tau2.push_back(f.tau2);
    if (f.vortex_lift) {
      out.t_v.push_back(f.t_v);
      out.t_vl.push_back(f.t_vl);
    }
  }
  if (!summarise_bootstrap(out, centre, cycles)) {
    out.note = fmt::format("only {} of {} resamples fitted", out.tau1.size(), resamples);
    return out;
  }
  out.note = fmt::format("{} resamples of {} cycles, {} fitted; interval: centre -+ t(0.975, n-1) sqrt(n/(n-1)) x bootstrap standard error", resamples, cycles,
                         out.tau1.size());
  return out;
}

}  // namespace stallscope::fit
