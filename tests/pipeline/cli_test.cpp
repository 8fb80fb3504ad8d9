// The command line as a user meets it: exit codes, and one clear line for
// each kind of bad input, with nothing left under the archive's final name.
#include <gtest/gtest.h>

#include "tests/support/test_support.hpp"

namespace stallscope {
namespace {

namespace fs = std::filesystem;
using testing::run_stallscope;
using testing::ScratchDir;
using testing::shell_quote;

constexpr const char* kDaqCsv = "time_s,alpha_enc,q_pitot\n0.000,0.5,2.0\n0.004,0.6,2.0\n0.008,0.7,2.1\n";

std::string config(const std::string& daq_file, const std::string& extra = "") {
  return "[run]\nname = \"r1\"\nchord_m = 0.2\n\n[daq]\nfile = \"" + daq_file +
         "\"\n\n[daq.roles]\nangle = \"alpha_enc\"\n\n[conditions]\nvelocity_m_s = 20.0\n" + extra;
}

struct BadInputCase {
  std::string label;
  testing::CommandResult result;
  fs::path out;
};

// Every bad input: exit 2, exactly one line on stderr naming `names`, and no archive.
void expect_one_clear_line(const BadInputCase& c, const std::string& names, const std::string& says) {
  SCOPED_TRACE(c.label);
  EXPECT_EQ(c.result.exit_code, 2);
  EXPECT_EQ(testing::count_lines(c.result.err), 1) << c.result.err;
  EXPECT_NE(c.result.err.find(names), std::string::npos) << c.result.err;
  EXPECT_NE(c.result.err.find(says), std::string::npos) << c.result.err;
  EXPECT_FALSE(fs::exists(c.out / "r1.h5"));
  EXPECT_FALSE(fs::exists(c.out / "r1.h5.partial"));
  std::printf("[bad input] %-28s -> %s", c.label.c_str(), c.result.err.c_str());
}

BadInputCase reduce_with(const ScratchDir& dir, const std::string& label, const std::string& cfg_text,
                         const std::string& extra_args = "") {
  auto cfg = dir.write(label + ".toml", cfg_text);
  fs::path out = dir / ("out-" + label);
  return {label, run_stallscope("reduce -q " + shell_quote(cfg.string()) + " -o " + shell_quote(out.string()) + " " +
                                extra_args),
          out};
}

TEST(Cli, ReducesAGoodRunAndVerifiesIt) {
  ScratchDir dir;
  dir.write("daq.csv", kDaqCsv);
  auto c = reduce_with(dir, "good", config("daq.csv"));
  ASSERT_EQ(c.result.exit_code, 0) << c.result.err;
  EXPECT_NE(c.result.out.find("archive: "), std::string::npos);
  auto archive = c.out / "r1.h5";
  ASSERT_TRUE(fs::exists(archive));

  auto inspect = run_stallscope("inspect " + shell_quote(archive.string()));
  EXPECT_EQ(inspect.exit_code, 0) << inspect.err;
  EXPECT_NE(inspect.out.find("U_inf_m_s"), std::string::npos);
  EXPECT_NE(inspect.out.find("DAQ file"), std::string::npos);
  EXPECT_NE(inspect.out.find("daq "), std::string::npos);

  auto verify = run_stallscope("verify " + shell_quote(archive.string()));
  EXPECT_EQ(verify.exit_code, 0) << verify.out;
  EXPECT_NE(verify.out.find("all 2 inputs match"), std::string::npos) << verify.out;

  // A changed raw file and a vanished one are both reported, exit 2.
  dir.write("daq.csv", std::string(kDaqCsv) + "0.012,0.8,2.1\n");
  auto changed = run_stallscope("verify " + shell_quote(archive.string()));
  EXPECT_EQ(changed.exit_code, 2);
  EXPECT_NE(changed.out.find("CHANGED"), std::string::npos) << changed.out;
  fs::remove(dir / "daq.csv");
  auto missing = run_stallscope("verify " + shell_quote(archive.string()));
  EXPECT_EQ(missing.exit_code, 2);
  EXPECT_NE(missing.out.find("MISSING"), std::string::npos) << missing.out;
}

TEST(Cli, VersionAndHelpExitZero) {
  auto v = run_stallscope("--version");
  EXPECT_EQ(v.exit_code, 0);
  EXPECT_EQ(v.out.rfind("stallscope ", 0), 0u) << v.out;
  EXPECT_NE(v.out.find("commit"), std::string::npos);
  EXPECT_EQ(run_stallscope("reduce --help").exit_code, 0);
  EXPECT_EQ(run_stallscope("bogus").exit_code, 2);
}

TEST(Cli, MissingConfigFile) {
  ScratchDir dir;
  BadInputCase c{"missing config", run_stallscope("reduce " + shell_quote((dir / "nope.toml").string()) + " -o " +
                                                  shell_quote(dir.path().string())),
                 dir.path()};
  expect_one_clear_line(c, "nope.toml", "config file not found");
}

TEST(Cli, MissingDataFile) {
  ScratchDir dir;
  expect_one_clear_line(reduce_with(dir, "missing-data", config("absent.csv")), "absent.csv", "DAQ file not found");
}

TEST(Cli, UnreadableDataFile) {
  ScratchDir dir;
  fs::create_directories(dir / "folder.csv");
  expect_one_clear_line(reduce_with(dir, "unreadable-data", config("folder.csv")), "folder.csv",
                        "not a regular file");
}

TEST(Cli, DataFileThatIsNotHdf5) {
  ScratchDir dir;
  dir.write("daq.h5", kDaqCsv);
  expect_one_clear_line(reduce_with(dir, "not-hdf5", config("daq.h5")), "daq.h5", "not an HDF5 file");
}

TEST(Cli, DataFileThatIsNotTheExpectedCsv) {
  ScratchDir dir;
  dir.write("daq.csv", "t;enc;pitot\n0;1;2\n");
  expect_one_clear_line(reduce_with(dir, "bad-csv", config("daq.csv")), "daq.csv:1",
                        "expected a CSV header row starting with 'time_s'");
}

TEST(Cli, UnknownKey) {
  ScratchDir dir;
  dir.write("daq.csv", kDaqCsv);
  expect_one_clear_line(reduce_with(dir, "unknown-key", config("daq.csv", "temprature_c = 20\n")),
                        "unknown-key.toml:13:16: conditions.temprature_c", "unknown key");
}

TEST(Cli, UnknownSection) {
  ScratchDir dir;
  dir.write("daq.csv", kDaqCsv);
  expect_one_clear_line(reduce_with(dir, "unknown-section", config("daq.csv", "[tubbing]\ncutoff_hz = 1\n")),
                        "unknown-section.toml:13:1", "unknown section 'tubbing'");
}

TEST(Cli, WrongType) {
  ScratchDir dir;
  dir.write("daq.csv", kDaqCsv);
  std::string cfg = config("daq.csv");
  cfg.replace(cfg.find("chord_m = 0.2"), 13, "chord_m = \"0.2\"");
  expect_one_clear_line(reduce_with(dir, "wrong-type", cfg), "wrong-type.toml:3:11: run.chord_m",
                        "expected a number");
}

TEST(Cli, StageWhoseInputNobodyProduces) {
  ScratchDir dir;
  dir.write("daq.csv", kDaqCsv);
  std::string cfg = config("daq.csv");
  cfg.replace(cfg.find("chord_m = 0.2"), 13, "chord_m = 0.2\nenabled = false");
  expect_one_clear_line(reduce_with(dir, "no-producer", cfg), "no-producer.toml",
                        "stage 'conditions' needs 'run/chord_m', which no enabled stage produces");
}

TEST(Cli, ChannelNamedInTheConfigButAbsent) {
  ScratchDir dir;
  dir.write("daq.csv", kDaqCsv);
  std::string cfg = config("daq.csv");
  cfg.replace(cfg.find("\"alpha_enc\""), 11, "\"encoder\"");
  expect_one_clear_line(reduce_with(dir, "absent-channel", cfg), "absent-channel.toml:9:9: daq.roles.angle",
                        "channel 'encoder' is not in");
}

TEST(Cli, OutputFolderThatCannotBeCreatedOrWritten) {
  ScratchDir dir;
  dir.write("daq.csv", kDaqCsv);
  auto cfg = dir.write("run.toml", config("daq.csv"));
  // /proc refuses new files even to root, where permission bits would not.
  BadInputCase unwritable{"unwritable output", run_stallscope("reduce " + shell_quote(cfg.string()) + " -o /proc"),
                          "/proc"};
  expect_one_clear_line(unwritable, "/proc", "output folder is not writable");
  BadInputCase uncreatable{"uncreatable output",
                           run_stallscope("reduce " + shell_quote(cfg.string()) + " -o /proc/stallscope-out"),
                           "/proc/stallscope-out"};
  expect_one_clear_line(uncreatable, "/proc/stallscope-out", "output folder cannot be created");
}

TEST(Cli, ArchiveAlreadyPresent) {
  ScratchDir dir;
  dir.write("daq.csv", kDaqCsv);
  auto cfg = dir.write("run.toml", config("daq.csv"));
  std::string args = "reduce -q " + shell_quote(cfg.string()) + " -o " + shell_quote(dir.path().string());
  ASSERT_EQ(run_stallscope(args).exit_code, 0);
  auto again = run_stallscope(args);
  EXPECT_EQ(again.exit_code, 2);
  EXPECT_EQ(testing::count_lines(again.err), 1);
  EXPECT_NE(again.err.find("r1.h5: archive already exists (use --force to overwrite it)"), std::string::npos)
      << again.err;
  std::printf("[bad input] %-28s -> %s", "archive already present", again.err.c_str());
  EXPECT_EQ(run_stallscope(args + " --force").exit_code, 0);
}

}  // namespace
}  // namespace stallscope
