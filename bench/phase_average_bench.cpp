// Phase averaging 48 taps x 120,000 samples (60 s at 2 kHz, 90 cycles of a
// 1.5 Hz pitch) into 360 bins with spread statistics (mean, std, p05, p95, n
// per bin and tap), with the angle and three loads beside them, over the valid
// cycles. The motion fit and the cycle table are made once outside the timing.
// bench/reference/phase_average.py does the same on the same signals in numpy.
#include <benchmark/benchmark.h>

#include <cmath>
#include <numbers>

#include "bench/bench_support.hpp"
#include "pipeline/config.hpp"
#include "pipeline/run_context.hpp"
#include "stages/cycles.hpp"
#include "stages/motion.hpp"
#include "stages/phase.hpp"

namespace {

using namespace stallscope;
using stallscope::bench::run_stage;

constexpr int kSamples = 120000, kTaps = 48;
constexpr double kRate = 2000.0, kPitchHz = 1.5;
constexpr double kPi = std::numbers::pi;

// The signals, formula for formula as in the reference.
void fill(RunStore& s) {
  Eigen::VectorXd t(kSamples), alpha(kSamples), cn(kSamples), cl(kSamples), cm(kSamples);
  Eigen::MatrixXd cp(kSamples, kTaps);
  for (int k = 0; k < kSamples; ++k) {
    t[k] = k / kRate;
    const double th = 2 * kPi * kPitchHz * t[k];
    alpha[k] = 10 + 8 * std::sin(th);
    cn[k] = 1 + 0.8 * std::sin(th - 0.2) + 0.1 * std::sin(7.3 * t[k]);
    cl[k] = 0.95 * cn[k];
    cm[k] = -0.05 * std::sin(th + 0.4) + 0.01 * std::sin(5.1 * t[k]);
    for (int j = 0; j < kTaps; ++j) cp(k, j) = -std::sin(th + 0.05 * j) * (1 + 0.02 * j) + 0.05 * std::sin(0.37 * k + j);
  }
  std::vector<std::string> taps;
  for (int j = 0; j < kTaps; ++j) taps.push_back("p" + std::to_string(j + 1));
  s.put("signals/time_s", Series{t, "s"});
  s.put("signals/alpha_deg", Series{alpha, "deg"});
  s.put("loads/time_s", Series{t, "s"});
  s.put("loads/cn", Series{cn, "1"});
  s.put("loads/cl", Series{cl, "1"});
  s.put("loads/cm", Series{cm, "1"});
  s.put("pressure/time_s", Series{t, "s"});
  s.put("pressure/cp", Matrix{cp, "1", taps});
  s.put("run/chord_m", Scalar{0.15, "m"});
  s.put("run/U_inf_m_s", Scalar{25.0, "m/s"});
  s.put("run/rho_kg_m3", Scalar{1.2, "kg/m^3"});
  s.put("run/T_K", Scalar{293.15, "K"});
  s.put("run/p_static_pa", Scalar{101325.0, "Pa"});
}

void BM_PhaseAverage(benchmark::State& state) {
  RunStore store;
  Provenance provenance = Provenance::start("bench");
  Progress progress(Progress::Mode::kQuiet);
  RunContext context(store, provenance, progress, static_cast<int>(state.range(0)));
  fill(store);
  const ConfigFile config = ConfigFile::parse(
      "[motion]\n[cycles]\n[phase]\nbins = 360\nloads = [\"cn\", \"cl\", \"cm\"]\nper_cycle = false\n", "bench.toml");
  run_stage<MotionStage>(config, context);
  run_stage<CyclesStage>(config, context);
  for (auto _ : state) {
    run_stage<PhaseStage>(config, context);
    benchmark::DoNotOptimize(store.get<Matrix>("phase/cp/p95").values.sum());
  }
  state.SetItemsProcessed(state.iterations() * kSamples * (kTaps + 4));
}
BENCHMARK(BM_PhaseAverage)->Arg(1)->Arg(2)->Unit(benchmark::kMillisecond)->UseRealTime();

}  // namespace

BENCHMARK_MAIN();
