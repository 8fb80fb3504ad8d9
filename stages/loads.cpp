#include "stages/loads.hpp"

#include <cmath>
#include <numbers>
#include <stdexcept>

#include "pipeline/errors.hpp"
#include "stages/discretisation.hpp"

namespace stallscope {

namespace {

// A point of the closed contour: where it is, and its Cp as weights on the taps.
struct Node {
  double x = 0, y = 0;
  Eigen::VectorXd cp;
};

Eigen::VectorXd unit(Eigen::Index n, std::size_t i) {
  Eigen::VectorXd e = Eigen::VectorXd::Zero(n);
  e[static_cast<Eigen::Index>(i)] = 1.0;
  return e;
}

// The value at x = 1 of the line through the surface's last two taps (a nearer the TE).
struct Extrapolated {
  Eigen::VectorXd cp;
  double y;
};
Extrapolated to_trailing_edge(const std::vector<ContourPoint>& taps, std::size_t a, std::size_t b, Eigen::Index n,
                              TrailingEdgeClosure closure) {
  const double dx = taps[a].x - taps[b].x;
  if (closure == TrailingEdgeClosure::kMean || std::abs(dx) < 1e-9) return {unit(n, a), taps[a].y};
  const double r = (1.0 - taps[a].x) / dx;
  return {(1 + r) * unit(n, a) - r * unit(n, b), taps[a].y + r * (taps[a].y - taps[b].y)};
}

}  // namespace

LoadWeights contour_weights(const std::vector<ContourPoint>& taps, TrailingEdgeClosure closure, double pivot) {
  const auto n = static_cast<Eigen::Index>(taps.size());
  const std::vector<std::size_t> order = contour_order(taps);
  std::size_t nu = 0;
  for (const auto& t : taps) nu += t.upper ? 1 : 0;
  const std::size_t nl = taps.size() - nu;
  if (nu < 2 || nl < 2) throw std::invalid_argument("contour integration needs at least 2 taps on each surface");
  const std::size_t u_te = order[0], u_te2 = order[1], u_le = order[nu - 1];
  const std::size_t l_le = order[nu], l_te = order.back(), l_te2 = order[order.size() - 2];

  std::vector<Node> nodes;
  const Extrapolated eu = to_trailing_edge(taps, u_te, u_te2, n, closure);
  const Extrapolated el = to_trailing_edge(taps, l_te, l_te2, n, closure);
  nodes.push_back({1.0, 0.5 * (eu.y + el.y), 0.5 * (eu.cp + el.cp)});
  for (std::size_t k = 0; k < nu; ++k) nodes.push_back({taps[order[k]].x, taps[order[k]].y, unit(n, order[k])});
  if (taps[u_le].x > 0 && taps[l_le].x > 0)
    nodes.push_back({0.0, 0.5 * (taps[u_le].y + taps[l_le].y), 0.5 * (unit(n, u_le) + unit(n, l_le))});
  for (std::size_t k = nu; k < order.size(); ++k)
    nodes.push_back({taps[order[k]].x, taps[order[k]].y, unit(n, order[k])});

  LoadWeights w{Eigen::VectorXd::Zero(n), Eigen::VectorXd::Zero(n), Eigen::VectorXd::Zero(n), Eigen::VectorXd::Zero(n)};
  for (std::size_t j = 0; j < nodes.size(); ++j) {
    const Node& a = nodes[j];
    const Node& b = nodes[(j + 1) % nodes.size()];
    const double dx = b.x - a.x, dy = b.y - a.y;
    w.cn += 0.5 * dx * (a.cp + b.cp);
    w.cc -= 0.5 * dy * (a.cp + b.cp);
    // Exact integral of the product of two linear functions over the segment.
    auto moment = [&](double xp) -> Eigen::VectorXd {
      const double xa = a.x - xp, xb = b.x - xp;
      return -(dx * ((xa / 3 + xb / 6) * a.cp + (xa / 6 + xb / 3) * b.cp) +
               dy * ((a.y / 3 + b.y / 6) * a.cp + (a.y / 6 + b.y / 3) * b.cp));
    };
    w.cm_quarter_chord += moment(0.25);
    w.cm_pivot += moment(pivot);
  }
  return w;
}

TapLoads integrate_taps(const std::vector<ContourPoint>& taps, const Eigen::VectorXd& cp, double alpha_deg,
                        TrailingEdgeClosure closure, double pivot) {
  const LoadWeights w = contour_weights(taps, closure, pivot);
  TapLoads l;
  l.cn = w.cn.dot(cp);
  l.cc = w.cc.dot(cp);
  const double a = alpha_deg * std::numbers::pi / 180.0;
  l.cl = l.cn * std::cos(a) - l.cc * std::sin(a);
  l.cd_p = l.cn * std::sin(a) + l.cc * std::cos(a);
  l.cm_quarter_chord = w.cm_quarter_chord.dot(cp);
  l.cm_pivot = w.cm_pivot.dot(cp);
  return l;
}

void LoadsStage::configure(ConfigSection& s) {
  options_.te_closure = s.choice("te_closure", {"extrapolate", "mean"}, options_.te_closure);
}

void LoadsStage::run(RunContext& context) {
  RunStore& store = context.store();
  const Series& time = store.get<Series>("pressure/time_s");
  const auto first = std::get<std::int64_t>(store.entry("pressure/time_s").attributes.at("first_sample"));
  const Matrix& cp = store.get<Matrix>("pressure/cp");
  const Table& taps = store.get<Table>("pressure/taps");
  const double pivot = store.get<Scalar>("run/pivot_x_over_c").value;
  const Eigen::Index m = time.values.size();
  const Eigen::VectorXd alpha = store.get<Series>("signals/alpha_deg").values.segment(first, m);

  std::vector<ContourPoint> points;
  const auto& xs = taps.numbers("x_over_c");
  const auto& ys = taps.numbers("y_over_c");
  const auto& surface = taps.texts("surface");
  for (std::size_t i = 0; i < xs.size(); ++i) points.push_back({xs[i], ys[i], surface[i] == "upper"});
  const TrailingEdgeClosure closure =
      options_.te_closure == "mean" ? TrailingEdgeClosure::kMean : TrailingEdgeClosure::kExtrapolate;
  const LoadWeights w = contour_weights(points, closure, pivot);

  // All four loads in one pass over the Cp record.
  Eigen::MatrixXd weights(w.cn.size(), 4);
  weights << w.cn, w.cc, w.cm_quarter_chord, w.cm_pivot;
  const Eigen::MatrixXd loads = cp.values * weights;
  const Eigen::VectorXd cn = loads.col(0);
  Eigen::VectorXd cc = loads.col(1);
  Eigen::VectorXd cm = loads.col(2);
  Eigen::VectorXd cm_pivot = loads.col(3);
  const Eigen::ArrayXd a = alpha.array() * (std::numbers::pi / 180.0);
  const Eigen::VectorXd cl = (cn.array() * a.cos() - cc.array() * a.sin()).matrix();
  Eigen::VectorXd cd = (cn.array() * a.sin() + cc.array() * a.cos()).matrix();

  const Attributes& cp_attributes = store.entry("pressure/cp").attributes;
  const bool valid = std::get<std::int64_t>(cp_attributes.at("cc_cm_valid")) != 0;
  Attributes note;
  if (!valid) {
    // A masked leading-edge tap: the suction peak, and with it Cc and Cm, is not measured.
    const double nan = std::nan("");
    cc.setConstant(nan);
    cd.setConstant(nan);
    cm.setConstant(nan);
    cm_pivot.setConstant(nan);
    note["invalid"] = "masked leading-edge tap(s): " + std::get<std::string>(cp_attributes.at("le_gap"));
  }
  Attributes cl_attributes = note;
  if (!valid) cl_attributes["invalid"] = std::string("kept: Cl uses Cc from interpolated leading-edge taps");
  const std::string closure_name = options_.te_closure;
  store.put("loads/time_s", Series{time.values, "s"});
  store.put("loads/alpha_deg", Series{alpha, "deg"}, {{"source", std::string("encoder (signals/alpha_deg)")}});
  store.put("loads/cn", Series{cn, "1"}, {{"te_closure", closure_name}});
  store.put("loads/cc", Series{cc, "1"}, note);
  store.put("loads/cl", Series{cl, "1"}, cl_attributes);
  store.put("loads/cd_p", Series{cd, "1"}, note);
  Attributes cm_attributes = note;
  cm_attributes["moment_ref_x_over_c"] = 0.25;
  store.put("loads/cm", Series{cm, "1"}, cm_attributes);
  Attributes pivot_attributes = note;
  pivot_attributes["moment_ref_x_over_c"] = pivot;
  store.put("loads/cm_pivot", Series{cm_pivot, "1"}, pivot_attributes);

  // The bias bound of this tap layout (stages/discretisation.hpp), beside the loads.
  Attributes bounds{{"method", std::string("analytic distributions sampled at the taps against their exact integrals")}};
  Table check = discretisation_table(discretisation_cases(points, closure), bounds);
  store.put("loads/discretisation", std::move(check), bounds);
}

}  // namespace stallscope
