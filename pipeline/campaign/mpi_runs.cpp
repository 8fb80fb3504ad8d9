#include "pipeline/campaign/mpi_runs.hpp"

#include <chrono>
#include <cstdlib>
#include <stdexcept>
#include <string>
#include <thread>

#include "pipeline/campaign/run_processes.hpp"

#ifdef STALLSCOPE_WITH_MPI
// Only the C interface is used; the deprecated C++ bindings warn under -Wextra.
#define OMPI_SKIP_MPICXX 1
#define MPICH_SKIP_MPICXX 1
#include <mpi.h>
#endif

namespace stallscope::campaign {

int mpirun_world_size() {
  for (const char* name : {"OMPI_COMM_WORLD_SIZE", "PMI_SIZE", "PMIX_SIZE"})
    if (const char* v = std::getenv(name)) return std::max(1, std::atoi(v));
  return 0;
}

bool started_by_mpirun() { return mpirun_world_size() > 0; }

#ifndef STALLSCOPE_WITH_MPI

bool built_with_mpi() { return false; }
MpiSession::MpiSession() { throw std::logic_error("this stallscope was built without MPI"); }
MpiSession::~MpiSession() = default;
std::vector<RunOutcome> MpiSession::reduce(const Manifest&, const JobSettings&, int, const OnOutcome&) {
  throw std::logic_error("this stallscope was built without MPI");
}
int MpiSession::shared_exit_code(int code) { return code; }

#else

bool built_with_mpi() { return true; }

namespace {

enum Tag : int { kRequest = 1, kAssign = 2, kResult = 3, kDone = 4 };
constexpr int kNoMoreRuns = -1;
// Rank 0 looks for messages this often while its own runs are busy; a
// blocking MPI receive would spin a core the runs need.
constexpr int kPollMilliseconds = 2;

void check(int rc, const char* what) {
  if (rc != MPI_SUCCESS) throw std::runtime_error(std::string("MPI: ") + what + " failed");
}

void send_text(const std::string& text, int to, int tag) {
  check(MPI_Send(text.data(), static_cast<int>(text.size()), MPI_CHAR, to, tag, MPI_COMM_WORLD), "send");
}

// Waits for a request without spinning: a blocking MPI call busy-polls, and
// on a machine whose cores the runs fill, a rank waiting for work or for the
// others to finish would take a core from a run.
void wait_politely(MPI_Request& request) {
  for (int done = 0;;) {
    check(MPI_Test(&request, &done, MPI_STATUS_IGNORE), "test");
    if (done) return;
    std::this_thread::sleep_for(std::chrono::milliseconds(kPollMilliseconds));
  }
}

std::string receive_text(const MPI_Status& probed) {
  int count = 0;
  MPI_Get_count(&probed, MPI_CHAR, &count);
  std::string text(static_cast<std::size_t>(count), '\0');
  check(MPI_Recv(text.data(), count, MPI_CHAR, probed.MPI_SOURCE, probed.MPI_TAG, MPI_COMM_WORLD, MPI_STATUS_IGNORE),
        "receive");
  return text;
}

}  // namespace

MpiSession::MpiSession() {
  int initialised = 0;
  MPI_Initialized(&initialised);
  if (!initialised) {
    // Open MPI's default messaging layer (UCX) spends some 0.2 s probing the
    // network at start-up; a campaign's messages are a run index or outcome
    // of a few hundred bytes, which the ob1 layer carries as well over shared
    // memory or TCP. A user's own choice (mpirun --mca pml, or the variable) stands.
    setenv("OMPI_MCA_pml", "ob1", 0);
    check(MPI_Init(nullptr, nullptr), "MPI_Init");
    owns_ = true;
  }
  MPI_Comm_rank(MPI_COMM_WORLD, &rank_);
  MPI_Comm_size(MPI_COMM_WORLD, &size_);
  MPI_Comm node;
  MPI_Comm_split_type(MPI_COMM_WORLD, MPI_COMM_TYPE_SHARED, rank_, MPI_INFO_NULL, &node);
  MPI_Comm_size(node, &local_size_);
  MPI_Comm_free(&node);
}

MpiSession::~MpiSession() {
  if (owns_) MPI_Finalize();
}

int MpiSession::shared_exit_code(int code) {
  MPI_Request request;
  check(MPI_Ibcast(&code, 1, MPI_INT, 0, MPI_COMM_WORLD, &request), "broadcast");
  wait_politely(request);
  return code;
}

std::vector<RunOutcome> MpiSession::reduce(const Manifest& manifest, const JobSettings& settings, int slots,
                                           const OnOutcome& on_outcome) {
  const std::size_t n = manifest.runs.size();
  RunProcesses processes(static_cast<std::size_t>(slots),
                         [&](std::size_t i) { return run_in_child(manifest, settings, i); });
  std::vector<RunOutcome> outcomes;

  if (rank_ != 0) {
    // Ask for a run whenever a slot is free; report each outcome as it comes.
    bool more = true;
    while (true) {
      while (more && processes.has_free_slot()) {
        check(MPI_Send(nullptr, 0, MPI_INT, 0, kRequest, MPI_COMM_WORLD), "send");
        int index = kNoMoreRuns;
        MPI_Request request;
        check(MPI_Irecv(&index, 1, MPI_INT, 0, kAssign, MPI_COMM_WORLD, &request), "receive");
        wait_politely(request);
        if (index == kNoMoreRuns) more = false;
        else processes.start(static_cast<std::size_t>(index));
      }
      if (processes.running() == 0) break;
      for (auto& o : processes.collect(-1)) {
        o.rank = rank_;
        send_text(o.serialised(), 0, kResult);
      }
    }
    check(MPI_Send(nullptr, 0, MPI_INT, 0, kDone, MPI_COMM_WORLD), "send");
    return outcomes;
  }

  outcomes.resize(n);
  auto record = [&](RunOutcome o) {
    if (on_outcome) on_outcome(o);
    const std::size_t i = o.index;
    outcomes.at(i) = std::move(o);
  };
  std::size_t next = 0;
  int ranks_done = 0;
  while (true) {
    while (next < n && processes.has_free_slot()) processes.start(next++);
    bool handled = false;
    for (int flag = 1; flag;) {
      MPI_Status status;
      check(MPI_Iprobe(MPI_ANY_SOURCE, MPI_ANY_TAG, MPI_COMM_WORLD, &flag, &status), "probe");
      if (!flag) break;
      handled = true;
      if (status.MPI_TAG == kResult) {
        record(RunOutcome::deserialised(receive_text(status)));
        continue;
      }
      check(MPI_Recv(nullptr, 0, MPI_INT, status.MPI_SOURCE, status.MPI_TAG, MPI_COMM_WORLD, MPI_STATUS_IGNORE),
            "receive");
      if (status.MPI_TAG == kDone) {
        ++ranks_done;
      } else if (status.MPI_TAG == kRequest) {
        int index = next < n ? static_cast<int>(next++) : kNoMoreRuns;
        check(MPI_Send(&index, 1, MPI_INT, status.MPI_SOURCE, kAssign, MPI_COMM_WORLD), "send");
      }
    }
    if (next >= n && processes.running() == 0 && ranks_done == size_ - 1) break;
    if (processes.running() > 0) {
      for (auto& o : processes.collect(handled ? 0 : kPollMilliseconds)) record(std::move(o));
    } else if (!handled) {
      std::this_thread::sleep_for(std::chrono::milliseconds(kPollMilliseconds));
    }
  }
  return outcomes;
}

#endif

}  // namespace stallscope::campaign
