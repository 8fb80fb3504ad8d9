#pragma once
// [calibrate]: DAQ volts -> calibrated signals on the DAQ time base.
// Per channel, in this order: sampling-skew correction (the sample recorded at
// t was taken at t + offset; cubic interpolation back onto t), the calibration
// polynomial, the transducer temperature coefficient, and for differential
// pressures (taps, q_ref, contraction_dp) the wind-off zero, taken before and
// after the run and interpolated in time, with its drift gated. Then the
// encoder angle, the reference q (Pitot, or contraction drop x tunnel factor,
// optionally averaged over one pitch cycle), p, T and rho. Tap pressures are
// differential against the free-stream static pressure.
//
// Writes signals/time_s, signals/alpha_deg, signals/q_pa, signals/p_taps_raw_pa,
// signals/taps (the tap table with y/c filled and zero columns), and
// signals/pitch_frequency_hz (given, or the encoder's fundamental; 0 for a
// model at rest); signals/p_static_pa, signals/T_K and signals/rho_kg_m3 only
// when the DAQ maps the p_static / temperature roles.
#include <Eigen/Core>
#include <optional>

#include "calib/transducers/wind_off_zero.hpp"
#include "pipeline/stage.hpp"

namespace stallscope {

class CalibrateStage final : public Stage {
 public:
  static constexpr std::string_view kName = "calibrate";
  static constexpr std::string_view kSummary =
      "volts to Pa, degrees and K: skew, calibration polynomials, wind-off zeros, reference q";

  struct Options {
    std::filesystem::path tap_table;                  // required
    std::vector<std::filesystem::path> calibrations;  // [calibrate.calibrations] name = "file.toml", one or more
    std::optional<calib::TimeWindow> zero_before;     // zero_before_s = [t0, t1]
    std::optional<calib::TimeWindow> zero_after;      // zero_after_s = [t0, t1]
    double max_zero_drift_pa = 5.0;                   // |zero after - zero before| allowed
    std::string on_zero_drift = "error";              // "error" | "flag" (tap made suspect)
    std::string q_source = "pitot";                   // "pitot" (role q_ref) | "contraction" (role contraction_dp)
    double contraction_factor = 1.0;                  // q = factor x contraction drop
    std::string q_average = "none";                   // "none" | "cycle" (centred mean over one pitch period)
    double pitch_frequency_hz = 0.0;                  // 0: the encoder signal's fundamental
    double temperature_c = 20.0;                      // used without a temperature channel
    std::vector<std::pair<std::string, double>> time_offsets;  // [calibrate.time_offsets] channel = s
  };

  std::string_view name() const override { return kName; }
  std::string_view summary() const override { return kSummary; }
  void configure(ConfigSection& section) override;
  std::vector<std::string> inputs() const override;
  std::vector<std::string> optional_inputs() const override;
  std::vector<std::string> outputs() const override;
  void run(RunContext& context) override;

 private:
  Options options_;
  std::string where_calibrations_, where_q_source_, where_zero_before_, where_drift_, where_offsets_,
      where_tap_table_, where_frequency_;
};

// y[k] = x at fractional sample k + shift (Catmull-Rom cubic; ends held).
// A channel with time offset d on a clock of interval dt is shifted by -d/dt.
Eigen::VectorXd shift_samples(const Eigen::VectorXd& x, double shift);

// Centred moving mean over `window` samples (odd-sized, shrinking at the ends):
// removes every harmonic of a period of `window` samples.
Eigen::VectorXd centred_moving_mean(const Eigen::VectorXd& x, double window);

// Fundamental frequency of a uniformly sampled signal: the highest peak of the
// mean-removed amplitude spectrum above `min_hz`, refined by a parabola
// through log-magnitudes. Returns 0 when the signal does not move
// (peak amplitude below `min_amplitude`).
double fundamental_frequency(const Eigen::VectorXd& x, double sample_rate_hz, double min_hz = 0.05,
                             double min_amplitude = 1e-3);

}  // namespace stallscope
