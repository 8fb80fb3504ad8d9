#pragma once
// Vortex tracking across frames: each live track predicts where it will be
// (constant velocity from its last two positions), takes the nearest
// same-sign detection inside its gate, and dies after a few frames without
// one; an unclaimed detection starts a track. A track that dies where its
// prediction leaves the measured field has "left the field of view".
#include <cstdint>
#include <string>
#include <vector>

namespace stallscope::piv {

struct Observation {
  std::int64_t frame = 0;
  double t_s = 0;
  int sign = 0;
  double x_over_c = 0, y_over_c = 0;  // airfoil frame
  double x_m = 0, y_m = 0;            // lab frame
  double radius_m = 0;                // sqrt(area / pi)
  double circulation = 0;             // Gamma / (U c), signed
};

struct FieldOfView {
  double x_min = 0, x_max = 0, y_min = 0, y_max = 0;  // lab metres
  // Whether a vortex of this radius centred at (x, y) lies wholly inside.
  bool contains(double x, double y, double radius) const {
    return x - radius >= x_min && x + radius <= x_max && y - radius >= y_min && y + radius <= y_max;
  }
};

struct TrackingOptions {
  double gate_over_c = 0.1;  // search radius about the prediction, chords
  int max_gap_frames = 2;    // frames a track may go unmatched before it ends
};

struct Track {
  std::int64_t id = 0;
  int sign = 0;
  std::vector<std::size_t> observations;  // indices into the observation list, in frame order
  std::string end_reason;                 // "left the field of view", "lost", "end of record"
};

// `observations` sorted by frame; `frames` the processed frames in order
// (a frame with no detection still counts against a track's gap).
std::vector<Track> track_vortices(const std::vector<Observation>& observations, const std::vector<std::int64_t>& frames,
                                  const FieldOfView& view, const TrackingOptions& options);

// Least-squares slope of x/c against convective time tU/c: the convection
// speed in units of U, with its standard error. Needs 3 points or more.
struct SpeedFit {
  bool ok = false;
  double speed = 0, uncertainty = 0;
  std::size_t points = 0;
};
SpeedFit fit_convection_speed(const std::vector<double>& t_conv, const std::vector<double>& x_over_c);

}  // namespace stallscope::piv
