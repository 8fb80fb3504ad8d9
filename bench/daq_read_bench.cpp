// Reading a DAQ record: the floor every whole-run timing is compared with.
// 48 taps + 5 other channels at 2 kHz for 60 s (120,000 samples), HDF5 and CSV.
#include <benchmark/benchmark.h>

#include <cstdlib>
#include <filesystem>
#include <random>

#include "pipeline/hdf5.hpp"
#include "stages/ingest/daq_file.hpp"

namespace {

namespace fs = std::filesystem;
using namespace stallscope;

constexpr int kSamples = 120000;
constexpr int kChannels = 53;

fs::path bench_dir() {
  const char* env = std::getenv("STALLSCOPE_BENCH_DIR");
  fs::path d = env ? env : fs::temp_directory_path() / "stallscope-bench";
  fs::create_directories(d);
  return d;
}

// Writes the record once; the numpy reference reads the same files.
fs::path make_record(bool csv) {
  fs::path p = bench_dir() / (csv ? "daq_120k.csv" : "daq_120k.h5");
  if (fs::exists(p)) return p;
  std::mt19937 rng(1);
  std::normal_distribution<double> noise(0.0, 0.01);
  std::vector<double> t(kSamples), v(static_cast<std::size_t>(kSamples) * kChannels);
  for (int i = 0; i < kSamples; ++i) {
    t[i] = i / 2000.0;
    for (int c = 0; c < kChannels; ++c) v[static_cast<std::size_t>(i) * kChannels + c] = 2.5 + std::sin(0.01 * i + c) + noise(rng);
  }
  std::vector<std::string> names;
  for (int c = 0; c < kChannels; ++c) names.push_back("ch" + std::to_string(c));
  if (csv) {
    FILE* f = std::fopen(p.c_str(), "w");
    std::fprintf(f, "time_s");
    for (auto& n : names) std::fprintf(f, ",%s", n.c_str());
    std::fprintf(f, "\n");
    for (int i = 0; i < kSamples; ++i) {
      std::fprintf(f, "%.6f", t[i]);
      for (int c = 0; c < kChannels; ++c) std::fprintf(f, ",%.6f", v[static_cast<std::size_t>(i) * kChannels + c]);
      std::fprintf(f, "\n");
    }
    std::fclose(f);
  } else {
    h5::File f = h5::File::create(p);
    h5::write_numbers(f.id(), "daq/time_s", t.data(), {kSamples}, "s");
    h5::write_numbers(f.id(), "daq/volts", v.data(), {kSamples, kChannels}, "V");
    h5::Id ds(H5Dopen2(f.id(), "daq/volts", H5P_DEFAULT));
    h5::write_text_list_attribute(ds.get(), "channels", names);
  }
  return p;
}

void BM_ReadDaqHdf5(benchmark::State& state) {
  fs::path p = make_record(false);
  for (auto _ : state) benchmark::DoNotOptimize(read_daq_file(p));
  state.SetItemsProcessed(state.iterations() * kSamples * kChannels);
}
BENCHMARK(BM_ReadDaqHdf5)->Unit(benchmark::kMillisecond);

void BM_ReadDaqCsv(benchmark::State& state) {
  fs::path p = make_record(true);
  for (auto _ : state) benchmark::DoNotOptimize(read_daq_file(p));
  state.SetItemsProcessed(state.iterations() * kSamples * kChannels);
}
BENCHMARK(BM_ReadDaqCsv)->Unit(benchmark::kMillisecond);

}  // namespace

BENCHMARK_MAIN();
