#pragma once
// The bias of integrating loads from a finite tap layout, estimated once per
// layout: analytic chordwise distributions sampled at the taps and integrated
// by the loads stage's own weights, against their exact integrals.
//  - the thin-airfoil flat plate, dCp = 4 alpha sqrt((1 - x)/x): Cn = 2 pi alpha,
//    Cm about c/4 = 0 (thin-airfoil theory, e.g. Anderson, Fundamentals of
//    Aerodynamics, section 4.7), at alpha = 0.1 rad: the attached loading with
//    its leading-edge singularity;
//  - a Gaussian suction bump on the upper surface, 0.05 c wide, centred at each
//    tenth of the chord: the footprint of a convecting stall vortex. Exact
//    integrals by the error function.
// Only x enters (the taps taken on the chord line), so the check measures the
// chordwise resolution, which dominates; Cc is not checked.
#include <string>
#include <vector>

#include "pipeline/values.hpp"
#include "stages/loads.hpp"

namespace stallscope {

struct DiscretisationCase {
  std::string distribution;  // "flat_plate" | "suction_bump"
  double x_centre = NAN;     // bump centre (x/c); NaN for the flat plate
  double cn_exact = 0, cn_layout = 0, cm_exact = 0, cm_layout = 0;
};

// Throws std::invalid_argument with fewer than 2 taps per surface.
std::vector<DiscretisationCase> discretisation_cases(const std::vector<ContourPoint>& taps,
                                                     TrailingEdgeClosure closure);

// The cases as a table, with the bounds in its attributes: the largest
// |Cn error| / |Cn| and the largest |Cm error| per unit Cn over the cases.
Table discretisation_table(const std::vector<DiscretisationCase>& cases, Attributes& bounds);

}  // namespace stallscope
