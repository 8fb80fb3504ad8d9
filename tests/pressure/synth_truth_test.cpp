// The whole pressure path against the ground truth of synthetic runs: a clean
// run (configs/scenarios/clean.toml without its PIV stack, which the pressure
// path does not read) written by `stallscope synth`, reduced by `stallscope
// reduce`, and compared with truth.h5 sample by sample.
#include <gtest/gtest.h>

#include <cmath>
#include <fstream>
#include <regex>

#include "pipeline/hdf5.hpp"
#include "tests/support/test_support.hpp"

namespace stallscope {
namespace {

namespace fs = std::filesystem;
using testing::run_stallscope;
using testing::shell_quote;

// The config synth writes beside the run: every stage, the wind-off tares
// of its header, the calibration files and lines it wrote.
std::string pressure_config(const fs::path& run) { return testing::read_text(run / "reduce.toml"); }

struct Reduced {
  std::vector<double> error_rms, error_max;  // per quantity, over the complete cycles
};

fs::path synth(testing::ScratchDir& dir, const std::string& scenario) {
  const auto file = dir.write("scenario.toml", scenario);
  const auto run = dir / "run";
  const auto r = run_stallscope("synth " + shell_quote(file.string()) + " -o " + shell_quote(run.string()) + " -q");
  EXPECT_EQ(r.exit_code, 0) << r.err;
  return run;
}

fs::path reduce(const fs::path& run, const std::string& name, const std::string& more = "") {
  const auto config = run / (name + ".toml");
  {
    std::ofstream out(config);
    out << pressure_config(run) << more;
  }
  const auto out = run / name;
  const auto r = run_stallscope("reduce " + shell_quote(config.string()) + " -o " + shell_quote(out.string()) +
                                " -q --no-report");
  EXPECT_EQ(r.exit_code, 0) << r.err;
  for (const auto& e : fs::directory_iterator(out))
    if (e.path().extension() == ".h5") return e.path();
  return {};
}

// rms and max |reduced - true| over the samples of complete cycles, per key.
std::pair<double, double> error_against_truth(const fs::path& archive, const fs::path& truth_file,
                                              const std::string& key, const std::string& truth_key) {
  h5::File a = h5::File::open_read(archive);
  h5::File t = h5::File::open_read(truth_file);
  const auto time = h5::read_numbers(a.id(), "loads/time_s", "archive");
  const auto value = h5::read_numbers(a.id(), key, "archive");
  const auto true_time = h5::read_numbers(t.id(), "truth/time_s", "truth.h5");
  const auto true_value = h5::read_numbers(t.id(), truth_key, "truth.h5");
  const auto cycle = h5::read_numbers(t.id(), "truth/cycle", "truth.h5");
  double ss = 0, worst = 0;
  std::size_t n = 0, j = 0;
  for (std::size_t i = 0; i < time.size(); ++i) {
    while (j < true_time.size() && true_time[j] < time[i] - 1e-9) ++j;
    EXPECT_NEAR(true_time[j], time[i], 1e-9);  // the same DAQ clock
    if (cycle[j] < 1) continue;
    const double e = value[i] - true_value[j];
    ss += e * e;
    worst = std::max(worst, std::abs(e));
    ++n;
  }
  EXPECT_GT(n, 1000u);
  return {std::sqrt(ss / static_cast<double>(n)), worst};
}

// rms over taps and samples of complete cycles of |Cp - true Cp| (truth/cp_taps:
// the undistorted tap Cp, before tubing, skew and noise).
double cp_error(const fs::path& archive, const fs::path& truth_file) {
  h5::File a = h5::File::open_read(archive);
  h5::File t = h5::File::open_read(truth_file);
  std::vector<hsize_t> dims, true_dims;
  const auto cp = h5::read_numbers(a.id(), "pressure/cp", "archive", &dims);
  const auto time = h5::read_numbers(a.id(), "pressure/time_s", "archive");
  const auto true_cp = h5::read_floats(t.id(), "truth/cp_taps", "truth.h5", &true_dims);
  const auto true_time = h5::read_numbers(t.id(), "truth/time_s", "truth.h5");
  const auto cycle = h5::read_numbers(t.id(), "truth/cycle", "truth.h5");
  EXPECT_EQ(dims[1], true_dims[1]);
  double ss = 0;
  std::size_t n = 0, j = 0;
  for (std::size_t i = 0; i < time.size(); ++i) {
    while (j < true_time.size() && true_time[j] < time[i] - 1e-9) ++j;
    if (cycle[j] < 1) continue;
    for (std::size_t k = 0; k < dims[1]; ++k) {
      const double e = cp[i * dims[1] + k] - true_cp[j * dims[1] + k];
      ss += e * e;
      ++n;
    }
  }
  return std::sqrt(ss / static_cast<double>(n));
}

const std::string kClean =
    "[scenario]\npreset = \"clean\"\nname = \"clean-sine\"\nseed = 1\n[motion]\ncycles = 6\n";

// Measured on this run (20 taps, 10 a surface from x/c = 0.01 to 0.95): tap Cp
// within 0.0013 rms of the truth after calibration and the tubing correction;
// the loads differ from the true (continuous-surface) loads by what 20 taps
// cannot resolve, mostly the leading-edge suction peak: Cn 0.016 rms (0.042
// max), Cl 0.018 (0.044), Cm 0.0096 (0.028), Cc 0.029 (0.077), Cd_p 0.028
// (0.072), against loop ranges of 1.3 in Cn and 0.28 in Cm. Tolerances add
// about 25 % to these.
TEST(SynthTruth, CleanRunReducesToTheTrueLoadsWithinTheTapDiscretisation) {
  testing::ScratchDir dir;
  const auto run = synth(dir, kClean);
  const auto archive = reduce(run, "reduced");
  ASSERT_FALSE(archive.empty());
  const auto truth = run / "truth.h5";
  EXPECT_LT(cp_error(archive, truth), 0.002);
  struct Check {
    const char* key;
    double rms, max;
  };
  for (const Check& c : {Check{"cn", 0.02, 0.053}, Check{"cl", 0.023, 0.055}, Check{"cm", 0.012, 0.035},
                         Check{"cc", 0.037, 0.097}, Check{"cd_p", 0.035, 0.09}}) {
    const auto [rms, worst] = error_against_truth(archive, truth, std::string("loads/") + c.key,
                                                  std::string("truth/") + c.key);
    EXPECT_LT(rms, c.rms) << c.key;
    EXPECT_LT(worst, c.max) << c.key;
  }
  // The free stream from the measured q, p and T, against the scenario's.
  h5::File a = h5::File::open_read(archive);
  EXPECT_NEAR(std::get<double>(*h5::read_attribute(a.id(), "run", "U_inf_m_s")), 25.0, 1e-6);
}

// Transducers whose sensitivity drifts with temperature (synth writes each
// tap's coefficient into calib_taps.toml and drifts its volts accordingly) on
// a run that warms by 8 K: the correction in [calibrate] with the measured
// temperature takes the drift out; without the coefficients it stays.
// Measured: tap Cp 0.0013 rms from the truth corrected, 0.011 uncorrected.
TEST(SynthTruth, TheTransducerTemperatureCorrectionRemovesTheThermalDrift) {
  testing::ScratchDir dir;
  const auto run = synth(dir, kClean + "[noise]\ntemperature_rise_k = 8.0\ntemperature_coefficient_per_k = 2.0e-3\n");
  const std::string calibration = testing::read_text(run / "calib_taps.toml");
  ASSERT_NE(calibration.find("temperature_coefficient_per_k"), std::string::npos);
  const auto corrected = reduce(run, "corrected");
  const double with = cp_error(corrected, run / "truth.h5");
  {
    std::ofstream out(run / "calib_taps.toml");
    out << std::regex_replace(calibration, std::regex("temperature_coefficient_per_k = .*\n"), "");
  }
  const auto uncorrected = reduce(run, "uncorrected");
  const double without = cp_error(uncorrected, run / "truth.h5");
  EXPECT_LT(with, 0.002);  // as on the clean run without any thermal drift
  EXPECT_GT(without, 5 * with);
}

// Per cycle, the time of one event the events stage found (NaN where it found none).
std::vector<double> event_times(const fs::path& archive, const std::string& event) {
  h5::File a = h5::File::open_read(archive);
  const auto names = h5::read_texts(a.id(), "events/per_cycle/event", "archive");
  const auto status = h5::read_texts(a.id(), "events/per_cycle/status", "archive");
  const auto t = h5::read_numbers(a.id(), "events/per_cycle/t_s", "archive");
  std::vector<double> out;
  for (std::size_t i = 0; i < names.size(); ++i)
    if (names[i] == event) out.push_back(status[i] == "ok" ? t[i] : NAN);
  return out;
}

// What a mis-measured line costs: the same clean run through 1.0 m tubes as the
// tap table says, and through tubes 10 % longer (synth's tube_length_error),
// reduced with the table's lengths through the events stage. The correction
// leaves the extra lag of the longer tubes in, so stall onset comes late.
// Measured (8 cycles, U = 25 m/s, c = 0.15 m, k = 0.1): stall onset +0.52 ms
// (0.51 to 0.56 ms over the cycles, 0.087 c/U), leading-edge suction collapse
// +0.62 ms, lift peak +0.67 ms; with 0.5 m tubes stall onset +0.19 ms (0.18 to
// 0.19 ms), suction collapse +0.17 ms, lift peak +0.15 ms.
TEST(SynthTruth, TenPercentLongerTubesDelayTheStallOnsetTheEventsStageFinds) {
  std::vector<double> onset[2];
  for (int longer = 0; longer < 2; ++longer) {
    testing::ScratchDir dir;
    const auto run = synth(dir, "[scenario]\npreset = \"clean\"\nname = \"onset\"\nseed = 1\n[motion]\ncycles = 6\n"
                                "[taps]\ntube_length_m = 1.0\n[lines]\ntube_length_error = " +
                                    std::string(longer ? "0.1" : "0.0") + "\n");
    const auto archive = reduce(run, "reduced");
    ASSERT_FALSE(archive.empty());
    onset[longer] = event_times(archive, "stall_onset");
  }
  ASSERT_EQ(onset[0].size(), onset[1].size());
  ASSERT_GE(onset[0].size(), 3u);
  for (std::size_t c = 0; c < onset[0].size(); ++c) {
    ASSERT_TRUE(std::isfinite(onset[0][c]) && std::isfinite(onset[1][c])) << "cycle " << c;
    const double late_ms = 1e3 * (onset[1][c] - onset[0][c]);
    EXPECT_GT(late_ms, 0.3) << "cycle " << c;
    EXPECT_LT(late_ms, 0.8) << "cycle " << c;
  }
}

}  // namespace
}  // namespace stallscope
