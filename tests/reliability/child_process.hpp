#pragma once
// Starting the stallscope binary as a child process the test controls: with
// a file-size limit (a full disk without a small file system), or to be
// killed with SIGKILL at a chosen moment.
#include <fcntl.h>
#include <signal.h>
#include <sys/resource.h>
#include <sys/wait.h>
#include <unistd.h>

#include <filesystem>
#include <optional>
#include <string>
#include <vector>

#include "tests/support/test_support.hpp"

namespace stallscope::testing {

struct ChildOptions {
  // RLIMIT_FSIZE in bytes; SIGXFSZ is ignored so a write past it fails with EFBIG,
  // as a write to a full disk fails with ENOSPC.
  std::optional<rlim_t> file_size_limit;
};

class Child {
 public:
  // Starts kBinary with `args`; stdout and stderr go to files in `scratch`.
  Child(const std::vector<std::string>& args, const std::filesystem::path& scratch, const ChildOptions& options = {})
      : out_(scratch / "child-stdout.txt"), err_(scratch / "child-stderr.txt") {
    std::vector<std::string> argv = {kBinary.string()};
    argv.insert(argv.end(), args.begin(), args.end());
    std::vector<char*> c_argv;
    for (auto& a : argv) c_argv.push_back(a.data());
    c_argv.push_back(nullptr);
    pid_ = fork();
    if (pid_ == 0) {
      // Only async-signal-safe calls between fork and exec.
      int in = open("/dev/null", O_RDONLY);
      int out = open(out_.c_str(), O_WRONLY | O_CREAT | O_TRUNC, 0644);
      int err = open(err_.c_str(), O_WRONLY | O_CREAT | O_TRUNC, 0644);
      if (in < 0 || out < 0 || err < 0) _exit(127);
      dup2(in, 0);
      dup2(out, 1);
      dup2(err, 2);
      if (options.file_size_limit) {
        signal(SIGXFSZ, SIG_IGN);
        rlimit limit{*options.file_size_limit, *options.file_size_limit};
        if (setrlimit(RLIMIT_FSIZE, &limit) != 0) _exit(127);
      }
      execv(c_argv[0], c_argv.data());
      _exit(127);
    }
  }
  Child(const Child&) = delete;
  Child& operator=(const Child&) = delete;
  ~Child() {
    if (pid_ > 0 && !waited_) {
      kill(pid_, SIGKILL);
      wait();
    }
  }

  bool started() const { return pid_ > 0; }
  void kill_now() { kill(pid_, SIGKILL); }
  // Waits for the child; exit_code is -1 when it died of a signal.
  CommandResult wait() {
    int status = 0;
    while (waitpid(pid_, &status, 0) < 0 && errno == EINTR) {
    }
    waited_ = true;
    CommandResult r;
    r.exit_code = WIFEXITED(status) ? WEXITSTATUS(status) : -1;
    killed_ = WIFSIGNALED(status) && WTERMSIG(status) == SIGKILL;
    r.out = read_text(out_);
    r.err = read_text(err_);
    return r;
  }
  bool was_killed() const { return killed_; }

 private:
  std::filesystem::path out_, err_;
  pid_t pid_ = -1;
  bool waited_ = false, killed_ = false;
};

}  // namespace stallscope::testing
