// An interrupted campaign: killed mid-way (SIGKILL, or SIGINT as from Ctrl-C),
// it leaves no half archive under a final name, and the rerun reduces only
// the runs that were missing.
#include <gtest/gtest.h>
#include <signal.h>
#include <sys/wait.h>
#include <unistd.h>

#include <chrono>
#include <thread>

#include "pipeline/archive.hpp"
#include "tests/campaign/campaign_fixture.hpp"

namespace stallscope {
namespace {

namespace fs = std::filesystem;
using testing::ScratchDir;

constexpr int kRuns = 5;
// Rows per DAQ file: enough that one run takes a noticeable moment.
constexpr std::size_t kSamples = 200000;

std::vector<fs::path> archives_in(const fs::path& out) {
  std::vector<fs::path> found;
  std::error_code ec;
  for (int i = 0; i < kRuns; ++i) {
    fs::path a = out / fmt::format("r{:02d}", i) / fmt::format("r{:02d}.h5", i);
    if (fs::exists(a, ec)) found.push_back(a);
  }
  return found;
}

pid_t start_campaign(const fs::path& manifest, const fs::path& out) {
  const pid_t pid = fork();
  if (pid == 0) {
    signal(SIGINT, SIG_DFL);  // a background test runner may have it ignored, and exec keeps that
    freopen("/dev/null", "w", stdout);
    freopen("/dev/null", "w", stderr);
    execl(testing::kBinary.c_str(), "stallscope", "campaign", "-q", manifest.c_str(), "-o", out.c_str(), "-j", "1",
          static_cast<char*>(nullptr));
    _exit(127);
  }
  return pid;
}

class Interrupted : public ::testing::TestWithParam<int> {};

TEST_P(Interrupted, ACampaignKilledMidWayCompletesOnlyTheMissingRunsWhenRerun) {
  ScratchDir dir;
  auto manifest = testing::write_campaign(dir, kRuns, kSamples);
  const fs::path out = dir / "out";
  const pid_t pid = start_campaign(manifest, out);
  ASSERT_GT(pid, 0);
  // Interrupt as soon as the first archive is complete.
  const auto deadline = std::chrono::steady_clock::now() + std::chrono::seconds(120);
  while (archives_in(out).empty() && std::chrono::steady_clock::now() < deadline)
    std::this_thread::sleep_for(std::chrono::milliseconds(5));
  kill(pid, GetParam());
  int status = 0;
  waitpid(pid, &status, 0);
  ASSERT_TRUE(WIFSIGNALED(status)) << "the campaign ended before it was interrupted";
  std::this_thread::sleep_for(std::chrono::milliseconds(200));  // its reductions die with it

  const auto done = archives_in(out);
  ASSERT_GE(done.size(), 1u);
  ASSERT_LT(done.size(), static_cast<std::size_t>(kRuns)) << "every run finished before the signal";
  std::map<fs::path, std::string> created;
  for (const auto& a : done) {
    // Whatever carries a final name is a complete archive.
    EXPECT_NO_THROW(read_archive(a)) << a;
    created[a] = read_provenance(a).created_utc;
  }
  EXPECT_FALSE(fs::exists(out / "campaign.h5"));

  auto rerun = testing::run_campaign_cli(manifest, out, "-j 2");
  ASSERT_EQ(rerun.exit_code, 0) << rerun.out << rerun.err;
  int up_to_date = 0, reduced = 0;
  for (auto p = rerun.out.find(" up to date "); p != std::string::npos; p = rerun.out.find(" up to date ", p + 1))
    ++up_to_date;
  for (auto p = rerun.out.find(" reduced "); p != std::string::npos; p = rerun.out.find(" reduced ", p + 1)) ++reduced;
  EXPECT_EQ(up_to_date, static_cast<int>(done.size())) << rerun.out;
  EXPECT_EQ(reduced, kRuns - static_cast<int>(done.size())) << rerun.out;
  for (const auto& [a, utc] : created) EXPECT_EQ(read_provenance(a).created_utc, utc) << a;
  EXPECT_EQ(archives_in(out).size(), static_cast<std::size_t>(kRuns));
  for (const auto& e : fs::recursive_directory_iterator(out))
    EXPECT_NE(e.path().extension(), ".partial") << e.path();
  std::printf("[interrupted by signal %d after %zu of %d runs]\n%s", GetParam(), done.size(), kRuns,
              rerun.out.c_str());
}

INSTANTIATE_TEST_SUITE_P(Signals, Interrupted, ::testing::Values(SIGKILL, SIGINT),
                         [](const auto& info) { return info.param == SIGKILL ? "Sigkill" : "Sigint"; });

}  // namespace
}  // namespace stallscope
