#pragma once
// Fitting transducer calibrations from a pressure sweep.
//
// Sweep CSV (our own format): a header `applied_pa,<channel>,<channel>,...`
// then one row per step: the applied (reference) pressure in Pa and the mean
// volts each channel read at that step. Lines starting with '#' are comments.
//
// Each channel gets physical = c0 + c1 V + ... + c_d V^d by least squares
// (Eigen, column-pivoting QR on a centred and scaled Vandermonde matrix),
// with its rms and largest residual; a fit whose rms residual exceeds the
// limit is flagged poor (reported, and noted as a comment in the file).
#include <Eigen/Core>
#include <filesystem>
#include <iosfwd>
#include <string>
#include <vector>

#include "calib/transducers/calibration_file.hpp"

namespace stallscope::calib {

struct Sweep {
  std::vector<double> applied_pa;
  std::vector<std::string> channels;
  Eigen::MatrixXd volts;  // steps x channels
  std::string source;
};

// InputError naming the file and line for anything not in the format.
Sweep read_sweep(const std::filesystem::path& path);
Sweep parse_sweep(const std::string& text, const std::string& source);

struct ChannelFit {
  std::string channel;
  std::vector<double> coefficients;  // c0, c1, ...
  double rms_residual_pa = 0, max_residual_pa = 0;
  bool poor = false;
};

// Throws InputError (naming the sweep) when there are fewer steps than
// coefficients + 1, or a channel's volts do not change over the sweep.
std::vector<ChannelFit> fit_sweep(const Sweep& sweep, int degree, double max_rms_residual_pa);

struct TransducerFitRequest {
  std::filesystem::path sweep, output;
  int degree = 1;
  std::string id;    // empty: the sweep file's stem
  std::string date;  // empty: today (UTC), yyyy-mm-dd
  std::string kind = "pressure_transducers";  // or "reference_pressure"
  double max_residual_pa = 0;  // 0: 0.25 % of the applied range
  bool force = false;          // overwrite an existing file
};

// Fits, writes the calibration file (via a .partial and a rename) and prints
// a table of coefficients and residuals with poor fits flagged. Returns 0.
int run_transducer_fit(const TransducerFitRequest& request, std::ostream& out);

}  // namespace stallscope::calib
