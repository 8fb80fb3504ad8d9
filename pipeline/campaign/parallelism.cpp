#include "pipeline/campaign/parallelism.hpp"

#include <sched.h>

#include <algorithm>
#include <thread>

namespace stallscope::campaign {

Parallelism plan_parallelism(int jobs, std::size_t runs, int cores, int sharing) {
  const int own_cores = std::max(1, cores / std::max(1, sharing));
  Parallelism p;
  if (jobs > 0) {
    p.concurrent_runs = jobs;
  } else {
    const std::size_t wanted = std::max<std::size_t>(1, runs);
    p.concurrent_runs = static_cast<int>(std::min<std::size_t>(static_cast<std::size_t>(own_cores), wanted));
  }
  p.threads_per_run = std::max(1, own_cores / p.concurrent_runs);
  return p;
}

int available_cores() {
  cpu_set_t set;
  CPU_ZERO(&set);
  if (sched_getaffinity(0, sizeof set, &set) == 0) return std::max(1, CPU_COUNT(&set));
  return std::max(1u, std::thread::hardware_concurrency());
}

bool bound_to_part_of_machine() {
  return static_cast<unsigned>(available_cores()) < std::max(1u, std::thread::hardware_concurrency());
}

}  // namespace stallscope::campaign
