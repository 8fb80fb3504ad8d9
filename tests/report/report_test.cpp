#include "pipeline/report/report.hpp"

#include <gtest/gtest.h>

#include <regex>

#include "pipeline/errors.hpp"
#include "pipeline/report/colour.hpp"
#include "tests/report/browser.hpp"
#include "tests/report/report_fixture.hpp"

namespace stallscope {
namespace {

namespace fs = std::filesystem;
using testing::FixtureRun;
using testing::ScratchDir;

// Four significant digits are shown: the displayed value is within half a unit
// of the fourth digit, i.e. 5e-4 relative at most.
constexpr double kShownRelative = 5e-4;
const fs::path kCheckSvg = testing::kSourceDir / "tests/report/check_svg.py";

struct SvgCount {
  int paths = -1, faint = -1, images = -1, decoded = -1;
};

// Parses every SVG through Python's XML parser (and Pillow for embedded PNGs).
std::map<std::string, SvgCount> check_svgs(const std::vector<fs::path>& files) {
  std::string args = std::to_string(report::ink::kCycleOpacity);
  for (const auto& f : files) args += " " + testing::shell_quote(f.string());
  const auto r = testing::run_python(kCheckSvg, args);
  EXPECT_EQ(r.exit_code, 0) << r.err;
  std::map<std::string, SvgCount> out;
  std::istringstream lines(r.out);
  std::string line;
  const std::regex pattern(R"((\S+) paths=(\d+) faint=(\d+) images=(\d+) decoded=(\d+))");
  while (std::getline(lines, line)) {
    std::smatch m;
    if (!std::regex_match(line, m, pattern)) continue;
    out[fs::path(m[1].str()).filename().string()] = {std::stoi(m[2]), std::stoi(m[3]), std::stoi(m[4]), std::stoi(m[5])};
  }
  return out;
}

std::string dom_of(const fs::path& index) {
  const auto r = testing::chromium_dump_dom(testing::with_image_probe(index));
  EXPECT_EQ(r.exit_code, 0) << r.err;
  return r.out;
}

TEST(Report, DrawsEverySectionFromAFullArchive) {
  ScratchDir dir;
  const fs::path archive = testing::write_fixture_archive(dir, "full", testing::fixture_store(true));
  const report::ReportResult result = report::write_report(archive);
  EXPECT_EQ(result.index, archive.parent_path() / "report" / "index.html");
  EXPECT_EQ(result.sections, (std::vector<std::string>{"summary", "loops", "pressure", "events", "vortex", "damping",
                                                       "provenance"}));
  for (const char* name : {"loops_cl.svg", "loops_cm.svg", "cp_map.svg", "cp_snapshots.svg", "event_timing.svg",
                           "vortex_convection.svg", "vortex_trajectory.svg", "onset_swirl.svg", "damping.svg"})
    EXPECT_TRUE(fs::exists(archive.parent_path() / "report" / name)) << name;
  for (const auto& entry : fs::directory_iterator(archive.parent_path() / "report"))
    EXPECT_EQ(entry.path().extension().string().find("partial"), std::string::npos) << entry.path();
}

TEST(Report, EveryPlotParsesAsSvgAndTheLoopPlotsHaveOnePathPerValidCycle) {
  ScratchDir dir;
  const fs::path archive = testing::write_fixture_archive(dir, "full", testing::fixture_store(true));
  const report::ReportResult result = report::write_report(archive);
  const auto counts = check_svgs(result.plots);
  ASSERT_EQ(counts.size(), result.plots.size());
  // At least the frame with its ticks, the data and a legend or colour bar.
  for (const auto& [name, c] : counts) EXPECT_GE(c.paths, 3) << name << " is nearly empty";
  EXPECT_EQ(counts.at("loops_cl.svg").faint, FixtureRun::kCycles - 1);  // one cycle is invalid
  EXPECT_EQ(counts.at("loops_cm.svg").faint, FixtureRun::kCycles - 1);
  // The colour maps are embedded rasters that must decode.
  EXPECT_GE(counts.at("cp_map.svg").images, 3);  // two panels and the colour bar
  EXPECT_EQ(counts.at("cp_map.svg").decoded, counts.at("cp_map.svg").images);
  EXPECT_EQ(counts.at("onset_swirl.svg").decoded, counts.at("onset_swirl.svg").images);
}

TEST(Report, PageLoadsInABrowserWithEveryImageDecodedAndTheArchiveNumbersInItsTables) {
  ScratchDir dir;
  const fs::path archive = testing::write_fixture_archive(dir, "full", testing::fixture_store(true));
  const report::ReportResult result = report::write_report(archive);
  const std::string dom = dom_of(result.index);
  std::smatch m;
  ASSERT_TRUE(std::regex_search(dom, m, std::regex(R"(images=(\d+) broken=(\d+))"))) << dom.substr(0, 2000);
  EXPECT_EQ(std::stoi(m[1]), static_cast<int>(result.plots.size()));
  EXPECT_EQ(std::stoi(m[2]), 0) << m.suffix().str().substr(0, 200);

  // The key numbers, as shown, against the archive read back independently.
  const RunStore back = read_archive(archive);
  for (const char* key : {"run/k", "run/Re", "run/Mach", "run/U_inf_m_s", "run/chord_m", "run/alpha_mean_deg",
                          "run/alpha_amp_deg", "run/freq_hz", "run/q_pa", "run/rho_kg_m3"}) {
    const double want = back.get<Scalar>(key).value;
    EXPECT_NEAR(testing::number_at_key(dom, key), want, kShownRelative * std::abs(want)) << key;
  }
  const Table& summary = back.get<Table>("events/summary");
  for (std::size_t r = 0; r < summary.rows(); ++r) {
    const std::string prefix = "events/summary/" + summary.texts("event")[r] + "/" + summary.texts("quantity")[r] + "/";
    for (const char* column : {"mean", "std", "ci95_lo", "ci95_hi"}) {
      const double want = summary.numbers(column)[r];
      EXPECT_NEAR(testing::number_at_key(dom, prefix + column), want, kShownRelative * std::abs(want)) << prefix << column;
    }
    EXPECT_EQ(testing::number_at_key(dom, prefix + "n"), static_cast<double>(summary.integers("n")[r]));
  }
  EXPECT_NE(dom.find("7 of 8"), std::string::npos);  // valid cycles
  // Provenance: the raw input's full hash and the calibration id.
  const Provenance p = read_provenance(archive);
  EXPECT_NE(dom.find(p.inputs.at(0).sha256), std::string::npos);
  EXPECT_NE(dom.find("xdcr-2026-11"), std::string::npos);
  EXPECT_EQ(dom.find("http://"), dom.find("http://www.w3.org"));  // no network references but the SVG namespace
  EXPECT_EQ(dom.find("<script src"), std::string::npos);
}

TEST(Report, WithoutPivTheVortexSectionIsLeftOutCleanly) {
  ScratchDir dir;
  const fs::path archive = testing::write_fixture_archive(dir, "nopiv", testing::fixture_store(false));
  const report::ReportResult result = report::write_report(archive, dir / "page");
  EXPECT_EQ(std::find(result.sections.begin(), result.sections.end(), "vortex"), result.sections.end());
  EXPECT_TRUE(std::find(result.sections.begin(), result.sections.end(), "damping") != result.sections.end());
  for (const char* name : {"vortex_convection.svg", "vortex_trajectory.svg", "onset_swirl.svg"})
    EXPECT_FALSE(fs::exists(dir / "page" / name)) << name;
  const std::string html = testing::read_text(result.index);
  EXPECT_EQ(html.find("id=\"vortex\""), std::string::npos);
  EXPECT_EQ(html.find("href=\"#vortex\""), std::string::npos);
  EXPECT_EQ(html.find("Leading-edge vortex"), std::string::npos);
  const std::string dom = dom_of(result.index);
  EXPECT_NE(dom.find("broken=0"), std::string::npos);
}

TEST(Report, AnArchiveWithOnlyRunAndProvenanceGivesTheSummaryAndProvenance) {
  ScratchDir dir;
  const fs::path archive = testing::write_fixture_archive(dir, "bare", testing::fixture_minimal_store());
  const report::ReportResult result = report::write_report(archive);
  EXPECT_EQ(result.sections, (std::vector<std::string>{"summary", "provenance"}));
  EXPECT_TRUE(result.plots.empty());
  const std::string dom = dom_of(result.index);
  EXPECT_NE(dom.find("images=0 broken=0"), std::string::npos);
  EXPECT_NEAR(testing::number_at_key(dom, "run/Re"), 512345.0, kShownRelative * 512345.0);
  EXPECT_NE(dom.find("id=\"provenance\""), std::string::npos);
}

TEST(Report, RedrawingIntoTheSameFolderRemovesPlotsTheNewArchiveDoesNotHave) {
  ScratchDir dir;
  const fs::path full = testing::write_fixture_archive(dir, "full", testing::fixture_store(true));
  const fs::path bare = testing::write_fixture_archive(dir, "bare", testing::fixture_minimal_store());
  report::write_report(full, dir / "page");
  ASSERT_TRUE(fs::exists(dir / "page" / "loops_cl.svg"));
  report::write_report(bare, dir / "page");
  EXPECT_FALSE(fs::exists(dir / "page" / "loops_cl.svg"));
  EXPECT_TRUE(fs::exists(dir / "page" / "index.html"));
}

TEST(Report, ANonArchiveIsAnInputErrorNamingTheFile) {
  ScratchDir dir;
  const auto bogus = dir.write("not_an_archive.h5", "plain text");
  try {
    report::write_report(bogus);
    FAIL() << "expected InputError";
  } catch (const InputError& e) {
    EXPECT_NE(std::string(e.what()).find("not_an_archive.h5"), std::string::npos) << e.what();
  }
  EXPECT_FALSE(fs::exists(dir / "report" / "index.html"));
}

TEST(ReportCommand, DrawsIntoTheFolderGivenAndFailsWithExitTwoOnBadInput) {
  ScratchDir dir;
  const fs::path archive = testing::write_fixture_archive(dir, "full", testing::fixture_store(false));
  const auto ok = testing::run_stallscope("report " + testing::shell_quote(archive.string()) + " -o " +
                                          testing::shell_quote((dir / "out").string()));
  EXPECT_EQ(ok.exit_code, 0) << ok.err;
  EXPECT_TRUE(fs::exists(dir / "out" / "index.html"));
  EXPECT_NE(ok.out.find("index.html"), std::string::npos);
  const auto bad = testing::run_stallscope("report " + testing::shell_quote((dir / "missing.h5").string()));
  EXPECT_EQ(bad.exit_code, 2);
  EXPECT_NE(bad.err.find("missing.h5"), std::string::npos) << bad.err;
}

}  // namespace
}  // namespace stallscope

namespace stallscope {
namespace {

TEST(ReportCommand, ReduceDrawsTheReportBesideTheArchiveUnlessAskedNotTo) {
  testing::ScratchDir dir;
  const std::string config = testing::shell_quote((testing::kSourceDir / "configs/demo.toml").string());
  const auto with = testing::run_stallscope("reduce -q " + config + " -o " + testing::shell_quote((dir / "a").string()));
  ASSERT_EQ(with.exit_code, 0) << with.err;
  EXPECT_TRUE(std::filesystem::exists(dir / "a" / "report" / "index.html"));
  EXPECT_NE(with.out.find("report:"), std::string::npos) << with.out;
  // The demo has PIV: the swirl map at onset, its frame reduced again from the stack.
  EXPECT_TRUE(std::filesystem::exists(dir / "a" / "report" / "onset_swirl.svg"));
  const auto without = testing::run_stallscope("reduce -q " + config + " -o " +
                                               testing::shell_quote((dir / "b").string()) + " --no-report");
  ASSERT_EQ(without.exit_code, 0) << without.err;
  EXPECT_FALSE(std::filesystem::exists(dir / "b" / "report"));
}

}  // namespace
}  // namespace stallscope
