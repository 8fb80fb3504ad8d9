#pragma once
// A campaign across nodes: started by mpirun on a stallscope built with
// -DSTALLSCOPE_WITH_MPI=ON, the ranks share the runs. Rank 0 hands them out one
// at a time to whichever rank has a free slot (its own included), since runs
// differ in size, and gathers every outcome; the summary is then written by
// rank 0 from the archives, exactly as in local mode. The output folder must be
// one that every rank sees (a shared file system).
#include <vector>

#include "pipeline/campaign/local_runs.hpp"

namespace stallscope::campaign {

bool built_with_mpi();
// This process was started by mpirun (OpenMPI or an MPICH-style launcher),
// and with how many processes in all.
bool started_by_mpirun();
int mpirun_world_size();

class MpiSession {
 public:
  MpiSession();   // MPI_Init (unless already initialised)
  ~MpiSession();  // MPI_Finalize (if this session initialised MPI)
  MpiSession(const MpiSession&) = delete;
  MpiSession& operator=(const MpiSession&) = delete;

  int rank() const { return rank_; }
  int size() const { return size_; }
  // Ranks of this campaign on this node (they share its cores unless bound).
  int local_size() const { return local_size_; }

  // Every outcome (manifest order) on rank 0; empty on the other ranks.
  std::vector<RunOutcome> reduce(const Manifest& manifest, const JobSettings& settings, int slots,
                                 const OnOutcome& on_outcome);
  // Rank 0's exit code, on every rank.
  int shared_exit_code(int code_on_rank0);

 private:
  bool owns_ = false;
  int rank_ = 0, size_ = 1, local_size_ = 1;
};

}  // namespace stallscope::campaign
