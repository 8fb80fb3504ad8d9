#include "stages/phase.hpp"

#include <gtest/gtest.h>

#include <cmath>
#include <fstream>
#include <random>
#include <sstream>

#include "pipeline/errors.hpp"
#include "stages/cycles.hpp"
#include "stages/motion.hpp"
#include "tests/motion/harness.hpp"
#include "tests/support/test_support.hpp"

namespace stallscope {
namespace {

using testing::Harness;
using testing::kPi;
using testing::SineRun;

// A fitted 2 Hz run with cycles cut, and loads on the DAQ time base: Cl an
// attached-looking loop whose gain varies from cycle to cycle, plus noise.
void loaded_run(Harness& h, bool drop_cycle_3 = true) {
  SineRun r;
  r.noise_deg = 0.02;
  testing::put_sine_run(h.store, r);
  MotionStage motion;
  h.run(motion);
  const MotionFit m = MotionFit::from_store(h.store, "test");
  const Eigen::VectorXd& t = h.store.get<Series>("signals/time_s").values;
  if (drop_cycle_3) {
    Eigen::VectorXd& a = h.store.get_mutable<Series>("signals/alpha_deg").values;
    for (Eigen::Index i = 0; i < t.size(); ++i)
      if (m.cycle(t[i]) == 3 && std::abs(m.phase_deg(t[i]) - 200) < 1) a[i] += 5;  // a glitch: cycle 3 invalid
  }
  CyclesStage cycles;
  h.run(cycles);
  std::mt19937 gen(17);
  std::normal_distribution<double> noise(0.0, 0.03);
  Eigen::VectorXd cl(t.size()), cm(t.size());
  for (Eigen::Index i = 0; i < t.size(); ++i) {
    const double th = 2 * kPi * r.freq_hz * t[i] + r.phase_rad;
    const double gain = 1.0 + 0.05 * std::sin(0.7 * static_cast<double>(m.cycle(t[i])));
    cl[i] = gain * (0.9 + 0.8 * std::sin(th - 0.2)) + noise(gen);
    cm[i] = -0.02 - 0.01 * std::cos(th) + 0.5 * noise(gen);
  }
  h.store.put("loads/time_s", Series{t, "s"});
  h.store.put("loads/cl", Series{cl, "1"});
  h.store.put("loads/cm", Series{cm, "1"});
}

// Reference: the same bins computed by numpy (mean, std with ddof=1,
// percentile 5 and 95 with numpy's default linear method, count) through
// Debian's /usr/bin/python3, from the raw samples, the fitted frequency and
// cycle origin, and the list of valid cycles.
TEST(PhaseStage, AveragesIntoBinsAsNumpyDoes) {
  Harness h;
  loaded_run(h);
  PhaseStage stage;
  h.run(stage, "bins = 36\nloads = [\"cl\", \"cm\"]\n");
  const MotionFit m = MotionFit::from_store(h.store, "test");
  const Table& cycles = h.store.get<Table>("cycles");
  ASSERT_EQ(cycles.integers("valid")[3], 0);

  testing::ScratchDir dir;
  {
    std::ofstream out(dir / "samples.txt");
    out.precision(17);
    const Eigen::VectorXd& t = h.store.get<Series>("signals/time_s").values;
    const Eigen::VectorXd& cl = h.store.get<Series>("loads/cl").values;
    // The phase and cycle of each sample as the motion gives them (per cycle,
    // measured at the mean crossings): numpy checks the binning statistics.
    for (Eigen::Index i = 0; i < t.size(); ++i) out << m.phase_deg(t[i]) << " " << m.cycle(t[i]) << " " << cl[i] << "\n";
    std::ofstream meta(dir / "meta.txt");
    meta.precision(17);
    meta << m.freq_hz << " " << m.cycle_origin_s << " " << m.cycles << "\n";
    for (std::size_t c = 0; c < cycles.rows(); ++c)
      if (cycles.integers("valid")[c]) meta << c << " ";
    meta << "\n";
  }
  const auto script = dir.write("bins.py",
                                "import sys, numpy as np\n"
                                "phase, cycle, y = np.loadtxt(sys.argv[1], unpack=True)\n"
                                "cycle = cycle.astype(int)\n"
                                "lines = open(sys.argv[2]).read().split('\\n')\n"
                                "f, origin, ncyc = [float(v) for v in lines[0].split()]\n"
                                "valid = set(int(v) for v in lines[1].split())\n"
                                "b = np.minimum((phase * 36 / 360.0).astype(int), 35)\n"
                                "use = np.array([(0 <= c < ncyc) and (c in valid) for c in cycle])\n"
                                "for k in range(36):\n"
                                "    v = y[use & (b == k)]\n"
                                "    print('%.17g %.17g %.17g %.17g %d' % (v.mean(), v.std(ddof=1),\n"
                                "          np.percentile(v, 5), np.percentile(v, 95), v.size))\n");
  const auto r = testing::run_python(script, (dir / "samples.txt").string() + " " + (dir / "meta.txt").string());
  ASSERT_EQ(r.exit_code, 0) << r.err;
  std::istringstream in(r.out);
  const Eigen::VectorXd& mean = h.store.get<Series>("phase/cl/mean").values;
  const Eigen::VectorXd& std = h.store.get<Series>("phase/cl/std").values;
  const Eigen::VectorXd& p05 = h.store.get<Series>("phase/cl/p05").values;
  const Eigen::VectorXd& p95 = h.store.get<Series>("phase/cl/p95").values;
  const Eigen::VectorXd& n = h.store.get<Series>("phase/cl/n").values;
  // Both sum the same doubles in a different order: agreement to rounding.
  constexpr double kRounding = 1e-12;
  for (int b = 0; b < 36; ++b) {
    double rm, rs, r5, r95;
    int rn;
    ASSERT_TRUE(in >> rm >> rs >> r5 >> r95 >> rn) << r.out;
    EXPECT_NEAR(mean[b], rm, kRounding) << "bin " << b;
    EXPECT_NEAR(std[b], rs, kRounding) << "bin " << b;
    EXPECT_NEAR(p05[b], r5, kRounding) << "bin " << b;
    EXPECT_NEAR(p95[b], r95, kRounding) << "bin " << b;
    EXPECT_EQ(n[b], rn) << "bin " << b;
  }
  EXPECT_NEAR(h.store.get<Series>("phase/bin_deg").values[0], 5.0, 1e-12);
}

TEST(PhaseStage, KeepsEveryCycleLoopAndWritesThePhaseLoadsTable) {
  Harness h;
  loaded_run(h);
  PhaseStage stage;
  h.run(stage, "bins = 24\nloads = [\"cl\", \"cm\"]\n");
  const Matrix& loops = h.store.get<Matrix>("phase/per_cycle/cl");
  ASSERT_EQ(loops.values.rows(), 24);
  ASSERT_EQ(loops.values.cols(), 9);  // every complete cycle, invalid ones too
  EXPECT_EQ(std::get<std::string>(h.store.entry("phase/per_cycle/cl").attributes.at("invalid_cycles")), "3");
  // Cycle 5's loop: its own bin means, computed directly.
  const MotionFit m = MotionFit::from_store(h.store, "test");
  const Eigen::VectorXd& t = h.store.get<Series>("loads/time_s").values;
  const Eigen::VectorXd& cl = h.store.get<Series>("loads/cl").values;
  double sum = 0;
  int count = 0;
  for (Eigen::Index i = 0; i < t.size(); ++i)
    if (m.cycle(t[i]) == 5 && m.phase_deg(t[i]) >= 90 && m.phase_deg(t[i]) < 105) {
      sum += cl[i];
      ++count;
    }
  EXPECT_NEAR(loops.values(6, 5), sum / count, 1e-12);

  const Entry& e = h.store.entry("phase/loads");
  EXPECT_EQ(std::get<std::string>(e.attributes.at("csv")), "phase_loads.csv");
  const Table& table = std::get<Table>(e.value);
  ASSERT_EQ(table.rows(), 24u);
  EXPECT_EQ(table.texts("stroke")[11], "up");
  EXPECT_EQ(table.texts("stroke")[12], "down");
  // The angle column is the phase-averaged angle: mean - amp cos(phase) at the bin centre, near enough.
  EXPECT_NEAR(table.numbers("alpha_deg")[0], 10 - 8 * std::cos(7.5 * kPi / 180), 0.05);
  EXPECT_EQ(table.numbers("cl_mean")[7], h.store.get<Series>("phase/cl/mean").values[7]);
  EXPECT_EQ(table.integers("n")[7], h.store.get<Series>("phase/cl/n").values[7]);
}

TEST(PhaseStage, AveragesCpAtEveryTap) {
  Harness h;
  loaded_run(h, false);
  const Eigen::VectorXd& t = h.store.get<Series>("loads/time_s").values;
  const MotionFit m = MotionFit::from_store(h.store, "test");
  Eigen::MatrixXd cp(t.size(), 3);
  for (Eigen::Index i = 0; i < t.size(); ++i)
    for (Eigen::Index j = 0; j < 3; ++j) cp(i, j) = -static_cast<double>(j) * std::cos(m.phase_deg(t[i]) * kPi / 180);
  h.store.put("pressure/time_s", Series{t, "s"});
  h.store.put("pressure/cp", Matrix{cp, "1", {"p01", "p02", "p03"}});
  PhaseStage stage;
  h.run(stage, "bins = 4\nloads = [\"cl\"]\n");
  const Matrix& mean = h.store.get<Matrix>("phase/cp/mean");
  ASSERT_EQ(mean.values.rows(), 4);
  ASSERT_EQ(mean.values.cols(), 3);
  EXPECT_EQ(mean.columns[2], "p03");
  EXPECT_EQ(mean.values(0, 0), 0.0);
  // Bin 0 spans 0-90 deg: the mean of -2 cos over it is -2 (2/pi) = -1.27324; the
  // samples, 0.72 deg apart, miss it by up to half a step of the slope at each edge.
  EXPECT_NEAR(mean.values(0, 2), -4 / kPi, 0.01);
  double sum = 0;
  int count = 0;
  for (Eigen::Index i = 0; i < t.size(); ++i)
    if (m.cycle(t[i]) >= 0 && m.phase_deg(t[i]) < 90) {
      sum += cp(i, 2);
      ++count;
    }
  EXPECT_NEAR(mean.values(0, 2), sum / count, 1e-12);
}

// Jittered stall: a sharp bump in Cl at a time that wanders from cycle to cycle.
TEST(PhaseStage, AlignsCyclesOnTheirOwnEventBeforeAveraging) {
  Harness h;
  loaded_run(h, false);
  const MotionFit m = MotionFit::from_store(h.store, "test");
  const Eigen::VectorXd& t = h.store.get<Series>("loads/time_s").values;
  Eigen::VectorXd& cl = h.store.get_mutable<Series>("loads/cl").values;
  std::vector<std::int64_t> cycle;
  std::vector<double> onset;
  for (std::int64_t c = 0; c < m.cycles; ++c) {
    cycle.push_back(c);
    onset.push_back(m.cycle_start_s(c) + 0.2 + 0.02 * std::sin(2.1 * static_cast<double>(c)));  // +-20 ms jitter
  }
  for (Eigen::Index i = 0; i < t.size(); ++i) {
    const std::int64_t c = m.cycle(t[i]);
    if (c < 0) continue;
    const double x = (t[i] - onset[static_cast<std::size_t>(c)]) / 0.005;  // 5 ms wide
    cl[i] = std::exp(-x * x);
  }
  Table align;
  align.add({"cycle", "1", cycle}).add({"t_s", "s", onset});
  h.store.put("events/alignment", align, {{"event", std::string("stall_onset")}});
  PhaseStage stage;
  h.run(stage, "bins = 100\nloads = [\"cl\"]\naligned_bins = 50\naligned_window_periods = [-0.1, 0.1]\n");
  const double phase_peak = h.store.get<Series>("phase/cl/mean").values.maxCoeff();
  const Eigen::VectorXd& aligned = h.store.get<Series>("phase/aligned/cl/mean").values;
  const Eigen::VectorXd& tau = h.store.get<Series>("phase/aligned/tau_s").values;
  Eigen::Index at;
  const double aligned_peak = aligned.maxCoeff(&at);
  // Aligned bins are 2 ms wide: the bump's average over the central bin pair is above 0.9.
  EXPECT_GT(aligned_peak, 0.9);
  EXPECT_LT(phase_peak, 0.5);  // smeared by the jitter
  EXPECT_NEAR(tau[at], 0.0, 0.002);
  EXPECT_EQ(std::get<std::string>(h.store.entry("phase/aligned/cl/mean").attributes.at("aligned_on")),
            "stall_onset");
}

TEST(PhaseStage, RefusesBinsThatWouldBeEmpty) {
  Harness h;
  loaded_run(h);
  PhaseStage stage;
  // 500 samples a cycle on the same phases every cycle: 3600 bins leave most empty.
  try {
    h.run(stage, "bins = 3600\nloads = [\"cl\", \"cm\"]\n");
    FAIL() << "expected an InputError";
  } catch (const InputError& e) {
    const std::string what = e.what();
    EXPECT_NE(what.find("run.toml:2"), std::string::npos) << what;
    EXPECT_NE(what.find("holds no sample"), std::string::npos) << what;
  }
}

TEST(PhaseStage, RefusesARunWithoutValidCycles) {
  Harness h;
  loaded_run(h);
  Table& cycles = h.store.get_mutable<Table>("cycles");
  for (auto& c : cycles.columns)
    if (c.name == "valid") std::get<std::vector<std::int64_t>>(c.data).assign(cycles.rows(), 0);
  PhaseStage stage;
  EXPECT_THROW(h.run(stage, "loads = [\"cl\"]\n"), InputError);
  EXPECT_THROW(Harness::configure(stage, "loads = [\"lift\"]\n"), InputError);
}

}  // namespace
}  // namespace stallscope
