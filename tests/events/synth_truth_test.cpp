// End to end against ground truth: a realistic synthetic run (every nuisance of
// the realistic preset on, PIV included) reduced with every stage by the run
// config synth writes beside it, its events compared cycle by cycle with
// truth_events.csv. Each pipeline criterion is compared with its physical event
// or with the same criterion on the undistorted state (tools/synth/truth_criteria),
// after its expected lag. Lags and scatter measured over 6 seeds x 6 cycles of
// this scenario (c/U; speeds in U), mean / sd / range:
//   static_stall_crossing         +0.000 / 0.001 / -0.002..+0.002
//   moment_stall (criterion)      -0.45 / 0.08 / -0.55..-0.28   (running maximum of noisy Cm, low-pass)
//   le_suction_collapse           -0.08 / 0.005 / -0.09..-0.07
//   lift_peak                     -0.72 / 0.15 / -1.07..-0.45   (20 taps integrate the moving bump)
//   normal_force_peak             -0.44 / 0.10 / -0.68..-0.25
//   cm_min                        +1.06 / 1.30 / -0.15..+5.14   (a flat minimum)
//   reattachment (pressure) vs x > 0.9  -0.93 / 0.04 / -1.00..-0.84  (aft tap at 0.95 c recovers as x nears it)
//   reattachment_loads vs x > 0.9 -1.50 / 0.21 / -1.97..-1.18   (Cl rejoins the Theodorsen reference first)
//   stall_onset vs vortex release -0.24 / 0.08 / -0.36..-0.09   (onset = moment stall)
//   le_suction_collapse vs release -1.82 / 0.15; lift_peak vs release +0.64 / 0.17
//   taps_te_passage vs vortex at TE +0.43 / 1.38 (89 % within +-0.5)
//   taps_convection_speed - truth  -0.02 / 0.10 U (89 % within +-0.06 U)
// The PIV path (500 Hz camera, its memory holding the first 3 cycles; 6 seeds
// x 3 cycles, every cycle found):
//   vortex_te_passage             -0.06 / 0.03 / -0.12..-0.01   (a frame is 0.33 c/U)
//   vortex_detachment             +0.47 / 0.17 / +0.29..+0.96   (end of circulation growth)
//   vortex_detection vs release   +0.28 / 0.12 / +0.13..+0.54   (first seen once it has grown)
//   convection_speed - truth      -0.009 / 0.008 U, -0.025..+0.008 (13 of 18 cycles have 3 points)
//   vortex_shedding vs the second vortex's release  +0.32 / 0.09 / +0.21..+0.46 (17 of 18 found)
#include <gtest/gtest.h>
#include <unistd.h>

#include <algorithm>
#include <cmath>
#include <fstream>
#include <map>
#include <sstream>

#include "pipeline/archive.hpp"
#include "pipeline/progress.hpp"
#include "tests/support/test_support.hpp"
#include "tools/synth/synth_run.hpp"

namespace stallscope {
namespace {

namespace fs = std::filesystem;

struct Row {
  std::string status;
  double t_s = NAN, value = NAN;
};
// (event, cycle) -> the first row of that event in that cycle.
using Events = std::map<std::pair<std::string, int>, Row>;

std::vector<std::string> split_csv(const std::string& line) {
  std::vector<std::string> out;
  std::string field;
  bool quoted = false;
  for (char ch : line) {
    if (ch == '"') quoted = !quoted;
    else if (ch == ',' && !quoted) out.push_back(field), field.clear();
    else field += ch;
  }
  out.push_back(field);
  return out;
}

Events read_events(const fs::path& csv) {
  std::ifstream in(csv);
  std::string line;
  std::getline(in, line);
  EXPECT_EQ(line, "cycle,event,status,reason,t_s,t_conv,t_uncertainty_s,phase_deg,alpha_deg,value") << csv;
  Events out;
  while (std::getline(in, line)) {
    const auto f = split_csv(line);
    if (f.size() != 10) continue;
    auto number = [](const std::string& s) { return s.empty() ? NAN : std::stod(s); };
    out.emplace(std::make_pair(f[1], std::stoi(f[0])), Row{f[2], number(f[4]), number(f[9])});
  }
  return out;
}

class SynthTruth : public ::testing::Test {
 protected:
  static void SetUpTestSuite() {
    dir_ = fs::temp_directory_path() / ("stallscope_events_truth_" + std::to_string(::getpid()));
    fs::remove_all(dir_);
    const fs::path scenario = fs::path(STALLSCOPE_SOURCE_DIR) / "sample_data/kestrel_ridge/run1_scenario.toml";
    Progress quiet(Progress::Mode::kQuiet);
    synth::write_synthetic_run(synth::load_scenario(scenario), dir_ / "run", false, quiet);
    reduced_ = testing::run_stallscope("reduce " + testing::shell_quote((dir_ / "run/reduce.toml").string()) +
                                       " -o " + testing::shell_quote((dir_ / "out").string()) + " --quiet")
                   .exit_code == 0;
    truth_ = read_events(dir_ / "run/truth_events.csv");
    measured_ = read_events(dir_ / "out/events_per_cycle.csv");
  }
  static void TearDownTestSuite() { fs::remove_all(dir_); }

  // The lag (measured - truth) in c/U of every cycle where both are found; a
  // cycle found in truth but missing in the reduction is a failure.
  static std::vector<double> lags(const std::string& truth_event, const std::string& measured_event,
                                  bool values = false) {
    constexpr double kConvectivePerS = 25.0 / 0.15;  // U / c of the scenario
    std::vector<double> out;
    for (const auto& [key, row] : truth_) {
      if (key.first != truth_event || row.status != "ok") continue;
      const auto m = measured_.find({measured_event, key.second});
      EXPECT_TRUE(m != measured_.end() && m->second.status == "ok")
          << measured_event << " missing in cycle " << key.second << " where " << truth_event << " happened";
      if (m == measured_.end() || m->second.status != "ok") continue;
      out.push_back(values ? m->second.value - row.value : (m->second.t_s - row.t_s) * kConvectivePerS);
    }
    return out;
  }
  // Every cycle within bias +- tolerance (at least `fraction` of them for scattered criteria).
  static void expect_within(const std::string& truth_event, const std::string& measured_event, double bias,
                            double tolerance, double fraction = 1.0, bool values = false) {
    const auto d = lags(truth_event, measured_event, values);
    ASSERT_GE(d.size(), 5u) << truth_event << " / " << measured_event;  // 6 cycles, one may be spent
    std::size_t inside = 0;
    std::string list;
    for (double x : d) {
      inside += std::abs(x - bias) <= tolerance;
      list += " " + std::to_string(x);
    }
    EXPECT_GE(static_cast<double>(inside), fraction * static_cast<double>(d.size()) - 1e-9)
        << measured_event << " against truth " << truth_event << ": expected " << bias << " +- " << tolerance
        << ", found" << list;
  }

  // The PIV events of the cycles the PIV record covers (the camera's memory
  // holds the first cycles only): at least `found` of them, each within
  // bias +- tolerance of the truth.
  static void expect_piv_within(const std::string& truth_event, const std::string& measured_event, double bias,
                                double tolerance, std::size_t found, bool values = false) {
    constexpr double kConvectivePerS = 25.0 / 0.15;
    std::string list;
    std::size_t compared = 0, inside = 0;
    for (const auto& [key, row] : measured_) {
      if (key.first != measured_event || row.status != "ok") continue;
      const auto t = truth_.find({truth_event, key.second});
      if (t == truth_.end() || t->second.status != "ok") continue;
      const double d = values ? row.value - t->second.value : (row.t_s - t->second.t_s) * kConvectivePerS;
      ++compared;
      inside += std::abs(d - bias) <= tolerance;
      list += " " + std::to_string(d);
    }
    EXPECT_GE(compared, found) << measured_event;
    EXPECT_EQ(inside, compared) << measured_event << " against truth " << truth_event << ": expected " << bias
                                << " +- " << tolerance << ", found" << list;
  }

  static inline fs::path dir_;
  static inline bool reduced_ = false;
  static inline Events truth_, measured_;
};

// One test, so the run is synthesised and reduced once (about 15 s on a busy machine).
TEST_F(SynthTruth, EventsMatchTheTruthCycleByCycleAfterTheirMeasuredLagAndSummarise) {
  ASSERT_TRUE(reduced_);
  // Row by row: the same cycle numbering, every truth cycle present in the reduction.
  int cycles = 0;
  for (const auto& [key, row] : truth_)
    if (key.first == "stall_onset") {
      ++cycles;
      EXPECT_TRUE(measured_.count(key)) << "cycle " << key.second;
    }
  EXPECT_EQ(cycles, 6);
  EXPECT_TRUE(measured_.count({"vortex_detection", 0}));  // the PIV path ran and joined the table
  // Criteria against the same criteria on the undistorted state.
  expect_within("static_stall_crossing", "static_stall_crossing", 0.0, 0.01);
  expect_within("moment_stall", "moment_stall", -0.45, 0.25);
  expect_within("le_suction_collapse", "le_suction_collapse", -0.08, 0.05);
  // Load extrema against the true loads.
  expect_within("lift_peak", "lift_peak", -0.72, 0.45);
  expect_within("normal_force_peak", "normal_force_peak", -0.44, 0.3);
  expect_within("cm_min", "cm_min", 1.25, 1.75, 2.0 / 3.0);
  // Onset and reattachment against the physical events.
  expect_within("stall_onset", "stall_onset", -0.24, 0.2);
  expect_within("stall_onset", "le_suction_collapse", -1.82, 0.45);
  expect_within("stall_onset", "lift_peak", 0.64, 0.45);
  expect_within("reattachment", "reattachment", -0.93, 0.15);  // the default criterion: pressure
  expect_within("reattachment", "reattachment_loads", -1.5, 0.6);
  // The taps' convection estimate against the true vortex.
  expect_within("vortex_te_passage", "taps_te_passage", 0.0, 0.5, 2.0 / 3.0);
  expect_within("convection_speed", "taps_convection_speed", 0.0, 0.06, 2.0 / 3.0, true);
  // The PIV path's vortex against the true vortex (the camera frame interval is 0.33 c/U).
  expect_piv_within("vortex_te_passage", "vortex_te_passage", -0.06, 0.2, 3);
  expect_piv_within("vortex_detachment", "vortex_detachment", 0.47, 0.55, 3);
  expect_piv_within("stall_onset", "vortex_detection", 0.28, 0.35, 3);
  expect_piv_within("convection_speed", "convection_speed", 0.0, 0.04, 2, true);
  expect_piv_within("secondary_vortex", "vortex_shedding", 0.32, 0.3, 2);
  // The vectors' random error estimated from the frames, against the noise synth adds
  // (the scenario's noise_m_s, 0.15 m/s per component): within 5 %.
  const RunStore archive = read_archive(dir_ / "out" / "KR12-A-01.h5");
  EXPECT_NEAR(archive.get<Scalar>("piv/random_error_m_s").value, 0.15, 0.0075);

  // The summary carries circular statistics of the phases.
  std::ifstream in(dir_ / "out/events_summary.csv");
  std::string line;
  std::getline(in, line);
  const auto header = split_csv(line);
  auto column = [&](const std::string& name) {
    return static_cast<std::size_t>(std::find(header.begin(), header.end(), name) - header.begin());
  };
  const std::size_t mean = column("mean"), circular = column("circular_mean"), spread = column("circular_std");
  ASSERT_LT(circular, header.size());
  bool found = false;
  while (std::getline(in, line)) {
    const auto f = split_csv(line);
    if (f[0] != "stall_onset" || f[1] != "phase_deg") continue;
    found = true;
    // Onset phases of this run lie near 140 deg, far from the boundary: both means agree.
    EXPECT_NEAR(std::stod(f[circular]), std::stod(f[mean]), 0.5);
    EXPECT_GT(std::stod(f[spread]), 0.0);
  }
  EXPECT_TRUE(found);
}

}  // namespace
}  // namespace stallscope
