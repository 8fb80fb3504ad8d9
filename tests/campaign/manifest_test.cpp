// The manifest: runs from a base config with per-run overrides, runs with
// their own configs, and every manifest mistake named at its line.
#include <gtest/gtest.h>

#include <toml++/toml.h>

#include "pipeline/campaign/manifest.hpp"
#include "pipeline/config.hpp"
#include "pipeline/errors.hpp"
#include "tests/campaign/campaign_fixture.hpp"

namespace stallscope::campaign {
namespace {

namespace fs = std::filesystem;
using testing::ScratchDir;

// The message of the InputError that parsing `text` as dir/campaign.toml throws.
std::string manifest_error(const ScratchDir& dir, const std::string& text) {
  const fs::path path = dir.write("campaign.toml", text);
  try {
    load_manifest(path);
  } catch (const InputError& e) {
    return e.what();
  }
  return "(no error)";
}

void expect_contains(const std::string& s, const std::string& part) {
  EXPECT_NE(s.find(part), std::string::npos) << "expected '" << part << "' in: " << s;
}

class ManifestTest : public ::testing::Test {
 protected:
  void SetUp() override {
    dir_.write("base.toml", testing::base_config());
    dir_.write("raw/base.csv", testing::daq_csv(3, 0.0));
    dir_.write("raw/a.csv", testing::daq_csv(3, 0.1));
    dir_.write("own.toml", "[run]\nname = \"own-run\"\nchord_m = 0.3\n\n[daq]\nfile = \"raw/a.csv\"\n\n[daq.roles]\n"
                           "angle = \"alpha_enc\"\n\n[conditions]\nvelocity_m_s = 30.0\n");
  }
  ScratchDir dir_;
};

TEST_F(ManifestTest, BaseRunsTakeTheirNameFilesAndSettingsIntoAMergedConfig) {
  const fs::path path = dir_.write("campaign.toml",
                                   "[campaign]\nbase = \"base.toml\"\n\n[[runs]]\nname = \"k1\"\nrepeat_of = \"k0\"\n"
                                   "[runs.files]\ndaq.file = \"raw/a.csv\"\n[runs.settings]\nconditions.velocity_m_s = 31\n"
                                   "conditions.dynamic_pressure_pa = 500.0\n\n[[runs]]\nname = \"k0\"\n");
  Manifest m = load_manifest(path);
  EXPECT_EQ(m.name, "campaign");  // the file stem by default
  ASSERT_EQ(m.runs.size(), 2u);
  const CampaignRun& k1 = m.runs[0];
  EXPECT_EQ(k1.name, "k1");
  EXPECT_EQ(k1.repeat_of, "k0");
  EXPECT_EQ(k1.kind, RunKind::kDynamic);
  EXPECT_EQ(k1.config, fs::absolute(dir_ / "base.toml").lexically_normal());
  ASSERT_FALSE(k1.config_text.empty());
  toml::table merged = toml::parse(k1.config_text);
  EXPECT_EQ(merged["run"]["name"].value<std::string>(), "k1");
  EXPECT_EQ(merged["run"]["chord_m"].value<double>(), 0.2);  // the base's own value stays
  // A file override is made absolute (it was relative to the manifest); the
  // base's relative paths stay relative to the base, which the config name keeps.
  EXPECT_EQ(merged["daq"]["file"].value<std::string>(), fs::absolute(dir_ / "raw/a.csv").lexically_normal().string());
  EXPECT_EQ(merged["conditions"]["velocity_m_s"].value<int64_t>(), 31);
  EXPECT_EQ(merged["conditions"]["dynamic_pressure_pa"].value<double>(), 500.0);
  EXPECT_EQ(k1.config_name().parent_path(), k1.config.parent_path());
  EXPECT_NE(k1.config_name().filename().string().find("k1"), std::string::npos);

  toml::table k0 = toml::parse(m.runs[1].config_text);
  EXPECT_EQ(k0["daq"]["file"].value<std::string>(), "raw/base.csv");
  EXPECT_EQ(k0["run"]["name"].value<std::string>(), "k0");
}

TEST_F(ManifestTest, ARunWithItsOwnConfigAndNoOverridesIsThatFileAsItStands) {
  Manifest m = load_manifest(dir_.write("campaign.toml", "[[runs]]\nconfig = \"own.toml\"\n"));
  ASSERT_EQ(m.runs.size(), 1u);
  EXPECT_EQ(m.runs[0].name, "own-run");
  EXPECT_TRUE(m.runs[0].config_text.empty());
  EXPECT_EQ(m.runs[0].config_name(), fs::absolute(dir_ / "own.toml").lexically_normal());
  // Renamed in the manifest, it becomes a merged config.
  Manifest renamed = load_manifest(dir_.write("campaign.toml", "[[runs]]\nconfig = \"own.toml\"\nname = \"x\"\n"));
  EXPECT_EQ(renamed.runs[0].name, "x");
  EXPECT_EQ(toml::parse(renamed.runs[0].config_text)["run"]["name"].value<std::string>(), "x");
}

TEST_F(ManifestTest, ARunWhoseConfigCannotBeParsedFailsAloneInsteadOfTheManifest) {
  dir_.write("broken.toml", "[run\nname = \"b\"\n");
  Manifest m = load_manifest(dir_.write("campaign.toml", "[[runs]]\nconfig = \"broken.toml\"\n\n[[runs]]\n"
                                                          "config = \"own.toml\"\n"));
  ASSERT_EQ(m.runs.size(), 2u);
  EXPECT_EQ(m.runs[0].name, "broken");
  expect_contains(m.runs[0].problem, "broken.toml:1");
  EXPECT_TRUE(m.runs[1].problem.empty());
}

TEST_F(ManifestTest, UnknownKeysNameTheManifestLine) {
  expect_contains(manifest_error(dir_, "[campaign]\nbase = \"base.toml\"\n\n[[runs]]\nname = \"a\"\nnmae = \"b\"\n"),
                  "campaign.toml:6:8: runs[0].nmae: unknown key");
  expect_contains(manifest_error(dir_, "[campaign]\nbsae = \"base.toml\"\n"), "campaign.toml:2:8: campaign.bsae");
  expect_contains(manifest_error(dir_, "[campaign]\nbase = \"base.toml\"\n[run]\nname = \"a\"\n"),
                  "campaign.toml:3:1: run: unknown key (expected [campaign] or [[runs]])");
}

TEST_F(ManifestTest, MissingFilesNameTheManifestLine) {
  expect_contains(manifest_error(dir_, "[[runs]]\nconfig = \"nope.toml\"\n"),
                  "campaign.toml:2:10: runs[0].config: run config not found");
  expect_contains(manifest_error(dir_, "[campaign]\nbase = \"absent.toml\"\n[[runs]]\nname = \"a\"\n"),
                  "campaign.toml:2:8: campaign.base: base config not found");
  expect_contains(manifest_error(dir_, "[campaign]\nbase = \"base.toml\"\n[[runs]]\nname = \"a\"\n[runs.files]\n"
                                       "daq.file = \"raw/missing.csv\"\n"),
                  "campaign.toml:6:12: runs[0].files.daq.file: file not found");
}

TEST_F(ManifestTest, OverridesMustAgreeWithTheConfigInKind) {
  expect_contains(manifest_error(dir_, "[campaign]\nbase = \"base.toml\"\n[[runs]]\nname = \"a\"\n[runs.settings]\n"
                                       "conditions.velocity_m_s = \"fast\"\n"),
                  "campaign.toml:6:27: runs[0].settings.conditions.velocity_m_s: expected a number");
  expect_contains(manifest_error(dir_, "[campaign]\nbase = \"base.toml\"\n[[runs]]\nname = \"a\"\n[runs.settings]\n"
                                       "daq.roles.angle.channel = \"x\"\n"),
                  "has 'daq.roles.angle' as a value, not a table");
  expect_contains(manifest_error(dir_, "[campaign]\nbase = \"base.toml\"\n[[runs]]\nname = \"a\"\n[runs.files]\n"
                                       "daq.file = 3\n"),
                  "runs[0].files.daq.file: expected a file path");
}

TEST_F(ManifestTest, RunNamesAreUniqueAndRepeatsNameAnOriginalRun) {
  expect_contains(manifest_error(dir_, "[campaign]\nbase = \"base.toml\"\n[[runs]]\nname = \"a\"\n[[runs]]\n"
                                       "name = \"a\"\n"),
                  "campaign.toml:5:1: runs[1]: run name 'a' is also the name of runs[0]");
  expect_contains(manifest_error(dir_, "[campaign]\nbase = \"base.toml\"\n[[runs]]\nname = \"a\"\nrepeat_of = \"z\"\n"),
                  "campaign.toml:5:13: runs[0].repeat_of: no run named 'z'");
  expect_contains(manifest_error(dir_, "[campaign]\nbase = \"base.toml\"\n[[runs]]\nname = \"a\"\n[[runs]]\n"
                                       "name = \"b\"\nrepeat_of = \"a\"\n[[runs]]\nname = \"c\"\nrepeat_of = \"b\"\n"),
                  "'b' is itself a repeat of 'a'");
  expect_contains(manifest_error(dir_, "[campaign]\nbase = \"base.toml\"\n[[runs]]\nname = \"a/b\"\n"),
                  "runs[0].name: expected a run name");
}

TEST_F(ManifestTest, EveryRunNeedsAConfigAndBaseRunsNeedAName) {
  expect_contains(manifest_error(dir_, "[[runs]]\nkind = \"dynamic\"\n"),
                  "runs[0]: expected config = \"RUN.toml\" (or a base config in [campaign])");
  expect_contains(manifest_error(dir_, "[campaign]\nbase = \"base.toml\"\n[[runs]]\nkind = \"dynamic\"\n"),
                  "a run made from the base config needs a name");
  expect_contains(manifest_error(dir_, "[campaign]\nname = \"x\"\n"), "the manifest lists no runs");
  expect_contains(manifest_error(dir_, "[runs]\nname = \"x\"\n"), "expected [[runs]] entries");
  expect_contains(manifest_error(dir_, "[[runs]]\nconfig = \"own.toml\"\nkind = \"polar\"\n"),
                  "runs[0].kind: expected one of 'dynamic', 'static_polar'");
}

TEST_F(ManifestTest, AStaticPolarRunNeedsAStaticPolarSection) {
  expect_contains(manifest_error(dir_, "[[runs]]\nconfig = \"own.toml\"\nkind = \"static_polar\"\n"),
                  "campaign.toml:3:8: runs[0].kind: a static-polar run needs a [static_polar] section");
  Manifest m = load_manifest(dir_.write("campaign.toml", "[[runs]]\nconfig = \"own.toml\"\nkind = \"static_polar\"\n"
                                                         "[runs.settings]\nstatic_polar.primary = \"cl_max\"\n"));
  EXPECT_EQ(m.runs[0].kind, RunKind::kStaticPolar);
}

}  // namespace
}  // namespace stallscope::campaign
