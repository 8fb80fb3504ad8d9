// The whole pressure path on 48 taps at 2 kHz for 60 s (120,000 samples): read
// the DAQ file (HDF5), calibrate (polynomials, wind-off zeros interpolated in
// time), tubing correction (Bergh-Tijdeman, four distinct lines, FFT), Cp and
// integrated loads; and reading the same file alone, the floor it is compared
// with. The numpy/scipy reference bench/reference/pressure_path.py does the
// same steps on the same files.
#include <benchmark/benchmark.h>

#include <cmath>
#include <cstdlib>
#include <filesystem>
#include <fmt/format.h>
#include <fstream>
#include <numbers>

#include "bench/bench_support.hpp"
#include "pipeline/allocator.hpp"
#include "pipeline/config.hpp"
#include "pipeline/hdf5.hpp"
#include "pipeline/run_context.hpp"
#include "stages/calibrate.hpp"
#include "stages/cp.hpp"
#include "stages/ingest/daq_file.hpp"
#include "stages/loads.hpp"
#include "stages/theory/naca4.hpp"
#include "stages/tubing.hpp"

namespace {

namespace fs = std::filesystem;
using namespace stallscope;
using stallscope::bench::run_stage;

constexpr int kSamples = 120000, kTaps = 48;
constexpr double kRate = 2000.0;

fs::path bench_dir() {
  const char* env = std::getenv("STALLSCOPE_BENCH_DIR");
  fs::path d = env ? env : fs::temp_directory_path() / "stallscope-bench";
  fs::create_directories(d);
  return d;
}

// Files shared with the reference: pressure_daq.h5, pressure_taps.csv, pressure_cal.toml.
void make_inputs() {
  const fs::path d = bench_dir();
  if (fs::exists(d / "pressure_daq.h5")) return;
  const auto taps = theory::naca4_tap_layout(theory::parse_naca4("0012"), kTaps / 2, 0.005, 0.95);
  std::ofstream table(d / "pressure_taps.csv");
  table << "tap,channel,x_over_c,y_over_c,surface,tube_length_m,tube_diameter_m,volume_m3,time_offset_s,line,status\n";
  std::ofstream cal(d / "pressure_cal.toml");
  cal << "id = \"bench-scanner\"\ndate = 2026-11-20\nkind = \"pressure_transducers\"\n";
  for (int i = 0; i < kTaps; ++i) {
    table << fmt::format("p{0:02},p{0:02},{1:.17g},{2:.17g},{3},{4},0.001,5e-9,,,ok\n", i + 1, taps[i].x_over_c, taps[i].y_over_c,
                         taps[i].surface == theory::Surface::kUpper ? "upper" : "lower", 0.4 + 0.1 * (i % 4));
    cal << fmt::format("[channels.p{:02}]\ncoefficients = [{}, {}]\n", i + 1, -20.0 + i, 1000.0 + 5 * i);
  }
  cal << "[channels.q_pitot]\ncoefficients = [1.0, 250.0]\n";
  std::ofstream(d / "pressure_encoder.toml")
      << "id = \"bench-encoder\"\ndate = 2026-11-20\nkind = \"angle_encoder\"\n[channels.alpha_enc]\ncoefficients = [-2.0, 5.0]\n";
  const int channels = kTaps + 2;
  std::vector<double> t(kSamples), v(static_cast<std::size_t>(kSamples) * channels);
  for (int k = 0; k < kSamples; ++k) {
    t[k] = k / kRate;
    const double alpha = 10 + 8 * std::sin(2 * std::numbers::pi * 1.5 * t[k]);
    const double q = (t[k] < 2 || t[k] > 58) ? 0.0 : 500.0;
    auto* row = &v[static_cast<std::size_t>(k) * channels];
    row[0] = (alpha + 2) / 5;
    row[1] = (q - 1) / 250;
    for (int i = 0; i < kTaps; ++i) {
      const double x = taps[i].x_over_c, a = alpha * std::numbers::pi / 180;
      const double s = (taps[i].surface == theory::Surface::kUpper ? 1 : -1);
      const double cp = 1 - std::pow(std::cos(a) + s * std::sin(a) * std::sqrt((1 - x) / x), 2) * 0.3;
      row[2 + i] = (q * cp + 20.0 - i) / (1000.0 + 5 * i) + 1e-3 * std::sin(0.37 * k + i);
    }
  }
  std::vector<std::string> names = {"alpha_enc", "q_pitot"};
  for (int i = 0; i < kTaps; ++i) names.push_back(fmt::format("p{:02}", i + 1));
  h5::File f = h5::File::create(d / "pressure_daq.h5");
  h5::write_numbers(f.id(), "daq/time_s", t.data(), {static_cast<hsize_t>(kSamples)}, "s");
  h5::write_numbers(f.id(), "daq/volts", v.data(), {static_cast<hsize_t>(kSamples), static_cast<hsize_t>(channels)}, "V");
  h5::Id ds(H5Dopen2(f.id(), "daq/volts", H5P_DEFAULT));
  h5::write_text_list_attribute(ds.get(), "channels", names);
}

const char* kConfig =
    "[calibrate]\ntap_table = \"pressure_taps.csv\"\nzero_before_s = [0.0, 1.8]\nzero_after_s = [58.2, 60.0]\n"
    "pitch_frequency_hz = 1.5\n[calibrate.calibrations]\ntaps = \"pressure_cal.toml\"\nencoder = \"pressure_encoder.toml\"\n"
    "[tubing]\n[cp]\n[loads]\n";

void BM_PressurePath(benchmark::State& state) {
  make_inputs();
  keep_large_blocks_for_reuse();  // as the command does
  const ConfigFile config = ConfigFile::parse(kConfig, bench_dir() / "bench.toml");
  auto reduce = [&] {
    RunStore store;
    Provenance provenance = Provenance::start("bench");
    Progress progress(Progress::Mode::kQuiet);
    RunContext context(store, provenance, progress, static_cast<int>(state.range(0)));
    DaqRecord r = read_daq_file(bench_dir() / "pressure_daq.h5");
    store.put("daq/sample_rate_hz", Scalar{kRate, "Hz"});
    store.put("daq/time_s", Series{std::move(r.time_s), "s"});
    store.put("daq/volts", Matrix{std::move(r.volts), "V", std::move(r.channels)});
    store.put("daq/roles/angle", Text{"alpha_enc"});
    store.put("daq/roles/q_ref", Text{"q_pitot"});
    store.put("run/airfoil", Text{"NACA 0012"});
    store.put("run/pivot_x_over_c", Scalar{0.25, "1"});
    run_stage<CalibrateStage>(config, context);
    run_stage<TubingStage>(config, context);
    run_stage<CpStage>(config, context);
    run_stage<LoadsStage>(config, context);
    benchmark::DoNotOptimize(store.get<Series>("loads/cn").values.sum());
  };
  // One untimed pass first: the numpy reference reports its best of three,
  // which leaves out its own first touches of memory too.
  reduce();
  for (auto _ : state) reduce();
  state.SetItemsProcessed(state.iterations() * kSamples * kTaps);
}
BENCHMARK(BM_PressurePath)->Arg(1)->Arg(2)->Unit(benchmark::kMillisecond)->UseRealTime();

void BM_ReadPressureDaq(benchmark::State& state) {
  make_inputs();
  keep_large_blocks_for_reuse();
  benchmark::DoNotOptimize(read_daq_file(bench_dir() / "pressure_daq.h5"));  // untimed, as above
  for (auto _ : state) benchmark::DoNotOptimize(read_daq_file(bench_dir() / "pressure_daq.h5"));
}
BENCHMARK(BM_ReadPressureDaq)->Unit(benchmark::kMillisecond);

}  // namespace

BENCHMARK_MAIN();
