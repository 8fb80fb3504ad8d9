#pragma once
// The one zero-phase low-pass filter every load-based event is detected on:
// a second-order Butterworth section (bilinear transform with pre-warping)
// run forward and backward, so it shifts no event in time. The edges are
// padded by odd reflection and the filter starts from its steady state, as
// scipy.signal.filtfilt does with its defaults (padtype "odd", padlen 3 x the
// coefficient count), which the tests compare it with. The combined response
// is |H|^2: -6 dB at the cut-off, falling 80 dB per decade.
#include <Eigen/Core>

namespace stallscope::events {

class ZeroPhaseLowpass {
 public:
  // Throws std::invalid_argument unless 0 < cutoff_hz < sample_rate_hz / 2.
  ZeroPhaseLowpass(double cutoff_hz, double sample_rate_hz);

  // Needs more than 6 samples (the padding); throws std::invalid_argument otherwise.
  Eigen::VectorXd apply(const Eigen::VectorXd& x) const;

  // Standard deviation of the filtered output per unit standard deviation of
  // white input noise: the root sum of squares of the forward-backward impulse response.
  double white_noise_gain() const;

  double cutoff_hz() const { return cutoff_hz_; }
  const Eigen::Vector3d& b() const { return b_; }
  const Eigen::Vector3d& a() const { return a_; }  // a[0] = 1

 private:
  // One pass of the direct-form-II-transposed section from state (z0, z1).
  void pass(Eigen::VectorXd& x, double z0, double z1) const;
  double cutoff_hz_, sample_rate_hz_;
  Eigen::Vector3d b_, a_;
  Eigen::Vector2d zi_;  // steady-state state for a unit step (scipy.signal.lfilter_zi)
};

}  // namespace stallscope::events
