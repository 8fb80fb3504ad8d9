#pragma once
// Synthetic PIV: a lab-frame vector grid over the suction side (origin on the
// pitch axis, x downstream, y up), the free stream plus Lamb-Oseen vortices
// (theory/lamb_oseen) at the generator's true vortex positions, rotated with
// alpha(t) about the pitch axis; the airfoil masked (valid = 0). Frames are
// triggered on the DAQ clock (pulses in the DAQ channel cam_trigger) and time-
// stamped on the camera's own clock, which runs fast or slow by clock_drift_ppm;
// a few triggered frames are dropped from the stack. Frames are rendered from the
// flow state as the DAQ stream passes their trigger time and appended one by one
// to piv.h5, so memory does not grow with the number of frames.
#include <filesystem>
#include <memory>
#include <vector>

#include "tools/synth/flow_model.hpp"
#include "tools/synth/h5_append.hpp"
#include "tools/synth/random.hpp"

namespace stallscope::synth {

// A vortex as it appears in a PIV frame (lab frame).
struct FieldVortex {
  int kind = 0;  // 1 dynamic-stall vortex, 2 its secondary, 3 wall secondary, 4 TE vortex, 5 KH blob, 6 bound
  int track = 0;
  double x_m = 0.0, y_m = 0.0, circulation = 0.0, core_radius_m = 0.0;
};

class PivGenerator {
 public:
  // Plans the frames; opens `file` for writing when [piv] is enabled.
  PivGenerator(const Scenario& scenario, const FlowModel& model, const std::filesystem::path& file);
  bool enabled() const { return scenario_.piv.enabled; }

  // The cam_trigger channel at DAQ sample time t (5 V during a pulse); t increasing.
  double trigger_volts(double t, double dt);
  // Renders every frame whose trigger falls in [s.t, s.t + dt).
  void observe(const FlowSample& s, double dt);
  // Streams the true vortices of each frame into truth/piv/vortex/* of the open truth file as
  // frames are rendered, so memory does not grow with the frames (call before the first frame).
  void stream_truth(hid_t truth_file);
  // Closes the stack and writes the rest of the PIV truth into the truth file.
  void finish(hid_t truth_file);
  std::int64_t frames_written() const { return frames_written_; }

  // The vortices a frame at DAQ time t shows, for state s sampled at s.t <= t.
  std::vector<FieldVortex> field_vortices(const FlowSample& s, double t) const;
  // Lab-frame velocity of the free stream and those vortices at (x, y).
  void velocity(const std::vector<FieldVortex>& vortices, double x, double y, double& u, double& v) const;

 private:
  void render(const FlowSample& s, double t_frame);

  const Scenario& scenario_;
  double chord_, velocity_, pivot_;
  std::vector<double> triggers_;   // DAQ clock
  std::vector<bool> dropped_;
  std::size_t trigger_cursor_ = 0, frame_cursor_ = 0;
  std::vector<double> x_m_, y_m_;
  h5::Id file_;
  std::unique_ptr<AppendableDataset> u_, v_, valid_, time_;
  std::vector<AppendableDataset> truth_vortex_;  // frame, kind, track, x_m, y_m, circulation, core_radius_m
  std::vector<std::int64_t> stack_index_;
  std::int64_t frames_written_ = 0;
  Random random_;
};

}  // namespace stallscope::synth
