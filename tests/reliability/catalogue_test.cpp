// The bad-input catalogue: every folder under tests/reliability/catalogue/ is
// one small malformed input with an expect.toml saying what a user must see —
// exit code 2 and one line on stderr holding every `message` fragment (the
// file and the line, key or dataset). Nothing may be left under the archive's
// name, and the raw inputs must be byte-identical afterwards.
//
// expect.toml keys:
//   what            one line: what is wrong (required)
//   message         fragments that must all be on the one stderr line (required)
//   exit_code       expected exit code (default 2)
//   args            arguments after the binary (default reduce -q {case}/run.toml -o {out});
//                   {case} is a scratch copy of the case folder, {out} the output folder
//   output          fresh | inside_a_file | read_only | full_disk | file_size_limit
//   limit_bytes     size of the full disk or the file-size limit
//   requires_stages stages that must be registered, else the case is skipped
#include <gtest/gtest.h>
#include <sys/mount.h>

#include <algorithm>
#include <map>
#include <toml++/toml.h>

#include "pipeline/sha256.hpp"
#include "tests/reliability/child_process.hpp"
#include "tests/support/test_support.hpp"

namespace stallscope {
namespace {

namespace fs = std::filesystem;
using testing::Child;
using testing::ChildOptions;
using testing::ScratchDir;

const fs::path kCatalogue = testing::kSourceDir / "tests/reliability/catalogue";
constexpr int kMinimumCases = 30;  // issue 10: "at least 30 cases"

std::vector<std::string> case_names() {
  std::vector<std::string> names;
  std::error_code ec;
  for (const auto& e : fs::directory_iterator(kCatalogue, ec))
    if (e.is_directory()) names.push_back(e.path().filename().string());
  std::sort(names.begin(), names.end());
  return names;
}

struct Expectation {
  std::string what;
  int exit_code = 2;
  std::vector<std::string> message;
  std::vector<std::string> args = {"reduce", "-q", "{case}/run.toml", "-o", "{out}"};
  std::string output = "fresh";
  std::int64_t limit_bytes = 0;
  std::vector<std::string> requires_stages;
};

std::vector<std::string> strings(const toml::node& n, const std::string& key) {
  std::vector<std::string> out;
  const toml::array* a = n.as_array();
  if (!a) throw std::runtime_error(key + ": expected an array of strings");
  for (const auto& e : *a) {
    auto s = e.value_exact<std::string>();
    if (!s) throw std::runtime_error(key + ": expected an array of strings");
    out.push_back(*s);
  }
  return out;
}

Expectation read_expectation(const fs::path& file) {
  toml::table t = toml::parse_file(file.string());
  Expectation e;
  for (const auto& [k, n] : t) {
    const std::string key(k.str());
    if (key == "what") e.what = n.value_exact<std::string>().value_or("");
    else if (key == "exit_code") e.exit_code = static_cast<int>(n.value_exact<std::int64_t>().value_or(-99));
    else if (key == "message") e.message = strings(n, key);
    else if (key == "args") e.args = strings(n, key);
    else if (key == "output") e.output = n.value_exact<std::string>().value_or("?");
    else if (key == "limit_bytes") e.limit_bytes = n.value_exact<std::int64_t>().value_or(0);
    else if (key == "requires_stages") e.requires_stages = strings(n, key);
    else throw std::runtime_error(file.string() + ": unknown key '" + key + "'");
  }
  if (e.what.empty() || e.message.empty()) throw std::runtime_error(file.string() + ": needs 'what' and 'message'");
  return e;
}

std::string substituted(std::string s, const fs::path& case_dir, const fs::path& out) {
  const std::vector<std::pair<std::string, std::string>> words = {{"{case}", case_dir.string()},
                                                                   {"{out}", out.string()}};
  for (const auto& [from, to] : words)
    for (auto at = s.find(from); at != std::string::npos; at = s.find(from, at + to.size()))
      s.replace(at, from.size(), to);
  return s;
}

// Path -> SHA-256 of every file under a folder.
std::map<std::string, std::string> hashes(const fs::path& folder) {
  std::map<std::string, std::string> out;
  for (const auto& e : fs::recursive_directory_iterator(folder))
    if (e.is_regular_file()) out[fs::relative(e.path(), folder).string()] = sha256_file(e.path());
  return out;
}

// A tmpfs mounted for one case (root with CAP_SYS_ADMIN only), unmounted after.
class TmpfsMount {
 public:
  TmpfsMount(const fs::path& at, bool read_only, std::int64_t bytes) : at_(at) {
    fs::create_directories(at);
    const std::string size = "size=" + std::to_string(bytes);
    mounted_ = mount("tmpfs", at.c_str(), "tmpfs", read_only ? MS_RDONLY : 0, size.c_str()) == 0;
  }
  ~TmpfsMount() {
    if (mounted_) umount2(at_.c_str(), MNT_DETACH);
  }
  bool mounted() const { return mounted_; }

 private:
  fs::path at_;
  bool mounted_ = false;
};

std::vector<std::string> registered_stage_names() {
  std::vector<std::string> names;
  std::istringstream lines(testing::run_stallscope("stages").out);
  for (std::string line; std::getline(lines, line);) names.push_back(line.substr(0, line.find(' ')));
  return names;
}

TEST(CatalogueFolder, HoldsAtLeastThirtyCasesEachWithAnExpectFile) {
  const auto names = case_names();
  EXPECT_GE(static_cast<int>(names.size()), kMinimumCases);
  for (const auto& n : names) {
    SCOPED_TRACE(n);
    ASSERT_TRUE(fs::is_regular_file(kCatalogue / n / "expect.toml"));
    EXPECT_NO_THROW(read_expectation(kCatalogue / n / "expect.toml"));
  }
}

class Catalogue : public ::testing::TestWithParam<std::string> {};

TEST_P(Catalogue, BadInputExitsTwoWithOneLineNamingWhereAndLeavesNoArchive) {
  const std::string name = GetParam();
  const Expectation e = read_expectation(kCatalogue / name / "expect.toml");
  SCOPED_TRACE(name + ": " + e.what);
  if (!e.requires_stages.empty()) {
    const auto have = registered_stage_names();
    for (const auto& s : e.requires_stages)
      if (std::find(have.begin(), have.end(), s) == have.end()) GTEST_SKIP() << "stage '" << s << "' is not built";
  }

  ScratchDir dir;
  const fs::path case_dir = dir / "case";
  fs::copy(kCatalogue / name, case_dir, fs::copy_options::recursive);
  fs::remove(case_dir / "expect.toml");
  const auto before = hashes(case_dir);

  fs::path out = dir / "out";
  ChildOptions options;
  std::optional<TmpfsMount> mount_point;
  if (e.output == "inside_a_file") {
    out = case_dir / "run.toml" / "out";
  } else if (e.output == "read_only") {
    out = dir / "read-only";
    mount_point.emplace(out, true, 65536);
    if (!mount_point->mounted()) {
      // Without mount rights: permission bits stop everyone but root; /proc stops root too.
      fs::create_directories(out);
      if (geteuid() == 0) out = "/proc";
      else fs::permissions(out, fs::perms::owner_read | fs::perms::owner_exec);
    }
  } else if (e.output == "full_disk") {
    ASSERT_GT(e.limit_bytes, 0);
    out = dir / "small-disk";
    mount_point.emplace(out, false, e.limit_bytes);
    if (!mount_point->mounted())
      GTEST_SKIP() << "cannot mount a tmpfs here (needs root with CAP_SYS_ADMIN); "
                      "the file_size_limit case simulates the full disk instead";
  } else if (e.output == "file_size_limit") {
    ASSERT_GT(e.limit_bytes, 0);
    options.file_size_limit = static_cast<rlim_t>(e.limit_bytes);
  } else {
    ASSERT_EQ(e.output, "fresh") << "unknown output kind";
  }

  std::vector<std::string> args;
  for (const auto& a : e.args) args.push_back(substituted(a, case_dir, out));
  Child child(args, dir.path(), options);
  ASSERT_TRUE(child.started());
  const testing::CommandResult r = child.wait();

  EXPECT_EQ(r.exit_code, e.exit_code) << r.err;
  EXPECT_EQ(testing::count_lines(r.err), 1) << r.err;
  for (const auto& fragment : e.message) {
    const std::string f = substituted(fragment, case_dir, out);
    EXPECT_NE(r.err.find(f), std::string::npos) << "missing '" << f << "' in: " << r.err;
  }
  if (fs::is_directory(out) && out != "/proc") {
    for (const auto& f : fs::recursive_directory_iterator(out)) {
      const std::string file = f.path().filename().string();
      EXPECT_FALSE(file.ends_with(".h5") || file.ends_with(".partial") || file.ends_with(".csv"))
          << "left behind: " << f.path();
    }
  }
  EXPECT_EQ(hashes(case_dir), before) << "a raw input changed";
  std::printf("[catalogue] %-30s -> %s", name.c_str(), r.err.c_str());
}

INSTANTIATE_TEST_SUITE_P(BadInput, Catalogue, ::testing::ValuesIn(case_names()),
                         [](const ::testing::TestParamInfo<std::string>& info) { return info.param; });

}  // namespace
}  // namespace stallscope
