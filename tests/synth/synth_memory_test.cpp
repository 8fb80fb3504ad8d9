// `stallscope synth` writes a PIV stack of any length in memory that does not
// grow with its frames: the peak resident set of two runs that differ only in
// their frame count is compared (the DAQ record is the same in both).
#include <gtest/gtest.h>
#include <sys/resource.h>
#include <sys/wait.h>
#include <unistd.h>

#include <cstdio>
#include <string>

#include "tests/support/test_support.hpp"

// gcc says so with a macro, clang with __has_feature.
#if defined(__SANITIZE_ADDRESS__)
#define STALLSCOPE_UNDER_ASAN 1
#elif defined(__has_feature)
#if __has_feature(address_sanitizer)
#define STALLSCOPE_UNDER_ASAN 1
#endif
#endif

namespace stallscope::testing {
namespace {

// Peak resident set of one `stallscope synth` child, in bytes (Linux: KiB in ru_maxrss).
long peak_rss_of_synth(const ScratchDir& dir, int frames) {
  const std::string tag = std::to_string(frames);
  const auto scenario = dir.write("frames_" + tag + ".toml",
                                  "[scenario]\nseed = 5\n"
                                  "[motion]\nreduced_frequency = 0.1\ncycles = 60\n"
                                  "[daq]\nsample_rate_hz = 8000.0\n"
                                  "[taps]\nper_surface = 4\n"
                                  "[piv]\nenabled = true\nrate_hz = 2000.0\ntrigger_pulse_s = 0.0001\nnx = 8\nny = 6\nmax_frames = " +
                                      tag + "\n");
  const std::string out = (dir / ("run_" + tag)).string();
  const pid_t child = fork();
  if (child == 0) {
    const std::string binary = kBinary.string();
    execl(binary.c_str(), binary.c_str(), "synth", scenario.c_str(), "-o", out.c_str(), "--quiet",
          static_cast<char*>(nullptr));
    _exit(127);
  }
  int status = 0;
  rusage usage{};
  EXPECT_EQ(wait4(child, &status, 0, &usage), child);
  EXPECT_TRUE(WIFEXITED(status) && WEXITSTATUS(status) == 0) << "synth of " << frames << " frames failed";
  return usage.ru_maxrss * 1024L;
}

TEST(SynthMemory, PeakMemoryDoesNotGrowWithTheNumberOfPivFrames) {
#ifdef STALLSCOPE_UNDER_ASAN
  GTEST_SKIP() << "AddressSanitizer's allocator holds freed memory: its peak says nothing of the release build's";
#endif
  ScratchDir dir;
  constexpr int kFew = 1000, kMany = 20000;
  const long few = peak_rss_of_synth(dir, kFew), many = peak_rss_of_synth(dir, kMany);
  // Measured on this grid: chunk indexes kept in the metadata cache grew the
  // peak by about 800 B a frame; since the fix 140 to 280 B a frame remain
  // (still unexplained: not libhdf5's free lists). The bound fails the former.
  constexpr double kBytesPerFrame = 400.0;
  std::printf("peak RSS %ld KiB at %d PIV frames, %ld KiB at %d: %.0f B a frame\n", few / 1024, kFew, many / 1024,
              kMany, static_cast<double>(many - few) / (kMany - kFew));
  EXPECT_LT(static_cast<double>(many - few), kBytesPerFrame * (kMany - kFew))
      << "peak RSS " << few / 1024 << " KiB at " << kFew << " frames, " << many / 1024 << " KiB at " << kMany;
}

}  // namespace
}  // namespace stallscope::testing
