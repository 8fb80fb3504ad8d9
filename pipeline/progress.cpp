#include "pipeline/progress.hpp"

#include <unistd.h>

#include <cstdio>

namespace stallscope {

using Clock = std::chrono::steady_clock;

Progress Progress::for_stderr(bool quiet) {
  if (quiet) return Progress(Mode::kQuiet);
  return Progress(isatty(STDERR_FILENO) ? Mode::kBar : Mode::kLines);
}

void Progress::begin(const std::string& task, std::size_t total) {
  std::lock_guard lock(mutex_);
  task_ = task;
  total_ = total;
  done_ = 0;
  started_ = last_draw_ = Clock::now();
  draw(true);
}

void Progress::advance(std::size_t steps) {
  std::lock_guard lock(mutex_);
  done_ += steps;
  draw(false);
}

void Progress::end() {
  std::lock_guard lock(mutex_);
  if (mode_ == Mode::kQuiet) return;
  double s = std::chrono::duration<double>(Clock::now() - started_).count();
  if (mode_ == Mode::kBar) std::fprintf(stderr, "\r\033[K");
  std::fprintf(stderr, "stallscope: %s done (%.2f s)\n", task_.c_str(), s);
}

void Progress::note(const std::string& message) {
  std::lock_guard lock(mutex_);
  if (mode_ != Mode::kQuiet) std::fprintf(stderr, "stallscope: %s\n", message.c_str());
}

void Progress::draw(bool force) {
  if (mode_ == Mode::kQuiet) return;
  auto now = Clock::now();
  const auto interval = mode_ == Mode::kBar ? std::chrono::milliseconds(100) : std::chrono::milliseconds(5000);
  if (!force && now - last_draw_ < interval) return;
  last_draw_ = now;
  if (mode_ == Mode::kLines) {
    if (force) return;  // begin() already said what started
    if (total_ > 0)
      std::fprintf(stderr, "stallscope: %s %zu/%zu (%.0f%%)\n", task_.c_str(), done_, total_, 100.0 * done_ / total_);
    else
      std::fprintf(stderr, "stallscope: %s %zu\n", task_.c_str(), done_);
    return;
  }
  constexpr int kWidth = 30;
  if (total_ > 0) {
    int filled = static_cast<int>(kWidth * static_cast<double>(done_) / total_);
    if (filled > kWidth) filled = kWidth;
    std::fprintf(stderr, "\r\033[K%-28s [%.*s%*s] %3.0f%%", task_.c_str(), filled,
                 "==============================", kWidth - filled, "", 100.0 * done_ / total_);
  } else {
    std::fprintf(stderr, "\r\033[K%-28s %zu", task_.c_str(), done_);
  }
  std::fflush(stderr);
}

}  // namespace stallscope
