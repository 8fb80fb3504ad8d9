#pragma once
// Forward tubing distortion for synthetic taps: the Bergh-Tijdeman line response
// H(f) (calib/tubing) turned into a causal FIR filter by an inverse real FFT
// (FFTW) of H sampled at N bins up to the Nyquist frequency. The FIR's DFT is H
// exactly at the bins below half the Nyquist frequency (above it a raised-cosine
// taper stands for the DAQ's anti-alias filter), so its DC gain is H(0) = 1 (a slow signal passes
// unchanged) and its resonance and lag are those of the line. N/fs must exceed
// the line's ring-down time; the default 0.128 s is ample for lossy lines under
// a few metres (impulse responses decay within tens of milliseconds).
// Applied sample by sample with a ring buffer, so memory does not grow.
#include <span>
#include <vector>

#include "calib/tubing/bergh_tijdeman.hpp"

namespace stallscope::synth {

// FIR taps h[0..n) whose DFT equals the line response at f_k = k fs / n.
std::vector<double> tubing_impulse_response(std::span<const calib::TubeSegment> line,
                                            const calib::AirProperties& air, double sample_rate_hz, int n);

class StreamingFir {
 public:
  // history starts filled with `initial` (a record that begins at rest).
  StreamingFir(std::vector<double> taps, double initial);
  double push(double x);

 private:
  std::vector<double> taps_, history_;
  std::size_t head_ = 0;
};

}  // namespace stallscope::synth
