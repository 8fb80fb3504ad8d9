#pragma once
// Runs reduced in child processes, a fixed number at a time. A run that
// crashes, aborts or is killed for memory takes down only its own process and
// is reported as failed; its archive was never renamed into place. Children
// die with the campaign (PR_SET_PDEATHSIG), so an interrupted campaign leaves
// no reduction running behind it.
#include <sys/types.h>

#include <cstddef>
#include <functional>
#include <string>
#include <vector>

#include "pipeline/campaign/run_job.hpp"

namespace stallscope::campaign {

class RunProcesses {
 public:
  // job(index) runs in the child; it must not throw (reduce_campaign_run does not).
  using Job = std::function<RunOutcome(std::size_t index)>;
  RunProcesses(std::size_t slots, Job job);
  ~RunProcesses();  // kills and reaps children still running
  RunProcesses(const RunProcesses&) = delete;
  RunProcesses& operator=(const RunProcesses&) = delete;

  std::size_t running() const { return children_.size(); }
  bool has_free_slot() const { return children_.size() < slots_; }
  void start(std::size_t index);
  // Waits up to timeout_ms (-1: until at least one run finishes; 0: only
  // looks) and returns the outcomes of the runs that finished.
  std::vector<RunOutcome> collect(int timeout_ms);

 private:
  struct Child {
    pid_t pid;
    int fd;  // read end of the pipe the child writes its outcome to
    std::size_t index;
    std::string received;
  };
  RunOutcome finish(Child& child);

  std::size_t slots_;
  Job job_;
  std::vector<Child> children_;
};

}  // namespace stallscope::campaign
