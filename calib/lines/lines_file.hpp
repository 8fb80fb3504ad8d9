#pragma once
// Pneumatic lines (TOML, our own format; interfaces.md):
//   [lines.NAME]
//   segments = [{length_m = 0.3, diameter_m = 1.0e-3, volume_m3 = 0.0}, ...]  # tap -> transducer;
//               volume_m3 is the volume at the end of that segment
// or
//   measured = "line_NAME.csv"   # CSV frequency_hz,gain,phase_deg: p_transducer / p_tap,
//                                #   optionally with the calibration's scatter: ,gain_std,phase_std_deg
// and the measured-response CSV itself.
#include <complex>
#include <filesystem>
#include <functional>
#include <map>
#include <string>
#include <vector>

#include "calib/tubing/bergh_tijdeman.hpp"

namespace stallscope::calib {

struct LineDefinition {
  std::vector<TubeSegment> segments;   // empty for a measured line
  std::filesystem::path measured;      // empty for a modelled line
  int line = 0;                        // line of [lines.NAME] in the file
};

struct LinesFile {
  std::map<std::string, LineDefinition> lines;
  std::string source;
  std::string where(const std::string& name) const;
};

// Throws InputError naming the file, line and key; measured paths resolve
// relative to the lines file.
LinesFile read_lines_file(const std::filesystem::path& path);
LinesFile parse_lines_file(const std::string& text, const std::filesystem::path& path);

// A measured frequency response, interpolated linearly in gain and in
// (unwrapped) phase; below the first row it runs to gain 1, phase 0 at f = 0.
struct MeasuredResponse {
  std::vector<double> frequency_hz, gain, phase_deg;
  std::vector<double> gain_std, phase_std_deg;  // one standard deviation per row; empty: not given
  double max_frequency_hz() const { return frequency_hz.empty() ? 0.0 : frequency_hz.back(); }
  // Response at f; f above the last row is outside the measurement (std::invalid_argument).
  std::complex<double> at(double f) const;
  // A Monte Carlo replica's response: each row's gain and phase off by its
  // scatter times normal(index), independently row by row.
  MeasuredResponse perturbed(const std::function<double(std::size_t)>& normal) const;
};

// Header exactly frequency_hz,gain,phase_deg (or with ,gain_std,phase_std_deg);
// frequencies increasing and > 0 (0 allowed as the first row with gain 1,
// phase 0); gains > 0; scatter >= 0.
MeasuredResponse read_measured_response(const std::filesystem::path& path);
MeasuredResponse parse_measured_response(const std::string& text, const std::string& source);

}  // namespace stallscope::calib
