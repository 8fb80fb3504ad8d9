#include "stages/fit/campaign_fit.hpp"

#include <fmt/format.h>

#include <algorithm>
#include <optional>
#include <random>
#include <thread>

#include "stages/fit/least_squares.hpp"
#include "stages/numerics/statistics.hpp"

namespace stallscope::fit {

namespace {

struct Member {
  const CampaignRun* run;
  std::unique_ptr<LoopModel> model;
  std::vector<Eigen::Index> used;
  std::optional<VortexLiftTerm> vortex;  // the run's own fitted vortex lift, held fixed: only tau1, tau2 are shared
};

LoopFit shared_least_squares(const std::vector<const Member*>& members, const FitOptions& o, const LoopFit* start) {
  LoopFit out;
  std::size_t total = 0;
  for (const Member* m : members) total += m->used.size();
  const auto residuals = [&](const Eigen::VectorXd& p) {
    Eigen::VectorXd r(static_cast<Eigen::Index>(total));
    Eigen::Index j = 0;
    for (const Member* m : members) {
      const Eigen::VectorXd cn =
          m->vortex ? m->model->normal_force({p[0], p[1]}, *m->vortex) : m->model->normal_force({p[0], p[1]});
      for (Eigen::Index b : m->used) r[j++] = cn[b] - m->run->loops.cn[b];
    }
    return r;
  };
  const Box box{Eigen::Vector2d(o.tau1_bounds[0], o.tau2_bounds[0]), Eigen::Vector2d(o.tau1_bounds[1], o.tau2_bounds[1])};
  const LeastSquaresResult best = start ? bounded_least_squares(residuals, Eigen::Vector2d(start->tau1, start->tau2), box)
                                        : grid_started_least_squares(residuals, box, o.grid_points);
  out.fitted = std::isfinite(best.cost);
  out.tau1 = best.parameters[0];
  out.tau2 = best.parameters[1];
  out.points = static_cast<std::int64_t>(total);
  out.rms_residual = std::sqrt(best.cost / double(std::max<std::size_t>(total, 1)));
  return out;
}

}  // namespace

SharedFit fit_shared(const std::deque<CampaignRun>& runs, const FitSettings& settings, int threads) {
  SharedFit out;
  std::vector<Member> members;
  std::string left_out;
  for (const CampaignRun& r : runs) {
    if (!r.fit.main.fitted) {
      left_out += (left_out.empty() ? "" : ", ") + r.loops.run;
      continue;
    }
    Member m{&r, std::make_unique<LoopModel>(r.loops.alpha_deg, r.loops.period_s, r.loops.flow, r.curve, settings.fit.lag), {}, {}};
    if (r.fit.main.vortex_lift)
      m.vortex = VortexLiftTerm{r.fit.main.vortex_onset_conv, {r.fit.main.t_v, r.fit.main.t_vl}};
    for (Eigen::Index b = 0; b < r.loops.cn.size(); ++b)
      if (r.loops.window[static_cast<std::size_t>(b)] && std::isfinite(r.loops.cn[b])) m.used.push_back(b);
    members.push_back(std::move(m));
  }
  out.runs = static_cast<std::int64_t>(members.size());
  if (members.empty()) {
    out.fit.reason = "no run was fitted on its own";
    return out;
  }
  std::vector<const Member*> all;
  for (const Member& m : members) all.push_back(&m);
  out.fit = shared_least_squares(all, settings.fit, nullptr);
  if (!left_out.empty()) out.fit.reason = "left out (not fitted on their own): " + left_out;
  // Bootstrap over runs.
  const auto n = static_cast<Eigen::Index>(members.size());
  if (n < 3 || settings.bootstrap_resamples <= 0) {
    out.bootstrap.note = fmt::format("{} run(s): a bootstrap over runs needs at least 3", n);
    return out;
  }
  // Every draw is made from the one seeded stream before any fit, so the
  // result does not depend on the threads.
  std::mt19937_64 random(settings.bootstrap_seed);
  std::uniform_int_distribution<Eigen::Index> pick(0, n - 1);
  std::vector<std::vector<const Member*>> draws(static_cast<std::size_t>(settings.bootstrap_resamples));
  for (auto& draw : draws)
    for (Eigen::Index j = 0; j < n; ++j) draw.push_back(&members[static_cast<std::size_t>(pick(random))]);
  std::vector<LoopFit> fits(draws.size());
  const auto work = [&](std::size_t first, std::size_t stride) {
    for (std::size_t k = first; k < draws.size(); k += stride) fits[k] = shared_least_squares(draws[k], settings.fit, &out.fit);
  };
  const auto workers = static_cast<std::size_t>(std::clamp<std::int64_t>(threads, 1, settings.bootstrap_resamples));
  std::vector<std::thread> pool;
  for (std::size_t w = 1; w < workers; ++w) pool.emplace_back(work, w, workers);
  work(0, workers);
  for (auto& t : pool) t.join();
  for (const LoopFit& f : fits) {
    if (f.fitted) {
      out.bootstrap.tau1.push_back(f.tau1);
      out.bootstrap.tau2.push_back(f.tau2);
    } else {
      ++out.bootstrap.failed;
    }
  }
  out.bootstrap.requested = settings.bootstrap_resamples;
  summarise_bootstrap(out.bootstrap, out.fit, n);
  out.bootstrap.note = fmt::format("{} resamples of {} runs; interval: centre -+ t(0.975, n-1) sqrt(n/(n-1)) x "
                                   "bootstrap standard error",
                                   settings.bootstrap_resamples, n);
  return out;
}

std::vector<Trend> constant_trends(const std::deque<CampaignRun>& runs) {
  std::vector<Trend> out;
  for (const char* constant : {"tau1_conv", "tau2_conv"})
    for (const char* regressor : {"reduced_frequency", "alpha_mean_deg"}) {
      Trend t;
      t.constant = constant;
      t.regressor = regressor;
      std::vector<double> x, y;
      for (const CampaignRun& r : runs) {
        if (!r.fit.main.fitted) continue;
        x.push_back(std::string(regressor) == "reduced_frequency" ? r.loops.reduced_frequency : r.loops.alpha_mean_deg);
        y.push_back(std::string(constant) == "tau1_conv" ? r.fit.main.tau1 : r.fit.main.tau2);
      }
      t.runs = static_cast<std::int64_t>(x.size());
      const double mx = x.empty() ? 0 : numerics::mean(x), my = y.empty() ? 0 : numerics::mean(y);
      double sxx = 0, sxy = 0;
      for (std::size_t i = 0; i < x.size(); ++i) {
        sxx += (x[i] - mx) * (x[i] - mx);
        sxy += (x[i] - mx) * (y[i] - my);
      }
      // Below this spread the runs share one condition (a measured mean angle scatters by millidegrees).
      const double min_spread = std::string(regressor) == "reduced_frequency" ? 0.005 : 0.5;
      const auto [lo, hi] = std::minmax_element(x.begin(), x.end());
      if (x.size() < 3) t.note = "a trend needs at least 3 fitted runs";
      else if (*hi - *lo < min_spread)
        t.note = fmt::format("the runs share one {} (spread {:.3g}, below {})", regressor, *hi - *lo, min_spread);
      else {
        t.slope = sxy / sxx;
        t.intercept = my - t.slope * mx;
        double sse = 0;
        for (std::size_t i = 0; i < x.size(); ++i) sse += std::pow(y[i] - t.intercept - t.slope * x[i], 2);
        const double nu = double(x.size()) - 2;
        const double se = nu > 0 ? std::sqrt(sse / nu / sxx) : NAN;
        const double half = nu > 0 ? numerics::student_t_quantile(0.975, nu) * se : NAN;
        t.slope_lo = t.slope - half;
        t.slope_hi = t.slope + half;
        const bool zero_inside = t.slope_lo <= 0 && 0 <= t.slope_hi;
        t.note = zero_inside ? "no trend at 95 %: the interval holds 0" : "a trend at 95 %: the interval excludes 0";
      }
      out.push_back(std::move(t));
    }
  return out;
}

Table campaign_table(const std::deque<CampaignRun>& runs, const SharedFit& shared) {
  std::vector<std::string> run, status, reason;
  std::vector<double> k, am, t1, t2, t1lo, t1hi, t2lo, t2hi, corr, rms, t1s, t2s, tv, tvl;
  auto row = [&](const std::string& name, double kk, double a, const LoopFit& f, const BootstrapFit& b, double conv) {
    run.push_back(name);
    status.push_back(f.fitted ? "fitted" : "not_fitted");
    reason.push_back(f.reason);
    k.push_back(kk);
    am.push_back(a);
    t1.push_back(f.tau1);
    t2.push_back(f.tau2);
    t1s.push_back(f.tau1 * conv);
    t2s.push_back(f.tau2 * conv);
    t1lo.push_back(b.tau1_ci[0]);
    t1hi.push_back(b.tau1_ci[1]);
    t2lo.push_back(b.tau2_ci[0]);
    t2hi.push_back(b.tau2_ci[1]);
    corr.push_back(b.correlation);
    rms.push_back(f.rms_residual);
    tv.push_back(f.t_v);
    tvl.push_back(f.t_vl);
  };
  for (const CampaignRun& r : runs)
    row(r.loops.run, r.loops.reduced_frequency, r.loops.alpha_mean_deg, r.fit.main, r.fit.bootstrap,
        r.loops.flow.convective_s());
  row("shared", NAN, NAN, shared.fit, shared.bootstrap, NAN);
  Table t;
  t.add({"run", "", run})
      .add({"status", "", status})
      .add({"reason", "", reason})
      .add({"reduced_frequency", "1", k})
      .add({"alpha_mean_deg", "deg", am})
      .add({"tau1_conv", "1", t1})
      .add({"tau2_conv", "1", t2})
      .add({"tau1_s", "s", t1s})
      .add({"tau2_s", "s", t2s})
      .add({"tau1_ci95_lo_conv", "1", t1lo})
      .add({"tau1_ci95_hi_conv", "1", t1hi})
      .add({"tau2_ci95_lo_conv", "1", t2lo})
      .add({"tau2_ci95_hi_conv", "1", t2hi})
      .add({"tau_correlation", "1", corr})
      .add({"rms_residual", "1", rms});
  // Each run's own vortex-lift constants (not shared: the shared row has none).
  if (std::any_of(runs.begin(), runs.end(), [](const CampaignRun& r) { return r.fit.main.vortex_lift; }))
    t.add({"t_v_conv", "1", tv}).add({"t_vl_conv", "1", tvl});
  return t;
}

Table trend_table(const std::vector<Trend>& trends) {
  std::vector<std::string> c, r, note;
  std::vector<double> slope, lo, hi, icpt;
  std::vector<std::int64_t> n;
  for (const Trend& t : trends) {
    c.push_back(t.constant);
    r.push_back(t.regressor);
    slope.push_back(t.slope);
    lo.push_back(t.slope_lo);
    hi.push_back(t.slope_hi);
    icpt.push_back(t.intercept);
    n.push_back(t.runs);
    note.push_back(t.note);
  }
  Table t;
  t.add({"constant", "", c})
      .add({"regressor", "", r})
      .add({"slope", "1", slope})
      .add({"slope_ci95_lo", "1", lo})
      .add({"slope_ci95_hi", "1", hi})
      .add({"intercept", "1", icpt})
      .add({"runs", "1", n})
      .add({"note", "", note});
  return t;
}

}  // namespace stallscope::fit
