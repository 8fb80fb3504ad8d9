#pragma once
// Statistics of every event quantity across the valid cycles: the cycle-to-
// cycle spread (std, p05-p95) kept apart from the uncertainty of the mean
// (Student-t and bootstrap intervals), the running mean against the number of
// cycles, and flags for bimodal or autocorrelated samples.
#include <cmath>
#include <cstdint>
#include <map>
#include <string>
#include <vector>

#include "pipeline/values.hpp"
#include "stages/numerics/distribution.hpp"

namespace stallscope::events {

// One row of the per-cycle table with what the statistics need.
struct EventRecord {
  std::int64_t cycle = 0;
  std::string event, status, reason;
  double t_s = 0, t_conv = 0, t_uncertainty_s = 0, phase_deg = 0, alpha_deg = 0, value = 0;
  double phase_from_start_deg = 0;  // unwrapped: may pass 360 when an event runs into the next cycle
};

// The per-cycle table with exactly the columns of events_per_cycle.csv.
Table per_cycle_table(const std::vector<EventRecord>& records);

// Circular statistics of angles in degrees (Mardia & Jupp, Directional
// Statistics, 2000): the mean direction atan2(mean sin, mean cos) in [0, 360),
// the mean resultant length R and the circular standard deviation
// sqrt(-2 ln R). An event phase that straddles the cycle boundary (330 and
// 10 deg) has a mean near 350, where the arithmetic mean says 170. NaN when
// empty; the mean is NaN when R = 0 (no preferred direction).
struct CircularSummary {
  double mean_deg = NAN, std_deg = NAN, resultant_length = NAN;
};
CircularSummary circular_summary(const std::vector<double>& degrees);

struct EventStatistics {
  Table summary, running_mean;
};
// records: rows of valid cycles only. Only rows with status "ok" enter the
// statistics; an event with several rows in a cycle (secondary_peak) uses the
// first, and gets a "count" quantity (rows per cycle). The phase_deg rows also
// carry the circular statistics (columns circular_mean, circular_std,
// resultant_length; NaN on other rows). value_units names the
// units of each event's value. Events appear in the order they are first met.
EventStatistics event_statistics(const std::vector<EventRecord>& records,
                                 const std::map<std::string, std::string>& value_units,
                                 const numerics::SummaryOptions& options);

}  // namespace stallscope::events
