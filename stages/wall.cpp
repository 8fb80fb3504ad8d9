#include "stages/wall.hpp"

#include <cmath>
#include <numbers>

#include "pipeline/errors.hpp"
#include "stages/theory/naca4.hpp"

namespace stallscope {

namespace wall {

Factors factors(const Geometry& g, double cd_u) {
  constexpr double kPi = std::numbers::pi;
  Factors f;
  const double c_over_h = g.chord_m / g.height_m;
  f.sigma = kPi * kPi / 48.0 * c_over_h * c_over_h;
  const double model_volume = 0.7 * g.thickness_over_c * g.chord_m * g.chord_m * g.width_m;
  const double section_area = g.height_m * g.width_m;
  f.solid_blockage = g.k1 * model_volume / std::pow(section_area, 1.5);
  f.wake_blockage = (g.wake_over_2h ? 0.5 : 0.25) * c_over_h * cd_u;
  f.blockage = f.solid_blockage + f.wake_blockage;
  return f;
}

Coefficients correct(const Geometry& g, const Coefficients& u) {
  const Factors f = factors(g, u.cd);
  Coefficients c;
  c.alpha_deg = u.alpha_deg + 180.0 / std::numbers::pi * f.sigma / (2 * std::numbers::pi) * (u.cl + 4 * u.cm_quarter_chord);
  c.cl = u.cl * (1 - f.sigma - 2 * f.blockage);
  c.cm_quarter_chord = u.cm_quarter_chord * (1 - 2 * f.blockage) + f.sigma * c.cl / 4;
  c.cd = u.cd * (1 - 3 * f.solid_blockage - 2 * f.wake_blockage);
  return c;
}

}  // namespace wall

void WallStage::configure(ConfigSection& s) {
  options_.tunnel_height_m = s.number("tunnel_height_m");
  s.require(options_.tunnel_height_m > 0, "tunnel_height_m", "expected the test-section height in metres, > 0");
  where_width_ = s.where("tunnel_width_m");
  options_.tunnel_width_m = s.number("tunnel_width_m", 0.0);
  s.require(options_.tunnel_width_m >= 0, "tunnel_width_m", "expected a width in metres (0: [run] span_m)");
  where_thickness_ = s.where("thickness_over_c");
  options_.thickness_over_c = s.number("thickness_over_c", 0.0);
  s.require(options_.thickness_over_c >= 0 && options_.thickness_over_c < 1, "thickness_over_c",
            "expected t/c in [0, 1) (0: from a NACA 4-digit airfoil)");
  options_.model_spans = s.choice("model_spans", {"width", "height"}, options_.model_spans);
  options_.wake_blockage = s.choice("wake_blockage", {"c_over_4h", "c_over_2h"}, options_.wake_blockage);
  options_.wake_cd = s.number("wake_cd", options_.wake_cd);
  options_.attached_alpha_max_deg = s.number("attached_alpha_max_deg");
  s.require(options_.attached_alpha_max_deg > 0 && options_.attached_alpha_max_deg < 45, "attached_alpha_max_deg",
            "expected the largest |alpha| in degrees at which the flow is attached (about the static-stall angle)");
}

void WallStage::run(RunContext& context) {
  RunStore& store = context.store();
  wall::Geometry g;
  g.chord_m = store.get<Scalar>("run/chord_m").value;
  g.height_m = options_.tunnel_height_m;
  g.width_m = options_.tunnel_width_m > 0 ? options_.tunnel_width_m : store.get<Scalar>("run/span_m").value;
  if (!(g.width_m > 0)) throw InputError(where_width_, "give tunnel_width_m, or [run] span_m");
  g.thickness_over_c = options_.thickness_over_c;
  if (g.thickness_over_c == 0) {
    const std::string airfoil = store.get<Text>("run/airfoil").value;
    std::string digits = airfoil.rfind("NACA", 0) == 0 ? airfoil.substr(4) : airfoil;
    std::erase(digits, ' ');
    try {
      g.thickness_over_c = theory::parse_naca4(digits).thickness;
    } catch (const InputError&) {
      throw InputError(where_thickness_, "[run] airfoil '" + airfoil + "' is not NACA 4-digit: give thickness_over_c");
    }
  }
  g.k1 = options_.model_spans == "width" ? 0.74 : 0.52;
  g.wake_over_2h = options_.wake_blockage == "c_over_2h";
  const double pivot = store.get<Scalar>("run/pivot_x_over_c").value;

  const std::vector<std::string> names = {"cn", "cc", "cl", "cd_p", "cm", "cm_pivot"};
  for (const auto& n : names) {
    const Entry& e = store.entry("loads/" + n);
    store.put("loads/uncorrected/" + n, e.value, e.attributes);
  }
  const Eigen::VectorXd& alpha = store.get<Series>("loads/alpha_deg").values;
  const Eigen::VectorXd cn = store.get<Series>("loads/cn").values, cc = store.get<Series>("loads/cc").values;
  const Eigen::VectorXd cl = store.get<Series>("loads/cl").values, cd = store.get<Series>("loads/cd_p").values;
  const Eigen::VectorXd cm = store.get<Series>("loads/cm").values;
  const Eigen::Index m = alpha.size();
  Eigen::VectorXd cn_c = cn, cc_c = cc, cl_c = cl, cd_c = cd, cm_c = cm, cmp_c = store.get<Series>("loads/cm_pivot").values;
  Eigen::VectorXd alpha_c = alpha, blockage = Eigen::VectorXd::Zero(m);
  Eigen::VectorXd attached = Eigen::VectorXd::Zero(m);
  for (Eigen::Index i = 0; i < m; ++i) {
    if (!(std::abs(alpha[i]) <= options_.attached_alpha_max_deg)) continue;
    attached[i] = 1;
    const double cd_wake = options_.wake_cd >= 0 ? options_.wake_cd : (std::isfinite(cd[i]) ? std::max(cd[i], 0.0) : 0.0);
    const wall::Factors f = wall::factors(g, cd_wake);
    const wall::Coefficients c = wall::correct(g, {alpha[i], cl[i], cd_wake, std::isfinite(cm[i]) ? cm[i] : 0.0});
    blockage[i] = f.blockage;
    alpha_c[i] = c.alpha_deg;
    cl_c[i] = c.cl;
    if (!std::isfinite(cm[i])) {
      // Cc and Cm invalid (masked leading-edge taps): only Cl and Cn carry a correction.
      cn_c[i] = cn[i] * (1 - f.sigma - 2 * f.blockage);
      continue;
    }
    cm_c[i] = c.cm_quarter_chord;
    cd_c[i] = std::isfinite(cd[i]) ? cd[i] * (1 - 3 * f.solid_blockage - 2 * f.wake_blockage) : cd[i];
    const double a = c.alpha_deg * std::numbers::pi / 180.0;
    cn_c[i] = cl_c[i] * std::cos(a) + cd_c[i] * std::sin(a);
    cc_c[i] = cd_c[i] * std::cos(a) - cl_c[i] * std::sin(a);
    cmp_c[i] = cm_c[i] + (pivot - 0.25) * cn_c[i];
  }
  const Attributes note{{"wall_corrected", std::string("closed test section, attached samples only (loads/wall/attached)")}};
  auto replace = [&](const std::string& n, const Eigen::VectorXd& v) {
    Attributes a = store.entry("loads/" + n).attributes;
    a.insert(note.begin(), note.end());
    store.put("loads/" + n, Series{v, "1"}, a);
  };
  replace("cn", cn_c);
  replace("cc", cc_c);
  replace("cl", cl_c);
  replace("cd_p", cd_c);
  replace("cm", cm_c);
  replace("cm_pivot", cmp_c);
  const wall::Factors f0 = wall::factors(g, 0.0);
  store.put("loads/wall/alpha_deg", Series{alpha_c, "deg"},
            {{"note", std::string("angle the corrected loads belong to; the motion angle is never corrected")}});
  store.put("loads/wall/attached", Series{attached, "1"}, {{"meaning", std::string("1: corrected (attached), 0: left as measured")}});
  store.put("loads/wall/blockage", Series{blockage, "1"},
            {{"sigma", f0.sigma}, {"solid_blockage", f0.solid_blockage}, {"k1", g.k1},
             {"tunnel_height_m", g.height_m}, {"tunnel_width_m", g.width_m}, {"thickness_over_c", g.thickness_over_c},
             {"attached_alpha_max_deg", options_.attached_alpha_max_deg},
             {"wake_blockage", options_.wake_blockage}});
}

}  // namespace stallscope
