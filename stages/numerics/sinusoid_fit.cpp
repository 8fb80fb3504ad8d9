#include "stages/numerics/sinusoid_fit.hpp"

#include <Eigen/Dense>
#include <unsupported/Eigen/NonLinearOptimization>

#include <cmath>
#include <numbers>
#include <stdexcept>

#include "stages/numerics/spectrum.hpp"

namespace stallscope::numerics {

namespace {

constexpr double kTwoPi = 2 * std::numbers::pi;

struct Samples {
  Eigen::VectorXd tau, y;  // tau = t - t_ref, so phase and frequency decorrelate
  double t_ref = 0;
};

Samples finite_samples(const Eigen::VectorXd& t, const Eigen::VectorXd& y) {
  if (t.size() != y.size()) throw std::invalid_argument("sinusoid fit: time and value lengths differ");
  Samples s;
  std::vector<Eigen::Index> keep;
  for (Eigen::Index i = 0; i < y.size(); ++i)
    if (std::isfinite(y[i]) && std::isfinite(t[i])) keep.push_back(i);
  if (keep.size() < 4) throw std::invalid_argument("sinusoid fit: fewer than 4 finite samples");
  s.tau.resize(keep.size());
  s.y.resize(keep.size());
  for (std::size_t j = 0; j < keep.size(); ++j) {
    s.tau[j] = t[keep[j]];
    s.y[j] = y[keep[j]];
  }
  s.t_ref = s.tau.mean();
  s.tau.array() -= s.t_ref;
  return s;
}

// sin(h w tau) and cos(h w tau) for h = 1..H, each harmonic from the one
// before by the angle-addition formulas (one sin and cos per sample, not H;
// the rounding grows by about an ulp a harmonic).
template <typename Visit>
void for_each_harmonic(const Eigen::VectorXd& tau, double omega, int harmonics, Visit&& visit) {
  const Eigen::ArrayXd arg = omega * tau.array();
  const Eigen::ArrayXd s1 = arg.sin(), c1 = arg.cos();
  Eigen::ArrayXd sn = s1, cs = c1;
  for (int h = 1; h <= harmonics; ++h) {
    if (h > 1) {
      const Eigen::ArrayXd next = sn * c1 + cs * s1;
      cs = cs * c1 - sn * s1;
      sn = next;
    }
    visit(h, sn, cs);
  }
}

// Columns 1, sin(h w tau), cos(h w tau) for h = 1..H.
Eigen::MatrixXd design(const Eigen::VectorXd& tau, double omega, int harmonics) {
  Eigen::MatrixXd a(tau.size(), 1 + 2 * harmonics);
  a.col(0).setOnes();
  for_each_harmonic(tau, omega, harmonics, [&](int h, const Eigen::ArrayXd& sn, const Eigen::ArrayXd& cs) {
    a.col(2 * h - 1) = sn.matrix();
    a.col(2 * h) = cs.matrix();
  });
  return a;
}

Eigen::VectorXd linear_fit(const Samples& s, double omega, int harmonics, double* ssr = nullptr) {
  const Eigen::MatrixXd a = design(s.tau, omega, harmonics);
  Eigen::VectorXd c = a.colPivHouseholderQr().solve(s.y);
  if (ssr) *ssr = (a * c - s.y).squaredNorm();
  return c;
}

// Residuals of y = m + sum_h a_h sin(h w tau) + b_h cos(h w tau); x = [m, w, a1, b1, ...].
struct Residuals {
  using Scalar = double;
  using InputType = Eigen::VectorXd;
  using ValueType = Eigen::VectorXd;
  using JacobianType = Eigen::MatrixXd;
  enum { InputsAtCompileTime = Eigen::Dynamic, ValuesAtCompileTime = Eigen::Dynamic };
  const Samples& s;
  int harmonics;
  int inputs() const { return 2 + 2 * harmonics; }
  int values() const { return static_cast<int>(s.y.size()); }
  int operator()(const Eigen::VectorXd& x, Eigen::VectorXd& f) const {
    f = Eigen::VectorXd::Constant(s.y.size(), x[0]) - s.y;
    for_each_harmonic(s.tau, x[1], harmonics, [&](int h, const Eigen::ArrayXd& sn, const Eigen::ArrayXd& cs) {
      f.array() += x[2 * h] * sn + x[2 * h + 1] * cs;
    });
    return 0;
  }
  int df(const Eigen::VectorXd& x, Eigen::MatrixXd& j) const {
    j.resize(s.y.size(), inputs());
    j.col(0).setOnes();
    j.col(1).setZero();
    for_each_harmonic(s.tau, x[1], harmonics, [&](int h, const Eigen::ArrayXd& sn, const Eigen::ArrayXd& cs) {
      j.col(2 * h) = sn.matrix();
      j.col(2 * h + 1) = cs.matrix();
      j.col(1).array() += h * s.tau.array() * (x[2 * h] * cs - x[2 * h + 1] * sn);
    });
    return 0;
  }
};

double wrap_pi(double a) {
  a = std::remainder(a, kTwoPi);
  return a <= -std::numbers::pi ? a + kTwoPi : a;
}

}  // namespace

double SinusoidFit::theta(double t) const { return kTwoPi * frequency_hz * t + phase_rad; }

double SinusoidFit::fundamental(double t) const { return mean + amplitude * std::sin(theta(t)); }

double SinusoidFit::value(double t) const {
  const double th = theta(t);
  double v = mean + amplitude * std::sin(th);
  for (std::size_t j = 0; j < harmonics.size(); ++j) {
    const double h = static_cast<double>(j + 2);
    v += harmonics[j].real() * std::sin(h * th) + harmonics[j].imag() * std::cos(h * th);
  }
  return v;
}

double SinusoidFit::derivative(double t) const {
  const double th = theta(t);
  double d = amplitude * std::cos(th);
  for (std::size_t j = 0; j < harmonics.size(); ++j) {
    const double h = static_cast<double>(j + 2);
    d += h * (harmonics[j].real() * std::cos(h * th) - harmonics[j].imag() * std::sin(h * th));
  }
  return kTwoPi * frequency_hz * d;
}

SinusoidFit fit_sinusoid(const Eigen::VectorXd& t, const Eigen::VectorXd& y, int harmonics) {
  if (harmonics < 1) throw std::invalid_argument("sinusoid fit: harmonics must be >= 1");
  const Samples s = finite_samples(t, y);
  const Eigen::Index n = s.y.size();
  const double duration = s.tau.maxCoeff() - s.tau.minCoeff();
  if (!(duration > 0)) throw std::invalid_argument("sinusoid fit: the samples span no time");
  if ((s.y.array() - s.y.mean()).abs().maxCoeff() == 0) throw std::invalid_argument("sinusoid fit: y is constant");

  // Start: the FFT peak (samples taken as evenly spaced), then the frequency
  // that minimises the linear fit's residual within a bin either side.
  const double rate = static_cast<double>(n - 1) / duration;
  const SpectralPeak peak = spectral_peak(s.y, rate);
  const double bin = rate / static_cast<double>(n);
  if (peak.frequency_hz * duration < 1.0)
    throw std::invalid_argument("sinusoid fit: the record holds less than one period");
  auto cost = [&](double f) {
    double ssr = 0;
    linear_fit(s, kTwoPi * f, 1, &ssr);
    return ssr;
  };
  const double golden = (std::sqrt(5.0) - 1) / 2;
  double lo = std::max(peak.frequency_hz - bin, 0.5 * peak.frequency_hz), hi = peak.frequency_hz + bin;
  double x1 = hi - golden * (hi - lo), x2 = lo + golden * (hi - lo), c1 = cost(x1), c2 = cost(x2);
  while (hi - lo > 1e-6 * bin) {
    if (c1 < c2) {
      hi = x2; x2 = x1; c2 = c1; x1 = hi - golden * (hi - lo); c1 = cost(x1);
    } else {
      lo = x1; x1 = x2; c1 = c2; x2 = lo + golden * (hi - lo); c2 = cost(x2);
    }
  }
  const double omega0 = kTwoPi * 0.5 * (lo + hi);

  Eigen::VectorXd x(2 + 2 * harmonics);
  const Eigen::VectorXd c = linear_fit(s, omega0, harmonics);
  x[0] = c[0];
  x[1] = omega0;
  x.tail(2 * harmonics) = c.tail(2 * harmonics);
  Residuals r{s, harmonics};
  Eigen::LevenbergMarquardt<Residuals> lm(r);
  lm.parameters.xtol = 1e-12;
  lm.parameters.ftol = 1e-14;
  lm.minimize(x);

  if (std::abs(x[1]) / kTwoPi * duration < 1.0)
    throw std::invalid_argument("sinusoid fit: the record holds less than one period");
  SinusoidFit fit;
  fit.iterations = static_cast<int>(lm.iter);
  const double omega = x[1], a1 = x[2], b1 = x[3];
  const double amp = std::hypot(a1, b1), psi = std::atan2(b1, a1);
  fit.mean = x[0];
  fit.amplitude = amp;
  fit.frequency_hz = omega / kTwoPi;
  fit.phase_rad = wrap_pi(psi - omega * s.t_ref);
  double harmonic_power = 0;
  for (int h = 2; h <= harmonics; ++h) {
    const double ah = x[2 * h], bh = x[2 * h + 1];
    const double ch = std::hypot(ah, bh), rel = std::atan2(bh, ah) - h * psi;
    fit.harmonics.emplace_back(ch * std::cos(rel), ch * std::sin(rel));
    harmonic_power += ch * ch;
  }
  fit.distortion = std::sqrt(harmonic_power) / amp;

  Eigen::VectorXd f;
  r(x, f);
  fit.rms_residual = std::sqrt(f.squaredNorm() / static_cast<double>(n));
  Eigen::VectorXd f1 = Eigen::VectorXd::Constant(n, x[0]) - s.y;
  f1.array() += a1 * (omega * s.tau.array()).sin() + b1 * (omega * s.tau.array()).cos();
  fit.rms_residual_fundamental = std::sqrt(f1.squaredNorm() / static_cast<double>(n));

  // Covariance s^2 (J^T J)^-1, and the errors of the derived quantities by their gradients.
  Eigen::MatrixXd j;
  r.df(x, j);
  const Eigen::Index dof = std::max<Eigen::Index>(1, n - x.size());
  const Eigen::MatrixXd cov =
      (j.transpose() * j).ldlt().solve(Eigen::MatrixXd::Identity(x.size(), x.size())) * (f.squaredNorm() / dof);
  auto error = [&](const Eigen::VectorXd& g) { return std::sqrt(std::max(0.0, g.dot(cov * g))); };
  Eigen::VectorXd g = Eigen::VectorXd::Zero(x.size());
  g[0] = 1;
  fit.mean_error = error(g);
  g.setZero();
  g[1] = 1 / kTwoPi;
  fit.frequency_error_hz = error(g);
  g.setZero();
  g[2] = a1 / amp;
  g[3] = b1 / amp;
  fit.amplitude_error = error(g);
  g.setZero();
  g[1] = -s.t_ref;
  g[2] = -b1 / (amp * amp);
  g[3] = a1 / (amp * amp);
  fit.phase_error_rad = error(g);
  return fit;
}

std::pair<double, std::complex<double>> fit_at_frequency(const Eigen::VectorXd& t, const Eigen::VectorXd& y,
                                                         double frequency_hz, int harmonics) {
  if (harmonics < 1) throw std::invalid_argument("fit_at_frequency: harmonics must be >= 1");
  const Samples s = finite_samples(t, y);
  const double omega = kTwoPi * frequency_hz;
  const Eigen::VectorXd c = linear_fit(s, omega, harmonics);
  // c1 sin(w tau) + c2 cos(w tau) = Re[(c2 - i c1) e^{i w tau}], and tau = t - t_ref.
  const std::complex<double> y_tau(c[2], -c[1]);
  return {c[0], y_tau * std::polar(1.0, -omega * s.t_ref)};
}

}  // namespace stallscope::numerics
