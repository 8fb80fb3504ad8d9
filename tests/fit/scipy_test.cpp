// The bounded least-squares fit of tau1, tau2 against scipy.optimize.least_squares
// (trust-region reflective) on the same noisy loop and the same model, written
// out independently in numpy (tests/fit/scipy_reference.py).
#include <gtest/gtest.h>

#include <cmath>
#include <fstream>
#include <numbers>
#include <random>
#include <sstream>

#include "stages/fit/loop_fit.hpp"
#include "tests/support/test_support.hpp"

namespace stallscope::fit {
namespace {

constexpr double kDeg = std::numbers::pi / 180.0;

TEST(FitAgainstScipy, SameMinimumAsLeastSquaresTrustRegion) {
  stallscope::testing::ScratchDir dir;
  std::vector<double> pa, pc;
  for (double a = -4.0; a <= 26.0; a += 0.5) {
    const double x0 = theory::static_separation({0.3 / kDeg, 14.0 * kDeg}, a * kDeg);
    pa.push_back(a);
    pc.push_back(6.0 * std::pow(0.5 * (1 + std::sqrt(x0)), 2) * a * kDeg);
  }
  StaticCurveOptions o;
  o.angle = KirchhoffAngle::kLinear;
  o.curve = SeparationCurve::kTanh;
  o.smoothing_points = 1;
  const StaticSeparation curve = StaticSeparation::from_polar(pa, pc, o);
  const FlowScales flow{0.15, 25.0, 0.25};
  const double period = std::numbers::pi * flow.convective_s() / 0.08;
  const int bins = 120;
  Eigen::VectorXd alpha(bins);
  for (int b = 0; b < bins; ++b) alpha[b] = 11.0 - 9.0 * std::cos(2 * std::numbers::pi * (b + 0.5) / bins);
  const LoopModel model(alpha, period, flow, curve, AttachedLag::kQuasiSteady);
  Eigen::VectorXd cn = model.normal_force({2.5, 4.0});
  std::mt19937_64 random(11);
  std::normal_distribution<double> noise(0.0, 0.03);
  for (int b = 0; b < bins; ++b) cn[b] += noise(random);
  std::vector<bool> window(bins, true);
  for (int b = 50; b < 75; ++b) window[b] = false;  // an excluded stretch, as after stall onset
  FitOptions fo;
  fo.lag = AttachedLag::kQuasiSteady;
  const LoopFit f = fit_loop(alpha, cn, window, period, flow, curve, fo);
  ASSERT_TRUE(f.fitted) << f.reason;

  std::ofstream csv(dir / "loop.csv");
  csv.precision(17);
  csv << "t_conv,alpha_rad,alpha_rate,cn,in_window\n";
  for (int b = 0; b < bins; ++b)
    csv << model.time_conv()[b] << "," << model.alpha_rad()[b] << "," << model.alpha_rate_per_conv()[b] << ","
        << cn[b] << "," << (window[b] ? 1 : 0) << "\n";
  csv.close();
  std::ostringstream args;
  args.precision(17);
  args << stallscope::testing::shell_quote((dir / "loop.csv").string()) << " " << curve.tanh_fit().steepness << " "
       << curve.tanh_fit().alpha_star << " " << curve.lift_slope_per_rad() << " " << curve.zero_lift_angle_rad() << " "
       << model.period_conv();
  const auto r = stallscope::testing::run_python(stallscope::testing::kSourceDir / "tests/fit/scipy_reference.py",
                                                 args.str());
  ASSERT_EQ(r.exit_code, 0) << r.err;
  std::istringstream in(r.out);
  double tau1 = NAN, tau2 = NAN;
  in >> tau1 >> tau2;
  std::printf("stallscope: %.6f %.6f, scipy: %.6f %.6f\n", f.tau1, f.tau2, tau1, tau2);
  // The C++ curve is the tanh sampled every 0.02 deg and interpolated (x0 within
  // 1e-5 of the closed form); measured agreement 2.5e-5 c/U, tolerance 2e-4.
  EXPECT_NEAR(f.tau1, tau1, 2e-4);
  EXPECT_NEAR(f.tau2, tau2, 2e-4);
}

}  // namespace
}  // namespace stallscope::fit
