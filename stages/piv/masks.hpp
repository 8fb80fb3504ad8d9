#pragma once
// Masks besides the airfoil's own, for what the camera recorded but the flow
// did not do: regions the user marks (a polygon fixed in the lab, or moving
// with the model, for some frames or all), glare at the wall, and patches of
// bad vectors too large for a local median to fill (a shadow, a dropout).
#include <cstddef>
#include <cstdint>
#include <limits>
#include <string>
#include <vector>

#include "stages/piv/airfoil_frame.hpp"
#include "stages/piv/frame_source.hpp"

namespace stallscope::piv {

struct MaskRegion {
  std::string name;
  bool moves_with_model = false;  // vertices in x/c, y/c of the airfoil frame; else lab metres
  std::vector<double> x, y;       // the polygon's vertices, at least 3
  std::size_t first_frame = 0;    // the frames it covers, inclusive (file frame numbers)
  std::size_t last_frame = std::numeric_limits<std::size_t>::max();
};

// Sets mask[p] = 1 at the unmasked points inside any region covering `frame`
// at angle alpha_deg; returns how many it set.
std::size_t mark_regions(const Grid& grid, const AirfoilPlacement& placement, double alpha_deg, std::size_t frame,
                         const std::vector<MaskRegion>& regions, std::vector<std::uint8_t>& mask);

// Laser light off the surface correlates at zero displacement. A valid vector
// in the wall band (mask[p] == 2, from airfoil_mask) slower than speed_m_s
// and more than twice that from the median of its valid neighbours is glare;
// a slow vector in slow surroundings (a separated region, a reversal) is flow.
// Glare is often too dense for the normalised median test, whose scale (the
// neighbours' own spread) it inflates; here the scale is the free stream's.
// Band points become 1 (glare) or 0 (flow); returns the glare count.
std::size_t mark_reflections(const Grid& grid, const Frame& frame, double speed_m_s, std::vector<std::uint8_t>& mask);

// Sets patch[p] = 1 on every patch of `bad` that holds 3 x 3 blocks of bad
// points, at least min_cells of them 8-connected; returns how many it set.
// A median of the valid neighbours fills an isolated spurious vector; inside a
// dropout it only smears the patch's edge inward.
std::size_t mark_patches(const Grid& grid, const std::vector<std::uint8_t>& bad, int min_cells,
                         std::vector<std::uint8_t>& patch);

// The regions as text, a line each, and back (the archive's piv/processing).
std::string regions_text(const std::vector<MaskRegion>& regions);
std::vector<MaskRegion> regions_from_text(const std::string& text);

}  // namespace stallscope::piv
