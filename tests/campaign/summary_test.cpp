// The campaign summary, built from archives written by hand: a row per run,
// the event statistics beside each run's conditions, and the stall table a
// model fit consumes.
#include <gtest/gtest.h>

#include <cmath>
#include <numbers>

#include "pipeline/archive.hpp"
#include "pipeline/campaign/summary.hpp"
#include "pipeline/campaign/summary_files.hpp"
#include "pipeline/campaign/table_builder.hpp"
#include "tests/campaign/campaign_fixture.hpp"

namespace stallscope::campaign {
namespace {

namespace fs = std::filesystem;
using testing::ScratchDir;

// Rounding only: the rate is sampled at t = 0, where cos(w t) = 1 exactly.
constexpr double kRoundingTolerance = 1e-12;

constexpr double kChord = 0.15, kVelocity = 25.0, kFrequency = 2.0, kAmplitudeDeg = 8.0;

void write_run(const JobSettings& settings, const std::string& name, bool with_motion, double shift = 0.0) {
  RunStore s;
  s.put("run/name", Text{name});
  s.put("run/airfoil", Text{"KR-12 section"});
  s.put("run/chord_m", Scalar{kChord, "m"});
  s.put("run/U_inf_m_s", Scalar{kVelocity, "m/s"});
  s.put("run/Re", Scalar{2.5e5, "1"});
  s.put("run/Mach", Scalar{0.073, "1"});
  if (with_motion) {
    const double omega = 2 * std::numbers::pi * kFrequency;
    s.put("run/motion", Text{"sine"});
    s.put("run/alpha_mean_deg", Scalar{10.0, "deg"});
    s.put("run/alpha_amp_deg", Scalar{kAmplitudeDeg, "deg"});
    s.put("run/freq_hz", Scalar{kFrequency, "Hz"});
    s.put("run/k", Scalar{omega * kChord / (2 * kVelocity), "1"});
    Eigen::VectorXd rate(2001);
    for (Eigen::Index i = 0; i < rate.size(); ++i) rate[i] = kAmplitudeDeg * omega * std::cos(omega * 0.0005 * i);
    s.put("motion/alpha_rate_deg_s", Series{rate, "deg/s"});
    Table events;
    events.add({"event", "", std::vector<std::string>{"stall_onset", "stall_delay", "lift_peak"}})
        .add({"quantity", "", std::vector<std::string>{"alpha_deg", "t_conv", "alpha_deg"}})
        .add({"units", "", std::vector<std::string>{"deg", "1", "deg"}})
        .add({"n", "1", std::vector<std::int64_t>{20, 20, 19}})
        .add({"mean", "", std::vector<double>{17.5 + shift, 1.25, 18.0}})
        .add({"std", "", std::vector<double>{0.4, 0.1, 0.5}})
        .add({"ci95_lo", "", std::vector<double>{17.3 + shift, 1.2, 17.8}})
        .add({"ci95_hi", "", std::vector<double>{17.7 + shift, 1.3, 18.2}});
    s.put("events/summary", events);
    Table cycles;
    cycles.add({"cycle", "1", std::vector<std::int64_t>{0, 1, 2}}).add({"valid", "1", std::vector<std::int64_t>{1, 0, 1}});
    s.put("cycles", cycles);
  }
  write_archive(s, Provenance::start("test"), ArchiveTarget{settings.output_directory / name, name, false});
}

CampaignRun run_named(const std::string& name, const std::string& repeat_of = "") {
  CampaignRun r;
  r.name = name;
  r.repeat_of = repeat_of;
  return r;
}

double at(const Table& t, const std::string& column, std::size_t row) { return t.numbers(column)[row]; }

class SummaryTest : public ::testing::Test {
 protected:
  void SetUp() override {
    settings_.output_directory = dir_.path();
    write_run(settings_, "sine", true);
    write_run(settings_, "still", false);
    manifest_.name = "kr12";
    manifest_.path = dir_ / "campaign.toml";
    manifest_.text = "# manifest\n";
    manifest_.runs = {run_named("sine"), run_named("still", "sine"), run_named("broken")};
    outcomes_.resize(3);
    outcomes_[0] = {0, RunOutcome::State::kReduced, 1.0, "", 0};
    outcomes_[1] = {1, RunOutcome::State::kUpToDate, 0.1, "", 0};
    outcomes_[2] = {2, RunOutcome::State::kFailed, 0.1, "raw/broken.csv: DAQ file not found", 0};
  }
  ScratchDir dir_;
  JobSettings settings_;
  Manifest manifest_;
  std::vector<RunOutcome> outcomes_;
};

TEST_F(SummaryTest, TheReducedPitchRateOfASineIsAmplitudeTimesReducedFrequency) {
  // alpha = a0 + a1 sin(w t): max alpha rate = a1 w, so r = a1 w c / (2U) = a1 k
  // with k = w c / (2U) (definitions: /work/shared/reference/published-checks.md,
  // k [V] and r [P]); analytic.
  RunDigest d = read_digest(dir_ / "sine" / "sine.h5");
  const double k = 2 * std::numbers::pi * kFrequency * kChord / (2 * kVelocity);
  EXPECT_NEAR(reduced_pitch_rate(d), kAmplitudeDeg * std::numbers::pi / 180.0 * k, kRoundingTolerance);
  EXPECT_TRUE(std::isnan(reduced_pitch_rate(read_digest(dir_ / "still" / "still.h5"))));
}

TEST_F(SummaryTest, EveryRunHasARowWithItsConditionsStatusAndError) {
  CampaignSummary s = summarise(manifest_, outcomes_, settings_);
  EXPECT_EQ(s.failed, 1u);
  const Table& runs = s.runs;
  ASSERT_EQ(runs.rows(), 3u);
  EXPECT_EQ(runs.texts("run"), (std::vector<std::string>{"sine", "still", "broken"}));
  EXPECT_EQ(runs.texts("status"), (std::vector<std::string>{"ok", "ok", "failed"}));
  EXPECT_EQ(runs.texts("error")[2], "raw/broken.csv: DAQ file not found");
  EXPECT_EQ(runs.texts("repeat_of")[1], "sine");
  EXPECT_EQ(runs.texts("archive")[0], "sine/sine.h5");
  EXPECT_EQ(runs.texts("airfoil")[0], "KR-12 section");
  EXPECT_DOUBLE_EQ(at(runs, "U_inf_m_s", 1), kVelocity);
  EXPECT_DOUBLE_EQ(at(runs, "k", 0), 2 * std::numbers::pi * kFrequency * kChord / (2 * kVelocity));
  EXPECT_TRUE(std::isnan(at(runs, "k", 1)));
  EXPECT_TRUE(std::isnan(at(runs, "Re", 2)));
  EXPECT_DOUBLE_EQ(at(runs, "cycles", 0), 3);
  EXPECT_DOUBLE_EQ(at(runs, "cycles_valid", 0), 2);
}

TEST_F(SummaryTest, EventStatisticsStandBesideTheirRunsConditions) {
  CampaignSummary s = summarise(manifest_, outcomes_, settings_);
  const Table& e = s.events;
  ASSERT_EQ(e.rows(), 3u);
  EXPECT_EQ(e.texts("run"), (std::vector<std::string>(3, "sine")));
  EXPECT_EQ(e.texts("event")[2], "lift_peak");
  EXPECT_DOUBLE_EQ(at(e, "n", 2), 19);
  EXPECT_DOUBLE_EQ(at(e, "mean", 0), 17.5);
  EXPECT_DOUBLE_EQ(at(e, "k", 1), at(s.runs, "k", 0));
}

TEST_F(SummaryTest, TheStallTableHasARowPerDynamicRunWithOnsetAndDelay) {
  CampaignSummary s = summarise(manifest_, outcomes_, settings_);
  const Table& t = s.stall;
  ASSERT_EQ(t.rows(), 2u);  // the failed run has no data
  EXPECT_DOUBLE_EQ(at(t, "stall_onset_alpha_deg_mean", 0), 17.5);
  EXPECT_DOUBLE_EQ(at(t, "stall_onset_alpha_deg_ci95_hi", 0), 17.7);
  EXPECT_EQ(t.find("stall_onset_alpha_deg_mean")->units, "deg");
  EXPECT_DOUBLE_EQ(at(t, "stall_delay_t_conv_mean", 0), 1.25);
  EXPECT_DOUBLE_EQ(at(t, "stall_delay_t_conv_n", 0), 20);
  EXPECT_TRUE(std::isnan(at(t, "stall_delay_t_conv_mean", 1)));
  EXPECT_EQ(t.find("lift_peak_alpha_deg_mean"), nullptr);
  EXPECT_NEAR(at(t, "reduced_pitch_rate", 0), at(s.runs, "reduced_pitch_rate", 0), 0.0);
}

TEST_F(SummaryTest, TheHdf5SummaryAndTheCsvsAgreeWhenReadByH5pyAndPythonsCsv) {
  CampaignSummary s = summarise(manifest_, outcomes_, settings_);
  auto files = write_summary(s, manifest_, dir_.path(), "stallscope campaign test");
  EXPECT_EQ(files.size(), 5u);
  EXPECT_FALSE(fs::exists(dir_ / "campaign_static_polar.csv"));  // no static-polar runs
  EXPECT_TRUE(fs::exists(dir_ / "campaign_repeatability.csv"));   // "still" repeats "sine"
  for (const auto& f : files) EXPECT_TRUE(fs::exists(f)) << f;
  auto r = testing::run_python(testing::kSourceDir / "tests/campaign/check_summary.py",
                               testing::shell_quote(dir_.path().string()) + " runs events stall repeatability");
  EXPECT_EQ(r.exit_code, 0) << r.out << r.err;
  std::printf("%s", r.out.c_str());
}

TEST(TableBuilder, ColumnsMissingFromSomeRowsStayEmptyThere) {
  TableBuilder b;
  b.declare("run", "", true);
  b.new_row();
  b.set("run", "a");
  b.set("x", "m", 1.0);
  b.new_row();
  b.set("run", "b");
  b.set("y", "s", 2.0);
  Table t = b.table();
  ASSERT_EQ(t.rows(), 2u);
  EXPECT_EQ(t.columns[0].name, "run");
  EXPECT_DOUBLE_EQ(t.numbers("x")[0], 1.0);
  EXPECT_TRUE(std::isnan(t.numbers("x")[1]));
  EXPECT_TRUE(std::isnan(t.numbers("y")[0]));
  EXPECT_EQ(t.find("y")->units, "s");
  TableBuilder empty;
  empty.declare("run", "", true);
  EXPECT_EQ(empty.table().columns.size(), 1u);
  EXPECT_EQ(empty.table().rows(), 0u);
}

// Repeats: the spread of the runs' means (sample std, n - 1) beside the
// within-run CI half-width; hand values: means 17.5, 17.9, 17.7 -> std 0.2.
TEST(CampaignRepeatability, RepeatedRunsGiveTheRunToRunSpreadBesideTheWithinRunInterval) {
  ScratchDir dir;
  JobSettings settings;
  settings.output_directory = dir.path();
  write_run(settings, "a", true);
  write_run(settings, "a-r1", true, 0.4);
  write_run(settings, "a-r2", true, 0.2);
  write_run(settings, "b", true);
  Manifest m;
  m.name = "repeats";
  m.path = dir / "campaign.toml";
  m.runs = {run_named("a"), run_named("a-r1", "a"), run_named("a-r2", "a"), run_named("b")};
  std::vector<RunOutcome> outcomes(4);
  for (std::size_t i = 0; i < 4; ++i) outcomes[i] = {i, RunOutcome::State::kReduced, 1.0, "", 0};
  const CampaignSummary s = summarise(m, outcomes, settings);
  const Table& t = s.repeatability;
  ASSERT_EQ(t.rows(), 3u) << "one row per event statistic of the repeated group; b has no repeats";
  EXPECT_EQ(t.texts("run"), (std::vector<std::string>(3, "a")));
  EXPECT_EQ(t.texts("event")[0], "stall_onset");
  EXPECT_DOUBLE_EQ(at(t, "runs", 0), 3);
  EXPECT_NEAR(at(t, "mean", 0), 17.7, 1e-12);
  EXPECT_NEAR(at(t, "std_run_to_run", 0), 0.2, 1e-12);
  EXPECT_NEAR(at(t, "ci95_half_width_within_run", 0), 0.2, 1e-12);
  EXPECT_DOUBLE_EQ(at(t, "std_run_to_run", 1), 0.0);  // stall delay did not move
  EXPECT_TRUE(std::isnan(at(t, "measurement_uncertainty", 0))) << "no [uncertainty] in these runs";
  const auto files = write_summary(s, m, dir.path(), "test");
  EXPECT_TRUE(fs::exists(dir / "campaign_repeatability.csv"));
}

}  // namespace
}  // namespace stallscope::campaign
