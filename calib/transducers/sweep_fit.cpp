#include "calib/transducers/sweep_fit.hpp"

#include <Eigen/QR>

#include <charconv>
#include <chrono>
#include <cmath>
#include <fmt/format.h>
#include <fstream>
#include <ostream>
#include <regex>
#include <set>
#include <sstream>

#include "pipeline/errors.hpp"

namespace stallscope::calib {

namespace fs = std::filesystem;

namespace {

std::vector<std::string> split(const std::string& line) {
  std::vector<std::string> out;
  std::stringstream in(line);
  std::string f;
  while (std::getline(in, f, ',')) {
    const auto b = f.find_first_not_of(" \t"), e = f.find_last_not_of(" \t\r");
    out.push_back(b == std::string::npos ? "" : f.substr(b, e - b + 1));
  }
  if (!line.empty() && line.back() == ',') out.emplace_back();
  return out;
}

std::string today_utc() {
  const auto now = std::chrono::floor<std::chrono::days>(std::chrono::system_clock::now());
  const std::chrono::year_month_day d{now};
  return fmt::format("{:04}-{:02}-{:02}", static_cast<int>(d.year()), static_cast<unsigned>(d.month()),
                     static_cast<unsigned>(d.day()));
}

}  // namespace

Sweep read_sweep(const fs::path& path) {
  std::ifstream in(path, std::ios::binary);
  if (!in) throw InputError(path.string(), "sweep file not found or not readable");
  std::ostringstream text;
  text << in.rdbuf();
  return parse_sweep(text.str(), path.string());
}

Sweep parse_sweep(const std::string& text, const std::string& source) {
  Sweep s;
  s.source = source;
  std::istringstream in(text);
  std::string line;
  int row = 0;
  std::vector<double> values;
  while (std::getline(in, line)) {
    ++row;
    if (!line.empty() && line.back() == '\r') line.pop_back();
    if (line.empty() || line.front() == '#') continue;
    const std::string where = source + ":" + std::to_string(row);
    auto f = split(line);
    if (s.channels.empty()) {
      if (f.empty() || f[0] != "applied_pa")
        throw InputError(where, "expected the header 'applied_pa,<channel>,...'");
      std::set<std::string> seen;
      for (std::size_t i = 1; i < f.size(); ++i) {
        if (f[i].empty()) throw InputError(where, "column " + std::to_string(i + 1) + " has no channel name");
        if (!seen.insert(f[i]).second) throw InputError(where, "channel '" + f[i] + "' appears twice");
        s.channels.push_back(f[i]);
      }
      if (s.channels.empty()) throw InputError(where, "the header names no channels after 'applied_pa'");
      continue;
    }
    if (f.size() != s.channels.size() + 1)
      throw InputError(where, fmt::format("expected {} fields, found {}", s.channels.size() + 1, f.size()));
    for (std::size_t i = 0; i < f.size(); ++i) {
      double v = 0;
      auto [p, ec] = std::from_chars(f[i].data(), f[i].data() + f[i].size(), v);
      if (ec != std::errc() || p != f[i].data() + f[i].size() || !std::isfinite(v))
        throw InputError(where, "column '" + (i == 0 ? std::string("applied_pa") : s.channels[i - 1]) +
                                    "': expected a finite number, found '" + f[i] + "'");
      (i == 0 ? s.applied_pa : values).push_back(v);
    }
  }
  if (s.channels.empty()) throw InputError(source, "expected the header 'applied_pa,<channel>,...' and rows");
  const auto steps = static_cast<Eigen::Index>(s.applied_pa.size()), nc = static_cast<Eigen::Index>(s.channels.size());
  s.volts.resize(steps, nc);
  for (Eigen::Index i = 0; i < steps; ++i)
    for (Eigen::Index c = 0; c < nc; ++c) s.volts(i, c) = values[static_cast<std::size_t>(i * nc + c)];
  return s;
}

std::vector<ChannelFit> fit_sweep(const Sweep& s, int degree, double max_rms) {
  const auto steps = static_cast<Eigen::Index>(s.applied_pa.size());
  if (degree < 1 || degree > 5) throw InputError(s.source, "polynomial degree must be 1 to 5");
  if (steps < degree + 2)
    throw InputError(s.source, fmt::format("{} steps cannot fit and check a degree-{} polynomial: give at least {}",
                                           steps, degree, degree + 2));
  const Eigen::Map<const Eigen::VectorXd> p(s.applied_pa.data(), steps);
  std::vector<ChannelFit> fits;
  for (Eigen::Index c = 0; c < s.volts.cols(); ++c) {
    const Eigen::VectorXd v = s.volts.col(c);
    const double mid = 0.5 * (v.maxCoeff() + v.minCoeff()), half = 0.5 * (v.maxCoeff() - v.minCoeff());
    if (!(half > 0))
      throw InputError(s.source, "channel '" + s.channels[static_cast<std::size_t>(c)] +
                                     "' reads the same volts at every step: no sensitivity to fit");
    // Fit in u = (V - mid)/half for conditioning, then expand back to powers of V.
    Eigen::MatrixXd a(steps, degree + 1);
    const Eigen::VectorXd u = (v.array() - mid) / half;
    for (int j = 0; j <= degree; ++j) a.col(j) = u.array().pow(j).matrix();
    const Eigen::VectorXd b = a.colPivHouseholderQr().solve(p);
    // sum_j b_j ((V - mid)/half)^j -> sum_k c_k V^k (binomial expansion).
    std::vector<double> coefficients(static_cast<std::size_t>(degree) + 1, 0.0);
    for (int j = 0; j <= degree; ++j)
      for (int k = 0; k <= j; ++k) {
        const double binomial = std::tgamma(j + 1) / (std::tgamma(k + 1) * std::tgamma(j - k + 1));
        coefficients[static_cast<std::size_t>(k)] += b[j] * binomial * std::pow(-mid, j - k) / std::pow(half, j);
      }
    const Eigen::VectorXd residual = a * b - p;
    ChannelFit f;
    f.channel = s.channels[static_cast<std::size_t>(c)];
    f.coefficients = coefficients;
    f.rms_residual_pa = std::sqrt(residual.squaredNorm() / static_cast<double>(steps));
    f.max_residual_pa = residual.cwiseAbs().maxCoeff();
    f.poor = f.rms_residual_pa > max_rms;
    fits.push_back(std::move(f));
  }
  return fits;
}

int run_transducer_fit(const TransducerFitRequest& r, std::ostream& out) {
  if (r.kind != "pressure_transducers" && r.kind != "reference_pressure")
    throw UsageError("--kind must be 'pressure_transducers' or 'reference_pressure'");
  std::error_code ec;
  if (fs::exists(r.output, ec) && !r.force)
    throw UsageError(r.output.string() + " exists; use --force to replace it");
  const std::string date = r.date.empty() ? today_utc() : r.date;
  if (!std::regex_match(date, std::regex(R"(\d{4}-\d{2}-\d{2})")))
    throw UsageError("--date must be yyyy-mm-dd, found '" + date + "'");
  const Sweep sweep = read_sweep(r.sweep);
  const auto [lo, hi] = std::minmax_element(sweep.applied_pa.begin(), sweep.applied_pa.end());
  const double limit = r.max_residual_pa > 0 ? r.max_residual_pa : 0.0025 * (*hi - *lo);
  const std::vector<ChannelFit> fits = fit_sweep(sweep, r.degree, limit);

  CalibrationFile file;
  file.id = r.id.empty() ? r.sweep.stem().string() : r.id;
  file.date = date;
  file.kind = r.kind == "pressure_transducers" ? CalibrationKind::kPressureTransducers : CalibrationKind::kReferencePressure;
  std::string notes;
  for (const auto& f : fits) {
    ChannelCalibration c;
    c.coefficients = f.coefficients;
    c.residual = f.rms_residual_pa;
    file.channels.emplace(f.channel, c);
    if (f.poor) notes += fmt::format("# poor fit: {} rms residual {:.4g} Pa > {:.4g} Pa\n", f.channel, f.rms_residual_pa, limit);
  }
  const std::string text = fmt::format("# fitted by stallscope calib transducer from {} ({} steps, degree {})\n{}{}",
                                       r.sweep.filename().string(), sweep.applied_pa.size(), r.degree, notes,
                                       format_calibration(file));
  parse_calibration(text, r.output);  // what we write must read back
  const fs::path partial = r.output.string() + ".partial";
  {
    std::ofstream o(partial, std::ios::binary);
    if (!o) throw InputError(r.output.string(), "cannot be written");
    o << text;
    if (!o) throw InputError(r.output.string(), "write failed");
  }
  fs::rename(partial, r.output);

  out << fmt::format("calibration '{}' ({}) from {} steps, degree {}: {}\n", file.id, date, sweep.applied_pa.size(),
                     r.degree, r.output.string());
  out << fmt::format("{:<12} {:>14} {:>14} {:>12} {:>12}  {}\n", "channel", "c0 Pa", "c1 Pa/V", "rms Pa", "max Pa", "fit");
  int poor = 0;
  for (const auto& f : fits) {
    out << fmt::format("{:<12} {:>14.6g} {:>14.6g} {:>12.4g} {:>12.4g}  {}\n", f.channel, f.coefficients[0],
                       f.coefficients[1], f.rms_residual_pa, f.max_residual_pa, f.poor ? "POOR" : "ok");
    poor += f.poor ? 1 : 0;
  }
  out << fmt::format("{} of {} channels fit within {:.4g} Pa rms{}\n", fits.size() - static_cast<std::size_t>(poor),
                     fits.size(), limit, poor ? "; check the POOR ones before use" : "");
  return 0;
}

}  // namespace stallscope::calib
