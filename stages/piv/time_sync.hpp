#pragma once
// Frame times on the DAQ clock. The camera/laser trigger pulses recorded by
// the DAQ give one rising edge per frame; the camera's own clock is fitted to
// them as t_daq = offset + (1 + drift) t_camera by least squares, matching
// frames to pulses as the fit improves (so drift over a long run does not
// lose the match). A pulse with no frame is a missing (dropped) frame.
#include <cstdint>
#include <string>
#include <vector>

#include <Eigen/Core>

namespace stallscope::piv {

// Rising edges of a TTL channel: crossings of the level midway between its low
// and high states (1st and 99th percentiles), placed by linear interpolation
// between samples. Empty if the channel never switches.
std::vector<double> rising_edges(const Eigen::VectorXd& time_s, const Eigen::VectorXd& volts);

struct TimeSync {
  std::string method;                     // "camera trigger" or "constant delay"
  double offset_s = 0, drift = 0;         // t_daq = offset + (1 + drift) t_camera
  double residual_s = 0;                  // rms of the matched pulses about the fit
  // Standard errors of the fit (ordinary least squares, n - 2 degrees of
  // freedom): of the fitted time at the matched frames' mean DAQ time
  // centre_s, and of the drift. A frame at t is placed to within
  // sqrt(offset_uncertainty_s^2 + (drift_uncertainty (t - centre_s))^2).
  double centre_s = 0, offset_uncertainty_s = 0, drift_uncertainty = 0;
  std::vector<double> daq_time_s;         // per frame
  std::vector<std::int64_t> pulse;        // per frame: index of its trigger edge, -1 if none
  std::size_t matched = 0;
  std::size_t missing_frames = 0;         // pulses between the first and last matched ones with no frame
};

// Frame 0 belongs to edge `first_pulse`. Throws InputError (labelled `where`)
// when there are too few edges or fewer than 2 frames match.
TimeSync sync_to_trigger(const std::vector<double>& camera_time_s, const std::vector<double>& edges,
                         std::size_t first_pulse, const std::string& where);
TimeSync sync_constant_delay(const std::vector<double>& camera_time_s, double delay_s);

}  // namespace stallscope::piv
