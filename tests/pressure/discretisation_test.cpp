// The tap-layout bias bound: analytic distributions sampled at the taps
// against their exact integrals.
#include "stages/discretisation.hpp"

#include <gtest/gtest.h>

#include <cmath>
#include <numbers>

#include "tests/support/test_support.hpp"

namespace stallscope {
namespace {

// Taps clustered at the leading edge, as tunnel models are drilled: x = (1 - cos)/2.
std::vector<ContourPoint> cosine_layout(int per_surface) {
  std::vector<ContourPoint> taps;
  for (bool upper : {true, false})
    for (int i = 0; i < per_surface; ++i) {
      const double x = 0.5 * (1 - std::cos(std::numbers::pi * (i + (upper ? 0.5 : 0.75)) / per_surface));
      taps.push_back({x, upper ? 0.05 : -0.05, upper});
    }
  return taps;
}

double worst_relative_cn(const std::vector<DiscretisationCase>& cases) {
  double worst = 0;
  for (const auto& c : cases) worst = std::max(worst, std::abs(c.cn_layout / c.cn_exact - 1));
  return worst;
}

// Thin-airfoil theory (Anderson, Fundamentals of Aerodynamics, 4.7): the flat
// plate's Cn = 2 pi alpha and Cm(c/4) = 0, approached by a dense layout.
TEST(Discretisation, ADenseLayoutApproachesTheThinAirfoilFlatPlate) {
  const auto cases = discretisation_cases(cosine_layout(400), TrailingEdgeClosure::kExtrapolate);
  ASSERT_EQ(cases.size(), 10u);
  EXPECT_EQ(cases[0].distribution, "flat_plate");
  EXPECT_DOUBLE_EQ(cases[0].cn_exact, 0.2 * std::numbers::pi);
  EXPECT_NEAR(cases[0].cn_layout / cases[0].cn_exact, 1.0, 5e-3);
  EXPECT_NEAR(cases[0].cm_layout, 0.0, 2e-3);
  for (std::size_t i = 1; i < cases.size(); ++i) {
    EXPECT_NEAR(cases[i].cn_layout / cases[i].cn_exact, 1.0, 1e-4) << cases[i].x_centre;
    EXPECT_NEAR(cases[i].cm_layout - cases[i].cm_exact, 0.0, 1e-4) << cases[i].x_centre;
  }
}

// The bump integrals checked by scipy.integrate.quad, an independent quadrature.
TEST(Discretisation, SuctionBumpIntegralsAgreeWithScipyQuad) {
  const auto cases = discretisation_cases(cosine_layout(20), TrailingEdgeClosure::kExtrapolate);
  testing::ScratchDir dir;
  const auto script = dir.write("quad.py",
                                "import numpy as np\nfrom scipy.integrate import quad\n"
                                "for x0 in [0.1 * k for k in range(1, 10)]:\n"
                                "    g = lambda x: 2.0 * np.exp(-0.5 * ((x - x0) / 0.05) ** 2)\n"
                                "    cn = quad(g, 0, 1, points=[x0], epsabs=1e-14)[0]\n"
                                "    cm = -quad(lambda x: g(x) * (x - 0.25), 0, 1, points=[x0], epsabs=1e-14)[0]\n"
                                "    print(f'{cn:.15g} {cm:.15g}')\n");
  const auto r = testing::run_python(script, "");
  ASSERT_EQ(r.exit_code, 0) << r.err;
  std::istringstream in(r.out);
  for (std::size_t i = 1; i < cases.size(); ++i) {
    double cn = 0, cm = 0;
    ASSERT_TRUE(in >> cn >> cm) << r.out;
    EXPECT_NEAR(cases[i].cn_exact, cn, 1e-12) << cases[i].x_centre;
    EXPECT_NEAR(cases[i].cm_exact, cm, 1e-12) << cases[i].x_centre;
  }
}

TEST(Discretisation, FewerTapsGiveALargerBoundAndTheTableCarriesIt) {
  const auto coarse = discretisation_cases(cosine_layout(8), TrailingEdgeClosure::kExtrapolate);
  const auto fine = discretisation_cases(cosine_layout(24), TrailingEdgeClosure::kExtrapolate);
  EXPECT_GT(worst_relative_cn(coarse), 2 * worst_relative_cn(fine));
  Attributes bounds;
  const Table t = discretisation_table(coarse, bounds);
  EXPECT_EQ(t.rows(), coarse.size());
  EXPECT_DOUBLE_EQ(std::get<double>(bounds.at("cn_bias_bound_relative")), worst_relative_cn(coarse));
  const auto& err = t.numbers("cn_error");
  for (std::size_t i = 0; i < coarse.size(); ++i) EXPECT_DOUBLE_EQ(err[i], coarse[i].cn_layout - coarse[i].cn_exact);
}

}  // namespace
}  // namespace stallscope
