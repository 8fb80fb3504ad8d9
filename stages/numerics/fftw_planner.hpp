#pragma once
// FFTW's planner is not thread-safe (fftw_execute is): every plan in the
// program is made and destroyed under this one lock, whichever file makes it.
#include <mutex>

namespace stallscope::numerics {

std::mutex& fftw_planner_mutex();

}  // namespace stallscope::numerics
