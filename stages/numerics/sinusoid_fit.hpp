#pragma once
// Least-squares fit of a periodic signal y(t) = mean + A sin(2 pi f t + phi)
// + harmonics, frequency included (nonlinear, Levenberg-Marquardt). The start
// comes from the FFT peak and a one-dimensional search of the linear fit's
// residual over frequency, so the fit does not need a guess from the caller.
#include <Eigen/Core>
#include <complex>
#include <vector>

namespace stallscope::numerics {

struct SinusoidFit {
  double mean = 0;
  double amplitude = 0;     // of the fundamental, > 0
  double frequency_hz = 0;
  double phase_rad = 0;     // at t = 0, in (-pi, pi]
  // Harmonics h = 2..H relative to the fundamental's phase variable
  // theta = 2 pi f t + phi: y += a_h sin(h theta) + b_h cos(h theta).
  std::vector<std::complex<double>> harmonics;  // (a_h, b_h) for h = 2.., stored as a_h + i b_h
  double rms_residual = 0;              // of the full fit (fundamental + harmonics)
  double rms_residual_fundamental = 0;  // of the fundamental alone: what a pure sine leaves
  double distortion = 0;                // sqrt(sum of harmonic amplitudes^2) / amplitude
  // One-sigma standard errors from the fit's covariance (white residuals assumed).
  double mean_error = 0, amplitude_error = 0, frequency_error_hz = 0, phase_error_rad = 0;
  int iterations = 0;

  double theta(double t) const;        // 2 pi f t + phi
  double value(double t) const;        // the full fit
  double derivative(double t) const;   // d/dt of the full fit (units of y per second)
  double fundamental(double t) const;  // mean + A sin(theta)
};

// Fits y(t) with `harmonics` >= 1 terms (1: a pure sinusoid). Non-finite
// samples are left out. Throws std::invalid_argument if fewer than 4 finite
// samples remain, if the record holds less than one period of the dominant
// component, or if y is constant.
SinusoidFit fit_sinusoid(const Eigen::VectorXd& t, const Eigen::VectorXd& y, int harmonics = 1);

// The same fit at a known frequency (linear least squares): mean and the
// complex amplitude Y of y = mean + Re[Y e^{i 2 pi f t}] + harmonics, the form
// transfer functions are written in. Returns {mean, Y}.
std::pair<double, std::complex<double>> fit_at_frequency(const Eigen::VectorXd& t, const Eigen::VectorXd& y,
                                                         double frequency_hz, int harmonics = 1);

}  // namespace stallscope::numerics
