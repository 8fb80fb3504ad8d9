#pragma once
// [vortex]: tracks the detections of [piv] across frames and reads the
// dynamic-stall vortex's story from them, cycle by cycle: the leading-edge
// vortex (its sign and a birth near the leading edge), when it was first
// seen, when it detached (the end of its circulation growth, or the eruption
// of the opposite-sign secondary vortex beneath it, whichever is first), when
// it passed the trailing edge, how fast it convected, and when later vortices
// were shed. Phase-locked PIV (mode = "phase_locked") is averaged per phase
// instead.
#include <string>

#include "pipeline/stage.hpp"

namespace stallscope {

class VortexStage final : public Stage {
 public:
  static constexpr std::string_view kName = "vortex";
  static constexpr std::string_view kSummary =
      "track vortices; leading-edge vortex detection, detachment, trailing-edge passage, convection speed per cycle";

  struct Options {
    // Search radius about the predicted position; 0: the distance the fastest
    // plausible vortex (plausible_speed) moves in one frame, at least 0.1 c.
    double gate_over_c = 0;
    std::int64_t max_gap_frames = 2;          // unmatched frames before a track ends
    std::int64_t min_track_frames = 3;        // shorter tracks are noise
    std::int64_t le_sign = -1;                // LE vortex rotation: clockwise with the flow left to right, suction side up
    // Born near the leading edge: first seen ahead of this (a coarse grid sees
    // the vortex only once it has grown and begun to move).
    double le_birth_max_x_over_c = 0.4;
    double secondary_distance_over_c = 0.15;  // an opposite-sign birth this close beneath the LE vortex is an eruption
    std::vector<double> convection_window_x_over_c = {0.2, 1.0};  // positions fitted for the convection speed
    double te_x_over_c = 1.0;
    // A later LE vortex counts as shed when its circulation reaches this share of
    // the first one's (weaker ones are shear-layer blobs; common practice).
    double shedding_min_circulation_ratio = 0.2;
    std::vector<double> plausible_speed = {0.1, 0.7};  // U; outside: suspect (McCroskey 1981, a bound only)
    // phase_locked: a few snapshots per cycle at set phases; no tracking, the
    // LE vortex of each snapshot averaged per phase bin into vortex/phase_locked.
    std::string mode = "time_resolved";       // time_resolved | phase_locked
    double phase_bin_deg = 5.0;
  };

  std::string_view name() const override { return kName; }
  std::string_view summary() const override { return kSummary; }
  // Replicas track again with the frame times perturbed by the clock's uncertainty.
  bool repeated_in_replicas() const override { return true; }
  void configure(ConfigSection& section) override;
  std::vector<std::string> inputs() const override;
  std::vector<std::string> optional_inputs() const override;
  std::vector<std::string> outputs() const override;
  void run(RunContext& context) override;

 private:
  void run_phase_locked(RunContext& context);
  Options options_;
};

}  // namespace stallscope
