// Runs at once and threads per run: the cores are filled, never oversubscribed.
#include <gtest/gtest.h>

#include "pipeline/campaign/parallelism.hpp"

namespace stallscope::campaign {
namespace {

TEST(Parallelism, ByDefaultOneRunPerCoreEachSingleThreaded) {
  Parallelism p = plan_parallelism(0, 100, 8, 1);
  EXPECT_EQ(p.concurrent_runs, 8);
  EXPECT_EQ(p.threads_per_run, 1);
}

TEST(Parallelism, FewerRunsThanCoresGiveEachRunMoreThreads) {
  Parallelism p = plan_parallelism(0, 3, 8, 1);
  EXPECT_EQ(p.concurrent_runs, 3);
  EXPECT_EQ(p.threads_per_run, 2);  // 3 x 2 <= 8: not oversubscribed
  Parallelism one = plan_parallelism(0, 1, 8, 1);
  EXPECT_EQ(one.concurrent_runs, 1);
  EXPECT_EQ(one.threads_per_run, 8);
}

TEST(Parallelism, TheUsersJobCountIsKeptAndThreadsShrinkToFit) {
  EXPECT_EQ(plan_parallelism(1, 10, 2, 1).threads_per_run, 2);
  EXPECT_EQ(plan_parallelism(2, 10, 2, 1).threads_per_run, 1);
  Parallelism many = plan_parallelism(6, 10, 2, 1);
  EXPECT_EQ(many.concurrent_runs, 6);
  EXPECT_EQ(many.threads_per_run, 1);
}

TEST(Parallelism, RanksThatShareANodeShareItsCores) {
  Parallelism p = plan_parallelism(0, 10, 8, 2);
  EXPECT_EQ(p.concurrent_runs, 4);
  EXPECT_EQ(p.threads_per_run, 1);
  Parallelism two = plan_parallelism(0, 10, 2, 2);
  EXPECT_EQ(two.concurrent_runs, 1);
  EXPECT_EQ(two.threads_per_run, 1);
}

TEST(Parallelism, TheMachineHasAtLeastOneCore) { EXPECT_GE(available_cores(), 1); }

}  // namespace
}  // namespace stallscope::campaign
