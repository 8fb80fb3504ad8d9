#pragma once
// The events of one pitch cycle (or one ramp) from the filtered loads, the
// leading-edge and upper-surface taps and the fitted motion. Every event is
// either found, with its time, uncertainty and value, or missing with a reason.
#include <Eigen/Core>
#include <cstdint>
#include <functional>
#include <limits>
#include <string>
#include <vector>

#include "stages/events/features.hpp"

namespace stallscope::events {

inline constexpr double kNaN = std::numeric_limits<double>::quiet_NaN();

struct EventRow {
  std::int64_t cycle = 0;
  std::string event, status, reason;  // status: ok | missing | suspect
  double t_s = kNaN, t_uncertainty_s = kNaN, value = kNaN;
};

// The event names a cycle produces, in table order (secondary_peak may repeat).
const std::vector<std::string>& cycle_event_names();

// A chordwise tap with its filtered Cp.
struct TapTrace {
  double x_over_c = 0;
  Trace cp;
};

struct CycleInputs {
  const Trace* cl = nullptr;
  const Trace* cn = nullptr;
  const Trace* cm = nullptr;
  const Trace* cl_deviation = nullptr;  // |Cl - attached reference| on the loads time base; null: none
  std::string no_reference_reason;      // why there is no attached reference
  const Trace* le_suction = nullptr;    // -Cp at the leading-edge taps (suction positive); null: none
  std::string no_le_reason;
  const Trace* aft_cp = nullptr;        // Cp at the aftmost working upper tap (on le_suction's time base); null: none
  std::string no_aft_reason;
  std::vector<TapTrace> convection_taps;  // upper surface, aft of the leading edge, in x order
  std::string no_taps_reason;
  std::function<double(double)> alpha_deg, rate_deg_s;  // the fitted motion
  double static_stall_angle_deg = kNaN;
  double crossing_sigma_s = 0;  // uncertainty of a motion-angle crossing time
};

struct CycleWindow {
  std::int64_t cycle = 0;
  double t_start = 0, t_end = 0;
  double search_end = 0;        // reattachment may be looked for up to here (into the next cycle)
  double convective_per_s = 0;  // U / c of this cycle
  bool ramp = false;            // a ramp: the whole window is the upstroke, no reattachment
};

struct Thresholds {
  double persistence_s = 0;
  double moment_stall_delta = 0.05;
  double le_collapse_fraction = 0.3;
  std::string onset_criterion = "moment_stall";
  double secondary_peak_prominence = 0.1;
  double reattachment_tolerance = 0.1;
  double reattachment_sustain_s = 0;
  double reattachment_suction_fraction = 0.15;  // LE suction back within this fraction of the upstroke's
  double reattachment_cp_tolerance = 0.05;      // aft-tap Cp back within this of the upstroke's
  std::string reattachment_criterion = "pressure";  // pressure | loads: which one the reattachment row holds
  double te_x_over_c = 1.0;
};

std::vector<EventRow> detect_cycle_events(const CycleInputs& in, const CycleWindow& w, const Thresholds& th);

// The first time in [lo, hi] at which alpha(t) crosses level, rising or
// falling, to 1e-12 of the interval (sampled on 720 points, then bisection).
// NaN if it does not cross.
double motion_crossing(const std::function<double(double)>& alpha, double lo, double hi, double level, bool rising);

}  // namespace stallscope::events
