#pragma once
// Vortex detection in one frame: swirl strength above a threshold set by the
// frame's measured noise (not by the field's maximum, which would lock onto the
// strongest shear-layer blob), connected regions of one vorticity sign
// (OpenCV connected components), same-sign regions a few cells apart joined
// into one vortex (a fed shear layer breaks into Kelvin-Helmholtz blobs), and
// small regions dropped.
#include <cstdint>
#include <vector>

#include "stages/piv/frame_source.hpp"
#include "stages/piv/swirl.hpp"

namespace stallscope::piv {

struct DetectionOptions {
  double noise_factor = 3.0;       // threshold = noise_factor x noise swirl (common practice: 3 sigma)
  double min_threshold = 0.0;      // 1/s; floor for noise-free fields
  int min_cells = 4;               // smaller vortices are not resolved (common practice)
  int cluster_gap_cells = 2;       // same-sign regions with at most this many cells between them merge
  double loose_factor = 0.5;       // circulation's sensitivity: boundary at 0.5x and 2x the threshold
  double strict_factor = 2.0;
};

struct Detection {
  int sign = 0;                    // sign of the vorticity: +1 counter-clockwise in the lab frame
  double x_m = 0, y_m = 0;         // lambda_ci-weighted centroid, lab frame
  std::size_t centre_j = 0, centre_i = 0;  // grid point nearest the centroid
  double circulation = 0;          // integrated vorticity over the region, m^2/s
  double circulation_loose = 0;    // ... with the boundary at loose_factor x threshold
  double circulation_strict = 0;   // ... with the boundary at strict_factor x threshold
  double peak_swirl = 0;           // 1/s
  double area_m2 = 0;
  std::size_t cells = 0, replaced_cells = 0;
  std::size_t regions = 0;         // connected regions joined into this one
};

// Robust noise level of the frame: 1.4826 x the median absolute deviation of
// the vorticity, as the swirl strength a solid-body rotation of that vorticity
// has (omega / 2). 0 when no gradient is finite.
double noise_swirl(const SwirlField& field);

// 8-connected labels (1..count, 0 background) of a ny x nx mask, by OpenCV;
// only rows first_row to last_row are looked at (the caller knows the others
// hold no cell).
int label_regions(const std::vector<std::uint8_t>& mask, std::size_t ny, std::size_t nx, std::vector<int>& labels,
                  std::size_t first_row = 0, std::size_t last_row = static_cast<std::size_t>(-1));
// Frames (and runs) are reduced in parallel already: OpenCV's own thread pool
// inside each labelling only oversubscribes the cores. Call once, at start.
void label_regions_in_caller_threads();

// The threshold used is returned in *threshold if given. `replaced` may be empty.
std::vector<Detection> detect_vortices(const Grid& grid, const SwirlField& field,
                                       const std::vector<std::uint8_t>& replaced, const DetectionOptions& options,
                                       double* threshold = nullptr);

// Cell areas of the grid (half the distance to each neighbour in x and y).
std::vector<double> cell_areas(const Grid& grid);

}  // namespace stallscope::piv
