#pragma once
// Spurious-vector detection by the normalised median test (Westerweel &
// Scarano 2005, Exp. Fluids 39:1096-1100): r0* = |U0 - Um| / (rm + eps) over
// the valid 3x3 neighbours; an outlier in either component is replaced by the
// local median of its valid neighbours.
#include <cmath>
#include <cstdint>
#include <span>
#include <vector>

#include "stages/piv/frame_source.hpp"

namespace stallscope::piv {

struct MedianTestOptions {
  double threshold = 2.0;   // published default
  double epsilon = 0.1;     // in the velocity's units (0.1 px/frame published)
  int min_neighbours = 3;   // fewer valid neighbours: not tested / not replaceable (common practice)
  int patch_min_cells = 0;  // a connected patch of this many bad vectors is masked, not filled (0: never)
};

// The median; the mean of the middle two for an even count. The first
// reorders its values, the second a copy.
double median_in_place(std::span<double> values);
double median_of(std::vector<double> values);
// A vector the file holds: marked valid, both components finite.
inline bool measured(const Frame& f, std::size_t p) {
  return f.valid[p] && std::isfinite(f.u[p]) && std::isfinite(f.v[p]);
}
// The 3x3 neighbours of point (j, i) for which keep is set, one component
// at a time (nu, nv cleared first).
void neighbours_kept(const Grid& grid, const Frame& frame, std::size_t j, std::size_t i,
                     const std::vector<std::uint8_t>& keep, std::vector<double>& nu, std::vector<double>& nv);
// r0* of one value against its neighbours (at least one).
double normalised_median_residual(double value, std::span<const double> neighbours, double epsilon);

struct ValidationCounts {
  std::size_t vectors = 0;        // points in the flow (not masked)
  std::size_t missing = 0;        // not valid or not finite in the file
  std::size_t outliers = 0;       // failed the median test
  std::size_t replaced = 0;       // missing or outliers filled by the local median
  std::size_t unrecoverable = 0;  // left empty: too few valid neighbours
  std::size_t patches = 0;        // missing or outliers in a patch of at least patch_min_cells, masked
  std::size_t regions = 0;        // masked by a user's region (not in `vectors`)
  std::size_t reflections = 0;    // masked as glare at the wall (not in `vectors`)
};

// The random error of one velocity component (one standard deviation, in the
// frame's units), from the frame itself: the residual of each vector against
// the mean of its four axis neighbours cancels every linear and harmonic
// (irrotational) part of the flow and leaves 1.25 sigma^2 of independent
// noise; its median absolute value (1.4826 MAD, Rousseeuw & Croux 1993),
// taken again without residuals beyond 4 sigma (those a spurious vector
// spoils), is robust to outliers and vortex cores. Valid, finite vectors of a
// uniform grid only; NaN when fewer than 20 residuals exist.
double random_error(const Grid& grid, const Frame& frame);

// Tests and repairs a frame in place. `masked` (size of the grid, may be
// empty) marks points outside the flow (inside the airfoil): they are emptied
// and never used; so are the patches of bad vectors (patch_min_cells).
// `replaced` (out, resized) marks vectors that were filled.
ValidationCounts validate_frame(const Grid& grid, Frame& frame, const std::vector<std::uint8_t>& masked,
                                const MedianTestOptions& options, std::vector<std::uint8_t>& replaced);

}  // namespace stallscope::piv
