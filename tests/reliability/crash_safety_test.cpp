// Crash safety: `reduce` killed with SIGKILL at random moments (fixed seed),
// and the archive writer killed in the middle of a large write. Whatever the
// moment, no file may exist under the archive's final name unless it is
// complete and valid, a rerun must succeed, and the raw inputs must be
// byte-identical afterwards.
#include <gtest/gtest.h>

#include <chrono>
#include <cmath>
#include <numbers>
#include <random>
#include <thread>

#include "pipeline/archive.hpp"
#include "pipeline/hdf5.hpp"
#include "pipeline/sha256.hpp"
#include "tests/reliability/child_process.hpp"
#include "tests/support/test_support.hpp"

namespace stallscope {
namespace {

namespace fs = std::filesystem;
using Clock = std::chrono::steady_clock;
using testing::Child;
using testing::ScratchDir;

constexpr int kKills = 8;                  // kills of `reduce`
constexpr int kWriterKills = 6;            // kills of the archive writer alone
constexpr unsigned kSeed = 20261202;       // fixed: the same kill moments on every run
constexpr Eigen::Index kSamples = 600000;  // a DAQ record of 10 min at 1 kHz: reading and hashing take a moment
constexpr auto kPoll = std::chrono::microseconds(200);

void write_daq(const fs::path& path) {
  h5::File f = h5::File::create(path);
  Eigen::Matrix<double, Eigen::Dynamic, Eigen::Dynamic, Eigen::RowMajor> volts(kSamples, 3);
  Eigen::VectorXd t(kSamples);
  for (Eigen::Index i = 0; i < kSamples; ++i) {
    t[i] = 1e-3 * static_cast<double>(i);
    volts(i, 0) = 1.0 + std::sin(2 * std::numbers::pi * 2.0 * t[i]);
    volts(i, 1) = 2.0 + 0.01 * std::cos(2 * std::numbers::pi * 50.0 * t[i]);
    volts(i, 2) = 3.0;
  }
  h5::write_numbers(f.id(), "daq/time_s", t.data(), {static_cast<hsize_t>(kSamples)}, "s");
  h5::write_numbers(f.id(), "daq/volts", volts.data(), {static_cast<hsize_t>(kSamples), 3}, "V");
  h5::Id ds(H5Dopen2(f.id(), "daq/volts", H5P_DEFAULT));
  h5::write_text_list_attribute(ds.get(), "channels", {"alpha_enc", "q_pitot", "p_static"});
}

const char* kConfig =
    "[run]\nname = \"long\"\nchord_m = 0.15\n\n[daq]\nfile = \"daq.h5\"\n\n[daq.roles]\nangle = \"alpha_enc\"\n"
    "q_ref = \"q_pitot\"\n\n[conditions]\nvelocity_m_s = 25.0\n";

// The invariant after any kill: nothing under the final name, or a complete
// archive whose provenance names the DAQ file with its true hash.
void expect_absent_or_complete(const fs::path& archive, const std::string& daq_sha) {
  if (!fs::exists(archive)) return;
  Provenance p;
  ASSERT_NO_THROW(p = read_provenance(archive)) << archive << " exists but is not a readable archive";
  bool found = false;
  for (const auto& i : p.inputs) found = found || (i.role == "DAQ file" && i.sha256 == daq_sha);
  EXPECT_TRUE(found) << archive << " exists but its provenance lacks the DAQ file";
  EXPECT_EQ(p.stages.size(), 3u);
}

struct Timing {
  double total_s = 0, write_start_s = 0, write_end_s = 0;
};

// Runs `reduce` and watches the output folder: when the partial archive
// appears and when the final one does.
Timing timed_run(const ScratchDir& dir, const fs::path& config, const fs::path& out) {
  Child child({"reduce", "-q", config.string(), "-o", out.string()}, dir.path());
  const auto t0 = Clock::now();
  Timing t;
  const fs::path partial = out / "long.h5.partial", final_path = out / "long.h5";
  auto since = [&] { return std::chrono::duration<double>(Clock::now() - t0).count(); };
  while (!fs::exists(final_path)) {
    if (t.write_start_s == 0 && fs::exists(partial)) t.write_start_s = since();
    if (since() > 120) break;
    std::this_thread::sleep_for(kPoll);
  }
  t.write_end_s = since();
  const auto r = child.wait();
  t.total_s = since();
  EXPECT_EQ(r.exit_code, 0) << r.err;
  return t;
}

TEST(CrashSafety, ReduceKilledAtRandomMomentsNeverLeavesAHalfArchiveAndRerunsCleanly) {
  ScratchDir dir;
  const fs::path daq = dir / "daq.h5";
  write_daq(daq);
  const fs::path config = dir.write("run.toml", kConfig);
  const std::string daq_sha = sha256_file(daq), config_sha = sha256_file(config);

  const Timing clean = timed_run(dir, config, dir / "out-clean");
  ASSERT_GT(clean.write_start_s, 0) << "the partial archive was never seen";
  const double write_window_s = std::max(1e-3, clean.write_end_s - clean.write_start_s);
  std::printf("[crash safety] clean run %.3f s, archive written from %.3f s to %.3f s\n", clean.total_s,
              clean.write_start_s, clean.write_end_s);

  std::mt19937 rng(kSeed);
  int during_write = 0;
  for (int k = 0; k < kKills; ++k) {
    SCOPED_TRACE("kill " + std::to_string(k));
    const fs::path out = dir / ("out-" + std::to_string(k));
    const fs::path archive = out / "long.h5", partial = out / "long.h5.partial";
    std::vector<std::string> args = {"reduce", "-q", config.string(), "-o", out.string()};
    {
      Child child(args, dir.path());
      const auto t0 = Clock::now();
      double delay_s;
      if (k % 2 == 0) {
        // Anywhere in the run: reading, hashing, reducing or writing.
        delay_s = std::uniform_real_distribution<double>(0.0, clean.total_s)(rng);
        std::this_thread::sleep_for(std::chrono::duration<double>(delay_s));
      } else {
        // Inside the archive write: from the moment the partial file appears.
        while (!fs::exists(partial) && !fs::exists(archive) &&
               std::chrono::duration<double>(Clock::now() - t0).count() < 120)
          std::this_thread::sleep_for(kPoll);
        std::this_thread::sleep_for(
            std::chrono::duration<double>(std::uniform_real_distribution<double>(0.0, write_window_s)(rng)));
        delay_s = std::chrono::duration<double>(Clock::now() - t0).count();
      }
      const bool partial_then = fs::exists(partial), final_then = fs::exists(archive);
      child.kill_now();
      child.wait();
      during_write += partial_then && !final_then;
      std::printf("[crash safety] kill %d at %.3f s: %s%s\n", k, delay_s, child.was_killed() ? "killed" : "had exited",
                  partial_then && !final_then ? " during the archive write" : "");
    }
    expect_absent_or_complete(archive, daq_sha);
    // A rerun succeeds over whatever the kill left (a stale partial file included).
    if (!fs::exists(archive)) {
      Child rerun(args, dir.path());
      const auto r = rerun.wait();
      EXPECT_EQ(r.exit_code, 0) << r.err;
    }
    expect_absent_or_complete(archive, daq_sha);
    EXPECT_TRUE(fs::exists(archive));
  }
  EXPECT_GE(during_write, 1) << "no kill landed inside the archive write";
  EXPECT_EQ(sha256_file(daq), daq_sha) << "the raw DAQ file changed";
  EXPECT_EQ(sha256_file(config), config_sha) << "the run config changed";
}

// The archive writer alone, on a store as large as a long pressure run
// (2e5 samples x 32 taps of Cp), killed while it writes.
TEST(CrashSafety, ArchiveWriterKilledMidWriteLeavesNothingUnderTheFinalName) {
  ScratchDir dir;
  RunStore store;
  Matrix cp;
  cp.values.resize(200000, 32);
  for (Eigen::Index c = 0; c < cp.values.cols(); ++c)
    for (Eigen::Index i = 0; i < cp.values.rows(); ++i)
      cp.values(i, c) = std::sin(1e-3 * static_cast<double>(i) + static_cast<double>(c)) +
                        1e-7 * static_cast<double>(i % 97);
  cp.units = "1";
  for (int c = 0; c < 32; ++c) cp.columns.push_back("p" + std::to_string(c + 1));
  store.put("pressure/cp", cp);
  store.put("run/chord_m", Scalar{0.15, "m"});
  Provenance provenance = Provenance::start("crash-safety test");
  const ArchiveTarget target{dir / "out", "big", false};

  auto write_in_child = [&] {
    pid_t pid = fork();
    if (pid == 0) {
      try {
        write_archive(store, provenance, target);
      } catch (...) {
        _exit(3);
      }
      _exit(0);
    }
    return pid;
  };
  // How long one write takes, to spread the kills over it.
  const auto t0 = Clock::now();
  pid_t pid = write_in_child();
  int status = 0;
  waitpid(pid, &status, 0);
  ASSERT_TRUE(WIFEXITED(status) && WEXITSTATUS(status) == 0);
  const double write_s = std::chrono::duration<double>(Clock::now() - t0).count();
  fs::remove(target.archive_path());
  std::printf("[crash safety] archive writer: %.3f s for a %lld x %lld Cp matrix\n", write_s,
              static_cast<long long>(cp.values.rows()), static_cast<long long>(cp.values.cols()));

  std::mt19937 rng(kSeed + 1);
  for (int k = 0; k < kWriterKills; ++k) {
    SCOPED_TRACE("writer kill " + std::to_string(k));
    pid = write_in_child();
    const double delay_s = std::uniform_real_distribution<double>(0.0, write_s)(rng);
    std::this_thread::sleep_for(std::chrono::duration<double>(delay_s));
    kill(pid, SIGKILL);
    waitpid(pid, &status, 0);
    if (fs::exists(target.archive_path())) {
      // Finished before the kill: then it must be whole.
      RunStore back = read_archive(target.archive_path());
      ASSERT_TRUE(back.contains("pressure/cp"));
      EXPECT_EQ(back.get<Matrix>("pressure/cp").values, cp.values);
      fs::remove(target.archive_path());
    }
  }
  // And a write after all those kills succeeds.
  EXPECT_NO_THROW(write_archive(store, provenance, target));
  EXPECT_EQ(read_archive(target.archive_path()).get<Matrix>("pressure/cp").values, cp.values);
}

}  // namespace
}  // namespace stallscope
