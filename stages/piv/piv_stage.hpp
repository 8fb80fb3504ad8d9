#pragma once
// [piv]: from the PIV stack to vortex detections, one chunk of frames at a
// time (a long run is never held in memory): ingest, frame times onto the DAQ
// clock (camera trigger pulses, or a constant delay), the airfoil mask at
// each frame's angle, the normalised median test with replacement, vorticity
// and swirl strength, detection. Frames run in parallel inside a chunk.
// The small per-frame and per-detection tables it writes are what the
// [vortex] stage tracks.
#include <filesystem>
#include <optional>
#include <string>

#include "pipeline/stage.hpp"
#include "stages/piv/masks.hpp"

namespace stallscope {

class PivStage final : public Stage {
 public:
  static constexpr std::string_view kName = "piv";
  static constexpr std::string_view kSummary =
      "PIV frames: time sync, airfoil mask, median test, swirl strength, vortex detection (chunked)";

  struct Options {
    std::filesystem::path file;                  // HDF5 stack or folder of text frames (required)
    std::string text_units = "m/s";              // text frames carry no units: m/s | px/frame
    std::optional<std::filesystem::path> calibration;  // `stallscope calib piv-target` file: gives metres_per_pixel
    double metres_per_pixel = 0;                 // needed for px/frame (0: not given)
    double pulse_separation_s = 0;               // laser pulse separation, needed for px/frame
    std::int64_t chunk_frames = 64;              // frames in memory at once
    std::string sync = "auto";                   // auto | trigger | delay
    double trigger_delay_s = 0;                  // delay mode: t_daq = t_camera + delay
    std::int64_t first_pulse = 0;                // trigger edge of frame 0
    double median_threshold = 2.0;               // Westerweel & Scarano 2005
    double median_epsilon_px = 0.1;              // Westerweel & Scarano 2005
    double median_epsilon_m_s = 0;               // overrides the px value for m/s data (0: from px)
    std::int64_t median_min_neighbours = 3;
    double max_replaced_fraction = 0.2;          // more replaced vectors: frame flagged (common practice)
    std::string gradient = "central";            // central | least_squares
    double pivot_x_m = 0, pivot_y_m = 0;         // pitch axis in the PIV frame (required)
    double chord_angle_offset_deg = 0;           // registration: geometric angle at alpha = 0
    // config: the place above, checked against the data (piv/registration);
    // data: found from the vectors the stack marks invalid inside the model,
    // starting from the place above and searching this far.
    std::string registration = "config";
    double registration_search_over_c = 0.1;
    double registration_search_deg = 3.0;
    bool mask_airfoil = true;
    double mask_offset_over_c = 0.01;            // wall band masked beside the section
    double reflection_band_over_c = 0.02;        // glare looked for this far beyond that band (0: not looked for)
    double reflection_speed_fraction = 0.1;      // of U_inf: a slower vector there is glare (common practice)
    std::int64_t patch_min_cells = 16;           // bad vectors in a patch this large are masked, not filled (0: never)
    // [piv.masks.NAME]: x = [...], y = [...] (a polygon), frame = "lab" (m)
    // or "airfoil" (x/c, y/c: moves with the model), frames = [first, last].
    std::vector<piv::MaskRegion> masks;
    double noise_factor = 3.0;
    double min_swirl_1_s = 0;
    std::int64_t min_region_cells = 4;
    std::int64_t cluster_gap_cells = 2;
    // With [uncertainty]: every replica reduces the frames again with new noise
    // of each frame's estimated random error added (N more PIV reductions). A
    // replica then carries sqrt 2 the measured noise, so its spread bounds the
    // random error's effect from above.
    bool random_error_replicas = false;
    bool orientation_check = true;               // refuse a field that looks mirrored (piv/orientation)
    bool gamma2 = false;                         // Gamma2 at each detection's centre
    std::int64_t gamma2_half_width = 0;          // cells; 0: the vortex's own size (scale selection)
    bool gamma2_cores_only = false;              // drop detections no more rotational than a pure shear
  };

  std::string_view name() const override { return kName; }
  std::string_view summary() const override { return kSummary; }
  bool repeated_in_replicas() const override { return options_.random_error_replicas; }
  void configure(ConfigSection& section) override;
  std::vector<std::string> inputs() const override;
  std::vector<std::string> optional_inputs() const override;
  std::vector<std::string> outputs() const override;
  void run(RunContext& context) override;

  const Options& options() const { return options_; }

 private:
  Options options_;
  std::string where_file_, where_units_, where_sync_, where_airfoil_, where_calibration_, where_registration_;
};

}  // namespace stallscope
