// Monte Carlo propagation through the real stages: a shared gain error of the
// tap transducers gives exactly the proportional Cp and Cn uncertainty (hand
// propagation of a linear calibration), the result does not depend on the
// thread count, and the demo run gets uncertainties beside its loads, loops
// and phase table.
#include <gtest/gtest.h>

#include <cmath>
#include <sstream>

#include "pipeline/archive.hpp"
#include "pipeline/hdf5.hpp"
#include "pipeline/perturbation.hpp"
#include "tests/pressure/pressure_fixture.hpp"

namespace stallscope {
namespace {

namespace fs = std::filesystem;
using testing::PressureRun;

std::string config(const PressureRun& run, const std::string& uncertainty) {
  return "[run]\nname = \"mc\"\nairfoil = \"NACA 0012\"\nchord_m = 0.3\nspan_m = 1.0\n"
         "[daq]\nfile = \"daq.csv\"\n[daq.roles]\nangle = \"alpha_enc\"\nq_ref = \"q_pitot\"\n"
         "[conditions]\ndynamic_pressure_pa = 400.0\n[cp]\n[loads]\n"
         "[uncertainty]\n" + uncertainty + "\n" + run.config_text;
}

fs::path reduce(PressureRun& run, const std::string& uncertainty, const std::string& folder, int threads = 2) {
  const auto cfg = run.dir.write(folder + ".toml", config(run, uncertainty));
  const auto out = run.dir / folder;
  const auto r = testing::run_stallscope("reduce " + testing::shell_quote(cfg.string()) + " -o " +
                                         testing::shell_quote(out.string()) + " --quiet --no-report -j " +
                                         std::to_string(threads));
  EXPECT_EQ(r.exit_code, 0) << r.err << r.out;
  return out / "mc.h5";
}

// Sample standard deviation of the replicas' shared tap gain errors, drawn as the calibrate stage draws them.
double shared_gain_spread(const UncertaintyModel& m) {
  double mean = 0, m2 = 0;
  for (std::size_t r = 0; r < m.replicas; ++r) {
    const double e = Perturbation(m, r).error(m.taps_gain_relative, "taps_gain");
    const double d = e - mean;
    mean += d / static_cast<double>(r + 1);
    m2 += d * (e - mean);
  }
  return std::sqrt(m2 / static_cast<double>(m.replicas - 1));
}

TEST(Propagation, ASharedTapGainErrorGivesExactlyProportionalCpAndCnUncertainty) {
  PressureRun run;
  run.duration = 3.0;
  run.write();
  run.write_daq_csv("daq.csv");
  const fs::path archive = reduce(run, "replicas = 6\nseed = 11\ntaps_gain_relative = 0.02\n"
                                       "calibration_residuals = false\nzero_drift = false\n", "gain");
  h5::File f = h5::File::open_read(archive);
  UncertaintyModel m;
  m.replicas = 6;
  m.seed = 11;
  m.taps_gain_relative = 0.02;
  const double spread = shared_gain_spread(m);
  ASSERT_GT(spread, 0.0);
  // Hand propagation: Cp = p / q with p scaled by (1 + e): sigma(Cp) = |Cp| sigma(e); Cn is linear in Cp.
  const auto cp = h5::read_numbers(f.id(), "pressure/cp", "archive");
  const auto cp_u = h5::read_numbers(f.id(), "pressure/cp_uncertainty", "archive");
  ASSERT_EQ(cp.size(), cp_u.size());
  std::size_t checked = 0;
  for (std::size_t i = 0; i < cp.size(); ++i) {
    if (!std::isfinite(cp[i]) || std::abs(cp[i]) < 1e-3) continue;
    EXPECT_NEAR(cp_u[i], std::abs(cp[i]) * spread, 1e-9 * std::abs(cp[i])) << i;
    ++checked;
  }
  EXPECT_GT(checked, cp.size() / 2);
  for (const char* load : {"cn", "cc", "cm"}) {
    const auto v = h5::read_numbers(f.id(), std::string("loads/") + load, "archive");
    const auto u = h5::read_numbers(f.id(), std::string("loads/") + load + "_uncertainty", "archive");
    ASSERT_EQ(v.size(), u.size()) << load;
    for (std::size_t i = 0; i < v.size(); i += 97)
      if (std::isfinite(v[i]) && std::abs(v[i]) > 1e-3) {
        EXPECT_NEAR(u[i], std::abs(v[i]) * spread, 1e-9) << load << " " << i;
      }
  }
  const auto replicas = h5::read_attribute(f.id(), "uncertainty", "replicas");
  ASSERT_TRUE(replicas.has_value());
  EXPECT_EQ(std::get<double>(*replicas), 6.0);
}

TEST(Propagation, TheSameSeedGivesTheSameUncertaintiesOnOneOrTwoThreads) {
  PressureRun run;
  run.duration = 3.0;
  run.write();
  run.write_daq_csv("daq.csv");
  const std::string model = "replicas = 5\nseed = 3\nchannel_gain_relative = 0.01\nq_relative = 0.005\n"
                            "tap_position_over_c = 0.002\nencoder_offset_deg = 0.1\n";
  const fs::path one = reduce(run, model, "one", 1), two = reduce(run, model, "two", 2);
  const fs::path other = reduce(run, "replicas = 5\nseed = 4\nchannel_gain_relative = 0.01\n", "other", 2);
  h5::File a = h5::File::open_read(one), b = h5::File::open_read(two), c = h5::File::open_read(other);
  for (const char* key : {"pressure/cp_uncertainty", "loads/cn_uncertainty", "loads/cm_uncertainty"}) {
    const auto x = h5::read_numbers(a.id(), key, "one"), y = h5::read_numbers(b.id(), key, "two");
    ASSERT_EQ(x.size(), y.size()) << key;
    for (std::size_t i = 0; i < x.size(); ++i)
      if (!(std::isnan(x[i]) && std::isnan(y[i]))) {
        ASSERT_EQ(x[i], y[i]) << key << " " << i;
      }
    EXPECT_NE(x, h5::read_numbers(c.id(), key, "other")) << key << ": another seed, other draws";
  }
}

// Known instrument errors injected into the raw volts (an independent gain
// error of 1 % on every tap transducer, drawn anew for each of 20 runs): the
// Monte Carlo spread with channel_gain_relative = 0.01 must cover the true
// error of Cn, |measured - clean| <= 1.96 sigma, in about 95 % of the runs.
// With sigma itself estimated from 12 replicas the expected coverage is a
// little lower (about 93 %); 16 of 20 is the bar (binomial: a 95 % process
// fails it with probability under 2 %).
TEST(Propagation, TheSpreadCoversInjectedGainErrorsAtAboutTheStatedRate) {
  PressureRun run;
  run.duration = 2.5;
  run.write();
  const Matrix clean_volts = run.store.get<Matrix>("daq/volts");
  run.write_daq_csv("daq.csv");
  const std::string model = "replicas = 12\nseed = 5\nchannel_gain_relative = 0.01\n"
                            "calibration_residuals = false\nzero_drift = false\n";
  h5::File clean_file = h5::File::open_read(reduce(run, "replicas = 2\nzero_drift = false\n", "clean"));
  const auto clean = h5::read_numbers(clean_file.id(), "loads/cn", "clean");
  const std::size_t at = clean.size() / 2;  // wind on, mid-record
  int covered = 0;
  const int runs = 20;
  std::uint64_t state = 0x5eed;
  auto normal = [&] {  // the test's own generator, not the one under test
    auto uniform = [&] {
      state = state * 6364136223846793005ULL + 1442695040888963407ULL;
      return (static_cast<double>(state >> 11) + 0.5) * 0x1.0p-53;
    };
    return std::sqrt(-2 * std::log(uniform())) * std::cos(2 * std::numbers::pi * uniform());
  };
  for (int k = 0; k < runs; ++k) {
    Matrix volts = clean_volts;
    for (Eigen::Index c = 2; c < volts.values.cols(); ++c) {  // taps follow alpha_enc and q_pitot
      // Scale about the channel's wind-off level, so the tare still finds the zero.
      const double zero = volts.values(0, c);
      volts.values.col(c) = (volts.values.col(c).array() - zero) * (1.0 + 0.01 * normal()) + zero;
    }
    run.store.put("daq/volts", volts);
    run.write_daq_csv("daq.csv");
    h5::File f = h5::File::open_read(reduce(run, model, fmt::format("seed{}", k)));
    const double error = h5::read_numbers(f.id(), "loads/cn", "run")[at] - clean[at];
    const double sigma = h5::read_numbers(f.id(), "loads/cn_uncertainty", "run")[at];
    ASSERT_GT(sigma, 0.0);
    covered += std::abs(error) <= 1.96 * sigma;
  }
  std::printf("covered %d of %d\n", covered, runs);
  EXPECT_GE(covered, 16);
}

// A measured line's calibration scatter reaches only the tap on that line:
// the demo run with its line_p15.csv given 2 % gain and 1 deg phase scatter,
// every other input unperturbed.
TEST(Propagation, AMeasuredLinesScatterReachesOnlyItsTap) {
  testing::ScratchDir dir;
  const fs::path run = dir / "run1";
  fs::copy(testing::kSourceDir / "sample_data/kestrel_ridge/run1", run);
  const std::string csv = testing::read_text(run / "line_p15.csv");
  std::istringstream in(csv);
  std::string line, out;
  std::getline(in, line);
  out = "frequency_hz,gain,phase_deg,gain_std,phase_std_deg\n";
  while (std::getline(in, line)) {
    const double gain = std::stod(line.substr(line.find(',') + 1));
    out += line + "," + std::to_string(0.02 * gain) + ",1.0\n";
  }
  dir.write("run1/line_p15.csv", out);
  std::string config = testing::read_text(run / "reduce.toml");
  config = config.substr(0, config.find("\n[piv]")) +
           "\n[uncertainty]\nreplicas = 4\ncalibration_residuals = false\nzero_drift = false\n";
  dir.write("run1/mc.toml", config);
  const auto r = testing::run_stallscope("reduce -q --no-report " + testing::shell_quote((run / "mc.toml").string()) +
                                         " -o " + testing::shell_quote((dir / "out").string()));
  ASSERT_EQ(r.exit_code, 0) << r.err;
  const RunStore a = read_archive(dir / "out" / "KR12-A-01.h5");
  const Matrix& cp_u = a.get<Matrix>("pressure/cp_uncertainty");
  const auto& taps = a.get<Table>("pressure/taps").texts("tap");
  ASSERT_EQ(static_cast<std::size_t>(cp_u.values.cols()), taps.size());
  for (std::size_t t = 0; t < taps.size(); ++t) {
    const double largest = cp_u.values.col(static_cast<Eigen::Index>(t)).array().isNaN().select(0.0, cp_u.values.col(
        static_cast<Eigen::Index>(t)).array()).maxCoeff();
    if (taps[t] == "p15") EXPECT_GT(largest, 1e-3) << taps[t];
    else EXPECT_EQ(largest, 0.0) << taps[t];
  }
  EXPECT_GT(a.get<Series>("loads/cn_uncertainty").values.maxCoeff(), 0.0);
}

}  // namespace
}  // namespace stallscope
