// `stallscope campaign` end to end: the same results one or two runs at a
// time, a broken run failing alone, up-to-date runs skipped, manifest errors
// named at their line.
#include <gtest/gtest.h>

#include "pipeline/archive.hpp"
#include "tests/campaign/campaign_fixture.hpp"

namespace stallscope {
namespace {

namespace fs = std::filesystem;
using testing::CommandResult;
using testing::read_text;
using testing::run_campaign_cli;
using testing::ScratchDir;

int count(const std::string& s, const std::string& part) {
  int n = 0;
  for (auto p = s.find(part); p != std::string::npos; p = s.find(part, p + 1)) ++n;
  return n;
}

// The campaign tables of campaign.h5, without the attributes that say when and how it was made.
std::string summary_tables(const fs::path& folder) {
  std::string all = testing::archive_contents(folder / "campaign.h5");
  std::string out;
  std::istringstream in(all);
  for (std::string line; std::getline(in, line);)
    if (line.rfind("campaign/", 0) != 0) out += line + "\n";
  return out;
}

TEST(CampaignCli, ThreeRunsGiveIdenticalResultsOneOrTwoAtATime) {
  ScratchDir dir;
  auto manifest = testing::write_campaign(dir, 3, 2000);
  CommandResult one = run_campaign_cli(manifest, dir / "j1", "-j 1");
  ASSERT_EQ(one.exit_code, 0) << one.out << one.err;
  CommandResult two = run_campaign_cli(manifest, dir / "j2", "-j 2");
  ASSERT_EQ(two.exit_code, 0) << two.out << two.err;
  EXPECT_EQ(count(one.out, " reduced "), 3) << one.out;
  std::printf("%s", two.out.c_str());

  // Per-run archives (provenance aside) and every CSV, byte for byte.
  for (const char* run : {"r00", "r01", "r02"}) {
    const fs::path a = dir / "j1" / run / (std::string(run) + ".h5"), b = dir / "j2" / run / (std::string(run) + ".h5");
    ASSERT_TRUE(fs::exists(a) && fs::exists(b)) << run;
    EXPECT_EQ(testing::archive_contents(a), testing::archive_contents(b)) << run;
  }
  auto csv1 = testing::csv_files(dir / "j1"), csv2 = testing::csv_files(dir / "j2");
  EXPECT_EQ(csv1, csv2);
  ASSERT_TRUE(csv1.count("campaign_runs.csv"));
  ASSERT_TRUE(csv1.count("campaign_events.csv"));
  ASSERT_TRUE(csv1.count("campaign_stall.csv"));
  EXPECT_EQ(summary_tables(dir / "j1"), summary_tables(dir / "j2"));

  // The rows carry each run's own conditions, from its overrides.
  const std::string runs = csv1["campaign_runs.csv"];
  EXPECT_EQ(testing::count_lines(runs), 4) << runs;
  EXPECT_NE(runs.find("\nr01,dynamic,,"), std::string::npos) << runs;
  RunStore r02 = read_archive(dir / "j1" / "r02" / "r02.h5");
  EXPECT_DOUBLE_EQ(r02.get<Scalar>("run/U_inf_m_s").value, 25.0);
  EXPECT_EQ(r02.get<Text>("run/name").value, "r02");
  EXPECT_EQ(count(runs, ",ok,"), 3) << runs;
}

TEST(CampaignCli, TheDemoCampaignGivesIdenticalRunTablesAndSummaryOneOrTwoAtATime) {
  ScratchDir dir;
  const fs::path manifest = testing::write_demo_campaign(dir);
  if (manifest.empty()) GTEST_SKIP() << "no demo campaign in sample_data/kestrel_ridge";
  CommandResult one = run_campaign_cli(manifest, dir / "j1", "-j 1");
  ASSERT_EQ(one.exit_code, 0) << one.out << one.err;
  CommandResult two = run_campaign_cli(manifest, dir / "j2", "-j 2");
  ASSERT_EQ(two.exit_code, 0) << two.out << two.err;
  // Every per-run CSV (events_per_cycle.csv, events_summary.csv, ... when the
  // configs enable those stages) and the campaign CSVs, byte for byte.
  const auto csv1 = testing::csv_files(dir / "j1");
  EXPECT_EQ(csv1, testing::csv_files(dir / "j2"));
  EXPECT_EQ(testing::count_lines(csv1.at("campaign_runs.csv")), 4);
  EXPECT_EQ(summary_tables(dir / "j1"), summary_tables(dir / "j2"));
  std::printf("%s", two.out.c_str());
}

TEST(CampaignCli, ABrokenRunFailsAloneAndIsMarkedWithItsError) {
  ScratchDir dir;
  dir.write("raw/garbled.csv", "t;enc\n0;1\n");
  dir.write("broken.toml", "[run]\nname = \"broken\"\nchord_m = 0.2\n\n[daq]\nfile = \"raw/garbled.csv\"\n\n"
                           "[daq.roles]\nangle = \"alpha_enc\"\n\n[conditions]\nvelocity_m_s = 20.0\n");
  auto manifest = testing::write_campaign(dir, 2, 50, "\n[[runs]]\nconfig = \"broken.toml\"\n");
  CommandResult r = run_campaign_cli(manifest, dir / "out", "-j 2");
  EXPECT_EQ(r.exit_code, 2) << r.out << r.err;
  EXPECT_TRUE(fs::exists(dir / "out/r00/r00.h5"));
  EXPECT_TRUE(fs::exists(dir / "out/r01/r01.h5"));
  EXPECT_FALSE(fs::exists(dir / "out/broken/broken.h5"));
  EXPECT_FALSE(fs::exists(dir / "out/broken/broken.h5.partial"));
  // One clear line on stderr for the failed run, naming the file and line.
  EXPECT_EQ(testing::count_lines(r.err), 1) << r.err;
  EXPECT_NE(r.err.find("run broken: "), std::string::npos) << r.err;
  EXPECT_NE(r.err.find("garbled.csv:1"), std::string::npos) << r.err;
  const std::string runs = read_text(dir / "out/campaign_runs.csv");
  EXPECT_NE(runs.find("broken,dynamic,,"), std::string::npos) << runs;
  EXPECT_NE(runs.find(",failed,"), std::string::npos) << runs;
  EXPECT_NE(runs.find("expected a CSV header row"), std::string::npos) << runs;
  EXPECT_EQ(count(runs, ",ok,"), 2) << runs;
  std::printf("%s", r.out.c_str());
}

TEST(CampaignCli, UpToDateRunsAreSkippedAndChangedOnesReducedAgain) {
  ScratchDir dir;
  auto manifest = testing::write_campaign(dir, 3);
  ASSERT_EQ(run_campaign_cli(manifest, dir / "out").exit_code, 0);
  auto created = [&](const char* run) {
    return read_provenance(dir / "out" / run / (std::string(run) + ".h5")).created_utc + "|" +
           std::to_string(fs::last_write_time(dir / "out" / run / (std::string(run) + ".h5")).time_since_epoch().count());
  };
  const std::string r00 = created("r00"), r01 = created("r01");
  const std::string first_summary = read_text(dir / "out/campaign_runs.csv");

  CommandResult again = run_campaign_cli(manifest, dir / "out");
  EXPECT_EQ(again.exit_code, 0) << again.err;
  EXPECT_EQ(count(again.out, " up to date "), 3) << again.out;
  EXPECT_EQ(created("r00"), r00);
  EXPECT_EQ(read_text(dir / "out/campaign_runs.csv"), first_summary);  // the same summary, skipped or not

  // A raw file changes (r01), a setting changes (r02): only those are redone.
  dir.write("raw/r01.csv", testing::daq_csv(51, 0.1));
  std::string text = read_text(manifest);
  text.replace(text.find("= 25.0"), 6, "= 26.0");
  dir.write("campaign.toml", text);
  CommandResult changed = run_campaign_cli(manifest, dir / "out");
  EXPECT_EQ(changed.exit_code, 0) << changed.err;
  EXPECT_EQ(count(changed.out, " up to date "), 1) << changed.out;
  EXPECT_EQ(count(changed.out, " reduced "), 2) << changed.out;
  EXPECT_EQ(created("r00"), r00);
  EXPECT_NE(created("r01"), r01);
  EXPECT_DOUBLE_EQ(read_archive(dir / "out/r02/r02.h5").get<Scalar>("run/U_inf_m_s").value, 26.0);

  CommandResult forced = run_campaign_cli(manifest, dir / "out", "--force");
  EXPECT_EQ(forced.exit_code, 0) << forced.err;
  EXPECT_EQ(count(forced.out, " reduced "), 3) << forced.out;
}

TEST(CampaignCli, ManifestErrorsNameTheFileAndLineBeforeAnyRunStarts) {
  ScratchDir dir;
  auto manifest = testing::write_campaign(dir, 2, 50, "\n[[runs]]\nconfig = \"absent.toml\"\n");
  CommandResult missing = run_campaign_cli(manifest, dir / "out");
  EXPECT_EQ(missing.exit_code, 2);
  EXPECT_EQ(testing::count_lines(missing.err), 1) << missing.err;
  EXPECT_NE(missing.err.find("campaign.toml:21:10: runs[2].config: run config not found"), std::string::npos)
      << missing.err;
  EXPECT_FALSE(fs::exists(dir / "out/r00"));

  manifest = testing::write_campaign(dir, 1, 50, "\n[[runs]]\nname = \"x\"\nrepeat = \"r00\"\n");
  CommandResult unknown = run_campaign_cli(manifest, dir / "out");
  EXPECT_EQ(unknown.exit_code, 2);
  EXPECT_EQ(testing::count_lines(unknown.err), 1) << unknown.err;
  EXPECT_NE(unknown.err.find("campaign.toml:15:10: runs[1].repeat: unknown key"), std::string::npos) << unknown.err;
  std::printf("[bad manifest] %s[bad manifest] %s", missing.err.c_str(), unknown.err.c_str());

  CommandResult absent = run_campaign_cli(dir / "nope.toml", dir / "out");
  EXPECT_EQ(absent.exit_code, 2);
  EXPECT_NE(absent.err.find("nope.toml: config file not found"), std::string::npos) << absent.err;
  EXPECT_EQ(testing::run_stallscope("campaign --help").exit_code, 0);
}

TEST(CampaignCli, DrawsEachRunReportAndACampaignPageLinkingThem) {
  ScratchDir dir;
  auto manifest = testing::write_campaign(dir, 2, 500);
  CommandResult r = run_campaign_cli(manifest, dir / "out", "-j 2");
  ASSERT_EQ(r.exit_code, 0) << r.out << r.err;
  const fs::path page = dir / "out" / "report" / "index.html";
  ASSERT_TRUE(fs::exists(page)) << r.out;
  EXPECT_NE(r.out.find(page.string()), std::string::npos) << "the page is named among the summary files";
  const std::string html = read_text(page);
  for (const char* run : {"r00", "r01"}) {
    EXPECT_TRUE(fs::exists(dir / "out" / run / "report" / "index.html")) << run;
    EXPECT_NE(html.find(fmt::format("<a href=\"../{0}/report/index.html\">{0}</a>", run)), std::string::npos) << run;
  }
  EXPECT_NE(html.find("<a href=\"../campaign_runs.csv\">"), std::string::npos);

  // Up to date on a rerun, the pages are still there; --no-report draws none.
  fs::remove_all(dir / "out" / "r00" / "report");
  r = run_campaign_cli(manifest, dir / "out", "-j 1");
  ASSERT_EQ(r.exit_code, 0) << r.err;
  EXPECT_NE(r.out.find("0 reduced, 2 up to date"), std::string::npos) << r.out;
  EXPECT_TRUE(fs::exists(dir / "out" / "r00" / "report" / "index.html")) << "a missing run page is drawn again";
  r = run_campaign_cli(manifest, dir / "bare", "--no-report");
  ASSERT_EQ(r.exit_code, 0) << r.err;
  EXPECT_FALSE(fs::exists(dir / "bare" / "report"));
  EXPECT_FALSE(fs::exists(dir / "bare" / "r00" / "report"));
}

}  // namespace
}  // namespace stallscope
