// The Leishman-Beddoes vortex-lift term (Leishman & Beddoes 1989, J. American
// Helicopter Society 34(3)): its shed force against the Kirchhoff values of
// published-checks 9, its step against closed forms of the first-order
// equation dCn_v/dt = gate dC_v/dt - Cn_v/T_v (a ramp, a harmonic), the
// periodic steady state, and inside the loop model and the fit.
#include <gtest/gtest.h>

#include <cmath>
#include <complex>
#include <numbers>
#include <numeric>
#include <random>

#include "stages/fit/loop_fit.hpp"
#include "stages/fit/vortex_lift.hpp"

namespace stallscope::fit {
namespace {

constexpr double kPi = std::numbers::pi;
constexpr double kDeg = kPi / 180.0;

TEST(VortexLift, ShedForceIsTheAttachedForceKirchhoffTakesAway) {
  // published-checks 9 [C]: Kirchhoff factor 1, 0.5625, 0.25 at x = 1, 0.25, 0.
  EXPECT_EQ(shed_vortex_force(1.2, 1.0), 0.0);
  EXPECT_NEAR(shed_vortex_force(1.2, 0.25), 1.2 * (1 - 0.5625), 1e-15);
  EXPECT_NEAR(shed_vortex_force(1.2, 0.0), 1.2 * 0.75, 1e-15);
  EXPECT_NEAR(shed_vortex_force(1.2, -0.1), 1.2 * 0.75, 1e-15);  // clipped to [0, 1]
}

// Closed form of dy/dt + y/T = gate r (a ramp C_v = r t): zero before onset,
// r T (1 - e^{-(t - on)/T}) while the gate is open, then free decay; plus the
// initial value's decay.
double ramp_response(double t, double t0, double y0, double r, double on, double t_v, double t_vl) {
  const double free = y0 * std::exp(-(t - t0) / t_v);
  if (t <= on) return free;
  const double end = on + t_vl;
  if (t <= end) return free + r * t_v * (1 - std::exp(-(t - on) / t_v));
  return free + r * t_v * (1 - std::exp(-t_vl / t_v)) * std::exp(-(t - end) / t_v);
}

TEST(VortexLift, ARampIsExactWithTheGateEdgesInsideSteps) {
  // An irregular time base; onset and end of the gate fall inside steps.
  Eigen::VectorXd t(60), shed(60);
  std::mt19937_64 random(3);
  std::uniform_real_distribution<double> step(0.05, 0.25);
  t[0] = 0.1;
  for (Eigen::Index i = 1; i < t.size(); ++i) t[i] = t[i - 1] + step(random);
  const double rate = 0.37;
  for (Eigen::Index i = 0; i < t.size(); ++i) shed[i] = 0.2 + rate * t[i];
  const VortexLiftTimes times{0.8, 2.11};
  const double onset = 1.37, initial = 0.05;
  const Eigen::VectorXd y = integrate_vortex_lift(t, shed, onset, times, initial);
  double worst = 0;
  for (Eigen::Index i = 0; i < t.size(); ++i)
    worst = std::max(worst, std::abs(y[i] - ramp_response(t[i], t[0], initial, rate, onset, times.t_v, times.t_vl)));
  std::printf("ramp: worst error %.2e\n", worst);
  EXPECT_LT(worst, 1e-12);
  EXPECT_GT(y.maxCoeff(), 0.5 * rate * times.t_v);  // the response is not trivially zero
}

TEST(VortexLift, StepWeightAgreesWithThePublishedHalfStepDecayToSecondOrder) {
  // Leishman & Beddoes weight an increment by E^{1/2}, E = exp(-dt/T_v) (from
  // memory); the exact weight for a linear C_v is T_v (1 - E)/dt. Their ratio is
  // 1 + (dt/T_v)^2/24 + O((dt/T_v)^3).
  for (double r : {0.01, 0.05, 0.1}) {
    Eigen::VectorXd t(2), shed(2);
    t << 0.0, r;
    shed << 0.0, 1.0;
    const double exact = integrate_vortex_lift(t, shed, -1.0, {1.0, 10.0})[1];
    const double published = std::exp(-0.5 * r);
    EXPECT_NEAR(exact / published - 1.0, r * r / 24, r * r * r / 20) << r;
  }
}

TEST(VortexLift, PeriodicStateIsTheLongRunOfTheOpenRecord) {
  const int bins = 90;
  const double period = 12.0;
  Eigen::VectorXd t(bins), shed(bins);
  for (int b = 0; b < bins; ++b) {
    t[b] = (b + 0.5) * period / bins;
    shed[b] = std::max(0.0, std::sin(2 * kPi * t[b] / period - 0.7)) + 0.1 * std::cos(6 * kPi * t[b] / period);
  }
  const VortexLiftTimes times{1.7, 4.3};
  const double onset = 10.9;  // the gate wraps past the end of the period
  const Eigen::VectorXd periodic = periodic_vortex_lift(t, shed, period, onset, times);
  // 40 periods from rest: the start has decayed by e^{-40 x 12 / 1.7}.
  const int periods = 40;
  Eigen::VectorXd tl(bins * periods), sl(bins * periods);
  for (int p = 0; p < periods; ++p)
    for (int b = 0; b < bins; ++b) {
      tl[p * bins + b] = t[b] + p * period;
      sl[p * bins + b] = shed[b];
    }
  // The open record has one gate; the periodic one opens a gate each period. Sum them by linearity.
  Eigen::VectorXd open = Eigen::VectorXd::Zero(tl.size());
  for (int p = -1; p < periods; ++p) open += integrate_vortex_lift(tl, sl, onset + p * period, times);
  double worst = 0;
  for (int b = 0; b < bins; ++b) worst = std::max(worst, std::abs(open[(periods - 1) * bins + b] - periodic[b]));
  EXPECT_LT(worst, 1e-12);
  EXPECT_GT(periodic.cwiseAbs().maxCoeff(), 0.1);
}

TEST(VortexLift, GateOpenAllPeriodIsTheFirstOrderHighPass) {
  // T_vl >= period keeps the gate open: Cn_v/C_v = i omega T_v / (1 + i omega T_v)
  // for C_v = A cos(omega t) (first-order linear ODE, closed form).
  const int bins = 400;
  const double period = 20.0, omega = 2 * kPi / period, amplitude = 0.8;
  Eigen::VectorXd t(bins), shed(bins);
  for (int b = 0; b < bins; ++b) {
    t[b] = (b + 0.5) * period / bins;
    shed[b] = amplitude * std::cos(omega * t[b]);
  }
  const VortexLiftTimes times{2.5, 25.0};
  const Eigen::VectorXd y = periodic_vortex_lift(t, shed, period, 3.0, times);
  const std::complex<double> i{0.0, 1.0}, h = i * omega * times.t_v / (1.0 + i * omega * times.t_v);
  double worst = 0;
  for (int b = 0; b < bins; ++b) worst = std::max(worst, std::abs(y[b] - (h * amplitude * std::exp(i * omega * t[b])).real()));
  // Linear interpolation of C_v between samples: error O((omega dt)^2) of the amplitude.
  EXPECT_LT(worst, 1e-4 * amplitude);
}

TEST(VortexLift, ForceIsContinuousInTheTimeOnTheChord) {
  Eigen::VectorXd t(50), shed(50);
  for (int b = 0; b < 50; ++b) {
    t[b] = b * 0.2;
    shed[b] = 0.5 * std::tanh(0.5 * (t[b] - 3.0)) + 0.5;
  }
  const double on = 2.0;
  const Eigen::VectorXd a = integrate_vortex_lift(t, shed, on, {1.0, 3.0 - 1e-9}),
                        b = integrate_vortex_lift(t, shed, on, {1.0, 3.0 + 1e-9});
  EXPECT_LT((a - b).cwiseAbs().maxCoeff(), 1e-8);
  EXPECT_THROW(integrate_vortex_lift(t, shed, on, {0.0, 1.0}), std::invalid_argument);
  EXPECT_THROW(integrate_vortex_lift(t, shed, NAN, {1.0, 1.0}), std::invalid_argument);
}

// The loop model and fit with the term: the same known static curve as loop_fit_test.
StaticSeparation known_curve() {
  std::vector<double> a, c;
  for (double d = -4.0; d <= 26.0 + 1e-9; d += 0.5) {
    const double x0 = theory::static_separation({0.3 / kDeg, 14.0 * kDeg}, d * kDeg);
    a.push_back(d);
    c.push_back(6.0 * std::pow(0.5 * (1 + std::sqrt(x0)), 2) * std::sin(d * kDeg));
  }
  StaticCurveOptions o;
  o.smoothing_points = 1;
  o.lift_slope_per_rad = 6.0;
  o.zero_lift_angle_deg = 0.0;
  return StaticSeparation::from_polar(a, c, o);
}

const FlowScales kFlow{0.15, 25.0, 0.25};
double period_for(double k) { return kPi * kFlow.convective_s() / k; }

Eigen::VectorXd sine_loop_deg(int bins, double mean, double amplitude) {
  Eigen::VectorXd a(bins);
  for (int b = 0; b < bins; ++b) a[b] = mean - amplitude * std::cos(2 * kPi * (b + 0.5) / bins);
  return a;
}

TEST(LoopModelWithVortexLift, AddsOnlyItsOwnShareAndNothingWhileAttached) {
  const StaticSeparation s = known_curve();
  const LoopModel stalled(sine_loop_deg(120, 10.0, 8.0), period_for(0.1), kFlow, s);
  const VortexLiftTerm vortex{12.0, {1.5, 3.0}};
  Eigen::VectorXd x_plain, x_vortex, cn_v;
  const Eigen::VectorXd plain = stalled.normal_force({2.0, 3.0}, &x_plain);
  const Eigen::VectorXd with = stalled.normal_force({2.0, 3.0}, vortex, &x_vortex, &cn_v);
  EXPECT_EQ(x_plain, x_vortex);
  EXPECT_LT((with - plain - cn_v).cwiseAbs().maxCoeff(), 1e-15);
  EXPECT_GT(cn_v.maxCoeff(), 0.05);
  // Below the break x0 = 1, so nothing is shed and the vortex lift vanishes.
  const LoopModel attached(sine_loop_deg(120, 2.0, 2.0), period_for(0.1), kFlow, s);
  attached.normal_force({2.0, 3.0}, vortex, nullptr, &cn_v);
  EXPECT_LT(cn_v.cwiseAbs().maxCoeff(), 1e-9);
}

constexpr double kTau1 = 2.0, kTau2 = 3.0, kTv = 1.5, kTvl = 3.5, kOnsetDeg = 150.0;

FitOptions vortex_options() {
  FitOptions o;
  o.vortex_lift = true;
  return o;
}

TEST(LoopFitWithVortexLift, RecoversAllFourConstantsFromAnExactLoop) {
  const StaticSeparation s = known_curve();
  const int bins = 200;
  const Eigen::VectorXd alpha = sine_loop_deg(bins, 10.0, 8.0);
  const LoopModel m(alpha, period_for(0.1), kFlow, s);
  const Eigen::VectorXd cn =
      m.normal_force({kTau1, kTau2}, VortexLiftTerm{kOnsetDeg / 360.0 * m.period_conv(), {kTv, kTvl}});
  const LoopFit f = fit_loop(alpha, cn, std::vector<bool>(bins, true), period_for(0.1), kFlow, s, vortex_options(),
                             nullptr, kOnsetDeg);
  ASSERT_TRUE(f.fitted) << f.reason;
  ASSERT_TRUE(f.vortex_lift);
  EXPECT_NEAR(f.tau1, kTau1, 1e-4);
  EXPECT_NEAR(f.tau2, kTau2, 1e-4);
  EXPECT_NEAR(f.t_v, kTv, 1e-4);
  EXPECT_NEAR(f.t_vl, kTvl, 1e-4);
  EXPECT_LT(f.rms_residual, 1e-7);
  EXPECT_EQ(f.cn_vortex.size(), bins);
  // The plain model cannot follow the overshoot.
  const LoopFit plain = fit_loop(alpha, cn, std::vector<bool>(bins, true), period_for(0.1), kFlow, s, FitOptions{});
  EXPECT_GT(plain.rms_residual, 100 * f.rms_residual);
}

TEST(LoopFitWithVortexLift, WithoutAnOnsetFallsBackToThePlainFitAndSaysSo) {
  const StaticSeparation s = known_curve();
  const Eigen::VectorXd alpha = sine_loop_deg(72, 10.0, 8.0);
  const Eigen::VectorXd cn = LoopModel(alpha, period_for(0.1), kFlow, s).normal_force({kTau1, kTau2});
  const LoopFit f = fit_loop(alpha, cn, std::vector<bool>(72, true), period_for(0.1), kFlow, s, vortex_options());
  ASSERT_TRUE(f.fitted);
  EXPECT_FALSE(f.vortex_lift);
  EXPECT_TRUE(std::isnan(f.t_v));
  EXPECT_NE(f.reason.find("no stall onset"), std::string::npos) << f.reason;
}

TEST(LoopFitWithVortexLift, OptionOffIsBitIdenticalToThePlainFit) {
  // vortex_lift = false: its bounds, grid and an onset change nothing, to the bit.
  const StaticSeparation s = known_curve();
  const int bins = 72;
  const Eigen::VectorXd alpha = sine_loop_deg(bins, 10.0, 8.0);
  Eigen::VectorXd cn = LoopModel(alpha, period_for(0.1), kFlow, s).normal_force({kTau1, kTau2});
  std::mt19937_64 random(9);
  std::normal_distribution<double> noise(0.0, 0.03);
  for (Eigen::Index b = 0; b < bins; ++b) cn[b] += noise(random);
  std::vector<bool> window(bins, true);
  for (int b = 30; b < 45; ++b) window[b] = false;
  FitOptions off;
  off.t_v_bounds[0] = 3.0;
  off.t_vl_bounds[1] = 7.0;
  off.vortex_grid_points = 3;
  const LoopFit a = fit_loop(alpha, cn, window, period_for(0.1), kFlow, s, FitOptions{});
  const LoopFit b = fit_loop(alpha, cn, window, period_for(0.1), kFlow, s, off, nullptr, kOnsetDeg);
  ASSERT_TRUE(a.fitted);
  EXPECT_EQ(a.tau1, b.tau1);
  EXPECT_EQ(a.tau2, b.tau2);
  EXPECT_EQ(a.rms_residual, b.rms_residual);
  EXPECT_EQ(a.cn_fitted, b.cn_fitted);
  EXPECT_EQ(a.reason, b.reason);
  EXPECT_FALSE(b.vortex_lift);
  EXPECT_EQ(b.cn_vortex.size(), 0);
}

TEST(LoopFitWithVortexLift, BootstrapIntervalsCoverTheTruthAtTheirStatedRate) {
  // 40 independent noisy runs of 10 cycles (Cn noise 0.03, 0.3 deg jitter of the
  // static break per cycle), each fitted with the term. The intervals are
  // nominally 95 %; with four constants from 10 cycles their coverage measured
  // 85 to 98 % (34 to 39 of 40 over seeds 500 and 900, jitter 0 to 0.3 deg), so
  // the stated rate is 90 %: at a true 0.9, 30 or fewer of 40 has probability
  // 0.51 % (scipy.stats.binom.cdf(30, 40, 0.9)). Intervals half as wide cover
  // 24 to 32 of 40 here (printed), so the check can fail.
  const StaticSeparation s = known_curve();
  const int bins = 72, runs = 40, cycles = 10;
  std::array<int, 4> covered{}, narrow{};
  for (int run = 0; run < runs; ++run) {
    std::mt19937_64 random(500 + run);
    std::normal_distribution<double> gauss(0.0, 1.0);
    Eigen::MatrixXd alpha(bins, cycles), cn(bins, cycles);
    for (int c = 0; c < cycles; ++c) {
      const double shift = 0.3 * gauss(random);
      const Eigen::VectorXd a = sine_loop_deg(bins, 10.0 - shift, 8.0);
      const LoopModel m(a, period_for(0.1), kFlow, s);
      Eigen::VectorXd loop =
          m.normal_force({kTau1, kTau2}, VortexLiftTerm{kOnsetDeg / 360.0 * m.period_conv(), {kTv, kTvl}});
      for (int b = 0; b < bins; ++b) loop[b] += 0.03 * gauss(random);
      alpha.col(c) = a.array() + shift;
      cn.col(c) = loop;
    }
    std::vector<Eigen::Index> all(cycles);
    std::iota(all.begin(), all.end(), 0);
    const std::vector<bool> window(bins, true);
    const LoopFit centre = fit_loop(mean_loop(alpha, all), mean_loop(cn, all), window, period_for(0.1), kFlow, s,
                                    vortex_options(), nullptr, kOnsetDeg);
    ASSERT_TRUE(centre.fitted && centre.vortex_lift) << centre.reason;
    const BootstrapFit b = bootstrap_over_cycles(alpha, cn, window, period_for(0.1), kFlow, s, vortex_options(), centre,
                                                 100, run, 2, kOnsetDeg);
    ASSERT_EQ(b.t_v.size(), b.tau1.size());
    covered[0] += b.tau1_ci[0] <= kTau1 && kTau1 <= b.tau1_ci[1];
    covered[1] += b.tau2_ci[0] <= kTau2 && kTau2 <= b.tau2_ci[1];
    covered[2] += b.t_v_ci[0] <= kTv && kTv <= b.t_v_ci[1];
    covered[3] += b.t_vl_ci[0] <= kTvl && kTvl <= b.t_vl_ci[1];
    const auto inside_half = [](const double* ci, double truth) { return std::abs(truth - 0.5 * (ci[0] + ci[1])) <= 0.25 * (ci[1] - ci[0]); };
    narrow[0] += inside_half(b.tau1_ci, kTau1);
    narrow[1] += inside_half(b.tau2_ci, kTau2);
    narrow[2] += inside_half(b.t_v_ci, kTv);
    narrow[3] += inside_half(b.t_vl_ci, kTvl);
  }
  std::printf("coverage over %d runs: tau1 %d, tau2 %d, T_v %d, T_vl %d (half-width intervals: %d, %d, %d, %d)\n", runs,
              covered[0], covered[1], covered[2], covered[3], narrow[0], narrow[1], narrow[2], narrow[3]);
  for (int c : covered) EXPECT_GE(c, 31);
}

}  // namespace
}  // namespace stallscope::fit
