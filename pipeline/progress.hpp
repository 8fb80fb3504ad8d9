#pragma once
// Progress on stderr for long work: a bar when stderr is a terminal, a plain
// line every few seconds otherwise, nothing with --quiet. Thread-safe.
#include <chrono>
#include <cstddef>
#include <mutex>
#include <string>

namespace stallscope {

class Progress {
 public:
  enum class Mode { kQuiet, kLines, kBar };
  explicit Progress(Mode mode) : mode_(mode) {}
  // kBar if stderr is a terminal, else kLines; kQuiet if quiet.
  static Progress for_stderr(bool quiet);

  // Starts a task of `total` steps (0: unknown).
  void begin(const std::string& task, std::size_t total = 0);
  void advance(std::size_t steps = 1);
  void end();
  // A one-off message (not while a bar is drawn).
  void note(const std::string& message);

 private:
  void draw(bool force);
  Mode mode_;
  std::mutex mutex_;
  std::string task_;
  std::size_t total_ = 0, done_ = 0;
  std::chrono::steady_clock::time_point started_, last_draw_;
};

}  // namespace stallscope
