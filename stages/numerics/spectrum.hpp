#pragma once
// One-sided amplitude spectrum of a real record (FFTW) and its dominant peak.
#include <Eigen/Core>

namespace stallscope::numerics {

// |X_j| for j = 0..n/2 of the discrete Fourier transform X_j = sum_m y_m e^{-2 pi i j m / n},
// i.e. numpy's abs(rfft(y)). No window, no scaling.
Eigen::VectorXd amplitude_spectrum(const Eigen::VectorXd& y);

struct SpectralPeak {
  Eigen::Index bin = 0;     // the largest bin above DC
  double frequency_hz = 0;  // refined between bins by a parabola through log-amplitudes
  double amplitude = 0;     // |X_bin| * 2 / n: the sinusoid amplitude if it sits on the bin
};

// The dominant periodic component of y (its mean removed first), sampled at
// sample_rate_hz. Throws std::invalid_argument for fewer than 4 samples.
SpectralPeak spectral_peak(const Eigen::VectorXd& y, double sample_rate_hz);

}  // namespace stallscope::numerics
