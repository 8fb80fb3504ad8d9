#pragma once
// One read of a large set for an exact order statistic: of the values v =
// x[i] (or the deviations v = |x[i] - centre|), how many are finite, how many
// finite ones lie below lo, and those in [lo, hi] gathered in band. Selecting
// among the gathered few then gives the statistic, when lo and hi bracket it.
// On AVX2 machines four values go a step (chosen at run time); the counts and
// the gathered values are the same on any machine, their order in band too.
#include <cstddef>
#include <span>

namespace stallscope::numerics {

struct BracketCount {
  std::size_t finite = 0, below = 0, between = 0;
};

// band must hold x.size() + 4 values. NaN and infinities are neither counted
// nor gathered.
BracketCount gather_bracket(std::span<const double> x, const double* centre, double lo, double hi, double* band);

}  // namespace stallscope::numerics
