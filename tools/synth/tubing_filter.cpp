#include "tools/synth/tubing_filter.hpp"

#include <fftw3.h>

#include <complex>
#include <mutex>
#include <numbers>
#include <stdexcept>

namespace stallscope::synth {

namespace {
constexpr double kTaperStart = 0.5;  // fraction of the Nyquist frequency
// FFTW's planner is not thread-safe; plans are made under this lock.
std::mutex fftw_planner_mutex;
}  // namespace

std::vector<double> tubing_impulse_response(std::span<const calib::TubeSegment> line, const calib::AirProperties& air,
                                            double sample_rate_hz, int n) {
  if (n < 4 || n % 2 != 0) throw std::invalid_argument("tubing_impulse_response: n must be even and >= 4");
  const int bins = n / 2 + 1;
  fftw_complex* spectrum = fftw_alloc_complex(bins);
  double* impulse = fftw_alloc_real(n);
  fftw_plan plan;
  {
    std::lock_guard lock(fftw_planner_mutex);
    plan = fftw_plan_dft_c2r_1d(n, spectrum, impulse, FFTW_ESTIMATE);
  }
  const double nyquist = 0.5 * sample_rate_hz;
  for (int k = 0; k < bins; ++k) {
    const double f = k * sample_rate_hz / n;
    std::complex<double> h = k == 0 ? std::complex<double>(1.0) : calib::line_response(line, air, f);
    // The DAQ's anti-alias filter: a raised-cosine taper over the upper half of the
    // band. Without it the line's fractional-sample delay leaves a slowly decaying
    // sinc tail that wraps round the FIR.
    if (f > kTaperStart * nyquist)
      h *= 0.5 * (1.0 + std::cos(std::numbers::pi * (f - kTaperStart * nyquist) / ((1.0 - kTaperStart) * nyquist)));
    spectrum[k][0] = h.real();
    spectrum[k][1] = h.imag();
  }
  fftw_execute(plan);
  std::vector<double> out(impulse, impulse + n);
  for (double& v : out) v /= n;  // FFTW's inverse is unnormalised
  {
    std::lock_guard lock(fftw_planner_mutex);
    fftw_destroy_plan(plan);
  }
  fftw_free(spectrum);
  fftw_free(impulse);
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
  double y = 0.0;
  const std::size_t n = taps_.size(), first = n - head_;
  for (std::size_t m = 0; m < first; ++m) y += taps_[m] * history_[head_ + m];
  for (std::size_t m = first; m < n; ++m) y += taps_[m] * history_[m - first];
  return y;
}

}  // namespace stallscope::synth
