// `stallscope reduce` through the whole pressure path: daq, calibrate, tubing,
// conditions, cp, loads and wall, into an archive.
#include <gtest/gtest.h>

#include "pipeline/hdf5.hpp"
#include "tests/pressure/pressure_fixture.hpp"

namespace stallscope {
namespace {

using testing::PressureRun;

std::string config(const PressureRun& run, const std::string& extra = "") {
  return "[run]\nname = \"pressure-e2e\"\nairfoil = \"NACA 0012\"\nchord_m = 0.3\nspan_m = 1.0\n"
         "[daq]\nfile = \"daq.csv\"\n[daq.roles]\nangle = \"alpha_enc\"\nq_ref = \"q_pitot\"\n"
         "[conditions]\ndynamic_pressure_pa = 400.0\n"
         "[tubing]\n[cp]\n[loads]\n[wall]\ntunnel_height_m = 1.5\nattached_alpha_max_deg = 12.0\n" +
         extra + run.config_text;
}

TEST(Reduce, WritesCorrectedAndUncorrectedLoadsAndTheTapTable) {
  PressureRun run;
  run.duration = 4.0;
  run.write();
  run.write_daq_csv("daq.csv");
  const auto cfg = run.dir.write("run.toml", config(run));
  const auto out = run.dir / "out";
  const auto r = testing::run_stallscope("reduce " + testing::shell_quote(cfg.string()) + " -o " +
                                         testing::shell_quote(out.string()) + " --quiet");
  ASSERT_EQ(r.exit_code, 0) << r.err << r.out;
  h5::File f = h5::File::open_read(out / "pressure-e2e.h5");
  const auto cl = h5::read_numbers(f.id(), "loads/cl", "archive");
  const auto cl_u = h5::read_numbers(f.id(), "loads/uncorrected/cl", "archive");
  ASSERT_EQ(cl.size(), cl_u.size());
  EXPECT_LT(cl[10], cl_u[10]);  // blockage and curvature lower Cl while attached
  EXPECT_TRUE(h5::exists(f.id(), "pressure/taps"));
  EXPECT_TRUE(h5::exists(f.id(), "pressure/tubing/taps"));
  EXPECT_TRUE(h5::exists(f.id(), "pressure/cp"));
}

TEST(Reduce, BadCalibrationExitsWithCodeTwoNamingTheFile) {
  PressureRun run;
  run.duration = 3.0;
  run.write();
  run.write_daq_csv("daq.csv");
  run.dir.write("cal/taps.toml", run.tap_calibration(1000, "[channels.p77]\ncoefficients = [0.0, 1000.0]\n"));
  const auto cfg = run.dir.write("run.toml", config(run));
  const auto r = testing::run_stallscope("reduce " + testing::shell_quote(cfg.string()) + " -o " +
                                         testing::shell_quote((run.dir / "out").string()) + " --quiet");
  EXPECT_EQ(r.exit_code, 2) << r.err;
  EXPECT_NE(r.err.find("taps.toml:"), std::string::npos) << r.err;
  EXPECT_NE(r.err.find("channels.p77"), std::string::npos) << r.err;
  EXPECT_FALSE(std::filesystem::exists(run.dir / "out" / "pressure-e2e.h5"));
}

}  // namespace
}  // namespace stallscope
