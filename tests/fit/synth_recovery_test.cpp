// End to end: a synthetic run with the realistic nuisances (noise, drifting
// zeros, tubing, scanner skew, a dead tap, per-cycle jitter of the stall angle,
// a dynamic-stall vortex and its secondary), reduced with [events] and [fit],
// must give back the generator's Goman-Khrabrov constants (tools/synth
// flow_model, scenario defaults tau1 = 2, tau2 = 3 c/U) within the stated
// tolerance, with intervals that hold them; `stallscope fit` refits the archive.
// The static polar given to the fit is the generator's own static curve, so the
// check is of the dynamic fit, the attached lag and the fit window.
#include <gtest/gtest.h>

#include <cmath>
#include <numbers>
#include <sstream>

#include "pipeline/archive.hpp"
#include "pipeline/hdf5.hpp"
#include "stages/fit/fit_command.hpp"
#include "stages/theory/goman_khrabrov.hpp"
#include "tests/support/test_support.hpp"

namespace stallscope {
namespace {

using stallscope::testing::run_stallscope;
using stallscope::testing::ScratchDir;
using stallscope::testing::shell_quote;

// Measured on seeds 1 (2 kHz), 3, 4 and 5 (1 kHz): errors of at most 0.2 c/U in
// tau1 and 0.4 c/U in tau2 (the vortex lift left after the window, the jitter
// of the stall angle smeared by the averaging, and tap integration); the
// tolerance is 2.5 times that.
constexpr double kTau1Tolerance = 0.5, kTau2Tolerance = 1.0;

// The generator's static polar and a full reduce config with [events] and [fit]
// (plus fit_keys) in dir, for the raw run in dir/raw.
void write_reduce_inputs(ScratchDir& dir, const std::string& fit_keys = "") {
  std::string polar = "alpha_deg,cn\n";
  for (double a = -4.0; a <= 26.0 + 1e-9; a += 0.5) {
    const double rad = a * std::numbers::pi / 180.0;
    const double x0 = theory::static_separation({0.3 * 180.0 / std::numbers::pi, 14.0 * std::numbers::pi / 180.0}, rad);
    polar += std::to_string(a) + "," + std::to_string(6.0 * std::pow(0.5 * (1 + std::sqrt(x0)), 2) * rad) + "\n";
  }
  dir.write("polar.csv", polar);
  dir.write("reduce.toml", std::string(R"([run]
name = "fit-synth"
airfoil = "NACA 0012"
chord_m = 0.15
span_m = 0.45
pivot_x_over_c = 0.25
[daq]
file = "raw/daq.h5"
[daq.roles]
angle = "alpha_enc"
q_ref = "q_pitot"
p_static = "p_static"
temperature = "t_air"
[calibrate]
tap_table = "raw/taps.csv"
zero_before_s = [0.0, 0.45]
zero_after_s = [4.05, 4.5]
on_zero_drift = "flag"
[calibrate.calibrations]
taps = "raw/calib_taps.toml"
encoder = "raw/calib_encoder.toml"
reference = "raw/calib_reference.toml"
temperature = "raw/calib_temperature.toml"
[tubing]
lines = "raw/lines.toml"
[conditions]
temperature_c = 20
static_pressure_pa = 101325
velocity_m_s = 25
[cp]
[loads]
[motion]
[cycles]
[phase]
[events]
static_stall_angle_deg = 14.0
[fit]
static_polar_csv = "polar.csv"
kirchhoff_angle = "alpha"   # the generator's Kirchhoff form
)") + fit_keys);
}

// The synthetic run both tests reduce (seed 3, 8 cycles at 1 kHz), with its reduce inputs.
void write_synth_run(ScratchDir& dir) {
  dir.write("scenario.toml", "[scenario]\nname = \"fit-synth\"\nseed = 3\n[motion]\ncycles = 8\n[daq]\nsample_rate_hz = 1000.0\n");
  const auto r = run_stallscope("synth " + shell_quote((dir / "scenario.toml").string()) + " -o " +
                                shell_quote((dir / "raw").string()) + " -q");
  ASSERT_EQ(r.exit_code, 0) << r.err;
  write_reduce_inputs(dir);
}

TEST(FitOnSynthRun, RecoversTheGeneratorsConstantsWithinItsWindow) {
  ScratchDir dir;
  write_synth_run(dir);
  if (HasFatalFailure()) return;
  auto r = run_stallscope("reduce " + shell_quote((dir / "reduce.toml").string()) + " -o " +
                          shell_quote((dir / "out").string()) + " -q --no-report");
  ASSERT_EQ(r.exit_code, 0) << r.err;
  const RunStore store = read_archive(dir / "out" / "fit-synth.h5");
  const Table& s = store.get<Table>("fit/summary");
  ASSERT_EQ(s.texts("status")[0], "fitted") << s.texts("reason")[0];
  const double tau1 = s.numbers("tau1_conv")[0], tau2 = s.numbers("tau2_conv")[0];
  std::printf("synthetic run: tau1 = %.3f [%.3f, %.3f], tau2 = %.3f [%.3f, %.3f] c/U (truth 2, 3)\n", tau1,
              s.numbers("tau1_ci95_lo_conv")[0], s.numbers("tau1_ci95_hi_conv")[0], tau2,
              s.numbers("tau2_ci95_lo_conv")[0], s.numbers("tau2_ci95_hi_conv")[0]);
  EXPECT_NEAR(tau1, 2.0, kTau1Tolerance);
  EXPECT_NEAR(tau2, 3.0, kTau2Tolerance);
  EXPECT_LE(s.numbers("tau1_ci95_lo_conv")[0], 2.0);
  EXPECT_GE(s.numbers("tau1_ci95_hi_conv")[0], 2.0);
  EXPECT_LE(s.numbers("tau2_ci95_lo_conv")[0], 3.0);
  EXPECT_GE(s.numbers("tau2_ci95_hi_conv")[0], 3.0);
  EXPECT_TRUE(std::filesystem::exists(dir / "out" / "fit_summary.csv"));
  EXPECT_TRUE(std::filesystem::exists(dir / "out" / "fit_onset_per_cycle.csv"));
  // The onset exports: every cycle's state at stall onset, and the mean critical Cn.
  const h5::File file = h5::File::open_read(dir / "out" / "fit-synth.h5");
  const auto critical = h5::read_attribute(file.id(), "fit/onset", "critical_cn_mean");
  ASSERT_TRUE(critical && std::holds_alternative<double>(*critical));
  EXPECT_GT(std::get<double>(*critical), 1.0);
  EXPECT_EQ(store.get<Table>("fit/onset").rows(), 8u);

  // The report draws the overlay and states the constants.
  r = run_stallscope("report " + shell_quote((dir / "out" / "fit-synth.h5").string()));
  ASSERT_EQ(r.exit_code, 0) << r.err;
  const std::string page = stallscope::testing::read_text(dir / "out" / "report" / "index.html");
  EXPECT_NE(page.find("<section id=\"fit\">"), std::string::npos);
  EXPECT_NE(page.find("data-key=\"fit/summary/tau1_conv\""), std::string::npos);
  EXPECT_TRUE(std::filesystem::exists(dir / "out" / "report" / "fit_loop.svg"));

  // Refit without re-reducing: the archive carries its static polar; the same
  // settings give the same constants. Two archives add the shared fit.
  dir.write("fit.toml", "[fit]\nkirchhoff_angle = \"alpha\"\n");
  const std::string archive = shell_quote((dir / "out" / "fit-synth.h5").string());
  r = run_stallscope("fit " + archive + " " + archive + " --config " + shell_quote((dir / "fit.toml").string()) +
                     " -o " + shell_quote((dir / "refit").string()));
  ASSERT_EQ(r.exit_code, 0) << r.err;
  EXPECT_NE(r.out.find("shared by 2 runs"), std::string::npos) << r.out;
  const std::string campaign = stallscope::testing::read_text(dir / "refit" / "campaign_fit.csv");
  EXPECT_NE(campaign.find("\nshared,fitted"), std::string::npos) << campaign;
  const std::string again = stallscope::testing::read_text(dir / "refit" / "fit-synth" / "fit_summary.csv");
  EXPECT_NE(again.find(std::to_string(tau1).substr(0, 6)), std::string::npos) << again.substr(0, 400);

  // What `stallscope campaign` calls at its end: archives without a fit are skipped.
  std::ostringstream lines;
  const auto files = fit::fit_campaign({dir / "out" / "fit-synth.h5", dir / "raw" / "truth.h5", dir / "out" / "fit-synth.h5"},
                                       dir / "campaign_fit", 1, lines);
  ASSERT_EQ(files.size(), 2u) << lines.str();
  for (const auto& f : files) EXPECT_TRUE(std::filesystem::exists(f)) << f;
  EXPECT_TRUE(fit::fit_campaign({dir / "out" / "fit-synth.h5"}, dir / "one", 1, lines).empty());
  // It takes each run's fit as the reduction stored it: a new fit with the
  // archive's own options gives the same files, to the byte; so do two
  // threads for the bootstrap over (three) runs.
  const auto out = dir / "out" / "fit-synth.h5";
  fit::fit_campaign({out, out, out}, dir / "three", 2, lines);
  r = run_stallscope("fit " + archive + " " + archive + " " + archive + " -o " + shell_quote((dir / "refit_own").string()));
  ASSERT_EQ(r.exit_code, 0) << r.err;
  for (const char* file : {"campaign_fit.csv", "campaign_trend.csv", "fit-synth/fit_summary.csv", "fit-synth/fit_loop.csv"})
    EXPECT_EQ(stallscope::testing::read_text(dir / "three" / file),
              stallscope::testing::read_text(dir / "refit_own" / file))
        << file;
  EXPECT_NE(stallscope::testing::read_text(dir / "three" / "campaign_fit.csv").find("shared,fitted"), std::string::npos);

  // Without --config the archive's own [fit] options (its provenance) are used.
  r = run_stallscope("fit " + archive + " -o " + shell_quote((dir / "refit_default").string()) + " --bootstrap 0");
  ASSERT_EQ(r.exit_code, 0) << r.err;
  const std::string own = stallscope::testing::read_text(dir / "refit_default" / "fit-synth" / "fit_summary.csv");
  EXPECT_NE(own.find(std::to_string(tau1).substr(0, 6)), std::string::npos) << own.substr(0, 400);

  // A missing polar for an archive that has none is one clear line, exit 2.
  r = run_stallscope("fit " + shell_quote((dir / "raw" / "truth.h5").string()) + " -o " +
                     shell_quote((dir / "bad").string()));
  EXPECT_EQ(r.exit_code, 2) << r.out << r.err;
}

// rms of the residual over the whole loop (fit/loop), what the fitted model
// predicts where it was and was not fitted.
double whole_loop_rms(const RunStore& store) {
  const auto& res = store.get<Table>("fit/loop").numbers("residual");
  double sum = 0;
  for (double v : res) sum += v * v;
  return std::sqrt(sum / double(res.size()));
}

TEST(FitOnSynthRun, TheVortexLiftTermFollowsTheOvershootAndKeepsTheConstants) {
  // The same synthetic run (seed 3) reduced with the plain fit (window without
  // the overshoot) and with vortex_lift = true (the whole loop). The generator's
  // vortex is a convected suction bump, not the Leishman-Beddoes form, so its
  // T_v, T_vl have no truth; tau1, tau2 must stay within the tolerance above.
  ScratchDir dir;
  write_synth_run(dir);
  if (HasFatalFailure()) return;
  auto r = run_stallscope("reduce " + shell_quote((dir / "reduce.toml").string()) + " -o " +
                          shell_quote((dir / "plain").string()) + " -q --no-report");
  ASSERT_EQ(r.exit_code, 0) << r.err;
  write_reduce_inputs(dir, "vortex_lift = true\n");
  r = run_stallscope("reduce " + shell_quote((dir / "reduce.toml").string()) + " -o " +
                     shell_quote((dir / "vortex").string()) + " -q");
  ASSERT_EQ(r.exit_code, 0) << r.err;
  const RunStore plain = read_archive(dir / "plain" / "fit-synth.h5");
  const RunStore vortex = read_archive(dir / "vortex" / "fit-synth.h5");
  const Table& s = vortex.get<Table>("fit/summary");
  ASSERT_EQ(s.texts("status")[0], "fitted") << s.texts("reason")[0];
  const double tau1 = s.numbers("tau1_conv")[0], tau2 = s.numbers("tau2_conv")[0];
  const double rms_plain = whole_loop_rms(plain), rms_vortex = whole_loop_rms(vortex);
  std::printf("synthetic run with vortex lift: tau1 = %.3f [%.3f, %.3f], tau2 = %.3f [%.3f, %.3f] c/U (truth 2, 3), "
              "T_v = %.3f [%.3f, %.3f], T_vl = %.3f [%.3f, %.3f] c/U; whole-loop rms %.4f (plain fit %.4f)\n",
              tau1, s.numbers("tau1_ci95_lo_conv")[0], s.numbers("tau1_ci95_hi_conv")[0], tau2,
              s.numbers("tau2_ci95_lo_conv")[0], s.numbers("tau2_ci95_hi_conv")[0], s.numbers("t_v_conv")[0],
              s.numbers("t_v_ci95_lo_conv")[0], s.numbers("t_v_ci95_hi_conv")[0], s.numbers("t_vl_conv")[0],
              s.numbers("t_vl_ci95_lo_conv")[0], s.numbers("t_vl_ci95_hi_conv")[0], rms_vortex, rms_plain);
  EXPECT_NEAR(tau1, 2.0, kTau1Tolerance);
  EXPECT_NEAR(tau2, 3.0, kTau2Tolerance);
  EXPECT_LT(rms_vortex, 0.8 * rms_plain);
  EXPECT_TRUE(std::isfinite(s.numbers("t_v_s")[0]) && std::isfinite(s.numbers("t_vl_s")[0]));
  const std::string csv = stallscope::testing::read_text(dir / "vortex" / "fit_summary.csv");
  EXPECT_NE(csv.find("t_vl_ci95_hi_s"), std::string::npos);
  EXPECT_NE(stallscope::testing::read_text(dir / "vortex" / "fit_loop.csv").find("cn_vortex"), std::string::npos);
  const std::string page = stallscope::testing::read_text(dir / "vortex" / "report" / "index.html");
  EXPECT_NE(page.find("data-key=\"fit/summary/t_vl_conv\""), std::string::npos);

  // `stallscope fit` repeats the archive's own vortex-lift fit; a bad bound in
  // --config is one line naming the file and key, exit 2, and nothing written.
  const std::string archive = shell_quote((dir / "vortex" / "fit-synth.h5").string());
  r = run_stallscope("fit " + archive + " " + archive + " -o " + shell_quote((dir / "refit").string()));
  ASSERT_EQ(r.exit_code, 0) << r.err;
  EXPECT_NE(r.out.find("vortex lift: T_v = "), std::string::npos) << r.out;
  EXPECT_EQ(r.out.find("not fitted"), std::string::npos) << r.out;
  // The campaign's shared fit, from the stored vortex-lift fits, is the same to the byte.
  std::ostringstream lines;
  fit::fit_campaign({dir / "vortex" / "fit-synth.h5", dir / "vortex" / "fit-synth.h5"}, dir / "campaign_fit", 1, lines);
  for (const char* file : {"campaign_fit.csv", "campaign_trend.csv", "fit-synth/fit_summary.csv"})
    EXPECT_EQ(stallscope::testing::read_text(dir / "campaign_fit" / file),
              stallscope::testing::read_text(dir / "refit" / file))
        << file;
  dir.write("bad.toml", "[fit]\nvortex_lift = true\nt_vl_bounds_conv = [4.0, 2.0]\n");
  r = run_stallscope("fit " + archive + " --config " + shell_quote((dir / "bad.toml").string()) + " -o " +
                     shell_quote((dir / "bad").string()));
  EXPECT_EQ(r.exit_code, 2) << r.out << r.err;
  EXPECT_NE(r.err.find("bad.toml"), std::string::npos) << r.err;
  EXPECT_NE(r.err.find("t_vl_bounds_conv"), std::string::npos) << r.err;
  EXPECT_FALSE(std::filesystem::exists(dir / "bad"));
}

}  // namespace
}  // namespace stallscope
