#pragma once
// How many runs to reduce at once on a node and how many threads each may
// use, so that together they fill the cores without oversubscribing them.
#include <cstddef>

namespace stallscope::campaign {

struct Parallelism {
  int concurrent_runs = 1;
  int threads_per_run = 1;
};

// cores: the cores this process may run on; sharing: processes of the same
// campaign that share those cores (MPI ranks on one node, unbound); jobs: the
// user's -j (0: as many runs at once as there are cores, but never more than
// there are runs).
Parallelism plan_parallelism(int jobs, std::size_t runs, int cores, int sharing);

// The cores this process may run on (its CPU affinity mask, which mpirun's
// binding narrows), and whether that is every core of the machine.
int available_cores();
bool bound_to_part_of_machine();

}  // namespace stallscope::campaign
