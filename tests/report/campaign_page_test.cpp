// The campaign page: a runs table linking each run's report, and the stall
// trends against k and r drawn only when the runs have them.
#include "pipeline/report/campaign_page.hpp"

#include <gtest/gtest.h>

#include <cmath>

#include "tests/support/test_support.hpp"

namespace stallscope {
namespace {

namespace fs = std::filesystem;
using testing::read_text;
using testing::ScratchDir;

const fs::path kCheckSvg = testing::kSourceDir / "tests/report/check_svg.py";

report::CampaignPage three_runs(bool with_stall) {
  report::CampaignPage page;
  page.name = "kr12 <series> A";
  page.description = "an invented campaign";
  const std::vector<std::string> names = {"r01", "r02", "r03"};
  const std::vector<double> k = {0.05, 0.10, 0.15}, r = {0.014, 0.028, 0.042};
  page.runs.add({"run", "", names})
      .add({"kind", "", std::vector<std::string>{"dynamic", "dynamic", "dynamic"}})
      .add({"status", "", std::vector<std::string>{"reduced", "reduced", "failed"}})
      .add({"error", "", std::vector<std::string>{"", "", "daq.h5: \"volts\" missing"}})
      .add({"k", "1", k})
      .add({"reduced_pitch_rate", "1", r});
  page.stall.add({"run", "", names}).add({"k", "1", k}).add({"reduced_pitch_rate", "1", r});
  if (with_stall) {
    page.stall.add({"stall_onset_alpha_deg_mean", "deg", std::vector<double>{15.1, 16.4, NAN}})
        .add({"stall_onset_alpha_deg_ci95_lo", "deg", std::vector<double>{14.8, 16.0, NAN}})
        .add({"stall_onset_alpha_deg_ci95_hi", "deg", std::vector<double>{15.4, 16.8, NAN}})
        .add({"stall_delay_value_mean", "deg", std::vector<double>{1.9, 3.2, NAN}});
  }
  page.run_reports = {"../r01/report/index.html", "../r02/report/index.html", ""};
  page.files = {"../campaign_runs.csv", "../campaign.h5"};
  return page;
}

TEST(CampaignPage, RunsTableLinksEveryRunReportAndNamesTheFailure) {
  ScratchDir dir;
  const auto result = report::write_campaign_report(three_runs(true), dir / "report");
  EXPECT_EQ(result.index, dir / "report" / "index.html");
  EXPECT_EQ(result.sections, (std::vector<std::string>{"runs", "trends", "files"}));
  const std::string html = read_text(result.index);
  EXPECT_NE(html.find("<a href=\"../r01/report/index.html\">r01</a>"), std::string::npos);
  EXPECT_NE(html.find("<a href=\"../r02/report/index.html\">r02</a>"), std::string::npos);
  EXPECT_EQ(html.find("href=\"\""), std::string::npos) << "a run without a report gets no link";
  // Text from the manifest and from errors is escaped, never markup.
  EXPECT_NE(html.find("kr12 &lt;series&gt; A"), std::string::npos);
  EXPECT_NE(html.find("failed: <span class=\"note\">daq.h5: &quot;volts&quot; missing</span>"), std::string::npos);
  for (const auto& entry : fs::directory_iterator(dir / "report"))
    EXPECT_EQ(entry.path().extension().string().find("partial"), std::string::npos) << entry.path();
}

TEST(CampaignPage, TrendPlotsParseAsSvgAndSkipRunsWithoutTheQuantity) {
  ScratchDir dir;
  const auto result = report::write_campaign_report(three_runs(true), dir / "report");
  // Onset angle has an interval, stall delay only a mean: four plots in all.
  ASSERT_EQ(result.plots.size(), 4u);
  for (const char* name : {"trend_stall_onset_alpha_deg_vs_k.svg", "trend_stall_onset_alpha_deg_vs_reduced_pitch_rate.svg",
                           "trend_stall_delay_value_vs_k.svg", "trend_stall_delay_value_vs_reduced_pitch_rate.svg"})
    EXPECT_TRUE(fs::exists(dir / "report" / name)) << name;
  // Python's XML parser (an independent reader) accepts every plot.
  std::string args = "0.25";
  for (const auto& f : result.plots) args += " " + testing::shell_quote(f.string());
  const auto r = testing::run_python(kCheckSvg, args);
  EXPECT_EQ(r.exit_code, 0) << r.err;
  EXPECT_EQ(testing::count_lines(r.out), 4) << r.out;
}

TEST(CampaignPage, NoStallColumnsMeansNoTrendSection) {
  ScratchDir dir;
  const auto result = report::write_campaign_report(three_runs(false), dir / "report");
  EXPECT_EQ(result.sections, (std::vector<std::string>{"runs", "files"}));
  EXPECT_TRUE(result.plots.empty());
}

}  // namespace
}  // namespace stallscope
