#include "stages/damping.hpp"

#include <algorithm>
#include <cmath>
#include <complex>
#include <numbers>

#include "pipeline/errors.hpp"
#include "stages/motion.hpp"
#include "stages/numerics/resample.hpp"
#include "stages/numerics/sinusoid_fit.hpp"
#include "stages/numerics/statistics.hpp"

namespace stallscope {

namespace {
constexpr double kPi = std::numbers::pi;
constexpr double kDegToRad = kPi / 180.0;
}  // namespace

double damping::loop_integral(std::span<const double> x, std::span<const double> y) {
  if (x.size() != y.size()) throw std::logic_error("loop_integral: lengths differ");
  const std::size_t n = x.size();
  double sum = 0;
  for (std::size_t i = 0; i < n; ++i) {
    const std::size_t j = (i + 1) % n;
    sum += 0.5 * (y[i] + y[j]) * (x[j] - x[i]);
  }
  return sum;
}

double damping::time_integral(std::span<const double> t, std::span<const double> g, double t_start, double t_end) {
  if (t.size() != g.size()) throw std::logic_error("time_integral: lengths differ");
  if (t.size() < 2 || !(t_end > t_start)) return 0;
  auto value_at = [&](double x) {
    const std::size_t j = static_cast<std::size_t>(
        std::clamp<std::ptrdiff_t>(std::upper_bound(t.begin(), t.end(), x) - t.begin(), 1,
                                   static_cast<std::ptrdiff_t>(t.size()) - 1));
    const double w = (x - t[j - 1]) / (t[j] - t[j - 1]);
    return g[j - 1] + w * (g[j] - g[j - 1]);
  };
  // Knots: t_start, the samples strictly inside, t_end.
  double sum = 0, prev_t = t_start, prev_g = value_at(t_start);
  for (std::size_t i = static_cast<std::size_t>(std::upper_bound(t.begin(), t.end(), t_start) - t.begin());
       i < t.size() && t[i] < t_end; ++i) {
    sum += 0.5 * (prev_g + g[i]) * (t[i] - prev_t);
    prev_t = t[i];
    prev_g = g[i];
  }
  sum += 0.5 * (prev_g + value_at(t_end)) * (t_end - prev_t);
  return sum;
}

double damping::carta_damping_factor(double cm_alpha_loop, double alpha_amp_rad) {
  return -cm_alpha_loop / (kPi * alpha_amp_rad * alpha_amp_rad);
}

void DampingStage::configure(ConfigSection& s) {
  options_.angle = s.choice("angle", {"measured", "fitted"}, options_.angle);
}

std::vector<std::string> DampingStage::inputs() const {
  return {"motion/fit", "cycles", "signals/time_s", "signals/alpha_deg", "loads/time_s", "loads/cm_pivot",
          "loads/cl",   "run/pivot_x_over_c"};
}

void DampingStage::run(RunContext& context) {
  RunStore& s = context.store();
  const MotionFit motion = MotionFit::from_store(s, std::string(kName));
  const Table& cycles = s.get<Table>("cycles");
  const Eigen::VectorXd& t = s.get<Series>("loads/time_s").values;
  const Eigen::VectorXd& cm = s.get<Series>("loads/cm_pivot").values;
  const Eigen::VectorXd& cl = s.get<Series>("loads/cl").values;
  if (cm.size() != t.size() || cl.size() != t.size())
    throw std::logic_error("loads/cm_pivot, loads/cl and loads/time_s differ in length");
  // The angle at the load samples, in radians; with the fitted motion also
  // the integrands Cm d(alpha)/dt and Cl d(alpha)/dt.
  const bool fitted = options_.angle == "fitted";
  Eigen::VectorXd alpha(t.size()), cm_rate(t.size()), cl_rate(t.size());
  if (fitted) {
    for (Eigen::Index i = 0; i < t.size(); ++i) {
      alpha[i] = motion.alpha_deg(t[i]);
      const double rate = motion.alpha_rate_deg_s(t[i]) * kDegToRad;
      cm_rate[i] = cm[i] * rate;
      cl_rate[i] = cl[i] * rate;
    }
  } else {
    alpha = numerics::interpolate_linear(s.get<Series>("signals/time_s").values,
                                         s.get<Series>("signals/alpha_deg").values, t);
  }
  alpha *= kDegToRad;
  const std::span<const double> ts(t.data(), static_cast<std::size_t>(t.size()));
  const double amp_rad = motion.alpha_amp_deg * kDegToRad;

  const auto& index = cycles.integers("cycle");
  const auto& valid = cycles.integers("valid");
  const auto& t0 = cycles.numbers("t_start_s");
  const auto& t1 = cycles.numbers("t_end_s");
  const std::size_t n = index.size();
  std::vector<double> work(n, NAN), xi(n, NAN), lift(n, NAN), used_xi;
  std::vector<std::int64_t> negative(n, 0), samples(n, 0);
  std::vector<Eigen::Index> in_valid;  // load samples inside valid cycles, for the harmonic response
  const double* begin = t.data();
  const double* end = begin + t.size();
  for (std::size_t c = 0; c < n; ++c) {
    const Eigen::Index first = std::lower_bound(begin, end, t0[c]) - begin;
    const Eigen::Index last = std::lower_bound(begin, end, t1[c]) - begin;
    std::vector<double> a, m, l;
    for (Eigen::Index i = first; i < last; ++i) {
      if (!std::isfinite(alpha[i]) || !std::isfinite(cm[i]) || !std::isfinite(cl[i])) continue;
      a.push_back(alpha[i]);
      m.push_back(cm[i]);
      l.push_back(cl[i]);
      if (valid[c]) in_valid.push_back(i);
    }
    samples[c] = static_cast<std::int64_t>(a.size());
    if (a.size() < 8) continue;  // no loop to speak of
    if (fitted) {
      // Only whole cycles of finite loads: a gap would bias the time integral.
      if (a.size() != static_cast<std::size_t>(last - first) || first == 0 || last >= t.size() ||
          !std::isfinite(cm[first - 1] + cm[last] + cl[first - 1] + cl[last]))
        continue;
      const auto from = static_cast<std::size_t>(first - 1), count = static_cast<std::size_t>(last - first + 2);
      work[c] = damping::time_integral(ts.subspan(from, count), std::span<const double>(cm_rate.data() + from, count),
                                       t0[c], t1[c]);
      lift[c] = damping::time_integral(ts.subspan(from, count), std::span<const double>(cl_rate.data() + from, count),
                                       t0[c], t1[c]);
    } else {
      work[c] = damping::loop_integral(a, m);
      lift[c] = damping::loop_integral(a, l);
    }
    xi[c] = damping::carta_damping_factor(work[c], amp_rad);
    negative[c] = xi[c] < 0 ? 1 : 0;
    if (valid[c]) used_xi.push_back(xi[c]);
  }
  if (used_xi.empty()) throw InputError("cycles", "no valid cycle with loads to compute the pitch damping from");
  const numerics::MeanInterval summary = numerics::mean_interval95(used_xi);
  std::string verdict = "no";
  if (summary.mean < 0)
    verdict = summary.hi < 0 ? "yes: mean damping factor negative, 95 % interval below zero (stall-flutter risk)"
                             : "yes: mean damping factor negative, but the 95 % interval includes zero";
  else if (summary.lo < 0)
    verdict = "no, but the 95 % interval of the mean reaches below zero";
  const auto negative_cycles = std::count(negative.begin(), negative.end(), 1);

  Attributes attrs{
      {"definition", std::string("xi = -closed integral of cm_pivot d(alpha) / (pi alpha_amp^2), alpha in rad; "
                                 "xi > 0 damped (counter-clockwise Cm-alpha loop), xi < 0 negative damping")},
      {"lift_loop_definition", std::string("closed integral of cl d(alpha), alpha in rad; > 0 for a clockwise loop")},
      {"angle", options_.angle},
      {"moment_ref_x_over_c", s.get<Scalar>("run/pivot_x_over_c").value},
      {"alpha_amp_deg", motion.alpha_amp_deg},
      {"xi_mean", summary.mean},
      {"xi_std", summary.std},
      {"xi_ci95_lo", summary.lo},
      {"xi_ci95_hi", summary.hi},
      {"cycles_used", static_cast<std::int64_t>(summary.n)},
      {"negative_cycles", static_cast<std::int64_t>(negative_cycles)},
      {"negative_damping", verdict},
  };
  if (s.entry("loads/cm_pivot").attributes.count("moment_ref_x_over_c"))
    attrs["moment_ref_x_over_c"] = s.entry("loads/cm_pivot").attributes.at("moment_ref_x_over_c");
  // First-harmonic response to the angle over the valid cycles: Y_load / Y_alpha per radian.
  if (in_valid.size() >= 16) {
    Eigen::VectorXd tv(in_valid.size()), av(in_valid.size()), lv(in_valid.size()), mv(in_valid.size());
    for (std::size_t j = 0; j < in_valid.size(); ++j) {
      tv[j] = t[in_valid[j]];
      av[j] = alpha[in_valid[j]];
      lv[j] = cl[in_valid[j]];
      mv[j] = cm[in_valid[j]];
    }
    const std::complex<double> ya = numerics::fit_at_frequency(tv, av, motion.freq_hz).second;
    const std::complex<double> hl = numerics::fit_at_frequency(tv, lv, motion.freq_hz).second / ya;
    const std::complex<double> hm = numerics::fit_at_frequency(tv, mv, motion.freq_hz).second / ya;
    attrs["cl_gain_per_rad"] = std::abs(hl);
    attrs["cl_phase_deg"] = std::arg(hl) / kDegToRad;
    attrs["cm_pivot_gain_per_rad"] = std::abs(hm);
    attrs["cm_pivot_phase_deg"] = std::arg(hm) / kDegToRad;
    attrs["response_note"] = std::string("first harmonic of the load over that of the angle; phase > 0 leads");
  }
  Table table;
  table.add({"cycle", "1", index})
      .add({"valid", "1", valid})
      .add({"samples", "1", samples})
      .add({"cm_alpha_loop", "1", work})
      .add({"xi", "1", xi})
      .add({"negative_damping", "1", negative})
      .add({"cl_alpha_loop", "1", lift});
  s.put("cycles/damping", std::move(table), std::move(attrs));
}

}  // namespace stallscope
