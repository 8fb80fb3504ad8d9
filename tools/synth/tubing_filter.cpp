#include "tools/synth/tubing_filter.hpp"

#include <fftw3.h>

#include <algorithm>
#include <complex>
#include <mutex>
#include <numbers>
#include <stdexcept>

#include <Eigen/Core>

#include "stages/numerics/fftw_planner.hpp"

namespace stallscope::synth {

namespace {
constexpr double kTaperStart = 0.5;  // fraction of the Nyquist frequency
constexpr int kDesignLength = 65536;  // design grid, samples
}  // namespace

std::vector<double> tubing_impulse_response(std::span<const calib::TubeSegment> line, const calib::AirProperties& air,
                                            double sample_rate_hz, int n) {
  if (n < 4 || n % 2 != 0) throw std::invalid_argument("tubing_impulse_response: n must be even and >= 4");
  // Designed on a long grid, then cut to n taps: the viscous (sqrt(omega)) terms of
  // the line response give the impulse response a slowly decaying tail, which a
  // short periodic design would wrap round onto negative times.
  const int design = std::max(16 * n, kDesignLength);
  const int bins = design / 2 + 1;
  fftw_complex* spectrum = fftw_alloc_complex(bins);
  double* impulse = fftw_alloc_real(design);
  fftw_plan plan;
  {
    std::lock_guard lock(numerics::fftw_planner_mutex());
    plan = fftw_plan_dft_c2r_1d(design, spectrum, impulse, FFTW_ESTIMATE);
  }
  const double nyquist = 0.5 * sample_rate_hz;
  for (int k = 0; k < bins; ++k) {
    const double f = k * sample_rate_hz / design;
    std::complex<double> h = k == 0 ? std::complex<double>(1.0) : calib::line_response(line, air, f);
    // The DAQ's anti-alias filter: a raised-cosine taper over the upper half of the
    // band, so the line's fractional-sample delay leaves no sinc tail.
    if (f > kTaperStart * nyquist)
      h *= 0.5 * (1.0 + std::cos(std::numbers::pi * (f - kTaperStart * nyquist) / ((1.0 - kTaperStart) * nyquist)));
    if (k == bins - 1) h = h.real();  // the Nyquist bin of a real filter is real
    spectrum[k][0] = h.real();
    spectrum[k][1] = h.imag();
  }
  fftw_execute(plan);
  std::vector<double> out(impulse, impulse + n);
  {
    std::lock_guard lock(numerics::fftw_planner_mutex());
    fftw_destroy_plan(plan);
  }
  fftw_free(spectrum);
  fftw_free(impulse);
  // Cosine fade over the last quarter, then the DC gain set back to exactly 1.
  const int fade = n / 4;
  for (int m = n - fade; m < n; ++m) out[m] *= 0.5 * (1.0 + std::cos(std::numbers::pi * (m - (n - fade) + 1) / (fade + 1)));
  double sum = 0.0;
  for (double v : out) sum += v;
  for (double& v : out) v /= sum;
  return out;
}

StreamingFir::StreamingFir(std::vector<double> taps, double initial)
    : taps_(std::move(taps)), history_(taps_.size(), initial) {
  if (taps_.empty()) throw std::invalid_argument("StreamingFir: no taps");
}

double StreamingFir::push(double x) {
  head_ = head_ == 0 ? history_.size() - 1 : head_ - 1;
  history_[head_] = x;
  // y[n] = sum_m h[m] x[n - m]; history_[head_ + m] holds x[n - m].
  // Eigen's dot products run in SIMD packets (a long line is thousands of taps
  // at every sample of every channel: most of a synthetic run's time).
  using Span = Eigen::Map<const Eigen::VectorXd>;
  const auto n = static_cast<Eigen::Index>(taps_.size()), first = n - static_cast<Eigen::Index>(head_);
  return Span(taps_.data(), first).dot(Span(history_.data() + head_, first)) +
         Span(taps_.data() + first, n - first).dot(Span(history_.data(), n - first));
}

}  // namespace stallscope::synth
