#include "stages/theory/joukowski.hpp"

#include <gtest/gtest.h>

#include <cmath>
#include <numbers>

namespace stallscope::theory {
namespace {

constexpr double kPi = std::numbers::pi;
constexpr double kDeg = kPi / 180;

// published-checks 1.3 prints the loads to 7 decimals [C]: half a unit of the last digit.
constexpr double kSevenDigitTolerance = 5e-8;
// published-checks 1.4: exact to 8 digits at f/c = 0.025 and 0.05 [C].
constexpr double kEightDigitTolerance = 1e-8;
// published-checks 1: 1e-8 for exact Cp at >= 500 theta-samples [P].
constexpr int kSamples = 500;

TEST(Joukowski, HasTheExactChordOfBothFamilies) {
  const JoukowskiGeometry sym = make_joukowski({2.0, 0.1, 0.0});
  EXPECT_NEAR(sym.chord, 2.0 * (2 + 1.2 + 1 / 1.2), 1e-12);  // c = a[2 + (1+2e) + 1/(1+2e)] [V]
  EXPECT_NEAR(sym.chord / 2.0, 4.033333333333333, 1e-12);
  EXPECT_NEAR(sym.leading_edge_theta, kPi, 1e-6);
  const JoukowskiGeometry arc = make_joukowski({1.0, 0.0, 0.1});
  EXPECT_NEAR(arc.chord, 4.0, 1e-12);
  EXPECT_NEAR(arc.beta, std::atan(0.1), 1e-15);
  EXPECT_NEAR(arc.radius, std::sqrt(1.01), 1e-15);
  EXPECT_THROW(make_joukowski({0.0, 0.1, 0.0}), std::invalid_argument);
  EXPECT_THROW(make_joukowski({1.0, -0.1, 0.0}), std::invalid_argument);
}

// t/c ~ 1.299 epsilon for a thin symmetric section [V, published-checks 1.3];
// the first-order coefficient is 3 sqrt(3)/4.
TEST(Joukowski, ThicknessGrowsAsOnePointThreeTimesEpsilon) {
  const double eps = 0.002;
  const JoukowskiGeometry g = make_joukowski({1.0, eps, 0.0});
  double t = 0;
  for (int i = 1; i < 400; ++i) {
    const double x = i / 400.0;
    const double yu = joukowski_surface_point(g, 0, joukowski_theta_at(g, x, Surface::kUpper)).y_over_c;
    const double yl = joukowski_surface_point(g, 0, joukowski_theta_at(g, x, Surface::kLower)).y_over_c;
    t = std::max(t, yu - yl);
  }
  EXPECT_NEAR(t / eps, 1.299, 0.01);
}

TEST(Joukowski, ReproducesThePublishedSymmetricSectionLoads) {
  const JoukowskiGeometry g = make_joukowski({1.0, 0.1, 0.0});
  struct Row {
    double alpha_deg, cl, cn, cc, cm;
  };
  for (const Row& r : {Row{5, 0.5973989, 0.5951256, -0.0520667, -0.0023474},
                       Row{10, 1.1902513, 1.1721687, -0.2066850, -0.0046235}}) {
    const SectionLoads l = joukowski_integrated_loads(g, r.alpha_deg * kDeg, kSamples);
    EXPECT_NEAR(l.cl, r.cl, kSevenDigitTolerance) << r.alpha_deg;
    EXPECT_NEAR(l.cn, r.cn, kSevenDigitTolerance) << r.alpha_deg;
    EXPECT_NEAR(l.cc, r.cc, kSevenDigitTolerance) << r.alpha_deg;
    EXPECT_NEAR(l.cd_pressure, 0.0, 1e-13) << r.alpha_deg;  // d'Alembert
    EXPECT_NEAR(l.cm_quarter_chord, r.cm, kSevenDigitTolerance) << r.alpha_deg;
    EXPECT_NEAR(joukowski_lift_coefficient(g, r.alpha_deg * kDeg), r.cl, kSevenDigitTolerance);
  }
  // The thickness moment Cm_c/4 = -0.0135182 sin 2 alpha (published-checks 1.3 [C]).
  EXPECT_NEAR(joukowski_integrated_loads(g, 15 * kDeg).cm_quarter_chord, -0.0135182 * 0.5, 5e-8);
}

// Integrated surface pressure against the Kutta-Joukowski lift, for a section that
// is thick and cambered at once.
TEST(Joukowski, IntegratedLiftEqualsTheKuttaJoukowskiLift) {
  const JoukowskiGeometry g = make_joukowski({1.0, 0.08, 0.1});
  for (double alpha : {-4 * kDeg, 0.0, 3 * kDeg, 12 * kDeg}) {
    const SectionLoads l = joukowski_integrated_loads(g, alpha, 1024);
    EXPECT_NEAR(l.cl, joukowski_lift_coefficient(g, alpha), 1e-12);
    EXPECT_NEAR(l.cd_pressure, 0.0, 1e-13);
  }
}

TEST(Joukowski, CircularArcAtIdealIncidenceMatchesThinAirfoilCamber) {
  for (double f_over_c : {0.025, 0.05}) {
    const JoukowskiGeometry g = make_joukowski({1.0, 0.0, 2 * f_over_c});
    const SectionLoads l = joukowski_integrated_loads(g, 0.0, 2048);
    EXPECT_NEAR(l.cl, 4 * kPi * f_over_c, kEightDigitTolerance);
    EXPECT_NEAR(l.cm_quarter_chord, -kPi * f_over_c, kEightDigitTolerance);
    EXPECT_NEAR(joukowski_lift_coefficient(g, 0.0), 4 * kPi * f_over_c, 1e-14);
    // Maximum camber 2n at mid-chord: f/c = n / (2a).
    const double mid = joukowski_theta_at(g, 0.5, Surface::kUpper);
    EXPECT_NEAR(joukowski_surface_point(g, 0.0, mid).y_over_c, f_over_c, 1e-12);
  }
}

TEST(Joukowski, TrailingEdgePressureIsFiniteAndStagnationIsOne) {
  const JoukowskiGeometry g = make_joukowski({1.0, 0.1, 0.05});
  const double alpha = 7 * kDeg;
  // Limit at the cusp (derived): |w|/U = a cos(alpha + beta) / R.
  const double v_te = std::cos(alpha + g.beta) / g.radius;
  EXPECT_NEAR(joukowski_surface_cp(g, alpha, -g.beta), 1 - v_te * v_te, 1e-14);
  EXPECT_NEAR(joukowski_surface_cp(g, alpha, -g.beta + 1e-7), 1 - v_te * v_te, 1e-6);
  EXPECT_NEAR(joukowski_surface_cp(g, alpha, kPi + 2 * alpha + g.beta), 1.0, 1e-15);
}

TEST(Joukowski, PrecomputedStationsGiveTheSameCpAtEveryIncidence) {
  // A symmetric section, a cambered one and the circular arc (epsilon = 0, its
  // own branch), away from the arc's leading edge where both are 0/0.
  for (const JoukowskiAirfoil f : {JoukowskiAirfoil{1.0, 0.1, 0.0}, JoukowskiAirfoil{1.0, 0.08, 0.05},
                                   JoukowskiAirfoil{1.0, 0.0, 0.04}}) {
    const JoukowskiGeometry g = make_joukowski(f);
    for (double theta = -g.beta + 0.013; theta < 2 * kPi - g.beta; theta += 0.1) {
      if (f.epsilon == 0.0 && std::abs(std::cos(0.5 * (theta - g.beta))) < 1e-3) continue;
      const JoukowskiStation st = joukowski_station(g, theta);
      for (double alpha = -10 * kDeg; alpha <= 25 * kDeg; alpha += 2.5 * kDeg) {
        const double direct = joukowski_surface_cp(g, alpha, theta);
        EXPECT_NEAR(joukowski_surface_cp(st, std::cos(alpha), std::sin(alpha)), direct,
                    1e-12 * std::max(1.0, std::abs(direct)))
            << "theta " << theta << " alpha " << alpha;
      }
    }
  }
}

TEST(Joukowski, SurfacePointsRunFromLeadingEdgeToTrailingEdgeInTheChordFrame) {
  const JoukowskiGeometry g = make_joukowski({1.0, 0.1, 0.0});
  const JoukowskiSurfacePoint te = joukowski_surface_point(g, 0, -g.beta);
  EXPECT_NEAR(te.x_over_c, 1.0, 1e-15);
  EXPECT_NEAR(te.y_over_c, 0.0, 1e-15);
  const JoukowskiSurfacePoint le = joukowski_surface_point(g, 0, g.leading_edge_theta);
  EXPECT_NEAR(le.x_over_c, 0.0, 1e-15);
  EXPECT_NEAR(le.y_over_c, 0.0, 1e-6);
  for (double x : {0.02, 0.3, 0.8}) {
    for (Surface s : {Surface::kUpper, Surface::kLower}) {
      const double theta = joukowski_theta_at(g, x, s);
      const JoukowskiSurfacePoint p = joukowski_surface_point(g, 0, theta);
      EXPECT_NEAR(p.x_over_c, x, 1e-13);
      EXPECT_EQ(p.y_over_c > 0, s == Surface::kUpper);
      const double h = 1e-6;
      const JoukowskiSurfacePoint a = joukowski_surface_point(g, 0, theta - h);
      const JoukowskiSurfacePoint b = joukowski_surface_point(g, 0, theta + h);
      EXPECT_NEAR(p.slope, (b.y_over_c - a.y_over_c) / (b.x_over_c - a.x_over_c), 1e-7);
    }
  }
}

// Flat plate: Cn = pi sin 2 alpha = 0.5455318 (5 deg), 1.0744880 (10 deg) [C], Cm_c/4 = 0.
TEST(FlatPlate, ExactPressureIntegratesToThePublishedNormalForce) {
  for (auto [alpha_deg, cn_published] : {std::pair{5.0, 0.5455318}, std::pair{10.0, 1.0744880}}) {
    const double alpha = alpha_deg * kDeg;
    // x = (1 - cos phi)/2 removes the leading-edge singularity; midpoint rule.
    const int n = 4000;
    double cn = 0, cm_le = 0;
    for (int i = 0; i < n; ++i) {
      const double phi = (i + 0.5) * kPi / n;
      const double x = 0.5 * (1 - std::cos(phi));
      const double dx = 0.5 * std::sin(phi) * kPi / n;
      const double jump = flat_plate_cp(x, alpha, Surface::kLower) - flat_plate_cp(x, alpha, Surface::kUpper);
      cn += jump * dx;
      cm_le -= jump * x * dx;
    }
    EXPECT_NEAR(cn, cn_published, kSevenDigitTolerance);
    EXPECT_NEAR(cm_le + cn / 4, 0.0, 1e-10);
    const SectionLoads closed = flat_plate_loads(alpha);
    EXPECT_NEAR(closed.cn, cn_published, kSevenDigitTolerance);
    EXPECT_DOUBLE_EQ(closed.cl, closed.cn * std::cos(alpha));
    EXPECT_DOUBLE_EQ(closed.cm_quarter_chord, 0.0);
  }
}

TEST(FlatPlate, IsTheJoukowskiSectionWithNoThicknessOrCamber) {
  const JoukowskiGeometry g = make_joukowski({1.0, 0.0, 0.0});
  const double alpha = 6 * kDeg;
  for (double x : {0.05, 0.4, 0.9}) {
    for (Surface s : {Surface::kUpper, Surface::kLower}) {
      const double theta = joukowski_theta_at(g, x, s);
      EXPECT_NEAR(joukowski_surface_cp(g, alpha, theta), flat_plate_cp(x, alpha, s), 1e-9);
    }
  }
}

// Cylinder: Cp_min = -3 at +-90 deg without circulation; with it Cl = Gamma/(U R) on
// the diameter and Cd = 0 (published-checks 1.1).
TEST(Cylinder, PressureGivesKuttaJoukowskiLiftAndNoDrag) {
  EXPECT_DOUBLE_EQ(cylinder_cp(kPi / 2, 0.0), -3.0);
  EXPECT_DOUBLE_EQ(cylinder_cp(-kPi / 2, 0.0), -3.0);
  EXPECT_DOUBLE_EQ(cylinder_cp(0.0, 0.0), 1.0);
  const double circulation_ratio = 2.5;
  const int n = 64;
  double cl = 0, cd = 0;
  for (int i = 0; i < n; ++i) {
    const double theta = 2 * kPi * i / n;
    // Force = -oint p n ds on the unit-radius circle, normalised by q (2R).
    cl -= 0.5 * cylinder_cp(theta, circulation_ratio) * std::sin(theta) * 2 * kPi / n;
    cd -= 0.5 * cylinder_cp(theta, circulation_ratio) * std::cos(theta) * 2 * kPi / n;
  }
  EXPECT_NEAR(cl, circulation_ratio, 1e-13);
  EXPECT_NEAR(cd, 0.0, 1e-13);
}

}  // namespace
}  // namespace stallscope::theory
