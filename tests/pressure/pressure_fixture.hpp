#pragma once
// A small invented run for the pressure stages: exact Joukowski Cp at 47 taps,
// linear transducer calibrations with offsets and a linear zero drift, wind-off
// segments at both ends, written as the raw files the stages read and put
// into a run store as the daq stage would.
#include <gtest/gtest.h>

#include <cmath>
#include <fmt/format.h>
#include <functional>
#include <memory>
#include <numbers>

#include "pipeline/config.hpp"
#include "pipeline/run_context.hpp"
#include "stages/theory/joukowski.hpp"
#include "tests/support/test_support.hpp"

namespace stallscope::testing {

struct PressureRun {
  ScratchDir dir;
  theory::JoukowskiGeometry geometry = theory::make_joukowski({1.0, 0.1, 0.0});
  std::vector<double> theta, x, y;
  std::vector<bool> upper;
  double rate = 1000.0, duration = 6.0, q = 400.0;
  double wind_off = 1.0;                                // s of wind-off at each end
  std::function<double(double)> alpha_deg = [](double t) { return 6.0 + 2.0 * std::sin(2 * std::numbers::pi * 2.0 * t); };
  double drift_volts = 0.002;                           // zero drift of every tap over the record
  RunStore store;
  Provenance provenance = Provenance::start("test");
  Progress progress{Progress::Mode::kQuiet};
  RunContext context{store, provenance, progress, 2};

  std::size_t taps() const { return theta.size(); }
  static double gain(std::size_t i) { return 900.0 + 10.0 * static_cast<double>(i); }  // Pa/V
  static double offset(std::size_t i) { return -50.0 + 3.0 * static_cast<double>(i); }  // Pa
  double q_at(double t) const { return (t < wind_off || t > duration - wind_off) ? 0.0 : q; }

  PressureRun() {
    auto stations = [](int n) {
      std::vector<double> s;
      for (int i = 0; i < n; ++i) s.push_back(0.95 * (1 - std::cos(0.5 * std::numbers::pi * i / (n - 1))));
      return s;
    };
    for (auto surface : {theory::Surface::kUpper, theory::Surface::kLower})
      for (double xs : stations(24)) {
        if (surface == theory::Surface::kLower && xs == 0.0) continue;
        const double th = theory::joukowski_theta_at(geometry, xs, surface);
        const auto p = theory::joukowski_surface_point(geometry, 0.0, th);
        theta.push_back(th);
        x.push_back(p.x_over_c);
        y.push_back(p.y_over_c);
        upper.push_back(surface == theory::Surface::kUpper);
      }
  }
  std::string tap_name(std::size_t i) const { return fmt::format("p{:02}", i + 1); }

  std::string tap_table(const std::function<std::string(std::size_t)>& status = {}) const {
    std::string s = "tap,channel,x_over_c,y_over_c,surface,tube_length_m,tube_diameter_m,volume_m3,time_offset_s,line,status\n";
    for (std::size_t i = 0; i < taps(); ++i)
      s += fmt::format("{0},{0},{1:.17g},{2:.17g},{3},,,,,,{4}\n", tap_name(i), x[i], y[i], upper[i] ? "upper" : "lower",
                       status ? status(i) : "ok");
    return s;
  }
  std::string tap_calibration(std::size_t skip = 1000, const std::string& extra = "") const {
    std::string s = "id = \"scanner-test\"\ndate = 2026-11-20\nkind = \"pressure_transducers\"\n";
    for (std::size_t i = 0; i < taps(); ++i)
      if (i != skip) s += fmt::format("[channels.{}]\ncoefficients = [{:.17g}, {:.17g}]\n", tap_name(i), offset(i), gain(i));
    return s + extra;
  }
  static std::string encoder_calibration() {
    return "id = \"encoder-test\"\ndate = 2026-11-21\nkind = \"angle_encoder\"\n[channels.alpha_enc]\ncoefficients = [-1.5, 4.0]\n";
  }
  static std::string pitot_calibration() {
    return "id = \"pitot-test\"\ndate = 2026-11-22\nkind = \"reference_pressure\"\n[channels.q_pitot]\ncoefficients = [2.0, 250.0]\n";
  }

  // Writes the raw files and fills daq/*, run/* as the daq and run stages would.
  void write(const std::string& calibrate_extra = "") {
    dir.write("taps.csv", tap_table());
    dir.write("cal/taps.toml", tap_calibration());
    dir.write("cal/encoder.toml", encoder_calibration());
    dir.write("cal/pitot.toml", pitot_calibration());
    set_calibrate_keys(calibrate_extra);
    fill_store();
  }
  // The [calibrate] section with extra keys (and any extra calibration files).
  void set_calibrate_keys(const std::string& calibrate_extra, const std::string& more_calibrations = "") {
    config_text = fmt::format(
        "[calibrate]\ntap_table = \"taps.csv\"\nzero_before_s = [0.0, {:g}]\nzero_after_s = [{:g}, {:g}]\n{}\n"
        "[calibrate.calibrations]\ntaps = \"cal/taps.toml\"\nencoder = \"cal/encoder.toml\"\npitot = \"cal/pitot.toml\"\n",
        wind_off * 0.9, duration - wind_off * 0.9, duration, calibrate_extra) + more_calibrations;
  }
  void fill_store() {
    const auto n = static_cast<Eigen::Index>(duration * rate) + 1;
    Eigen::VectorXd t(n);
    for (Eigen::Index k = 0; k < n; ++k) t[k] = static_cast<double>(k) / rate;
    std::vector<std::string> channels = {"alpha_enc", "q_pitot"};
    for (std::size_t i = 0; i < taps(); ++i) channels.push_back(tap_name(i));
    Eigen::MatrixXd v(n, static_cast<Eigen::Index>(channels.size()));
    for (Eigen::Index k = 0; k < n; ++k) {
      const double a = alpha_deg(t[k]), qk = q_at(t[k]);
      v(k, 0) = (a + 1.5) / 4.0;
      v(k, 1) = (qk - 2.0) / 250.0;
      for (std::size_t i = 0; i < taps(); ++i) {
        const double p = qk * theory::joukowski_surface_cp(geometry, a * std::numbers::pi / 180, theta[i]);
        v(k, static_cast<Eigen::Index>(i) + 2) = (p - offset(i)) / gain(i) + drift_volts * t[k] / duration;
      }
    }
    store.put("daq/time_s", Series{t, "s"});
    store.put("daq/volts", Matrix{v, "V", channels});
    store.put("daq/sample_rate_hz", Scalar{rate, "Hz"});
    store.put("daq/roles/angle", Text{"alpha_enc"});
    store.put("daq/roles/q_ref", Text{"q_pitot"});
    store.put("run/airfoil", Text{"Joukowski 0.1"});
    store.put("run/chord_m", Scalar{0.3, "m"});
    store.put("run/span_m", Scalar{1.0, "m"});
    store.put("run/pivot_x_over_c", Scalar{0.25, "1"});
  }

  // The DAQ record as the CSV the daq stage reads.
  std::filesystem::path write_daq_csv(const std::string& name) const {
    const Matrix& v = store.get<Matrix>("daq/volts");
    const Eigen::VectorXd& t = store.get<Series>("daq/time_s").values;
    std::string text = "time_s";
    for (const auto& c : v.columns) text += "," + c;
    text += "\n";
    for (Eigen::Index k = 0; k < t.size(); ++k) {
      text += fmt::format("{:.6f}", t[k]);
      for (Eigen::Index c = 0; c < v.values.cols(); ++c) text += fmt::format(",{:.12g}", v.values(k, c));
      text += "\n";
    }
    return dir.write(name, text);
  }

  // Configures and runs one stage from the config text plus `more` TOML.
  template <typename StageT>
  void run_stage(const std::string& more = "") {
    config = std::make_unique<ConfigFile>(ConfigFile::parse(config_text + more, dir / "run.toml"));
    StageT stage;
    ConfigSection section(*config, std::string(StageT::kName));
    stage.configure(section);
    section.reject_unknown_keys();
    stage.run(context);
  }

  std::string config_text;
  std::unique_ptr<ConfigFile> config;
};

}  // namespace stallscope::testing
