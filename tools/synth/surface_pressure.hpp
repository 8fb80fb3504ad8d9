#pragma once
// Chordwise Cp of the synthetic run and its integrated loads.
//
// Attached flow is the exact potential flow of the symmetric Joukowski section
// of the same thickness (t/c = 1.299 epsilon; Milne-Thomson), mapped by x/c onto
// the NACA 4-digit taps, at an angle alpha_J solved each sample so that the
// integrated Cn equals the model's (Theodorsen + Kirchhoff) value. Its own small
// thickness moment about c/4 is cancelled with a moment-only loading, so the
// attached aerodynamic centre stays at c/4 as in Theodorsen's theory. Apparent
// mass adds loadings sqrt(x(1 - x)) and sqrt(x(1 - x))(x - 1/2) (Delta Cp shared
// half and half between the surfaces) scaled to Theodorsen's non-circulatory Cn
// and Cm. Separation at x_s (the Goman-Khrabrov state) freezes the upper-surface
// pressure at its value at x_s (the separated plateau). Each vortex adds a
// suction bump -B h^2 / ((x - x_v)^2 + h^2) on the upper surface (the wall
// pressure of a vortex at height h above its image, linearised).
//
// Loads are contour integrals round the NACA 4-digit surface (trapezoid,
// counter-clockwise): Cn = oint Cp dx, Cc = -oint Cp dy,
// Cm_P = -oint Cp[(x - xP)dx + (y - yP)dy] (all per chord).
#include <vector>

#include "stages/theory/joukowski.hpp"
#include "stages/theory/naca4.hpp"
#include "tools/synth/flow_model.hpp"

namespace stallscope::synth {

struct SurfaceStation {
  double x = 0.0, y = 0.0;  // chords
  bool upper = true;
  double mean_x = 0.0;      // mean-line station (where the loading shapes are evaluated)
  double theta = 0.0;       // Joukowski circle angle of the same x/c and surface
  theory::JoukowskiStation joukowski;  // its Cp's incidence-free part
  double ellipse = 0.0, ellipse_moment = 0.0;
};

struct SectionLoads {
  double cn = 0.0, cc = 0.0, cm_quarter_chord = 0.0, cm_pivot = 0.0, cl = 0.0, cd_pressure = 0.0;
};

class SurfacePressure {
 public:
  // taps: where Cp is sampled; fine_stations: per surface, for the truth loads.
  SurfacePressure(const theory::Naca4Section& section, const std::vector<theory::TapLocation>& taps,
                  double pivot_x_over_c, int fine_stations = 150);

  // Cp at every tap for the state s, and the loads of the whole (fine) distribution.
  // Not thread-safe (keeps the last solved angle as the next first guess).
  void evaluate(const FlowSample& s, std::vector<double>& tap_cp, SectionLoads& loads);

  // Cp at the fine stations (counter-clockwise from the upper trailing edge), for tests.
  std::vector<double> fine_cp(const FlowSample& s);
  const std::vector<SurfaceStation>& fine_stations() const { return fine_; }

 private:
  struct Loading {
    double alpha_j = 0.0;          // Joukowski angle, rad
    double cos_alpha_j = 1.0, sin_alpha_j = 0.0;
    double apparent = 0.0;         // Cn of the ellipse loading
    double moment = 0.0;           // Cm (c/4) of the moment-only loading
    double separation = 1.0;
    double plateau = 0.0;          // upper Cp at the separation point
  };
  SurfaceStation station(double mean_x, bool upper) const;
  double attached_cp(const SurfaceStation& p, const Loading& l) const;
  double cp_at(const SurfaceStation& p, const Loading& l, const FlowSample& s) const;
  Loading solve_loading(const FlowSample& s);
  double upper_plateau(const Loading& l) const;
  SectionLoads integrate(const std::vector<double>& cp, double alpha) const;

  theory::Naca4Section section_;
  theory::JoukowskiGeometry joukowski_;
  double pivot_;
  double ellipse_scale_ = 1.0, ellipse_moment_scale_ = 1.0, ellipse_cm_ = 0.0;
  double last_alpha_j_ = 0.0;
  std::vector<double> theta_table_;  // upper-surface circle angle on a uniform x table
  std::vector<SurfaceStation> taps_, fine_;
};

}  // namespace stallscope::synth
