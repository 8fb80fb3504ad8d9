// Swirl strength + detection + tracking on 2,000 PIV frames of 160 x 120, on
// one and on two threads (frames in parallel inside chunks of 64, as the piv
// stage runs them). 100 distinct frames are generated once and cycled, so the
// run's memory is bounded by them, not by the frame count.
#include <benchmark/benchmark.h>

#include <cmath>
#include <vector>

#include "pipeline/allocator.hpp"
#include "stages/piv/detection.hpp"
#include "stages/piv/swirl.hpp"
#include "stages/piv/tracking.hpp"
#include "stages/theory/lamb_oseen.hpp"

namespace {

using namespace stallscope;

constexpr int kFrames = 2000, kDistinct = 100, kNx = 160, kNy = 120, kChunk = 64;

// The same fields as bench/reference/piv_vortex.py: three vortices on a 10 m/s
// stream, one convecting, with a deterministic ripple standing in for noise.
const std::vector<piv::Frame>& frames(piv::Grid& grid) {
  static piv::Grid g;
  static std::vector<piv::Frame> f;
  if (f.empty()) {
    for (int i = 0; i < kNx; ++i) g.x_m.push_back(0.002 * i);
    for (int j = 0; j < kNy; ++j) g.y_m.push_back(0.002 * j);
    for (int k = 0; k < kDistinct; ++k) {
      const std::vector<theory::LambOseenVortex> vortices = {
          {0.05 + 0.002 * k, 0.12, -0.4, 0.008}, {0.20, 0.05, 0.3, 0.006}, {0.28, 0.18, -0.2, 0.01}};
      piv::Frame fr;
      fr.index = static_cast<std::size_t>(k);
      fr.u.resize(g.size());
      fr.v.resize(g.size());
      fr.valid.assign(g.size(), 1);
      for (int j = 0; j < kNy; ++j)
        for (int i = 0; i < kNx; ++i) {
          double u = 10.0, v = 0.0;
          for (const auto& w : vortices) {
            const Eigen::Vector2d q = theory::velocity_at(w, g.x_m[i], g.y_m[j]);
            u += q[0], v += q[1];
          }
          const double p = j * kNx + i;
          u += 0.05 * std::sin(0.7 * p + 1.3 * k) * std::cos(0.13 * p);
          v += 0.05 * std::cos(0.9 * p + 0.7 * k) * std::sin(0.11 * p);
          fr.u[j * kNx + i] = static_cast<float>(u);
          fr.v[j * kNx + i] = static_cast<float>(v);
        }
      f.push_back(std::move(fr));
    }
  }
  grid = g;
  return f;
}

void run(benchmark::State& state, int threads) {
  keep_large_blocks_for_reuse();  // as the command does
  piv::label_regions_in_caller_threads();
  piv::Grid grid;
  const auto& stored = frames(grid);
  for (auto _ : state) {
    std::vector<std::vector<piv::Observation>> per_frame(kChunk);
    std::vector<piv::Observation> observations;
    for (int first = 0; first < kFrames; first += kChunk) {
      const int count = std::min(kChunk, kFrames - first);
#pragma omp parallel for num_threads(threads) schedule(dynamic)
      for (int k = 0; k < count; ++k) {
        const int n = first + k;
        const piv::Frame& f = stored[static_cast<std::size_t>(n % kDistinct)];
        const piv::SwirlField s = piv::swirl_field(grid, f, piv::GradientScheme::kCentral);
        auto& out = per_frame[static_cast<std::size_t>(k)];
        out.clear();
        for (const auto& d : piv::detect_vortices(grid, s, {}, piv::DetectionOptions{}))
          out.push_back({n, n * 1e-3, d.sign, d.x_m / 0.2, d.y_m / 0.2, d.x_m, d.y_m, std::sqrt(d.area_m2 / 3.14159),
                         d.circulation / 2.0});
      }
      for (int k = 0; k < count; ++k)
        observations.insert(observations.end(), per_frame[static_cast<std::size_t>(k)].begin(),
                            per_frame[static_cast<std::size_t>(k)].end());
    }
    std::vector<std::int64_t> numbers(kFrames);
    for (int k = 0; k < kFrames; ++k) numbers[static_cast<std::size_t>(k)] = k;
    auto tracks = piv::track_vortices(observations, numbers, {0, 0.318, 0, 0.238}, piv::TrackingOptions{});
    benchmark::DoNotOptimize(tracks);
  }
  state.SetItemsProcessed(state.iterations() * kFrames * kNx * kNy);
  state.counters["vectors_per_s"] =
      benchmark::Counter(static_cast<double>(kFrames) * kNx * kNy, benchmark::Counter::kIsIterationInvariantRate);
}

void BM_PivVortex1Thread(benchmark::State& state) { run(state, 1); }
void BM_PivVortex2Threads(benchmark::State& state) { run(state, 2); }
BENCHMARK(BM_PivVortex1Thread)->Unit(benchmark::kMillisecond)->UseRealTime();
BENCHMARK(BM_PivVortex2Threads)->Unit(benchmark::kMillisecond)->UseRealTime();

}  // namespace

BENCHMARK_MAIN();
