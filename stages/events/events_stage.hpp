#pragma once
// [events]: what happened in every pitch cycle, and how much it scatters.
//
// All load-based events are found on one zero-phase low-pass filter of the
// loads (cut-off lowpass_harmonics x the pitch frequency); every threshold
// must hold for a persistence time; extrema are located to sub-sample
// precision; every time carries a standard uncertainty (sample interval and
// the filtered noise over the local slope or curvature). Per valid cycle:
//   static_stall_crossing  upstroke time alpha passes the static stall angle (value: pitch rate, deg/s)
//   lift_peak, normal_force_peak   maximum Cl, Cn (value: the peak)
//   moment_stall           first sustained drop of Cm moment_stall_delta below its running maximum,
//                          after the static-stall crossing (value: that running maximum). Expected lag:
//                          early by about 2 noise / |dCm/dt| (the maximum of noisy data is biased up)
//   cm_min                 minimum Cm (value: Cm)
//   le_suction_collapse    peak suction at the leading-edge taps, followed by its collapse (value: Cp)
//   stall_onset            the primary criterion (onset_criterion; default moment_stall)
//   stall_delay            onset minus static-stall crossing (value: convective times), with
//   stall_delay_s, stall_delay_deg  the same delay in seconds and degrees of alpha
//   secondary_peak         later Cn peaks after the normal-force peak (value: Cn; several per cycle)
//   reattachment           the criterion reattachment_criterion names (default pressure: on synthetic
//                          runs its lag scatters 0.04 c/U against 0.21 for loads), one of:
//   reattachment_loads     on the downstroke below the static stall angle, Cl back within
//                          reattachment_tolerance of the attached-flow reference (Theodorsen with the
//                          static lift slope) for reattachment_sustain_conv; may run into the next cycle
//   reattachment_pressure  the same window, the leading-edge suction back within
//                          reattachment_suction_fraction and the aftmost upper tap's Cp within
//                          reattachment_cp_tolerance of this cycle's upstroke values at the same angle
//                          (value: that Cp)
//   taps_convection_speed  suction-peak chordwise position against time on the upper taps (filtered
//                          at convection_cutoff_strouhal U / c, not at the loads' cut-off, which smears
//                          the bump out), fitted by a line (value: speed / U); taps_te_passage: that line
//                          at te_x_over_c
// plus the rows of vortex/events_per_cycle when the PIV path ran. An event not
// found is recorded as missing with the reason. A ramp is one "cycle" from the
// start of the ramp. Statistics over valid cycles go to events/summary and
// events/running_mean.
#include <cmath>
#include <limits>
#include <optional>
#include <string>
#include <vector>

#include "pipeline/stage.hpp"

namespace stallscope {

class EventsStage final : public Stage {
 public:
  static constexpr std::string_view kName = "events";
  static constexpr std::string_view kSummary =
      "per-cycle stall events (onset, peaks, moment stall, reattachment, taps convection) and their statistics";

  struct Options {
    double lowpass_harmonics = 10;     // filter cut-off in multiples of the pitch frequency
    double persistence_conv = 0.2;     // a threshold crossing must hold this long (convective times c/U)
    double static_stall_angle_deg = std::numeric_limits<double>::quiet_NaN();  // overrides the static polar
    std::optional<std::filesystem::path> static_polar;  // archive of a reduced static run
    std::string static_stall_criterion = "cl_max";       // cl_max | cm_break | linearity (from the polar)
    double lift_slope_per_rad = std::numeric_limits<double>::quiet_NaN();   // else the polar's, else 2 pi
    double zero_lift_angle_deg = std::numeric_limits<double>::quiet_NaN();  // else the polar's, else 0
    double moment_stall_delta = 0.05;  // common practice
    double le_region_x_over_c = 0.05;  // upper taps this far aft count as leading-edge taps
    double le_collapse_fraction = 0.3; // suction must fall by this fraction of its peak
    std::string onset_criterion = "moment_stall";  // moment_stall | lift_peak | normal_force_peak | le_suction_collapse
    double secondary_peak_prominence = 0.1;  // in Cn
    double reattachment_tolerance = 0.1;     // in Cl
    double reattachment_sustain_conv = 2.0;  // convective times
    double reattachment_search_periods = 0.5;  // how far into the next cycle
    std::string reattachment_criterion = "pressure";  // pressure | loads: which one the reattachment row holds
    double reattachment_suction_fraction = 0.15;   // pressure: LE suction within this of the upstroke's
    double reattachment_cp_tolerance = 0.05;       // pressure: aft-tap Cp within this of the upstroke's
    double reattachment_aft_x_over_c = 0.8;        // pressure: the aftmost working upper tap at or aft of this
    std::vector<double> convection_taps_x_over_c = {0.2, 0.9};
    // The suction bump crosses a tap in about a convective time, far faster than the pitch
    // period, so the convection taps get their own cut-off, in convective terms f c / U.
    double convection_cutoff_strouhal = 2.0;  // measured on synthetic runs: 0.5 biases the speed by -0.25 U
    double te_x_over_c = 1.0;
    std::int64_t bootstrap_resamples = 2000;
    std::int64_t bootstrap_seed = 1;
  };

  std::string_view name() const override { return kName; }
  std::string_view summary() const override { return kSummary; }
  void configure(ConfigSection& section) override;
  std::vector<std::string> inputs() const override;
  std::vector<std::string> optional_inputs() const override;
  std::vector<std::string> outputs() const override;
  void run(RunContext& context) override;

  const Options& options() const { return options_; }

 private:
  Options options_;
  std::string stall_angle_where_, lowpass_where_, polar_where_;
};

}  // namespace stallscope
