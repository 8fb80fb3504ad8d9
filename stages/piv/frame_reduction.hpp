#pragma once
// One PIV frame from file values to a swirl-strength field: velocity to m/s,
// the airfoil mask at the frame's angle, the user's regions, glare at the
// wall, the normalised median test with replacement (patches of bad vectors
// masked), then the gradients. [piv] reduces every frame this way; the
// recipe it used is archived (piv/processing) so [vortex] can reduce the one
// frame it shows again, the same way, without holding fields in memory.
#include <filesystem>
#include <optional>
#include <string>
#include <vector>

#include "pipeline/values.hpp"
#include "stages/piv/airfoil_frame.hpp"
#include "stages/piv/frame_source.hpp"
#include "stages/piv/masks.hpp"
#include "stages/piv/swirl.hpp"
#include "stages/piv/validation.hpp"
#include "stages/theory/naca4.hpp"

namespace stallscope::piv {

struct FrameRecipe {
  double to_m_s = 1.0;  // file velocity units to m/s
  MedianTestOptions median;
  double max_replaced_fraction = 0.2;  // more replaced vectors: frame flagged
  GradientScheme scheme = GradientScheme::kCentral;
  AirfoilPlacement placement;
  std::optional<theory::Naca4Section> section;  // the mask's section; none: no mask
  double mask_offset_over_c = 0.01;
  double reflection_band_over_c = 0;  // glare looked for this far beyond the mask (0: not looked for)
  double reflection_speed_m_s = 0;    // slower vectors in that band are glare
  std::vector<MaskRegion> regions;    // the user's
};

struct ReducedFrame {
  ValidationCounts counts;
  std::vector<std::uint8_t> replaced;  // vectors filled by the median test
  SwirlField field;                    // empty when flagged
  std::string flag;                    // why the frame was not differentiated; empty: it was
};

// The NACA 4-digit section of [run] airfoil ("NACA 0012"), for the mask;
// InputError at `where` for any other designation.
theory::Naca4Section mask_section(const std::string& airfoil, const std::string& where);

// Reduces `frame` in place (scaled, masked, repaired) at angle alpha_deg.
ReducedFrame reduce_frame(const Grid& grid, const FrameRecipe& recipe, Frame& frame, double alpha_deg);

// The recipe as a one-row archive table (one column per setting, with its
// units), with the frame source (file, text_units), and back. The section,
// chord and pivot x/c are not in it (they are [run]'s): the caller sets them.
struct RecipeRecord {
  FrameRecipe recipe;
  std::filesystem::path file;
  std::string text_units;
};
Table recipe_table(const RecipeRecord& record);
RecipeRecord recipe_from_table(const Table& table, std::optional<theory::Naca4Section> section);

// Lambda_ci signed by the vorticity's sign (clockwise negative) and scaled by
// c / U: one map shows both where vortices are and which way they turn. NaN
// where there is no gradient. Row-major ny x nx.
Eigen::MatrixXd signed_swirl(const Grid& grid, const SwirlField& field, double scale);

}  // namespace stallscope::piv
