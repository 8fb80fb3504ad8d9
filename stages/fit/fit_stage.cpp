#include "stages/fit/fit_stage.hpp"

#include "pipeline/errors.hpp"
#include "stages/fit/static_polar_source.hpp"

namespace stallscope {

void configure_fit_settings(ConfigSection& s, fit::FitSettings& o) {
  auto& c = o.curve;
  c.angle = s.choice("kirchhoff_angle", {"sin", "alpha"}, c.angle == fit::KirchhoffAngle::kSine ? "sin" : "alpha") == "sin"
                ? fit::KirchhoffAngle::kSine
                : fit::KirchhoffAngle::kLinear;
  c.curve = s.choice("x0_curve", {"table", "tanh"}, "table") == "table" ? fit::SeparationCurve::kTable
                                                                         : fit::SeparationCurve::kTanh;
  c.smoothing_points = static_cast<int>(s.integer("smoothing_points", c.smoothing_points));
  s.require(c.smoothing_points >= 1 && c.smoothing_points <= 51 && c.smoothing_points % 2 == 1, "smoothing_points",
            "expected an odd number of static points from 1 (no smoothing) to 51");
  c.linear_range_deg = s.numbers("linear_range_deg", c.linear_range_deg);
  s.require(c.linear_range_deg.size() == 2 && c.linear_range_deg[0] < c.linear_range_deg[1], "linear_range_deg",
            "expected [lowest, highest] angle in degrees of the attached, linear part of the static polar");
  c.lift_slope_per_rad = s.number("normal_force_slope_per_rad", c.lift_slope_per_rad);
  s.require(std::isnan(c.lift_slope_per_rad) || (c.lift_slope_per_rad > 0 && c.lift_slope_per_rad < 20),
            "normal_force_slope_per_rad", "expected a static Cn slope per radian between 0 and 20");
  c.zero_lift_angle_deg = s.number("zero_lift_angle_deg", c.zero_lift_angle_deg);
  s.require(std::isnan(c.zero_lift_angle_deg) || std::abs(c.zero_lift_angle_deg) < 20, "zero_lift_angle_deg",
            "expected an angle in degrees");
  auto& f = o.fit;
  for (auto [key, bounds] : {std::pair{"tau1_bounds_conv", f.tau1_bounds}, std::pair{"tau2_bounds_conv", f.tau2_bounds}}) {
    const auto v = s.numbers(key, {bounds[0], bounds[1]});
    s.require(v.size() == 2 && v[0] >= 0 && v[0] < v[1] && v[1] <= 1000, key,
              "expected [lowest, highest] in convective times c/U, 0 <= lowest < highest <= 1000");
    bounds[0] = v[0];
    bounds[1] = v[1];
  }
  f.grid_points = static_cast<int>(s.integer("grid_points", f.grid_points));
  s.require(f.grid_points >= 2 && f.grid_points <= 101, "grid_points", "expected 2 to 101 start points per constant");
  f.min_separation_drop = s.number("min_separation_drop", f.min_separation_drop);
  s.require(f.min_separation_drop > 0 && f.min_separation_drop < 1, "min_separation_drop",
            "expected a drop of x0 between 0 and 1 below which a loop counts as never stalling");
  f.lag = s.choice("attached", {"theodorsen", "quasi_steady"}, "theodorsen") == "theodorsen"
              ? fit::AttachedLag::kTheodorsen
              : fit::AttachedLag::kQuasiSteady;
  // The Leishman-Beddoes vortex-lift term: with it the overshoot is modelled, so
  // by default nothing is left out of the fit.
  f.vortex_lift = s.boolean("vortex_lift", f.vortex_lift);
  for (auto [key, bounds] : {std::pair{"t_v_bounds_conv", f.t_v_bounds}, std::pair{"t_vl_bounds_conv", f.t_vl_bounds}}) {
    const auto v = s.numbers(key, {bounds[0], bounds[1]});
    s.require(v.size() == 2 && v[0] > 0 && v[0] < v[1] && v[1] <= 1000, key,
              "expected [lowest, highest] in convective times c/U, 0 < lowest < highest <= 1000");
    bounds[0] = v[0];
    bounds[1] = v[1];
  }
  f.vortex_grid_points = static_cast<int>(s.integer("vortex_grid_points", f.vortex_grid_points));
  s.require(f.vortex_grid_points >= 2 && f.vortex_grid_points <= 51, "vortex_grid_points",
            "expected 2 to 51 start points per vortex-lift constant");
  o.exclude = s.choice("exclude", {"vortex_lift", "stalled", "none"}, f.vortex_lift ? "none" : o.exclude);
  o.vortex_lift_conv = s.number("vortex_lift_conv", o.vortex_lift_conv);
  s.require(o.vortex_lift_conv >= 0 && o.vortex_lift_conv < 100, "vortex_lift_conv",
            "expected convective times from 0 to 100");
  o.vortex_clearance_conv = s.number("vortex_clearance_conv", o.vortex_clearance_conv);
  s.require(o.vortex_clearance_conv >= 0 && o.vortex_clearance_conv < 100, "vortex_clearance_conv",
            "expected convective times from 0 to 100");
  o.bootstrap_resamples = s.integer("bootstrap_resamples", o.bootstrap_resamples);
  s.require(o.bootstrap_resamples == 0 || (o.bootstrap_resamples >= 20 && o.bootstrap_resamples <= 100000),
            "bootstrap_resamples", "expected 0 (none) or 20 to 100000 resamples");
  o.bootstrap_seed = static_cast<std::uint64_t>(s.integer("bootstrap_seed", static_cast<std::int64_t>(o.bootstrap_seed)));
  o.sensitivity = s.boolean("sensitivity", o.sensitivity);
}

void FitStage::configure(ConfigSection& s) {
  polar_where_ = s.where("static_polar_archive");
  archive_ = s.optional_path("static_polar_archive");
  csv_ = s.optional_path("static_polar_csv");
  s.require(!(archive_ && csv_), "static_polar_csv", "give static_polar_archive or static_polar_csv, not both");
  if (csv_) polar_where_ = s.where("static_polar_csv");
  configure_fit_settings(s, settings_);
}

std::vector<std::string> FitStage::inputs() const {
  return {"phase/bin_deg", "phase/alpha_deg/mean", "phase/cn/mean", "run/chord_m", "run/U_inf_m_s"};
}

std::vector<std::string> FitStage::optional_inputs() const {
  return {"phase/per_cycle/alpha_deg", "phase/per_cycle/cn", "cycles", "events/per_cycle", "static_polar/points",
          "run/freq_hz", "loads/cn", "loads/cc", "loads/cm"};
}

std::vector<std::string> FitStage::outputs() const {
  return {"fit/summary", "fit/loop", "fit/static_separation", "fit/static_polar", "fit/bootstrap", "fit/onset"};
}

void FitStage::run(RunContext& context) {
  RunStore& s = context.store();
  fit::StaticPolarPoints polar;
  if (archive_) polar = fit::polar_from_archive(context.raw_input(*archive_, "static polar"), polar_where_);
  else if (csv_) polar = fit::polar_from_csv(context.raw_input(*csv_, "static polar"), polar_where_);
  else if (auto p = fit::polar_from_store(s, "this run's")) polar = *p;
  else
    throw InputError("[fit]", "needs a static polar: set static_polar_archive = \"<reduced static run>.h5\" or "
                              "static_polar_csv = \"<file with alpha_deg, cn>\", or run [static_polar] in this run");
  fit::StaticSeparation curve;
  try {
    curve = fit::StaticSeparation::from_polar(polar.alpha_deg, polar.cn, settings_.curve);
  } catch (const std::invalid_argument& e) {
    throw InputError(polar_where_.empty() ? "[fit]" : polar_where_, polar.source + ": " + e.what());
  }
  const fit::RunLoops loops = fit::read_run_loops(s, settings_);
  const fit::RunFit result = fit::fit_run(loops, curve, polar, settings_, context.threads());
  fit::put_fit(s, loops, curve, polar, result, settings_);
}

}  // namespace stallscope
