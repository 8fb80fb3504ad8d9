// `stallscope calib transducer`: least-squares calibrations from a pressure sweep.
#include "calib/transducers/sweep_fit.hpp"

#include <gtest/gtest.h>

#include <cmath>
#include <fmt/format.h>

#include "calib/transducers/calibration_file.hpp"
#include "pipeline/errors.hpp"
#include "tests/support/test_support.hpp"

namespace stallscope::calib {
namespace {

using testing::ScratchDir;

// Two channels: s01 exactly linear, s02 with a quadratic term and a scatter of
// +-0.5 Pa-equivalent in its volts; 11 steps from -500 to 500 Pa.
std::string sweep_text() {
  std::string s = "# invented sweep\napplied_pa,s01,s02\n";
  for (int i = 0; i <= 10; ++i) {
    const double p = -500 + 100 * i;
    const double v1 = (p - 3.0) / 1000.0;
    const double v2 = 0.0021 * std::sqrt(1.0 + p / 600.0) * 1000 / 1.0 + ((i % 2) ? 1 : -1) * 0.5 / 1200.0;
    s += fmt::format("{},{:.17g},{:.17g}\n", p, v1, v2);
  }
  return s;
}

TEST(SweepFit, RecoversAnExactLinearTransducer) {
  const Sweep sweep = parse_sweep(sweep_text(), "sweep.csv");
  const auto fits = fit_sweep(sweep, 1, 1.0);
  EXPECT_NEAR(fits[0].coefficients[0], 3.0, 1e-9);
  EXPECT_NEAR(fits[0].coefficients[1], 1000.0, 1e-9);
  EXPECT_LT(fits[0].rms_residual_pa, 1e-9);
  EXPECT_FALSE(fits[0].poor);
  EXPECT_TRUE(fits[1].poor);  // a curved transducer does not fit a line to 1 Pa
}

// Reference: numpy.polyfit (least squares on the same points), Debian's python3.
TEST(SweepFit, MatchesNumpyPolyfitOnACurvedTransducer) {
  ScratchDir dir;
  const auto csv = dir.write("sweep.csv", sweep_text());
  const auto script = dir.write("fit.py",
                                "import sys, numpy as np\n"
                                "d = np.loadtxt(sys.argv[1], delimiter=',', skiprows=2)\n"
                                "c = np.polyfit(d[:, 2], d[:, 0], 2)[::-1]\n"
                                "r = np.polyval(c[::-1], d[:, 2]) - d[:, 0]\n"
                                "print(' '.join('%.17g' % v for v in list(c) + [np.sqrt(np.mean(r * r))]))\n");
  const auto py = testing::run_python(script, testing::shell_quote(csv.string()));
  ASSERT_EQ(py.exit_code, 0) << py.err;
  std::istringstream in(py.out);
  double c0, c1, c2, rms;
  in >> c0 >> c1 >> c2 >> rms;
  const auto fits = fit_sweep(read_sweep(csv), 2, 1.0);
  EXPECT_NEAR(fits[1].coefficients[0], c0, 1e-7 * std::abs(c0) + 1e-9);
  EXPECT_NEAR(fits[1].coefficients[1], c1, 1e-7 * std::abs(c1));
  EXPECT_NEAR(fits[1].coefficients[2], c2, 1e-7 * std::abs(c2));
  EXPECT_NEAR(fits[1].rms_residual_pa, rms, 1e-7 * rms + 1e-9);
}

TEST(SweepFit, CommandWritesACalibrationTheStagesRead) {
  ScratchDir dir;
  const auto csv = dir.write("scanner-B.csv", sweep_text());
  const auto out = dir / "scanner-B.toml";
  const auto r = testing::run_stallscope("calib transducer " + testing::shell_quote(csv.string()) + " -o " +
                                         testing::shell_quote(out.string()) + " --date 2026-11-30");
  ASSERT_EQ(r.exit_code, 0) << r.err;
  EXPECT_NE(r.out.find("POOR"), std::string::npos) << r.out;  // s02 flagged
  EXPECT_NE(r.out.find("1 of 2 channels"), std::string::npos) << r.out;
  const CalibrationFile f = read_calibration_file(out);
  EXPECT_EQ(f.id, "scanner-B");
  EXPECT_EQ(f.date, "2026-11-30");
  EXPECT_NEAR(f.channels.at("s01").coefficients[1], 1000.0, 1e-9);
  EXPECT_GE(f.channels.at("s02").residual, 1.0);
  EXPECT_NE(testing::read_text(out).find("# poor fit: s02"), std::string::npos);
  // Not overwritten without --force.
  const auto again = testing::run_stallscope("calib transducer " + testing::shell_quote(csv.string()) + " -o " +
                                             testing::shell_quote(out.string()));
  EXPECT_EQ(again.exit_code, 2);
}

TEST(SweepFit, BadSweepsExitWithCodeTwoNamingTheLine) {
  ScratchDir dir;
  const auto csv = dir.write("bad.csv", "applied_pa,s01\n0,0.1\n100,abc\n");
  const auto r = testing::run_stallscope("calib transducer " + testing::shell_quote(csv.string()) + " -o " +
                                         testing::shell_quote((dir / "x.toml").string()));
  EXPECT_EQ(r.exit_code, 2);
  EXPECT_NE(r.err.find("bad.csv:3"), std::string::npos) << r.err;
  EXPECT_FALSE(std::filesystem::exists(dir / "x.toml"));
  EXPECT_THROW(fit_sweep(parse_sweep("applied_pa,s01\n0,0.1\n100,0.1\n200,0.1\n", "flat.csv"), 1, 1.0), InputError);
  EXPECT_THROW(fit_sweep(parse_sweep("applied_pa,s01\n0,0.1\n100,0.2\n", "short.csv"), 1, 1.0), InputError);
  EXPECT_THROW(parse_sweep("pressure,s01\n", "h.csv"), InputError);
}

}  // namespace
}  // namespace stallscope::calib
