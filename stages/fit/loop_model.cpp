#include "stages/fit/loop_model.hpp"

#include <cmath>
#include <complex>
#include <numbers>
#include <stdexcept>

#include "stages/theory/theodorsen.hpp"

namespace stallscope::fit {

namespace {
constexpr double kPi = std::numbers::pi;
}

LoopModel::LoopModel(const Eigen::VectorXd& alpha_deg, double period_s, const FlowScales& flow,
                     const StaticSeparation& x0, AttachedLag lag)
    : x0_(&x0) {
  const Eigen::Index n = alpha_deg.size();
  if (n < 8) throw std::invalid_argument("a loop needs at least 8 phase bins");
  if (!alpha_deg.allFinite()) throw std::invalid_argument("the loop's angle has empty (non-finite) bins");
  if (!(period_s > 0) || !(flow.chord_m > 0) || !(flow.velocity_m_s > 0))
    throw std::invalid_argument("a loop needs a positive period, chord and velocity");
  period_ = period_s / flow.convective_s();
  k_ = kPi / period_;  // omega c / (2U) with omega = 2 pi / T
  alpha_ = alpha_deg * (kPi / 180.0);
  t_.resize(n);
  rate_.resize(n);
  const double h = period_ / double(n);
  for (Eigen::Index b = 0; b < n; ++b) {
    t_[b] = (double(b) + 0.5) * h;
    rate_[b] = (alpha_[(b + 1) % n] - alpha_[(b + n - 1) % n]) / (2 * h);
  }
  if (lag == AttachedLag::kQuasiSteady) {
    alpha_e_ = alpha_;
    cn_nc_ = Eigen::VectorXd::Zero(n);
  } else {
    theodorsen_response(flow);
  }
  attached_ = alpha_e_.unaryExpr([&x0](double a) { return x0.attached_angle(a); });
}

void LoopModel::theodorsen_response(const FlowScales& flow) {
  const Eigen::Index n = alpha_.size();
  // One-sided Fourier series alpha = A_0 + sum Re[A_m e^{i m omega t}], each
  // harmonic through Theodorsen's transfer functions.
  const double a = theory::pitch_axis_from_pivot(flow.pivot_x_over_c);
  alpha_e_ = Eigen::VectorXd::Constant(n, alpha_.mean());
  cn_nc_ = Eigen::VectorXd::Zero(n);
  const std::complex<double> i{0.0, 1.0};
  // e^{i m omega t_b} by running products (one complex exponential per bin).
  Eigen::VectorXcd step(n), power = Eigen::VectorXcd::Ones(n);
  for (Eigen::Index b = 0; b < n; ++b) step[b] = std::exp(i * (2 * kPi * t_[b] / period_));
  // C(mk) for the harmonics, kept per thread: a bootstrap builds many models of one k.
  thread_local double cached_k = -1.0;
  thread_local std::vector<std::complex<double>> cached;
  if (cached_k != k_ || cached.size() < static_cast<std::size_t>(n / 2)) {
    cached.clear();
    for (Eigen::Index m = 1; m <= n / 2; ++m) cached.push_back(theory::theodorsen(double(m) * k_));
    cached_k = k_;
  }
  for (Eigen::Index m = 1; m <= n / 2; ++m) {
    power = power.cwiseProduct(step);
    const std::complex<double> am =
        (power.conjugate().array() * alpha_.array()).sum() * ((2 * m == n ? 1.0 : 2.0) / double(n));
    const double km = double(m) * k_;
    const std::complex<double> circulatory = cached[static_cast<std::size_t>(m - 1)] * (1.0 + i * km * (0.5 - a)) * am;
    const std::complex<double> apparent = kPi * (i * km + a * km * km) * am;
    alpha_e_ += (power * circulatory).real();
    cn_nc_ += (power * apparent).real();
  }
}

Eigen::VectorXd LoopModel::normal_force(const theory::GomanKhrabrovTimes& tau, Eigen::VectorXd* x_out) const {
  const StaticSeparation& x0 = *x0_;
  const Eigen::VectorXd x =
      theory::periodic_goman_khrabrov(t_, alpha_, rate_, period_, [&x0](double a) { return x0(a); }, tau);
  Eigen::VectorXd cn(x.size());
  const double slope = x0.lift_slope_per_rad();
  for (Eigen::Index b = 0; b < x.size(); ++b)
    cn[b] = slope * StaticSeparation::kirchhoff_factor(x[b]) * attached_[b] + cn_nc_[b];
  if (x_out) *x_out = x;
  return cn;
}

Eigen::VectorXd LoopModel::normal_force(const theory::GomanKhrabrovTimes& tau, const VortexLiftTerm& vortex,
                                        Eigen::VectorXd* x_out, Eigen::VectorXd* cn_vortex) const {
  Eigen::VectorXd x;
  Eigen::VectorXd cn = normal_force(tau, &x);
  const double slope = x0_->lift_slope_per_rad();
  Eigen::VectorXd shed(x.size());
  for (Eigen::Index b = 0; b < x.size(); ++b) shed[b] = shed_vortex_force(slope * attached_[b], x[b]);
  const Eigen::VectorXd cn_v = periodic_vortex_lift(t_, shed, period_, vortex.onset_conv, vortex.times);
  cn += cn_v;
  if (x_out) *x_out = std::move(x);
  if (cn_vortex) *cn_vortex = cn_v;
  return cn;
}

Eigen::VectorXd LoopModel::static_normal_force() const {
  Eigen::VectorXd cn(alpha_.size());
  for (Eigen::Index b = 0; b < alpha_.size(); ++b) cn[b] = x0_->normal_force(alpha_[b], (*x0_)(alpha_[b]));
  return cn;
}

double LoopModel::lowest_static_separation() const {
  double lowest = 1.0;
  for (Eigen::Index b = 0; b < alpha_.size(); ++b) lowest = std::min(lowest, (*x0_)(alpha_[b]));
  return lowest;
}

}  // namespace stallscope::fit
