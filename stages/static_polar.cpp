#include "stages/static_polar.hpp"

#include <algorithm>
#include <cmath>
#include <numbers>
#include <numeric>

#include "pipeline/errors.hpp"
#include "stages/numerics/statistics.hpp"

namespace stallscope {

namespace {

struct Point {
  double alpha = 0, cl = 0, cm = 0;
};

struct Direction {
  std::string name;
  double slope = NAN, intercept = NAN, zero_lift = NAN;
  std::int64_t linear_points = 0;
  double cl_max = NAN, alpha_cl_max = NAN, alpha_cm_break = NAN, alpha_linearity = NAN;
};

Direction reduce(std::string name, std::vector<Point> p, const StaticPolarStage::Options& o) {
  Direction d;
  d.name = std::move(name);
  std::sort(p.begin(), p.end(), [](const Point& a, const Point& b) { return a.alpha < b.alpha; });
  if (p.empty()) return d;
  // Least-squares line Cl = slope alpha + intercept over the linear range.
  double n = 0, sa = 0, sc = 0, saa = 0, sac = 0;
  for (const auto& q : p)
    if (q.alpha >= o.linear_range_deg[0] && q.alpha <= o.linear_range_deg[1]) {
      n += 1; sa += q.alpha; sc += q.cl; saa += q.alpha * q.alpha; sac += q.alpha * q.cl;
    }
  d.linear_points = static_cast<std::int64_t>(n);
  if (n >= 2 && n * saa - sa * sa > 0) {
    d.slope = (n * sac - sa * sc) / (n * saa - sa * sa);
    d.intercept = (sc - d.slope * sa) / n;
    d.zero_lift = -d.intercept / d.slope;
  }
  // Maximum Cl: the plateau of largest Cl, refined by a parabola through its neighbours.
  const auto best = static_cast<std::size_t>(
      std::max_element(p.begin(), p.end(), [](const Point& a, const Point& b) { return a.cl < b.cl; }) - p.begin());
  d.cl_max = p[best].cl;
  d.alpha_cl_max = p[best].alpha;
  if (best > 0 && best + 1 < p.size()) {
    const Point &a = p[best - 1], &b = p[best], &c = p[best + 1];
    // Vertex of the parabola through three (alpha, cl) points.
    const double den = (a.alpha - b.alpha) * (a.alpha - c.alpha) * (b.alpha - c.alpha);
    const double A = (c.alpha * (b.cl - a.cl) + b.alpha * (a.cl - c.cl) + a.alpha * (c.cl - b.cl)) / den;
    const double B = (c.alpha * c.alpha * (a.cl - b.cl) + b.alpha * b.alpha * (c.cl - a.cl) +
                      a.alpha * a.alpha * (b.cl - c.cl)) / den;
    if (A < 0) {
      const double v = -B / (2 * A);
      if (v > a.alpha && v < c.alpha) {
        d.alpha_cl_max = v;
        d.cl_max = b.cl + A * (v - b.alpha) * (v - b.alpha) + (2 * A * b.alpha + B) * (v - b.alpha);
      }
    }
  }
  // Cm break: first angle, going up, where Cm is cm_break_delta below its running maximum.
  double running = -INFINITY;
  for (const auto& q : p) {
    running = std::max(running, q.cm);
    if (q.cm < running - o.cm_break_delta) {
      d.alpha_cm_break = q.alpha;
      break;
    }
  }
  // Departure from linearity: first angle above the linear range with Cl below (1 - tol) of the line.
  if (std::isfinite(d.slope))
    for (const auto& q : p) {
      const double line = d.slope * q.alpha + d.intercept;
      if (q.alpha > o.linear_range_deg[1] && line > 0 && q.cl < (1 - o.linearity_tolerance) * line) {
        d.alpha_linearity = q.alpha;
        break;
      }
    }
  return d;
}

double window_mean(const Eigen::VectorXd& t, const Eigen::VectorXd& y, double t0, double t1, double* sd) {
  const double* b = t.data();
  const double* e = b + t.size();
  std::vector<double> v;
  for (const double* p = std::lower_bound(b, e, t0); p != e && *p <= t1; ++p) {
    const double x = y[p - b];
    if (std::isfinite(x)) v.push_back(x);
  }
  if (sd) *sd = numerics::sample_std(v);
  return v.empty() ? NAN : numerics::mean(v);
}

}  // namespace

void StaticPolarStage::configure(ConfigSection& s) {
  options_.linear_range_deg = s.numbers("linear_range_deg", options_.linear_range_deg);
  s.require(options_.linear_range_deg.size() == 2 && options_.linear_range_deg[0] < options_.linear_range_deg[1],
            "linear_range_deg", "expected [lowest, highest] angle in degrees of the linear lift range");
  options_.cm_break_delta = s.number("cm_break_delta", options_.cm_break_delta);
  s.require(options_.cm_break_delta > 0 && options_.cm_break_delta < 1, "cm_break_delta",
            "expected a drop in Cm between 0 and 1");
  options_.linearity_tolerance = s.number("linearity_tolerance", options_.linearity_tolerance);
  s.require(options_.linearity_tolerance > 0 && options_.linearity_tolerance < 1, "linearity_tolerance",
            "expected a fraction between 0 and 1");
  options_.expected_zero_lift_deg = s.number("expected_zero_lift_deg", options_.expected_zero_lift_deg);
  s.require(std::abs(options_.expected_zero_lift_deg) < 20, "expected_zero_lift_deg", "expected an angle in degrees");
  options_.primary = s.choice("primary", {"cl_max", "cm_break", "linearity"}, options_.primary);
}

void StaticPolarStage::run(RunContext& context) {
  RunStore& s = context.store();
  const std::string motion = s.get<Text>("run/motion").value;
  const std::size_t steps = s.contains("motion/plateaus") ? s.get<Table>("motion/plateaus").rows() : 0;
  if (motion != "staircase" || steps < 3)
    throw InputError("[static_polar]", "needs a staircase of at least 3 steady angles, but the run's motion is '" +
                                           motion + "' with " + std::to_string(steps) +
                                           " plateau(s) (disable [static_polar] for this run)");
  const Table& plateaus = s.get<Table>("motion/plateaus");
  const Eigen::VectorXd& t = s.get<Series>("loads/time_s").values;
  const Eigen::VectorXd& cl = s.get<Series>("loads/cl").values;
  const Eigen::VectorXd& cn = s.get<Series>("loads/cn").values;
  const Eigen::VectorXd& cm = s.get<Series>("loads/cm").values;
  const Eigen::VectorXd& cd = s.get<Series>("loads/cd_p").values;

  const std::size_t m = plateaus.rows();
  std::vector<double> pcl(m), pcl_sd(m), pcn(m), pcm(m), pcm_sd(m), pcd(m);
  const auto& alpha = plateaus.numbers("alpha_deg");
  const auto& direction = plateaus.texts("direction");
  std::vector<Point> up, down;
  for (std::size_t j = 0; j < m; ++j) {
    const double t0 = plateaus.numbers("t_average_start_s")[j], t1 = plateaus.numbers("t_end_s")[j];
    pcl[j] = window_mean(t, cl, t0, t1, &pcl_sd[j]);
    pcn[j] = window_mean(t, cn, t0, t1, nullptr);
    pcm[j] = window_mean(t, cm, t0, t1, &pcm_sd[j]);
    pcd[j] = window_mean(t, cd, t0, t1, nullptr);
    if (!std::isfinite(pcl[j]) || !std::isfinite(pcm[j]))
      throw InputError("loads/cl", "no finite loads during plateau " + std::to_string(j) + " at " +
                                       std::to_string(alpha[j]) + " deg");
    (direction[j] == "down" ? down : up).push_back({alpha[j], pcl[j], pcm[j]});
  }
  Table points;
  points.add({"plateau", "1", plateaus.integers("plateau")})
      .add({"direction", "", direction})
      .add({"alpha_deg", "deg", alpha})
      .add({"alpha_std_deg", "deg", plateaus.numbers("alpha_std_deg")})
      .add({"cl", "1", pcl})
      .add({"cl_std", "1", pcl_sd})
      .add({"cn", "1", pcn})
      .add({"cm", "1", pcm})
      .add({"cm_std", "1", pcm_sd})
      .add({"cd_p", "1", pcd});
  s.put("static_polar/points", std::move(points),
        {{"moment_ref_x_over_c", 0.25}, {"csv", std::string("static_polar.csv")}});

  std::vector<Direction> dirs;
  if (!up.empty()) dirs.push_back(reduce("up", up, options_));
  if (!down.empty()) dirs.push_back(reduce("down", down, options_));
  Table summary;
  std::vector<std::string> names;
  std::vector<std::int64_t> linear_points;
  std::vector<double> slope_deg, slope_rad, zero_lift, offset, cl_max, a_clmax, a_cmbreak, a_lin;
  for (const auto& d : dirs) {
    names.push_back(d.name);
    linear_points.push_back(d.linear_points);
    slope_deg.push_back(d.slope);
    slope_rad.push_back(d.slope * 180.0 / std::numbers::pi);
    zero_lift.push_back(d.zero_lift);
    offset.push_back(d.zero_lift - options_.expected_zero_lift_deg);
    cl_max.push_back(d.cl_max);
    a_clmax.push_back(d.alpha_cl_max);
    a_cmbreak.push_back(d.alpha_cm_break);
    a_lin.push_back(d.alpha_linearity);
  }
  summary.add({"direction", "", names})
      .add({"linear_points", "1", linear_points})
      .add({"lift_slope_per_deg", "1/deg", slope_deg})
      .add({"lift_slope_per_rad", "1/rad", slope_rad})
      .add({"zero_lift_angle_deg", "deg", zero_lift})
      .add({"angle_offset_deg", "deg", offset})
      .add({"cl_max", "1", cl_max})
      .add({"alpha_cl_max_deg", "deg", a_clmax})
      .add({"alpha_cm_break_deg", "deg", a_cmbreak})
      .add({"alpha_linearity_deg", "deg", a_lin});
  Attributes attrs{
      {"linear_range_deg", std::to_string(options_.linear_range_deg[0]) + " to " +
                               std::to_string(options_.linear_range_deg[1])},
      {"criteria", std::string("cl_max: angle of maximum Cl (parabola through the top three plateaus); "
                               "cm_break: first angle where Cm (c/4) is cm_break_delta below its running maximum; "
                               "linearity: first angle above the linear range where Cl < (1 - linearity_tolerance) "
                               "x the linear fit")},
      {"cm_break_delta", options_.cm_break_delta},
      {"linearity_tolerance", options_.linearity_tolerance},
      {"primary", options_.primary},
  };
  const Direction* first_up = dirs.empty() || dirs.front().name != "up" ? nullptr : &dirs.front();
  if (first_up) {
    const double stall = options_.primary == "cl_max"     ? first_up->alpha_cl_max
                         : options_.primary == "cm_break" ? first_up->alpha_cm_break
                                                          : first_up->alpha_linearity;
    attrs["static_stall_angle_deg"] = stall;
  }
  if (dirs.size() == 2) {
    attrs["hysteresis_cl_max_deg"] = dirs[0].alpha_cl_max - dirs[1].alpha_cl_max;
    attrs["hysteresis_cm_break_deg"] = dirs[0].alpha_cm_break - dirs[1].alpha_cm_break;
    attrs["hysteresis_linearity_deg"] = dirs[0].alpha_linearity - dirs[1].alpha_linearity;
    attrs["hysteresis_note"] = std::string("up-sweep angle minus down-sweep angle for each criterion");
  }
  s.put("static_polar/summary", std::move(summary), std::move(attrs));
}

}  // namespace stallscope
