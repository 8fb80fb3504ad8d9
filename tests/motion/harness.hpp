#pragma once
// Test helpers for the motion, cycles, phase, damping and static-polar stages:
// a run store with its context, a stage configured from a TOML snippet, and a
// synthetic pitching run written straight into the store.
#include <cmath>
#include <numbers>
#include <random>
#include <string>

#include "pipeline/config.hpp"
#include "pipeline/run_context.hpp"

namespace stallscope::testing {

inline constexpr double kPi = std::numbers::pi;

struct Harness {
  RunStore store;
  Provenance provenance;
  Progress quiet{Progress::Mode::kQuiet};
  RunContext context{store, provenance, quiet};

  // Configures the stage from `[name]\n<toml>` and runs it.
  template <typename S>
  void run(S& stage, const std::string& toml = "") {
    configure(stage, toml);
    stage.run(context);
  }
  template <typename S>
  static void configure(S& stage, const std::string& toml = "") {
    ConfigFile f = ConfigFile::parse("[" + std::string(S::kName) + "]\n" + toml, "run.toml");
    ConfigSection s(f, std::string(S::kName));
    stage.configure(s);
    s.reject_unknown_keys();
  }
};

// alpha = mean + amp sin(2 pi f t + phase) sampled at rate_hz for duration_s,
// with Gaussian noise of noise_deg; chord and speed set k = pi f c / U.
struct SineRun {
  double mean_deg = 10, amp_deg = 8, freq_hz = 2.0, phase_rad = 0.3;
  double rate_hz = 1000, duration_s = 5.0, noise_deg = 0.0, t0_s = 0.0;
  double chord_m = 0.3, speed_m_s = 20.0;
  unsigned seed = 7;
};

inline void put_conditions(RunStore& s, double chord_m, double speed_m_s) {
  s.put("run/chord_m", Scalar{chord_m, "m"});
  s.put("run/U_inf_m_s", Scalar{speed_m_s, "m/s"});
  s.put("run/rho_kg_m3", Scalar{1.2, "kg/m^3"});
  s.put("run/T_K", Scalar{293.15, "K"});
  s.put("run/p_static_pa", Scalar{101325.0, "Pa"});
  s.put("run/pivot_x_over_c", Scalar{0.25, "1"});
}

inline Eigen::VectorXd time_base(double t0, double rate_hz, double duration_s) {
  const auto n = static_cast<Eigen::Index>(std::llround(duration_s * rate_hz));
  Eigen::VectorXd t(n);
  for (Eigen::Index i = 0; i < n; ++i) t[i] = t0 + static_cast<double>(i) / rate_hz;
  return t;
}

inline void put_sine_run(RunStore& s, const SineRun& r) {
  put_conditions(s, r.chord_m, r.speed_m_s);
  Eigen::VectorXd t = time_base(r.t0_s, r.rate_hz, r.duration_s);
  Eigen::VectorXd a(t.size());
  std::mt19937 gen(r.seed);
  std::normal_distribution<double> noise(0.0, r.noise_deg > 0 ? r.noise_deg : 1.0);
  for (Eigen::Index i = 0; i < t.size(); ++i)
    a[i] = r.mean_deg + r.amp_deg * std::sin(2 * kPi * r.freq_hz * t[i] + r.phase_rad) +
           (r.noise_deg > 0 ? noise(gen) : 0.0);
  s.put("signals/time_s", Series{t, "s"});
  s.put("signals/alpha_deg", Series{a, "deg"});
}

}  // namespace stallscope::testing
