#include "stages/piv/onset_field.hpp"

#include "pipeline/errors.hpp"
#include "stages/piv/frame_reduction.hpp"

namespace stallscope::piv {

void store_onset_swirl(RunContext& context, std::int64_t frame, Attributes about) {
  RunStore& store = context.store();
  const Table& processing = store.get<Table>("piv/processing");
  std::optional<theory::Naca4Section> section;
  if (processing.integers("airfoil_mask").at(0) != 0)
    section = mask_section(store.get<Text>("run/airfoil").value, "run/airfoil");
  RecipeRecord record = recipe_from_table(processing, section);
  FrameRecipe& recipe = record.recipe;
  const double chord = store.get<Scalar>("run/chord_m").value, speed = store.get<Scalar>("run/U_inf_m_s").value;
  recipe.placement.chord_m = chord;
  recipe.placement.pivot_x_over_c = store.get<Scalar>("run/pivot_x_over_c").value;

  auto source = open_frame_source(record.file, record.text_units, [&](const std::filesystem::path& p) { context.raw_input(p, "PIV frames"); });
  if (frame < 0 || static_cast<std::size_t>(frame) >= source->frames())
    throw InputError(source->source(), "frame " + std::to_string(frame) + " is not in the stack (it has " +
                                           std::to_string(source->frames()) + ")");
  const Table& frames = store.get<Table>("piv/frames");
  const auto row = static_cast<std::size_t>(frame);
  const double alpha = frames.numbers("alpha_deg").at(row), t = frames.numbers("t_s").at(row);
  std::vector<Frame> one;
  source->read(row, 1, one);
  const ReducedFrame reduced = reduce_frame(source->grid(), recipe, one.front(), alpha);
  if (!reduced.flag.empty()) return;  // flagged frames hold no detections, so none is an onset

  about["frame"] = frame;
  about["t_s"] = t;
  about["alpha_deg"] = alpha;
  about["pivot_x_m"] = recipe.placement.pivot_x_m;
  about["pivot_y_m"] = recipe.placement.pivot_y_m;
  about["chord_angle_offset_deg"] = recipe.placement.chord_angle_offset_deg;
  about["normalised_by"] = std::string("lambda_ci by U_inf/c, signed by the vorticity (clockwise negative)");
  about["grid"] = std::string("rows piv/grid_y_m, columns piv/grid_x_m; NaN where masked or without a gradient");
  store.put("vortex/onset_swirl", Matrix{signed_swirl(source->grid(), reduced.field, chord / speed), "1", {}},
            std::move(about));
}

}  // namespace stallscope::piv
