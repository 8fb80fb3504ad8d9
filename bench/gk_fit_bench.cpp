// One run's Goman-Khrabrov fit: 200 phase bins, 10 cycles, the averaged loop
// fitted from a 9 x 9 grid start, then a bootstrap of 200 resamples over cycles
// (each refitted from the centre), one thread. The reference
// bench/reference/gk_fit.py does the same model and resampling with numpy and
// scipy (least_squares, lfilter for the state recursion). The vortex-lift case
// fits loops that carry the Leishman-Beddoes term, all four constants over the
// whole loop (no reference script: the comparison is with the plain fit).
#include <benchmark/benchmark.h>

#include <cmath>
#include <numbers>
#include <random>

#include "stages/fit/loop_fit.hpp"

namespace {

using namespace stallscope;
using namespace stallscope::fit;
constexpr double kDeg = std::numbers::pi / 180.0;

struct Problem {
  StaticSeparation curve;
  FlowScales flow{0.15, 25.0, 0.25};
  double period = std::numbers::pi * 0.006 / 0.1;
  Eigen::MatrixXd alpha, cn;
  std::vector<bool> window;
};

constexpr int kOnsetBin = 86;  // stall onset, where the vortex lift starts
constexpr double kOnsetPhaseDeg = 360.0 * kOnsetBin / 200;

Problem make_problem(bool vortex_lift) {
  Problem p;
  std::vector<double> pa, pc;
  for (double a = -4.0; a <= 26.0; a += 0.5) {
    const double x0 = theory::static_separation({0.3 / kDeg, 14.0 * kDeg}, a * kDeg);
    pa.push_back(a);
    pc.push_back(6.0 * std::pow(0.5 * (1 + std::sqrt(x0)), 2) * std::sin(a * kDeg));
  }
  p.curve = StaticSeparation::from_polar(pa, pc, StaticCurveOptions{});
  const int bins = 200, cycles = 10;
  std::mt19937_64 random(1);
  std::normal_distribution<double> gauss(0.0, 1.0);
  p.alpha.resize(bins, cycles);
  p.cn.resize(bins, cycles);
  for (int c = 0; c < cycles; ++c) {
    Eigen::VectorXd a(bins);
    for (int b = 0; b < bins; ++b) a[b] = 10.0 - 8.0 * std::cos(2 * std::numbers::pi * (b + 0.5) / bins);
    const LoopModel model(a, p.period, p.flow, p.curve);
    const VortexLiftTerm vortex{kOnsetPhaseDeg / 360.0 * model.period_conv(), {1.5, 6.0}};
    const Eigen::VectorXd cn = vortex_lift ? model.normal_force({2.0, 3.0}, vortex) : model.normal_force({2.0, 3.0});
    p.alpha.col(c) = a;
    for (int b = 0; b < bins; ++b) p.cn(b, c) = cn[b] + 0.03 * gauss(random);
  }
  p.window.assign(bins, true);
  if (!vortex_lift)
    for (int b = kOnsetBin; b < 150; ++b) p.window[b] = false;  // onset to vortex passage
  return p;
}

void fit_with_bootstrap(benchmark::State& state, bool vortex_lift) {
  const Problem p = make_problem(vortex_lift);
  FitOptions options;
  options.vortex_lift = vortex_lift;
  std::vector<Eigen::Index> all(10);
  for (int c = 0; c < 10; ++c) all[c] = c;
  for (auto _ : state) {
    const LoopFit centre = fit_loop(mean_loop(p.alpha, all), mean_loop(p.cn, all), p.window, p.period, p.flow, p.curve,
                                    options, nullptr, kOnsetPhaseDeg);
    const BootstrapFit b = bootstrap_over_cycles(p.alpha, p.cn, p.window, p.period, p.flow, p.curve, options, centre,
                                                 200, 1, 1, kOnsetPhaseDeg);
    benchmark::DoNotOptimize(b.tau1_ci[0]);
  }
}

void BM_GomanKhrabrovFit(benchmark::State& state) { fit_with_bootstrap(state, false); }
void BM_GomanKhrabrovFitWithVortexLift(benchmark::State& state) { fit_with_bootstrap(state, true); }
BENCHMARK(BM_GomanKhrabrovFit)->Unit(benchmark::kMillisecond);
BENCHMARK(BM_GomanKhrabrovFitWithVortexLift)->Unit(benchmark::kMillisecond);

}  // namespace

BENCHMARK_MAIN();
