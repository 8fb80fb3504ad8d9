#pragma once
// [tubing]: undo each tap's pneumatic line. Its response H(f) = p_transducer /
// p_tap comes from a measured response (lines file, `measured`), a series of
// tubes and volumes (lines file, `segments`), or the tap table's one segment
// (Bergh & Tijdeman 1965); a tap with neither is left as it is.
//
// The correction divides the record's spectrum by H, but only where H is well
// above noise: the tap's usable bandwidth is the band from 0 up to the first
// frequency where |H| falls below min_gain (so noise is amplified at most
// 1/min_gain times), the cut-off is that bandwidth (or cutoff_hz if lower), and
// the inverse is rolled off by a raised cosine over the top taper_fraction of
// the cut-off and zero above it: the corrected signal is also low-passed there.
// The record's end-to-end line is removed before the FFT and added back, and
// the record is zero-padded, so the periodic extension has no jump.
// Per tap, in parallel. Air in the lines: run/T_K and run/p_static_pa when the
// conditions stage gives them, else 20 C and 101325 Pa.
//
// Writes signals/p_taps_pa and pressure/tubing/taps (per tap: model, bandwidth,
// cut-off, and the line's gain and phase at the first pitch harmonics, i.e.
// the error the correction removes).
#include <Eigen/Core>
#include <complex>
#include <functional>

#include "pipeline/stage.hpp"

namespace stallscope {

class TubingStage final : public Stage {
 public:
  static constexpr std::string_view kName = "tubing";
  static constexpr std::string_view kSummary = "undo the pneumatic lines' response (Bergh-Tijdeman or measured) by FFT";

  struct Options {
    std::optional<std::filesystem::path> lines;  // lines file (TOML); needed when the tap table names lines
    double min_gain = 0.5;
    double cutoff_hz = 0.0;  // 0: each tap's usable bandwidth
    double taper_fraction = 0.2;
    int harmonics = 3;
  };

  std::string_view name() const override { return kName; }
  std::string_view summary() const override { return kSummary; }
  void configure(ConfigSection& section) override;
  std::vector<std::string> inputs() const override {
    return {"signals/time_s", "signals/p_taps_raw_pa", "signals/taps", "signals/pitch_frequency_hz", "daq/sample_rate_hz"};
  }
  std::vector<std::string> optional_inputs() const override { return {"run/T_K", "run/p_static_pa"}; }
  std::vector<std::string> outputs() const override { return {"signals/p_taps_pa", "pressure/tubing/taps"}; }
  void run(RunContext& context) override;

 private:
  Options options_;
  std::string where_lines_;
};

namespace tubing {

using Response = std::function<std::complex<double>(double frequency_hz)>;

// Highest f such that |H| >= min_gain on [0, f], searched up to f_max on a grid
// of `steps` and refined by bisection. f_max if |H| never drops that low.
double usable_bandwidth(const Response& h, double min_gain, double f_max, int steps = 2000);

// Raised-cosine roll-off: 1 below (1 - taper) f_c, 0 above f_c.
double taper_weight(double f, double cutoff_hz, double taper_fraction);

// Corrects one record sampled at `rate`: x_tap = IFFT(FFT(x) W / H), H tabulated
// on `grid` points up to the cut-off and interpolated. Pure function of its inputs.
Eigen::VectorXd correct(const Eigen::VectorXd& x, double rate, const Response& h, double cutoff_hz,
                        double taper_fraction, int grid = 2048);

// The forward model (what a line does to a record): x_transducer = IFFT(FFT(x) H),
// for tests and synthesis; same detrending and padding as correct().
Eigen::VectorXd apply(const Eigen::VectorXd& x, double rate, const Response& h);

// Smallest n' >= n of the form 2^a 3^b 5^c 7^d (fast FFT sizes).
int fast_fft_size(int n);

}  // namespace tubing

}  // namespace stallscope
