#pragma once
// The swirl-strength field the report shows at vortex onset: [piv] keeps no
// fields (a long run would not fit in memory), so the one frame is read and
// reduced again with the recipe [piv] archived in piv/processing.
#include <cstdint>

#include "pipeline/run_context.hpp"

namespace stallscope::piv {

// Stores vortex/onset_swirl (ny x nx, lambda_ci c/U signed by the vorticity)
// for `frame`, with where the section stood and `about` (cycle, track, how the
// frame was chosen) as attributes. Needs piv/processing, piv/frames,
// piv/grid_*, run/chord_m, run/U_inf_m_s, run/pivot_x_over_c.
void store_onset_swirl(RunContext& context, std::int64_t frame, Attributes about);

}  // namespace stallscope::piv
