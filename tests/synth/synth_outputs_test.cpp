// The optional outputs of a synthetic run: PIV as text frames, measured tubing
// lines, the truth rows of the criteria events, and the run config beside it.
#include <gtest/gtest.h>
#include <unistd.h>

#include <cmath>
#include <fstream>
#include <map>
#include <numbers>
#include <set>
#include <sstream>
#include <toml++/toml.h>

#include "calib/lines/lines_file.hpp"
#include "calib/tubing/bergh_tijdeman.hpp"
#include "stages/piv/frame_source.hpp"
#include "stages/theory/goman_khrabrov.hpp"
#include "tools/synth/synth_run.hpp"
#include "tests/support/test_support.hpp"
#include "tools/synth/truth_criteria.hpp"

namespace stallscope::synth {
namespace {

namespace fs = std::filesystem;
constexpr double kDeg = std::numbers::pi / 180.0;

fs::path write_run(const std::string& name, const std::string& scenario_text) {
  const fs::path dir = fs::temp_directory_path() / ("stallscope_synth_out_" + name + "_" + std::to_string(::getpid()));
  fs::remove_all(dir);
  fs::create_directories(dir);
  std::ofstream(dir / "scenario.toml") << scenario_text;
  Progress quiet(Progress::Mode::kQuiet);
  write_synthetic_run(load_scenario(dir / "scenario.toml"), dir / "run", false, quiet);
  return dir / "run";
}

using testing::read_text;

const std::string kPiv = "[scenario]\nseed = 11\n[motion]\ncycles = 2\n[piv]\nenabled = true\nnx = 20\nny = 12\n"
                         "rate_hz = 200\n";

TEST(SynthOutputs, TextFramesReadBackAsTheSameFramesAsTheHdf5Stack) {
  const fs::path h = write_run("piv_h5", kPiv), t = write_run("piv_text", kPiv + "format = \"text\"\n");
  ASSERT_TRUE(fs::is_directory(t / "piv"));
  EXPECT_FALSE(fs::exists(t / "piv.h5"));
  // The same DAQ record: only the PIV layout differs.
  EXPECT_EQ(read_text(h / "truth_events.csv"), read_text(t / "truth_events.csv"));
  const auto a = piv::open_frame_source(h / "piv.h5", "m/s"), b = piv::open_frame_source(t / "piv", "m/s");
  ASSERT_EQ(a->frames(), b->frames());
  ASSERT_GT(a->frames(), 50u);
  EXPECT_EQ(a->grid().x_m, b->grid().x_m);
  EXPECT_EQ(a->grid().y_m, b->grid().y_m);
  EXPECT_EQ(a->camera_time_s(), b->camera_time_s());
  std::vector<piv::Frame> fa, fb;
  a->read(0, a->frames(), fa);
  b->read(0, b->frames(), fb);
  for (std::size_t k = 0; k < fa.size(); ++k) {
    ASSERT_EQ(fa[k].u, fb[k].u) << "frame " << k;
    ASSERT_EQ(fa[k].v, fb[k].v) << "frame " << k;
    ASSERT_EQ(fa[k].valid, fb[k].valid) << "frame " << k;
  }
  // The run config names the folder and its units.
  const toml::table config = toml::parse_file((t / "reduce.toml").string());
  EXPECT_EQ(config["piv"]["file"].value_or(std::string()), "piv");
  EXPECT_EQ(config["piv"]["text_units"].value_or(std::string()), "m/s");
}

TEST(SynthOutputs, MeasuredLinesScatterAboutTheTrueLinesBerghTijdemanResponse) {
  const fs::path run = write_run("lines", "[scenario]\nseed = 3\n[motion]\ncycles = 1\n[lines]\n"
                                          "measured_taps = [\"p12\", \"p15\"]\nmeasured_gain_scatter = 0.02\n"
                                          "measured_phase_scatter_deg = 1.0\n");
  const calib::LinesFile lines = calib::read_lines_file(run / "lines.toml");
  ASSERT_TRUE(lines.lines.count("measured_p12"));
  ASSERT_TRUE(lines.lines.count("measured_p15"));
  EXPECT_NE(read_text(run / "taps.csv").find(",measured_p15,"), std::string::npos);
  // The true line: the table's 0.35 m, 1 mm line, 10 % longer (the realistic preset's length error).
  const calib::AirProperties air(293.15, 101325.0);
  const std::vector<calib::TubeSegment> line = {{0.35 * 1.1, 0.5e-3, 1e-8}};
  const calib::MeasuredResponse m = calib::read_measured_response(lines.lines.at("measured_p15").measured);
  ASSERT_EQ(m.frequency_hz.size(), 200u);  // every 5 Hz to the 1 kHz Nyquist frequency
  EXPECT_DOUBLE_EQ(m.max_frequency_hz(), 1000.0);
  double sum = 0, sum2 = 0, phase2 = 0;
  for (std::size_t i = 0; i < m.frequency_hz.size(); ++i) {
    const std::complex<double> h = calib::line_response(line, air, m.frequency_hz[i]);
    const double rel = m.gain[i] / std::abs(h) - 1;
    sum += rel;
    sum2 += rel * rel;
    const double dphi = std::remainder(m.phase_deg[i] - std::arg(h) / kDeg, 360.0);
    phase2 += dphi * dphi;
  }
  const double n = static_cast<double>(m.frequency_hz.size());
  EXPECT_NEAR(sum / n, 0.0, 0.006);                 // 3 standard errors of 0.02 / sqrt(200)
  EXPECT_NEAR(std::sqrt(sum2 / n), 0.02, 0.004);    // the stated scatter
  EXPECT_NEAR(std::sqrt(phase2 / n), 1.0, 0.2);
  // The line resonates (gain above 1 somewhere): the measured curve is not a flat stand-in.
  EXPECT_GT(*std::max_element(m.gain.begin(), m.gain.end()), 1.2);
}

TEST(SynthOutputs, TheStaticStallAngleIsTheMaximumOfTheStaticKirchhoffCurve) {
  Scenario s;
  const double a = static_stall_angle_deg(s);
  const theory::SeparationFit fit{s.separation_steepness_per_deg / kDeg, s.alpha_star_deg * kDeg};
  auto cn = [&](double deg) {
    // Kirchhoff, C_N = C_Nalpha ((1 + sqrt x)/2)^2 alpha (Leishman & Beddoes 1989), the form the generator uses.
    return s.lift_slope_per_rad * std::pow(0.5 * (1 + std::sqrt(theory::static_separation(fit, deg * kDeg))), 2) *
           deg * kDeg;
  };
  // A maximum: the curve falls on both sides.
  EXPECT_GT(a, 5.0);
  EXPECT_LT(a, s.alpha_star_deg);
  for (double d : {0.01, 0.1, 1.0}) {
    EXPECT_GT(cn(a), cn(a - d)) << d;
    EXPECT_GT(cn(a), cn(a + d)) << d;
  }
}

TEST(SynthOutputs, TruthHoldsTheCriteriaEventsAndTheRunConfigReducesEveryStage) {
  const fs::path run = write_run("criteria", "[scenario]\npreset = \"clean\"\n[motion]\ncycles = 8\n"
                                             "[piv]\nenabled = true\nnx = 20\nny = 12\nunits = \"px/frame\"\n");
  std::ifstream in(run / "truth_events.csv");
  std::string line;
  std::getline(in, line);
  std::map<std::string, int> ok;
  std::set<int> cycles;
  while (std::getline(in, line)) {
    std::stringstream row(line);
    std::string cycle, event, status;
    std::getline(row, cycle, ',');
    std::getline(row, event, ',');
    std::getline(row, status, ',');
    cycles.insert(std::stoi(cycle));
    if (status == "ok") ++ok[event];
  }
  EXPECT_EQ(cycles, (std::set<int>{0, 1, 2, 3, 4, 5, 6, 7}));  // numbered as the pipeline numbers them
  for (const char* e : {"static_stall_crossing", "moment_stall", "le_suction_collapse", "stall_onset"})
    EXPECT_EQ(ok[e], 8) << e;
  const toml::table config = toml::parse_file((run / "reduce.toml").string());
  for (const char* stage : {"calibrate", "tubing", "cp", "loads", "motion", "cycles", "phase", "events", "piv",
                            "vortex"})
    EXPECT_TRUE(config.contains(stage)) << stage;
  EXPECT_NEAR(config["events"]["static_stall_angle_deg"].value_or(0.0), static_stall_angle_deg(Scenario{}), 1e-6);
  EXPECT_DOUBLE_EQ(config["piv"]["metres_per_pixel"].value_or(0.0), 1.0 / 4000.0);
  EXPECT_DOUBLE_EQ(config["piv"]["pulse_separation_s"].value_or(0.0), 60e-6);
  EXPECT_EQ(config["piv"]["pivot_x_m"].value_or(1.0), 0.0);
  // It reduces end to end.
  const auto reduced = testing::run_stallscope("reduce " + testing::shell_quote((run / "reduce.toml").string()) +
                                               " -o " + testing::shell_quote((run / "out").string()) + " --quiet");
  EXPECT_EQ(reduced.exit_code, 0) << reduced.err;
  EXPECT_TRUE(fs::exists(run / "out" / "events_per_cycle.csv"));
}

}  // namespace
}  // namespace stallscope::synth
