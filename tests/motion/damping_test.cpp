#include "stages/damping.hpp"

#include <gtest/gtest.h>

#include <array>
#include <cmath>
#include <complex>

#include "pipeline/errors.hpp"
#include "stages/cycles.hpp"
#include "stages/motion.hpp"
#include "stages/theory/theodorsen.hpp"
#include "tests/motion/harness.hpp"

namespace stallscope {
namespace {

using testing::Harness;
using testing::kPi;
using testing::SineRun;
using Complex = std::complex<double>;

double number(const Harness& h, const std::string& name) {
  return std::get<double>(h.store.entry("cycles/damping").attributes.at(name));
}

// A 2 Hz pitch of 6 deg about 8 deg, 500 samples a period (so each cycle is
// one whole period of evenly spaced samples), with the speed set for k, then
// loads from the complex transfer functions cl_per_rad and cm_per_rad:
// alpha = Re[abar e^{i w t}], load = Re[H abar e^{i w t}], abar = -i alpha1.
void harmonic_run(Harness& h, double k, Complex cl_per_rad, Complex cm_per_rad, double pivot_x_over_c) {
  SineRun r;
  r.mean_deg = 8;
  r.amp_deg = 6;
  r.phase_rad = 0;
  r.speed_m_s = kPi * r.freq_hz * r.chord_m / k;
  testing::put_sine_run(h.store, r);
  h.store.put("run/pivot_x_over_c", Scalar{pivot_x_over_c, "1"});
  MotionStage motion;
  h.run(motion, "harmonics = 1\n");
  CyclesStage cycles;
  h.run(cycles);
  const Eigen::VectorXd& t = h.store.get<Series>("signals/time_s").values;
  const Complex abar(0.0, -r.amp_deg * kPi / 180);
  Eigen::VectorXd cl(t.size()), cm(t.size());
  for (Eigen::Index i = 0; i < t.size(); ++i) {
    const Complex e = std::polar(1.0, 2 * kPi * r.freq_hz * t[i]);
    cl[i] = 2 * kPi * r.mean_deg * kPi / 180 + (cl_per_rad * abar * e).real();
    cm[i] = -0.01 + (cm_per_rad * abar * e).real();
  }
  h.store.put("loads/time_s", Series{t, "s"});
  h.store.put("loads/cl", Series{cl, "1"});
  h.store.put("loads/cm_pivot", Series{cm, "1"});
}

TEST(LoopIntegral, IsPositiveForAClockwiseLoopAndMatchesHandValues) {
  // Unit square, counter-clockwise: closed integral of y dx = -(area) = -1.
  const std::array<double, 4> x{0, 1, 1, 0}, y{0, 0, 1, 1};
  EXPECT_DOUBLE_EQ(damping::loop_integral(x, y), -1.0);
  const std::array<double, 4> xr{0, 0, 1, 1}, yr{0, 1, 1, 0};  // the same square, clockwise
  EXPECT_DOUBLE_EQ(damping::loop_integral(xr, yr), 1.0);
  // Triangle (0,0) (2,0) (0,3) clockwise through (0,3) first: area 3, by hand.
  const std::array<double, 3> xt{0, 0, 2}, yt{0, 3, 0};
  EXPECT_DOUBLE_EQ(damping::loop_integral(xt, yt), 3.0);
}

// published-checks section 4 [C]: alpha = a0 + a1 cos(theta), Cm = C0 + A cos + B sin gives
// a closed integral of -pi a1 B. Exact for the trapezoid rule in time (the
// periodic rule); the polygon in (alpha, Cm) gives, by hand, sum over i of
// (1/2)(Cm_i + Cm_i+1)(alpha_i+1 - alpha_i) = -(N/2) a1 B sin(2 pi/N): low by
// the factor N sin(2 pi/N)/(2 pi), 2.5e-5 at N = 360.
TEST(LoopIntegral, ReproducesTheHarmonicIdentity) {
  const int n = 360;
  const double a0 = 0.15, a1 = 0.1, c0 = -0.02, A = 0.03, B = 0.05;
  std::vector<double> alpha(n), cm(n);
  for (int i = 0; i < n; ++i) {
    const double th = 2 * kPi * i / n;
    alpha[i] = a0 + a1 * std::cos(th);
    cm[i] = c0 + A * std::cos(th) + B * std::sin(th);
  }
  const double loop = damping::loop_integral(alpha, cm);
  EXPECT_NEAR(loop, -0.5 * n * a1 * B * std::sin(2 * kPi / n), 1e-16);
  // In time: theta = 2 pi t over t in [0, 1], d(alpha)/dt = -2 pi a1 sin(theta); samples
  // one step beyond each end so the ends interpolate.
  std::vector<double> t(n + 2), g(n + 2);
  for (int i = 0; i < n + 2; ++i) {
    t[i] = (i - 1.0) / n;
    const double th = 2 * kPi * t[i];
    g[i] = (c0 + A * std::cos(th) + B * std::sin(th)) * (-2 * kPi * a1 * std::sin(th));
  }
  const double work = damping::time_integral(t, g, 0.0, 1.0);
  EXPECT_NEAR(work, -kPi * a1 * B, 1e-15);  // -0.0157079633
  EXPECT_NEAR(damping::carta_damping_factor(work, a1), B / a1, 1e-13);  // Xi = 0.5: damped
  // A window that is not on the sample grid: still one period, error O(dt^2) at the ends only.
  EXPECT_NEAR(damping::time_integral(t, g, 0.3 / n, 1.0 + 0.3 / n), -kPi * a1 * B, 1e-7);
}

struct DampingCase {
  double k, a, xi, tolerance;
};

// published-checks section 4, Theodorsen values [C]: c/4 pivot Xi = pi k / 2;
// mid-chord 0.28385 (k = 0.1) and 0.39462 (k = 0.5); leading-edge pivot -0.0250
// (k = 0.01) and +0.0197 (k = 0.05). Tolerances: half a unit of the printed digit.
TEST(DampingStage, ReproducesTheodorsenDampingForEachPivot) {
  const std::array<DampingCase, 5> cases{{{0.1, -0.5, kPi * 0.1 / 2, 5e-6},
                                          {0.1, 0.0, 0.28385, 5e-6},
                                          {0.5, 0.0, 0.39462, 5e-6},
                                          {0.01, -1.0, -0.0250, 5e-5},
                                          {0.05, -1.0, 0.0197, 5e-5}}};
  for (const auto& c : cases) {
    Harness h;
    harmonic_run(h, c.k, theory::pitch_lift_transfer(c.k, c.a), theory::pitch_moment_axis_transfer(c.k, c.a),
                 (c.a + 1) / 2);
    DampingStage stage;
    h.run(stage);
    const Table& d = h.store.get<Table>("cycles/damping");
    ASSERT_EQ(d.rows(), 9u);
    for (double xi : d.numbers("xi")) EXPECT_NEAR(xi, c.xi, c.tolerance) << "k = " << c.k << ", a = " << c.a;
    EXPECT_NEAR(number(h, "xi_mean"), c.xi, c.tolerance);
    EXPECT_LT(number(h, "xi_std"), 1e-9);  // identical cycles
    const std::string verdict = std::get<std::string>(h.store.entry("cycles/damping").attributes.at("negative_damping"));
    EXPECT_EQ(verdict.substr(0, 3), c.xi < 0 ? "yes" : "no") << verdict;
  }
}

// The attached-flow lift loop: its first-harmonic response to the angle,
// turned back into Theodorsen's function, matches published-checks section 3
// (F and G to 6 decimals [C]; k = 0.1, a = -1/2: Cl/abar = 5.31969 - 0.24573i).
TEST(DampingStage, RecoversTheodorsensFunctionFromAnAttachedLiftLoop) {
  const std::array<double, 4> k{0.05, 0.1, 0.2, 0.5};
  const std::array<double, 4> f{0.909009, 0.831924, 0.727580, 0.597936};
  const std::array<double, 4> g{-0.130644, -0.172302, -0.188624, -0.150710};
  constexpr double kTableTolerance = 1e-6;
  const double a = -0.5;
  for (std::size_t j = 0; j < k.size(); ++j) {
    Harness h;
    harmonic_run(h, k[j], theory::pitch_lift_transfer(k[j], a), theory::pitch_moment_axis_transfer(k[j], a), 0.25);
    DampingStage stage;
    h.run(stage);
    const Complex lift = std::polar(number(h, "cl_gain_per_rad"), number(h, "cl_phase_deg") * kPi / 180);
    if (k[j] == 0.1) {
      EXPECT_NEAR(lift.real(), 5.31969, 5e-6);
      EXPECT_NEAR(lift.imag(), -0.24573, 5e-6);
      EXPECT_NEAR(number(h, "cl_phase_deg"), std::atan2(-0.24573, 5.31969) * 180 / kPi, 1e-4);  // a 2.645 deg lag
    }
    // Cl/abar = pi (ik + a k^2) + 2 pi C [1 + ik(1/2 - a)]  ->  C.
    const Complex i(0, 1);
    const Complex c = (lift - kPi * (i * k[j] + a * k[j] * k[j])) / (2 * kPi * (1.0 + i * k[j] * (0.5 - a)));
    EXPECT_NEAR(c.real(), f[j], kTableTolerance) << "k = " << k[j];
    EXPECT_NEAR(c.imag(), g[j], kTableTolerance) << "k = " << k[j];
  }
}

// With the encoder angle the loop is a polygon of 500 points a cycle: low by
// the factor 500 sin(2 pi/500)/(2 pi) = 1 - 2.63e-5 (see the identity above).
TEST(DampingStage, GivesThePolygonValueWithTheMeasuredAngle) {
  Harness h;
  harmonic_run(h, 0.1, theory::pitch_lift_transfer(0.1, 0.0), theory::pitch_moment_axis_transfer(0.1, 0.0), 0.5);
  DampingStage stage;
  h.run(stage, "angle = \"measured\"\n");
  const double factor = 500 * std::sin(2 * kPi / 500) / (2 * kPi);
  EXPECT_NEAR(number(h, "xi_mean"), -theory::pitch_moment_axis_transfer(0.1, 0.0).imag() * factor, 1e-9);
}

TEST(DampingStage, FlagsAClockwiseStallLoopAsNegativeDampingWithItsSpread) {
  Harness h;
  // A clockwise Cm-alpha loop: Cm leads alpha by 90 deg (Cm/abar = +0.2 i per rad gives Xi = -0.2).
  harmonic_run(h, 0.1, Complex(5.0, 0.0), Complex(0.0, 0.2), 0.25);
  // Cycle-to-cycle scatter: scale each cycle's loop differently.
  const MotionFit m = MotionFit::from_store(h.store, "test");
  const Eigen::VectorXd& t = h.store.get<Series>("loads/time_s").values;
  Eigen::VectorXd& cm = h.store.get_mutable<Series>("loads/cm_pivot").values;
  for (Eigen::Index i = 0; i < t.size(); ++i) {
    const std::int64_t c = m.cycle(t[i]);
    if (c >= 0) cm[i] = -0.01 + (cm[i] + 0.01) * (1.0 + 0.1 * std::sin(1.3 * static_cast<double>(c)));
  }
  DampingStage stage;
  h.run(stage);
  const Table& d = h.store.get<Table>("cycles/damping");
  std::vector<double> expected;
  for (std::size_t c = 0; c < d.rows(); ++c) {
    const double xi = -0.2 * (1.0 + 0.1 * std::sin(1.3 * static_cast<double>(c)));
    EXPECT_NEAR(d.numbers("xi")[c], xi, 1e-9) << "cycle " << c;
    EXPECT_EQ(d.integers("negative_damping")[c], 1);
    expected.push_back(xi);
  }
  double mean = 0;
  for (double x : expected) mean += x / static_cast<double>(expected.size());
  EXPECT_NEAR(number(h, "xi_mean"), mean, 1e-9);
  EXPECT_GT(number(h, "xi_std"), 0.005);
  EXPECT_LT(number(h, "xi_ci95_hi"), 0.0);
  const std::string verdict = std::get<std::string>(h.store.entry("cycles/damping").attributes.at("negative_damping"));
  EXPECT_NE(verdict.find("below zero"), std::string::npos) << verdict;
}

TEST(DampingStage, LeavesInvalidCyclesOutOfTheSummary) {
  Harness h;
  harmonic_run(h, 0.1, theory::pitch_lift_transfer(0.1, -0.5), theory::pitch_moment_axis_transfer(0.1, -0.5), 0.25);
  Table& cycles = h.store.get_mutable<Table>("cycles");
  for (auto& c : cycles.columns)
    if (c.name == "valid") std::get<std::vector<std::int64_t>>(c.data)[2] = 0;
  // Cycle 2's moment is garbage, but it is invalid.
  const MotionFit m = MotionFit::from_store(h.store, "test");
  const Eigen::VectorXd& t = h.store.get<Series>("loads/time_s").values;
  Eigen::VectorXd& cm = h.store.get_mutable<Series>("loads/cm_pivot").values;
  for (Eigen::Index i = 0; i < t.size(); ++i)
    if (m.cycle(t[i]) == 2) cm[i] = std::sin(20 * t[i]);
  DampingStage stage;
  h.run(stage);
  EXPECT_NEAR(number(h, "xi_mean"), kPi * 0.1 / 2, 5e-6);
  EXPECT_EQ(std::get<std::int64_t>(h.store.entry("cycles/damping").attributes.at("cycles_used")), 8);
  for (auto& c : cycles.columns)
    if (c.name == "valid") std::get<std::vector<std::int64_t>>(c.data).assign(cycles.rows(), 0);
  EXPECT_THROW(h.run(stage), InputError);
}

}  // namespace
}  // namespace stallscope
