#include "stages/numerics/spectrum.hpp"

#include <fftw3.h>

#include <algorithm>
#include <cmath>
#include <memory>
#include <mutex>
#include <stdexcept>

#include "stages/numerics/fftw_planner.hpp"

namespace stallscope::numerics {

std::mutex& fftw_planner_mutex() {
  static std::mutex m;
  return m;
}

Eigen::VectorXd amplitude_spectrum(const Eigen::VectorXd& y) {
  const int n = static_cast<int>(y.size());
  if (n == 0) return {};
  const int bins = n / 2 + 1;
  Eigen::VectorXd in = y;  // FFTW_ESTIMATE leaves the input alone, but plans want a non-const pointer
  std::unique_ptr<fftw_complex[], decltype(&fftw_free)> out(
      static_cast<fftw_complex*>(fftw_malloc(sizeof(fftw_complex) * bins)), &fftw_free);
  fftw_plan plan;
  {
    std::lock_guard<std::mutex> lock(fftw_planner_mutex());
    plan = fftw_plan_dft_r2c_1d(n, in.data(), out.get(), FFTW_ESTIMATE);
  }
  fftw_execute(plan);
  {
    std::lock_guard<std::mutex> lock(fftw_planner_mutex());
    fftw_destroy_plan(plan);
  }
  Eigen::VectorXd a(bins);
  for (int j = 0; j < bins; ++j) a[j] = std::hypot(out[j][0], out[j][1]);
  return a;
}

SpectralPeak spectral_peak(const Eigen::VectorXd& y, double sample_rate_hz) {
  if (y.size() < 4) throw std::invalid_argument("spectral_peak needs at least 4 samples");
  const Eigen::VectorXd a = amplitude_spectrum((y.array() - y.mean()).matrix());
  SpectralPeak p;
  a.tail(a.size() - 1).maxCoeff(&p.bin);
  p.bin += 1;
  const double n = static_cast<double>(y.size());
  double offset = 0;
  // Parabola through the log-amplitudes of the peak and its neighbours: for a
  // windowless record it places the peak within a fraction of a bin.
  if (p.bin + 1 < a.size() && a[p.bin - 1] > 0 && a[p.bin + 1] > 0) {
    const double l = std::log(a[p.bin - 1]), c = std::log(a[p.bin]), r = std::log(a[p.bin + 1]);
    const double denom = l - 2 * c + r;
    if (denom < 0) offset = std::clamp(0.5 * (l - r) / denom, -0.5, 0.5);
  }
  p.frequency_hz = (static_cast<double>(p.bin) + offset) * sample_rate_hz / n;
  p.amplitude = 2.0 * a[p.bin] / n;
  return p;
}

}  // namespace stallscope::numerics
