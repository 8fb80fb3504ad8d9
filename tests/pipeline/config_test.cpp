#include "pipeline/config.hpp"

#include <gtest/gtest.h>

#include "pipeline/errors.hpp"

namespace stallscope {
namespace {

ConfigFile parse(const std::string& text) { return ConfigFile::parse(text, "/data/run7/reduce.toml"); }

std::string error_of(const std::function<void()>& f) {
  try {
    f();
  } catch (const InputError& e) {
    return e.what();
  }
  return "(no error)";
}

TEST(Config, ReadsTypedValuesAndRecordsDefaultsForProvenance) {
  ConfigFile f = parse("[tubing]\ncutoff_hz = 120\nmode = \"model\"\n");
  ConfigSection s(f, "tubing");
  EXPECT_DOUBLE_EQ(s.number("cutoff_hz", 50.0), 120.0);  // an integer is a number
  EXPECT_EQ(s.text("mode", "none"), "model");
  EXPECT_EQ(s.integer("order", 4), 4);
  s.reject_unknown_keys();
  const std::string params = s.parameters_toml();
  EXPECT_NE(params.find("cutoff_hz = 120"), std::string::npos) << params;
  EXPECT_NE(params.find("order = 4"), std::string::npos) << params;
}

TEST(Config, UnknownKeyNamesFileLineColumnAndTheKnownKeys) {
  ConfigFile f = parse("[tubing]\ncutoff_hz = 120\n  cutof = 3\n");
  ConfigSection s(f, "tubing");
  s.number("cutoff_hz", 50.0);
  EXPECT_EQ(error_of([&] { s.reject_unknown_keys(); }),
            "/data/run7/reduce.toml:3:11: tubing.cutof: unknown key (expected one of 'cutoff_hz')");
}

TEST(Config, WrongTypeNamesTheKeyAndWhatWasExpected) {
  ConfigFile f = parse("[run]\nchord_m = \"0.25\"\n");
  ConfigSection s(f, "run");
  EXPECT_EQ(error_of([&] { s.number("chord_m"); }), "/data/run7/reduce.toml:2:11: run.chord_m: expected a number");
}

TEST(Config, MissingRequiredKeyNamesTheSection) {
  ConfigFile f = parse("[run]\nname = \"r1\"\n");
  ConfigSection s(f, "run");
  EXPECT_NE(error_of([&] { s.number("chord_m"); }).find("required key 'chord_m' (a number) is missing in [run]"),
            std::string::npos);
}

TEST(Config, SyntaxErrorCarriesLineAndColumn) {
  EXPECT_NE(error_of([] { parse("[run]\nname = \n"); }).find("/data/run7/reduce.toml:2:"), std::string::npos);
}

TEST(Config, PathsAreRelativeToTheConfigFile) {
  ConfigFile f = parse("[daq]\nfile = \"raw/daq.h5\"\nabs = \"/mnt/tunnel/x.csv\"\n");
  ConfigSection s(f, "daq");
  EXPECT_EQ(s.path("file"), std::filesystem::path("/data/run7/raw/daq.h5"));
  EXPECT_EQ(s.path("abs"), std::filesystem::path("/mnt/tunnel/x.csv"));
  EXPECT_FALSE(s.optional_path("tares").has_value());
}

TEST(Config, ChoiceListsTheAllowedWords) {
  ConfigFile f = parse("[motion]\ntype = \"sinus\"\n");
  ConfigSection s(f, "motion");
  EXPECT_EQ(error_of([&] { s.choice("type", {"sine", "ramp", "static"}, "sine"); }),
            "/data/run7/reduce.toml:2:8: motion.type: expected one of 'sine', 'ramp', 'static', found 'sinus'");
}

TEST(Config, RequireReportsTheRuleAtTheKey) {
  ConfigFile f = parse("[run]\nchord_m = -1\n");
  ConfigSection s(f, "run");
  double c = s.number("chord_m");
  EXPECT_EQ(error_of([&] { s.require(c > 0, "chord_m", "expected a chord > 0"); }),
            "/data/run7/reduce.toml:2:11: run.chord_m: expected a chord > 0");
}

TEST(Config, SubsectionsAreCheckedForUnknownKeysToo) {
  ConfigFile f = parse("[daq.roles]\nangle = \"enc\"\nangel = \"x\"\n");
  ConfigSection daq(f, "daq");
  ConfigSection roles = daq.subsection("roles");
  EXPECT_EQ(roles.text("angle", ""), "enc");
  EXPECT_NE(error_of([&] { roles.reject_unknown_keys(); }).find("daq.roles.angel: unknown key"), std::string::npos);
}

TEST(Config, ArraysOfTheWrongElementTypeAreRejected) {
  ConfigFile f = parse("[phase]\nbins = [1, \"two\"]\n");
  ConfigSection s(f, "phase");
  EXPECT_NE(error_of([&] { s.numbers("bins", {}); }).find("expected an array of numbers"), std::string::npos);
}

}  // namespace
}  // namespace stallscope
