#pragma once
// Forward tubing distortion for synthetic taps: the Bergh-Tijdeman line response
// H(f) (calib/tubing) turned into a causal FIR filter by an inverse real FFT
// (FFTW) of H on a long frequency grid (a raised-cosine taper over the upper
// half of the band stands for the DAQ's anti-alias filter), cut to N taps with a
// cosine fade and scaled to a DC gain of exactly H(0) = 1 (a slow signal passes
// unchanged). Below half the Nyquist frequency its response is the line's to
// about 1e-3 (the cut viscous tail). N/fs must exceed the line's ring-down time;
// the default 0.512 s holds the ring-down of lossy lines under a few metres.
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
