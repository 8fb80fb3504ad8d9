#include "pipeline/campaign/run_processes.hpp"

#include <fcntl.h>
#include <poll.h>
#include <sys/prctl.h>
#include <sys/wait.h>
#include <unistd.h>

#include <cerrno>
#include <csignal>
#include <cstdio>
#include <cstring>
#include <iostream>
#include <stdexcept>

namespace stallscope::campaign {

RunProcesses::RunProcesses(std::size_t slots, Job job) : slots_(slots < 1 ? 1 : slots), job_(std::move(job)) {}

RunProcesses::~RunProcesses() {
  for (auto& c : children_) {
    kill(c.pid, SIGKILL);
    waitpid(c.pid, nullptr, 0);
    close(c.fd);
  }
}

namespace {

void write_all(int fd, const std::string& text) {
  std::size_t done = 0;
  while (done < text.size()) {
    ssize_t n = write(fd, text.data() + done, text.size() - done);
    if (n < 0 && errno == EINTR) continue;
    if (n <= 0) return;
    done += static_cast<std::size_t>(n);
  }
}

}  // namespace

void RunProcesses::start(std::size_t index) {
  if (!has_free_slot()) throw std::logic_error("RunProcesses::start without a free slot");
  int fds[2];
  if (pipe2(fds, O_CLOEXEC) != 0) throw std::runtime_error(std::string("pipe failed: ") + std::strerror(errno));
  // Buffered output would otherwise be written twice, once by each process.
  std::cout.flush();
  std::fflush(nullptr);
  const pid_t parent = getpid();
  const pid_t pid = fork();
  if (pid < 0) {
    close(fds[0]);
    close(fds[1]);
    throw std::runtime_error(std::string("fork failed: ") + std::strerror(errno));
  }
  if (pid == 0) {
    // The child: reduce, report, and leave without running the parent's
    // exit handlers or destructors (they belong to the parent's process).
    close(fds[0]);
    prctl(PR_SET_PDEATHSIG, SIGKILL);
    if (getppid() != parent) _exit(1);
    RunOutcome outcome;
    try {
      outcome = job_(index);
    } catch (...) {
      outcome.index = index;
      outcome.error = "internal error: the run's job threw";
    }
    write_all(fds[1], outcome.serialised());
    close(fds[1]);
    _exit(0);
  }
  close(fds[1]);
  children_.push_back({pid, fds[0], index, {}});
}

RunOutcome RunProcesses::finish(Child& child) {
  close(child.fd);
  int status = 0;
  while (waitpid(child.pid, &status, 0) < 0 && errno == EINTR) {
  }
  if (WIFEXITED(status) && WEXITSTATUS(status) == 0 && !child.received.empty())
    return RunOutcome::deserialised(child.received);
  RunOutcome o;
  o.index = child.index;
  if (WIFSIGNALED(status))
    o.error = std::string("the reduction process was killed by signal ") + std::to_string(WTERMSIG(status)) + " (" +
              strsignal(WTERMSIG(status)) + ")";
  else
    o.error = "the reduction process ended (exit code " + std::to_string(WEXITSTATUS(status)) + ") without a result";
  return o;
}

std::vector<RunOutcome> RunProcesses::collect(int timeout_ms) {
  std::vector<RunOutcome> done;
  if (children_.empty()) return done;
  std::vector<pollfd> fds;
  for (const auto& c : children_) fds.push_back({c.fd, POLLIN, 0});
  int ready = poll(fds.data(), fds.size(), timeout_ms);
  if (ready < 0 && errno != EINTR) throw std::runtime_error(std::string("poll failed: ") + std::strerror(errno));
  for (std::size_t i = fds.size(); ready > 0 && i-- > 0;) {
    if (!(fds[i].revents & (POLLIN | POLLHUP | POLLERR))) continue;
    Child& c = children_[i];
    char buffer[4096];
    ssize_t n = read(c.fd, buffer, sizeof buffer);
    if (n < 0 && errno == EINTR) continue;
    if (n > 0) {
      c.received.append(buffer, static_cast<std::size_t>(n));
      continue;
    }
    done.push_back(finish(c));  // end of file: the child has written all it will
    children_.erase(children_.begin() + static_cast<long>(i));
  }
  return done;
}

}  // namespace stallscope::campaign
