// Chordwise Cp: attached Joukowski distribution, separated plateau, vortex bump.
#include <gtest/gtest.h>

#include <cmath>
#include <numbers>

#include "stages/theory/joukowski.hpp"
#include "stages/theory/naca4.hpp"
#include "tools/synth/surface_pressure.hpp"

namespace stallscope::synth {
namespace {

constexpr double kDeg = std::numbers::pi / 180.0;

struct Fixture {
  theory::Naca4Section section = theory::parse_naca4("0012");
  std::vector<theory::TapLocation> taps = theory::naca4_tap_layout(section, 12);
  SurfacePressure surface{section, taps, 0.25};
};

FlowSample attached(double alpha_deg) {
  FlowSample s;
  s.alpha = alpha_deg * kDeg;
  s.alpha_effective = s.alpha;
  s.separation_x = 1.0;
  s.cn_circulatory_target = 2 * std::numbers::pi * s.alpha;
  return s;
}

TEST(SurfacePressure, TheIntegratedNormalForceIsTheModelsTarget) {
  Fixture f;
  std::vector<double> cp;
  SectionLoads loads;
  for (double a : {2.0, 8.0, 14.0}) {
    FlowSample s = attached(a);
    f.surface.evaluate(s, cp, loads);
    EXPECT_NEAR(loads.cn, s.cn_circulatory_target, 1e-9) << a;
    EXPECT_NEAR(loads.cm_quarter_chord, 0.0, 1e-9) << a;  // attached centre of pressure at c/4
    // Leading-edge suction: the chord force points forward.
    EXPECT_LT(loads.cc, -0.5 * loads.cn * std::sin(s.alpha)) << a;
  }
}

TEST(SurfacePressure, AttachedTapsFollowTheJoukowskiDistribution) {
  // Without apparent mass and separation the attached Cp is the exact Joukowski Cp
  // at some angle: the tap nearest the leading edge on the upper side has the
  // strongest suction, and the lower surface is in compression near the LE.
  Fixture f;
  std::vector<double> cp;
  SectionLoads loads;
  f.surface.evaluate(attached(8.0), cp, loads);
  const std::size_t le_upper = f.taps.size() / 2 - 1, le_lower = f.taps.size() / 2;
  for (std::size_t i = 0; i < le_upper; ++i) EXPECT_GT(cp[i], cp[le_upper]);
  EXPECT_GT(cp[le_lower], 0.0);
}

TEST(SurfacePressure, SeparationLeavesAFlatPlateauAftOfTheSeparationPoint) {
  Fixture f;
  FlowSample s = attached(18.0);
  s.separation_x = 0.3;
  s.cn_circulatory_target *= std::pow(0.5 * (1 + std::sqrt(0.3)), 2);
  std::vector<double> cp;
  SectionLoads loads;
  f.surface.evaluate(s, cp, loads);
  EXPECT_NEAR(loads.cn, s.cn_circulatory_target, 1e-9);
  double plateau = NAN;
  for (std::size_t i = 0; i < f.taps.size(); ++i) {
    if (f.taps[i].surface != theory::Surface::kUpper || f.taps[i].x_over_c < 0.3) continue;
    if (std::isnan(plateau)) plateau = cp[i];
    EXPECT_NEAR(cp[i], plateau, 1e-12);
  }
  EXPECT_LT(loads.cm_quarter_chord, 0.0);  // the centre of pressure moves aft: nose down
}

TEST(SurfacePressure, AVortexAddsASuctionBumpUnderItAndANoseDownMomentWhenAft) {
  Fixture f;
  FlowSample s = attached(12.0);
  std::vector<double> base, cp;
  SectionLoads base_loads, loads;
  f.surface.evaluate(s, base, base_loads);
  Vortex v;
  v.x_over_c = 0.7;
  v.height_over_c = 0.05;
  v.cp_bump = 2.0;
  s.vortices.push_back(v);
  f.surface.evaluate(s, cp, loads);
  std::size_t nearest = 0;
  for (std::size_t i = 0; i < f.taps.size(); ++i)
    if (f.taps[i].surface == theory::Surface::kUpper &&
        std::abs(f.taps[i].x_over_c - 0.7) < std::abs(f.taps[nearest].x_over_c - 0.7))
      nearest = i;
  const double h = 0.05, dx = f.taps[nearest].x_over_c - 0.7;
  EXPECT_NEAR(base[nearest] - cp[nearest], 2.0 * h * h / (dx * dx + h * h), 1e-12);
  EXPECT_GT(loads.cn, base_loads.cn);  // lift overshoot
  EXPECT_LT(loads.cm_quarter_chord, base_loads.cm_quarter_chord - 0.05);
  // The bump integrates to about pi B h of normal force (Lorentzian on the chord).
  EXPECT_NEAR(loads.cn - base_loads.cn, std::numbers::pi * 2.0 * h, 0.1 * std::numbers::pi * 2.0 * h);
}

}  // namespace
}  // namespace stallscope::synth
