#include "stages/piv/frame_reduction.hpp"

#include <cctype>
#include <cmath>
#include <limits>

#include "pipeline/errors.hpp"

namespace stallscope::piv {

theory::Naca4Section mask_section(const std::string& airfoil, const std::string& where) {
  std::string digits, letters;
  for (char c : airfoil) {
    const auto u = static_cast<unsigned char>(c);
    if (std::isdigit(u)) digits += c;
    if (std::isalpha(u)) letters += static_cast<char>(std::toupper(u));
  }
  if (letters != "NACA" || digits.size() != 4)
    throw InputError(where, "the airfoil mask needs a NACA 4-digit section, [run] airfoil is '" + airfoil +
                                "' (set [piv] mask_airfoil = false to measure without a mask)");
  return theory::parse_naca4(digits, false, where);
}

ReducedFrame reduce_frame(const Grid& grid, const FrameRecipe& recipe, Frame& frame, double alpha_deg) {
  ReducedFrame r;
  if (recipe.to_m_s != 1.0) {
    const auto scale = static_cast<float>(recipe.to_m_s);
    for (std::size_t p = 0; p < frame.u.size(); ++p) frame.u[p] *= scale, frame.v[p] *= scale;
  }
  std::vector<std::uint8_t> mask;
  const bool glare = recipe.section && recipe.reflection_band_over_c > 0 && recipe.reflection_speed_m_s > 0;
  if (recipe.section)
    mask = airfoil_mask(grid, recipe.placement, *recipe.section, alpha_deg, recipe.mask_offset_over_c,
                        glare ? recipe.reflection_band_over_c : 0.0);
  // Regions before glare: a vector the user masked is not counted twice.
  const std::size_t in_regions =
      recipe.regions.empty() ? 0 : mark_regions(grid, recipe.placement, alpha_deg, frame.index, recipe.regions, mask);
  const std::size_t reflections = glare ? mark_reflections(grid, frame, recipe.reflection_speed_m_s, mask) : 0;
  r.counts = validate_frame(grid, frame, mask, recipe.median, r.replaced);
  r.counts.regions = in_regions;
  r.counts.reflections = reflections;
  if (r.counts.missing == r.counts.vectors) {
    r.flag = "no valid vectors";
  } else if (static_cast<double>(r.counts.replaced + r.counts.unrecoverable) >
             recipe.max_replaced_fraction * static_cast<double>(r.counts.vectors)) {
    r.flag = "too many replaced vectors";
  } else {
    r.field = swirl_field(grid, frame, recipe.scheme);
  }
  return r;
}

Table recipe_table(const RecipeRecord& record) {
  const FrameRecipe& r = record.recipe;
  using Texts = std::vector<std::string>;
  using Numbers = std::vector<double>;
  using Integers = std::vector<std::int64_t>;
  Table t;
  t.add({"file", "", Texts{record.file.string()}}).add({"text_units", "", Texts{record.text_units}})
      .add({"velocity_scale_to_m_s", "1", Numbers{r.to_m_s}}).add({"median_threshold", "1", Numbers{r.median.threshold}})
      .add({"median_epsilon_m_s", "m/s", Numbers{r.median.epsilon}})
      .add({"median_min_neighbours", "1", Integers{r.median.min_neighbours}})
      .add({"max_replaced_fraction", "1", Numbers{r.max_replaced_fraction}})
      .add({"gradient", "", Texts{r.scheme == GradientScheme::kCentral ? "central" : "least_squares"}})
      .add({"pivot_x_m", "m", Numbers{r.placement.pivot_x_m}}).add({"pivot_y_m", "m", Numbers{r.placement.pivot_y_m}})
      .add({"chord_angle_offset_deg", "deg", Numbers{r.placement.chord_angle_offset_deg}})
      .add({"airfoil_mask", "1", Integers{r.section ? 1 : 0}})
      .add({"mask_offset_over_c", "1", Numbers{r.mask_offset_over_c}})
      .add({"reflection_band_over_c", "1", Numbers{r.reflection_band_over_c}})
      .add({"reflection_speed_m_s", "m/s", Numbers{r.reflection_speed_m_s}})
      .add({"patch_min_cells", "1", Integers{r.median.patch_min_cells}})
      .add({"mask_regions", "", Texts{regions_text(r.regions)}});
  return t;
}

RecipeRecord recipe_from_table(const Table& t, std::optional<theory::Naca4Section> section) {
  RecipeRecord record;
  FrameRecipe& r = record.recipe;
  record.file = t.texts("file").at(0);
  record.text_units = t.texts("text_units").at(0);
  r.to_m_s = t.numbers("velocity_scale_to_m_s").at(0);
  r.median.threshold = t.numbers("median_threshold").at(0);
  r.median.epsilon = t.numbers("median_epsilon_m_s").at(0);
  r.median.min_neighbours = static_cast<int>(t.integers("median_min_neighbours").at(0));
  r.max_replaced_fraction = t.numbers("max_replaced_fraction").at(0);
  r.scheme = t.texts("gradient").at(0) == "central" ? GradientScheme::kCentral : GradientScheme::kLeastSquares;
  r.placement.pivot_x_m = t.numbers("pivot_x_m").at(0);
  r.placement.pivot_y_m = t.numbers("pivot_y_m").at(0);
  r.placement.chord_angle_offset_deg = t.numbers("chord_angle_offset_deg").at(0);
  r.mask_offset_over_c = t.numbers("mask_offset_over_c").at(0);
  r.reflection_band_over_c = t.numbers("reflection_band_over_c").at(0);
  r.reflection_speed_m_s = t.numbers("reflection_speed_m_s").at(0);
  r.median.patch_min_cells = static_cast<int>(t.integers("patch_min_cells").at(0));
  r.regions = regions_from_text(t.texts("mask_regions").at(0));
  if (t.integers("airfoil_mask").at(0) != 0) r.section = std::move(section);
  return record;
}

Eigen::MatrixXd signed_swirl(const Grid& grid, const SwirlField& field, double scale) {
  Eigen::MatrixXd m(static_cast<Eigen::Index>(grid.ny()), static_cast<Eigen::Index>(grid.nx()));
  for (std::size_t j = 0; j < grid.ny(); ++j)
    for (std::size_t i = 0; i < grid.nx(); ++i) {
      const std::size_t p = j * grid.nx() + i;
      const double w = field.vorticity.empty() ? std::numeric_limits<double>::quiet_NaN() : field.vorticity[p];
      const double s = field.swirl.empty() ? std::numeric_limits<double>::quiet_NaN() : field.swirl[p];
      m(static_cast<Eigen::Index>(j), static_cast<Eigen::Index>(i)) =
          std::isfinite(w) && std::isfinite(s) ? std::copysign(s * scale, w) : std::numeric_limits<double>::quiet_NaN();
    }
  return m;
}

}  // namespace stallscope::piv
