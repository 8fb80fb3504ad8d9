// The Goman-Khrabrov fit's numerics: the static separation curve from a polar,
// the periodic loop model against closed forms (published-checks 9; Theodorsen
// 1935, published-checks 3), and recovery of known constants from noisy loops
// with intervals that cover them at their stated rate.
#include <gtest/gtest.h>

#include <cmath>
#include <numbers>
#include <random>

#include "stages/fit/campaign_fit.hpp"
#include "stages/fit/least_squares.hpp"
#include "stages/fit/loop_fit.hpp"
#include "stages/theory/theodorsen.hpp"

namespace stallscope::fit {
namespace {

constexpr double kPi = std::numbers::pi;
constexpr double kDeg = kPi / 180.0;

// A static polar from a known x0 = (1 - tanh(s (alpha - alpha*)))/2 through Kirchhoff.
struct KnownPolar {
  double slope = 6.0, alpha_star_deg = 14.0, steepness_per_deg = 0.3;
  KirchhoffAngle angle = KirchhoffAngle::kSine;
  double x0(double alpha_rad) const {
    return theory::static_separation({steepness_per_deg / kDeg, alpha_star_deg * kDeg}, alpha_rad);
  }
  double cn(double alpha_deg) const {
    const double a = alpha_deg * kDeg, f = 0.5 * (1 + std::sqrt(x0(a)));
    return slope * f * f * (angle == KirchhoffAngle::kSine ? std::sin(a) : a);
  }
  StaticSeparation curve(double step_deg = 0.5, int smoothing = 1) const {
    std::vector<double> a, c;
    for (double d = -4.0; d <= 26.0 + 1e-9; d += step_deg) {
      a.push_back(d);
      c.push_back(cn(d));
    }
    StaticCurveOptions o;
    o.angle = angle;
    o.smoothing_points = smoothing;
    o.lift_slope_per_rad = slope;  // exact slope: the line over +-5 deg would see x0 < 1 already
    o.zero_lift_angle_deg = 0.0;
    return StaticSeparation::from_polar(a, c, o);
  }
};

const FlowScales kFlow{0.15, 25.0, 0.25};  // c/U = 6 ms

Eigen::VectorXd sine_loop_deg(int bins, double mean, double amplitude) {
  Eigen::VectorXd a(bins);
  for (int b = 0; b < bins; ++b) a[b] = mean - amplitude * std::cos(2 * kPi * (b + 0.5) / bins);
  return a;
}

double period_for(double k) { return kPi * kFlow.convective_s() / k; }

TEST(StaticSeparation, KirchhoffValuesAtOneQuarterAndZero) {
  // published-checks 9 [C]: Cn / (Cn_alpha sin alpha) = 1, 0.5625, 0.25 at x = 1, 0.25, 0.
  const StaticSeparation s = KnownPolar{}.curve();
  const double a = 0.2;
  EXPECT_NEAR(s.normal_force(a, 1.0) / (6.0 * std::sin(a)), 1.0, 1e-15);
  EXPECT_NEAR(s.normal_force(a, 0.25) / (6.0 * std::sin(a)), 0.5625, 1e-15);
  EXPECT_NEAR(s.normal_force(a, 0.0) / (6.0 * std::sin(a)), 0.25, 1e-15);
}

TEST(StaticSeparation, InversionRecoversTheKnownCurveAndItsTanhFit) {
  for (KirchhoffAngle angle : {KirchhoffAngle::kSine, KirchhoffAngle::kLinear}) {
    KnownPolar p;
    p.angle = angle;
    const StaticSeparation s = p.curve();
    for (double d : {6.0, 10.0, 13.0, 14.0, 15.5, 18.0, 22.0}) {
      // Linear interpolation of x0 between points 0.5 deg apart: curvature error below 4e-3.
      EXPECT_NEAR(s(d * kDeg), p.x0(d * kDeg), 4e-3) << d;
    }
    EXPECT_NEAR(s.tanh_fit().alpha_star / kDeg, 14.0, 1e-3);
    EXPECT_NEAR(s.tanh_fit().steepness * kDeg, 0.3, 1e-3);
  }
}

TEST(StaticSeparation, ClipsSmoothsAndKeepsSeparationGrowingWithAngle) {
  // A noisy polar: inverted points are clipped to [0, 1] and the curve is monotone.
  KnownPolar p;
  std::mt19937_64 random(7);
  std::normal_distribution<double> noise(0.0, 0.03);
  std::vector<double> a, c;
  for (double d = -6.0; d <= 26.0; d += 1.0) {
    a.push_back(d);
    c.push_back(p.cn(d) * (1 + noise(random)));
  }
  StaticCurveOptions o;  // slope and zero-lift angle from the line over +-5 deg
  const StaticSeparation s = StaticSeparation::from_polar(a, c, o);
  EXPECT_NEAR(s.lift_slope_per_rad(), 6.0, 0.3);
  for (double x : s.x0_raw()) EXPECT_TRUE(x >= 0.0 && x <= 1.0);
  for (double d = 0.0; d < 26.0; d += 0.25) EXPECT_GE(s(d * kDeg) + 1e-12, s((d + 0.25) * kDeg)) << d;
  EXPECT_NEAR(s(20 * kDeg), p.x0(20 * kDeg), 0.05);
  EXPECT_THROW(StaticSeparation::from_polar({1, 2, 3}, {0.1, 0.2, 0.3}, o), std::invalid_argument);
  EXPECT_THROW(StaticSeparation::from_polar({12, 14, 16, 18}, {1, 1.1, 1.0, 0.9}, o), std::invalid_argument);
}

TEST(LoopModel, AttachedLoopIsTheodorsensLift) {
  // x0 = 1 over the loop (small angles), linear Kirchhoff form with 2 pi: Cn must be
  // Theodorsen's Cl/alpha_bar = pi(ik + ak^2) + 2 pi C [1 + ik(1/2 - a)] (published-checks 3).
  KnownPolar p;
  p.slope = 2 * kPi;
  p.angle = KirchhoffAngle::kLinear;
  p.alpha_star_deg = 40.0;
  const StaticSeparation s = p.curve();
  const int bins = 200;
  const double amp = 2.0, k = 0.1;
  const LoopModel model(sine_loop_deg(bins, 0.0, amp), period_for(k), kFlow, s);
  const Eigen::VectorXd cn = model.normal_force({2.0, 3.0});
  const std::complex<double> transfer = theory::pitch_lift_transfer(k, -0.5);
  // published-checks 3 [C]: 5.31969 - 0.24573i at k = 0.1, a = -1/2.
  EXPECT_NEAR(transfer.real(), 5.31969, 1e-5);
  double worst = 0;
  for (int b = 0; b < bins; ++b) {
    const double theta = 2 * kPi * (b + 0.5) / bins;  // alpha = -amp cos(theta) = Re[amp e^{i(theta + pi)}]
    const double expected = (transfer * std::polar(amp * kDeg, theta + kPi)).real();
    worst = std::max(worst, std::abs(cn[b] - expected));
  }
  // x0 = 1 - 2e-11 at 2 deg; the rest is rounding.
  EXPECT_LT(worst, 1e-9);
}

TEST(LoopModel, PeriodicStateFollowsTheHarmonicTransfer) {
  // Linear x0 over the loop: x_hat/x0_hat = (1 - i omega tau2)/(1 + i omega tau1) (published-checks 9 [C]),
  // with no start-up transient in the periodic steady state.
  const int bins = 400;
  const double tau1 = 2.0, tau2 = 3.0, k = 0.1, amp = 1.0;
  const Eigen::VectorXd alpha = sine_loop_deg(bins, 10.0, amp);
  const LoopModel loop(alpha, period_for(k), kFlow, KnownPolar{}.curve());
  // Linear x0 = 0.5 - 2 (alpha - 10 deg) (per rad).
  const auto x0 = [](double a) { return 0.5 - 2.0 * (a - 10 * kDeg); };
  const Eigen::VectorXd x =
      theory::periodic_goman_khrabrov(loop.time_conv(), loop.alpha_rad(), loop.alpha_rate_per_conv(), loop.period_conv(), x0, {tau1, tau2});
  const double omega = 2 * kPi / loop.period_conv();
  const std::complex<double> h = theory::goman_khrabrov_harmonic_response(omega, {tau1, tau2});
  double worst = 0;
  for (int b = 0; b < bins; ++b) {
    const double theta = 2 * kPi * (b + 0.5) / bins;
    const double x0_amplitude = -2.0 * amp * kDeg;  // of -cos(theta): x0 = 0.5 + 2 amp cos(theta)
    const double expected = 0.5 + (h * std::polar(-x0_amplitude, theta)).real();
    worst = std::max(worst, std::abs(x[b] - expected));
  }
  // Second-order central difference of alpha and piecewise-linear forcing: O((omega h)^2) of the amplitude.
  EXPECT_LT(worst, 2e-4 * 2.0 * amp * kDeg * 10);
}

TEST(LeastSquares, BoundedMinimumOfAQuadraticSitsOnTheBound) {
  const Residuals r = [](const Eigen::VectorXd& p) { return Eigen::Vector2d(p[0] - 3.0, 2.0 * (p[1] + 1.0)); };
  const Box box{Eigen::Vector2d(0.0, 0.0), Eigen::Vector2d(10.0, 10.0)};
  const LeastSquaresResult best = grid_started_least_squares(r, box, 5);
  EXPECT_NEAR(best.parameters[0], 3.0, 1e-8);
  EXPECT_EQ(best.parameters[1], 0.0);
  EXPECT_NEAR(best.cost, 4.0, 1e-12);
}

// Loops of `cycles` cycles from known constants, each with its own noise and a
// jittered static break angle (cycle-to-cycle variation, as in a tunnel).
struct Noisy {
  Eigen::MatrixXd alpha, cn;
};
Noisy noisy_cycles(const StaticSeparation& truth_curve, double tau1, double tau2, int bins, int cycles, double noise,
                   std::uint64_t seed) {
  std::mt19937_64 random(seed);
  std::normal_distribution<double> gauss(0.0, 1.0);
  Noisy out{Eigen::MatrixXd(bins, cycles), Eigen::MatrixXd(bins, cycles)};
  for (int c = 0; c < cycles; ++c) {
    const double shift = 0.3 * gauss(random);  // deg of alpha* jitter
    Eigen::VectorXd a = sine_loop_deg(bins, 10.0 - shift, 8.0);
    const LoopModel m(a, period_for(0.1), kFlow, truth_curve);
    Eigen::VectorXd cn = m.normal_force({tau1, tau2});
    for (int b = 0; b < bins; ++b) cn[b] += noise * gauss(random);
    out.alpha.col(c) = a.array() + shift;
    out.cn.col(c) = cn;
  }
  return out;
}

TEST(LoopFit, RecoversKnownConstantsFromAnExactLoop) {
  const StaticSeparation s = KnownPolar{}.curve();
  const int bins = 200;
  const Eigen::VectorXd alpha = sine_loop_deg(bins, 10.0, 8.0);
  const LoopModel m(alpha, period_for(0.1), kFlow, s);
  const Eigen::VectorXd cn = m.normal_force({2.0, 3.0});
  const LoopFit f = fit_loop(alpha, cn, std::vector<bool>(bins, true), period_for(0.1), kFlow, s, FitOptions{});
  ASSERT_TRUE(f.fitted) << f.reason;
  EXPECT_NEAR(f.tau1, 2.0, 1e-5);
  EXPECT_NEAR(f.tau2, 3.0, 1e-5);
  EXPECT_LT(f.rms_residual, 1e-8);
}

TEST(LoopFit, ALoopThatNeverStallsIsNotFitted) {
  const StaticSeparation s = KnownPolar{}.curve();
  const Eigen::VectorXd alpha = sine_loop_deg(72, 4.0, 4.0);  // 0 to 8 deg, x0 > 0.99
  const LoopModel m(alpha, period_for(0.1), kFlow, s);
  const LoopFit f = fit_loop(alpha, m.normal_force({2, 3}), std::vector<bool>(72, true), period_for(0.1), kFlow, s,
                             FitOptions{});
  EXPECT_FALSE(f.fitted);
  EXPECT_NE(f.reason.find("never stalls"), std::string::npos) << f.reason;
}

TEST(LoopFit, BootstrapIntervalsCoverTheTruthAtTheirStatedRate) {
  // 40 independent noisy runs of 10 cycles; each run's 95 % bootstrap interval
  // should hold the truth in about 95 % of runs. The binomial 0.1 % lower tail
  // for 40 trials at p = 0.95 is 33: fewer would mean the intervals are too narrow.
  const StaticSeparation s = KnownPolar{}.curve();
  const int bins = 72, runs = 40;
  int covered1 = 0, covered2 = 0, percentile1 = 0, percentile2 = 0;
  for (int run = 0; run < runs; ++run) {
    const Noisy data = noisy_cycles(s, 2.0, 3.0, bins, 10, 0.03, 100 + run);
    std::vector<Eigen::Index> all(10);
    std::iota(all.begin(), all.end(), 0);
    const std::vector<bool> window(bins, true);
    const LoopFit centre = fit_loop(mean_loop(data.alpha, all), mean_loop(data.cn, all), window, period_for(0.1),
                                    kFlow, s, FitOptions{});
    ASSERT_TRUE(centre.fitted) << centre.reason;
    const BootstrapFit b = bootstrap_over_cycles(data.alpha, data.cn, window, period_for(0.1), kFlow, s, FitOptions{},
                                                 centre, 100, run);
    covered1 += b.tau1_ci[0] <= 2.0 && 2.0 <= b.tau1_ci[1];
    covered2 += b.tau2_ci[0] <= 3.0 && 3.0 <= b.tau2_ci[1];
    percentile1 += b.percentile_tau1[0] <= 2.0 && 2.0 <= b.percentile_tau1[1];
    percentile2 += b.percentile_tau2[0] <= 3.0 && 3.0 <= b.percentile_tau2[1];
  }
  std::printf("coverage over %d runs: tau1 %d, tau2 %d (percentile intervals: %d, %d)\n", runs, covered1, covered2,
              percentile1, percentile2);
  EXPECT_GE(covered1, 33);
  EXPECT_GE(covered2, 33);
}

}  // namespace
}  // namespace stallscope::fit

namespace stallscope::fit {
namespace {

TEST(CampaignTrend, SlopeOfExactlyLinearConstantsAndNoneWithoutSpread) {
  std::deque<CampaignRun> runs;
  for (double k : {0.05, 0.1, 0.15, 0.2}) {
    CampaignRun r;
    r.loops.reduced_frequency = k;
    r.loops.alpha_mean_deg = 10.0 + 1e-3 * k;  // one condition, measured with scatter
    r.fit.main.fitted = true;
    r.fit.main.tau1 = 1.0 + 10.0 * k;
    r.fit.main.tau2 = 3.0;
    runs.push_back(std::move(r));
  }
  const auto trends = constant_trends(runs);
  ASSERT_EQ(trends.size(), 4u);
  EXPECT_EQ(trends[0].constant, "tau1_conv");
  EXPECT_EQ(trends[0].regressor, "reduced_frequency");
  EXPECT_NEAR(trends[0].slope, 10.0, 1e-12);
  EXPECT_NEAR(trends[0].intercept, 1.0, 1e-12);
  EXPECT_NEAR(trends[0].slope_hi - trends[0].slope_lo, 0.0, 1e-9);  // no scatter about the line
  EXPECT_TRUE(std::isnan(trends[1].slope)) << trends[1].note;      // mean angle does not vary
  EXPECT_NEAR(trends[2].slope, 0.0, 1e-12);
}

}  // namespace
}  // namespace stallscope::fit
