#include "stages/events/lowpass.hpp"

#include <Eigen/Dense>
#include <cmath>
#include <numbers>
#include <stdexcept>

namespace stallscope::events {

namespace {
constexpr Eigen::Index kPad = 9;  // 3 x max(len(a), len(b)), scipy's default
}

ZeroPhaseLowpass::ZeroPhaseLowpass(double cutoff_hz, double sample_rate_hz)
    : cutoff_hz_(cutoff_hz), sample_rate_hz_(sample_rate_hz) {
  if (!(sample_rate_hz > 0) || !(cutoff_hz > 0) || !(cutoff_hz < 0.5 * sample_rate_hz))
    throw std::invalid_argument("low-pass cut-off must lie between 0 and half the sample rate");
  const double k = std::tan(std::numbers::pi * cutoff_hz / sample_rate_hz);
  const double r2 = std::numbers::sqrt2;
  const double norm = 1 / (1 + r2 * k + k * k);
  b_ << k * k * norm, 2 * k * k * norm, k * k * norm;
  a_ << 1, 2 * (k * k - 1) * norm, (1 - r2 * k + k * k) * norm;
  // (I - companion(a)^T) zi = b[1:] - a[1:] b[0]
  Eigen::Matrix2d m;
  m << 1 + a_[1], -1, a_[2], 1;
  zi_ = m.partialPivLu().solve(Eigen::Vector2d(b_[1] - a_[1] * b_[0], b_[2] - a_[2] * b_[0]));
}

void ZeroPhaseLowpass::pass(Eigen::VectorXd& x, double z0, double z1) const {
  for (Eigen::Index i = 0; i < x.size(); ++i) {
    const double in = x[i], out = b_[0] * in + z0;
    z0 = b_[1] * in - a_[1] * out + z1;
    z1 = b_[2] * in - a_[2] * out;
    x[i] = out;
  }
}

Eigen::VectorXd ZeroPhaseLowpass::apply(const Eigen::VectorXd& x) const {
  const Eigen::Index n = x.size();
  if (n <= kPad) throw std::invalid_argument("low-pass filter needs more than 9 samples");
  Eigen::VectorXd ext(n + 2 * kPad);
  for (Eigen::Index i = 0; i < kPad; ++i) {
    ext[i] = 2 * x[0] - x[kPad - i];
    ext[n + kPad + i] = 2 * x[n - 1] - x[n - 2 - i];
  }
  ext.segment(kPad, n) = x;
  pass(ext, zi_[0] * ext[0], zi_[1] * ext[0]);
  ext.reverseInPlace();
  pass(ext, zi_[0] * ext[0], zi_[1] * ext[0]);
  ext.reverseInPlace();
  return ext.segment(kPad, n);
}

double ZeroPhaseLowpass::white_noise_gain() const {
  // The impulse response decays within a few hundred cut-off periods.
  const auto half = static_cast<Eigen::Index>(std::ceil(40 * sample_rate_hz_ / cutoff_hz_)) + 64;
  Eigen::VectorXd impulse = Eigen::VectorXd::Zero(2 * half + 1);
  impulse[half] = 1;
  return apply(impulse).norm();
}

}  // namespace stallscope::events
