// Across ranks: two MPI ranks on loopback give the same archives and the same
// summary as the local mode, with the runs shared between the ranks.
#include <gtest/gtest.h>

#include "pipeline/archive.hpp"
#include "pipeline/campaign/mpi_runs.hpp"
#include "tests/campaign/campaign_fixture.hpp"

namespace stallscope {
namespace {

namespace fs = std::filesystem;
using testing::ScratchDir;

#ifndef STALLSCOPE_MPIEXEC
#define STALLSCOPE_MPIEXEC ""
#endif

TEST(CampaignMpi, TwoRanksGiveTheSameResultsAsTheLocalMode) {
  if (!campaign::built_with_mpi() || std::string(STALLSCOPE_MPIEXEC).empty())
    GTEST_SKIP() << "built without MPI (configure with -DSTALLSCOPE_WITH_MPI=ON)";
  ScratchDir dir;
  auto manifest = testing::write_campaign(dir, 3, 20000);
  auto local = testing::run_campaign_cli(manifest, dir / "local", "-j 2");
  ASSERT_EQ(local.exit_code, 0) << local.out << local.err;
  auto mpi = testing::run_command(std::string(STALLSCOPE_MPIEXEC) + " --allow-run-as-root --oversubscribe -np 2 " +
                                  testing::shell_quote(testing::kBinary.string()) + " campaign " +
                                  testing::shell_quote(manifest.string()) + " -o " +
                                  testing::shell_quote((dir / "mpi").string()));
  ASSERT_EQ(mpi.exit_code, 0) << mpi.out << mpi.err;
  std::printf("%s%s", mpi.out.c_str(), mpi.err.c_str());
  // Rank 0 alone reports; both ranks did runs.
  EXPECT_EQ(testing::count_lines(mpi.out), testing::count_lines(local.out)) << mpi.out;
  EXPECT_NE(mpi.err.find("on rank 0"), std::string::npos) << mpi.err;
  EXPECT_NE(mpi.err.find("on rank 1"), std::string::npos) << mpi.err;

  for (const char* run : {"r00", "r01", "r02"}) {
    const std::string file = std::string(run) + "/" + run + ".h5";
    EXPECT_EQ(testing::archive_contents(dir / "local" / file), testing::archive_contents(dir / "mpi" / file)) << run;
  }
  EXPECT_EQ(testing::csv_files(dir / "local"), testing::csv_files(dir / "mpi"));

  // A second MPI campaign finds every run up to date.
  auto again = testing::run_command(std::string(STALLSCOPE_MPIEXEC) + " --allow-run-as-root --oversubscribe -np 2 " +
                                    testing::shell_quote(testing::kBinary.string()) + " campaign -q " +
                                    testing::shell_quote(manifest.string()) + " -o " +
                                    testing::shell_quote((dir / "mpi").string()));
  EXPECT_EQ(again.exit_code, 0) << again.err;
  int current = 0;
  for (auto p = again.out.find(" up to date "); p != std::string::npos; p = again.out.find(" up to date ", p + 1))
    ++current;
  EXPECT_EQ(current, 3) << again.out;
}

TEST(CampaignMpi, TheDemoCampaignOnTwoRanksGivesTheSameTablesAsLocally) {
  if (!campaign::built_with_mpi() || std::string(STALLSCOPE_MPIEXEC).empty())
    GTEST_SKIP() << "built without MPI (configure with -DSTALLSCOPE_WITH_MPI=ON)";
  ScratchDir dir;
  const fs::path manifest = testing::write_demo_campaign(dir);
  if (manifest.empty()) GTEST_SKIP() << "no demo campaign in sample_data/kestrel_ridge";
  auto local = testing::run_campaign_cli(manifest, dir / "local", "-j 2");
  ASSERT_EQ(local.exit_code, 0) << local.out << local.err;
  auto mpi = testing::run_command(std::string(STALLSCOPE_MPIEXEC) + " --allow-run-as-root --oversubscribe -np 2 " +
                                  testing::shell_quote(testing::kBinary.string()) + " campaign -q " +
                                  testing::shell_quote(manifest.string()) + " -o " +
                                  testing::shell_quote((dir / "mpi").string()));
  ASSERT_EQ(mpi.exit_code, 0) << mpi.out << mpi.err;
  EXPECT_EQ(testing::csv_files(dir / "local"), testing::csv_files(dir / "mpi"));
}

TEST(CampaignMpi, ABrokenRunUnderMpiStillEndsWithExitCode2OnEveryRank) {
  if (!campaign::built_with_mpi() || std::string(STALLSCOPE_MPIEXEC).empty())
    GTEST_SKIP() << "built without MPI (configure with -DSTALLSCOPE_WITH_MPI=ON)";
  ScratchDir dir;
  dir.write("broken.toml", "[run]\nname = \"broken\"\nchord_m = 0.2\n\n[daq]\nfile = \"raw/absent.csv\"\n\n"
                           "[daq.roles]\nangle = \"alpha_enc\"\n");
  auto manifest = testing::write_campaign(dir, 2, 50, "\n[[runs]]\nconfig = \"broken.toml\"\n");
  auto r = testing::run_command(std::string(STALLSCOPE_MPIEXEC) + " --allow-run-as-root --oversubscribe -np 2 " +
                                testing::shell_quote(testing::kBinary.string()) + " campaign -q " +
                                testing::shell_quote(manifest.string()) + " -o " +
                                testing::shell_quote((dir / "out").string()));
  EXPECT_EQ(r.exit_code, 2) << r.out << r.err;
  EXPECT_TRUE(fs::exists(dir / "out/r00/r00.h5"));
  EXPECT_TRUE(fs::exists(dir / "out/r01/r01.h5"));
  EXPECT_NE(testing::read_text(dir / "out/campaign_runs.csv").find("DAQ file not found"), std::string::npos);
}

}  // namespace
}  // namespace stallscope
