#pragma once
// [cp]: Cp = (p - p_inf) / q_inf on the wind-on part of the record. Tap
// pressures are differential against the free-stream static pressure, so
// Cp = p_tap / q. Dead and suspect taps (tap table status, a zero that drifted
// beyond the gate) and taps detected flat or clipped are masked and replaced
// by linear interpolation along the surface arc length (round the contour,
// through the leading and trailing edges), and flagged in pressure/taps.
// A masked tap in the leading-edge suction region invalidates Cc and Cm for
// the run (attribute cc_cm_valid = 0 on pressure/cp) unless allow_le_gap.
//
// Reads signals/p_taps_pa when the tubing stage runs, else signals/p_taps_raw_pa.
// Writes pressure/time_s (attribute first_sample: index into signals/time_s),
// pressure/cp, pressure/taps, pressure/q_pa.
#include <Eigen/Core>
#include <optional>
#include <utility>

#include "pipeline/stage.hpp"

namespace stallscope {

class CpStage final : public Stage {
 public:
  static constexpr std::string_view kName = "cp";
  static constexpr std::string_view kSummary = "pressure coefficients, with dead, suspect, flat and clipped taps masked";

  struct Options {
    std::vector<double> window_s;       // [t0, t1]; empty: the wind-on span found from q
    double wind_on_fraction = 0.9;      // wind on where q >= this x the running q
    bool use_suspect = false;           // keep taps marked suspect
    double flat_fraction = 0.01;        // flat: std below this x the median tap std
    double clip_fraction = 0.01;        // clipped: more than this share of samples at the extreme volts
    double le_region_x_over_c = 0.05;   // taps this close to the leading edge carry the suction peak
    bool allow_le_gap = false;          // keep Cc and Cm with a masked leading-edge tap
  };

  std::string_view name() const override { return kName; }
  std::string_view summary() const override { return kSummary; }
  void configure(ConfigSection& section) override;
  std::vector<std::string> inputs() const override {
    return {"signals/time_s", "signals/q_pa", "signals/p_taps_raw_pa", "signals/taps", "daq/volts"};
  }
  std::vector<std::string> optional_inputs() const override { return {"signals/p_taps_pa"}; }
  std::vector<std::string> outputs() const override {
    return {"pressure/time_s", "pressure/cp", "pressure/taps", "pressure/q_pa"};
  }
  void run(RunContext& context) override;

 private:
  Options options_;
  std::string where_window_, where_le_;
};

// The wind-on span of a reference q, samples [first, last]: from the first to
// the last sample at or above `fraction` x the running q (the median of the
// samples above half the maximum). nullopt when q never rises above 0.
std::optional<std::pair<Eigen::Index, Eigen::Index>> wind_on_span(const Eigen::VectorXd& q, double fraction);

// Positions round the closed contour (taps ordered by contour_order).
struct ContourPoint {
  double x = 0.0, y = 0.0;
  bool upper = true;
};
// Counter-clockwise order: upper surface TE -> LE (x falling), then lower LE -> TE.
std::vector<std::size_t> contour_order(const std::vector<ContourPoint>& taps);

// Fills the masked columns of cp (samples x taps) by linear interpolation in arc
// length between the nearest unmasked taps round the closed contour. Needs
// two unmasked taps; throws std::invalid_argument otherwise.
void interpolate_masked_taps(Eigen::MatrixXd& cp, const std::vector<ContourPoint>& taps,
                             const std::vector<bool>& masked);

}  // namespace stallscope
