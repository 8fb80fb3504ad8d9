#include "tools/synth/flow_model.hpp"

#include <algorithm>
#include <cmath>
#include <numbers>
#include <stdexcept>

#include "calib/air/air.hpp"
#include "stages/theory/goman_khrabrov.hpp"
#include "stages/theory/theodorsen.hpp"

namespace stallscope::synth {

namespace {

constexpr double kPi = std::numbers::pi;
constexpr double kDeg = kPi / 180.0;
constexpr std::complex<double> kI{0.0, 1.0};

// R.T. Jones's two-pole approximation of Wagner's indicial lift (1940, NACA
// Report 681): phi(s) = 1 - 0.165 e^{-0.0455 s} - 0.335 e^{-0.3 s}, s in semichords.
constexpr double kWagnerA1 = 0.165, kWagnerB1 = 0.0455, kWagnerA2 = 0.335, kWagnerB2 = 0.3;

double smoothstep(double u) {
  u = std::clamp(u, 0.0, 1.0);
  return u * u * (3.0 - 2.0 * u);
}

}  // namespace

FlowModel::FlowModel(const Scenario& s)
    : scenario_(s),
      fs_(s.sample_rate_hz),
      velocity_(s.velocity_m_s),
      rho_(air::density(s.static_pressure_pa, s.temperature_c + air::kCelsiusToKelvin)),
      q_nominal_(0.5 * rho_ * velocity_ * velocity_),
      frequency_(1.0 / cycle_period_s(s)),
      period_(cycle_period_s(s)),
      omega_(2.0 * kPi * frequency_),
      k_(s.motion == MotionKind::kSine ? s.reduced_frequency : 0.0),
      a_(theory::pitch_axis_from_pivot(s.pivot_x_over_c)),
      t_motion_(s.tare_s + s.wind_ramp_s + s.settle_s),
      t_motion_end_(t_motion_ + motion_duration_s(s)),
      samples_(std::llround(record_duration_s(s) * s.sample_rate_hz)),
      cycle_random_(s.seed, "cycles"),
      q_random_(s.seed, "q fluctuation") {}

std::pair<double, double> FlowModel::last_tare() const {
  const double end = static_cast<double>(samples_) / fs_;
  return {end - scenario_.tare_s, end};
}

Phase FlowModel::phase_at(double t) const {
  const Scenario& s = scenario_;
  if (t < s.tare_s) return Phase::kTareStart;
  if (t < s.tare_s + s.wind_ramp_s) return Phase::kWindUp;
  if (t < t_motion_) return Phase::kSettleStart;
  if (t < t_motion_end_) return Phase::kMotion;
  if (t < t_motion_end_ + s.settle_s) return Phase::kSettleEnd;
  if (t < t_motion_end_ + s.settle_s + s.wind_ramp_s) return Phase::kWindDown;
  return Phase::kTareEnd;
}

double FlowModel::wind_at(double t) const {
  const Scenario& s = scenario_;
  switch (phase_at(t)) {
    case Phase::kTareStart:
    case Phase::kTareEnd: return 0.0;
    case Phase::kWindUp: return 0.5 * (1.0 - std::cos(kPi * (t - s.tare_s) / s.wind_ramp_s));
    case Phase::kWindDown: return 0.5 * (1.0 + std::cos(kPi * (t - t_motion_end_ - s.settle_s) / s.wind_ramp_s));
    case Phase::kSettleStart:
    case Phase::kMotion:
    case Phase::kSettleEnd: return 1.0;
  }
  throw std::logic_error("unknown run phase");
}

void FlowModel::motion_at(double t, double& alpha, double& alpha_rate, int& cycle, double& phase_deg) const {
  const Scenario& s = scenario_;
  const double a0 = s.alpha_mean_deg * kDeg, a1 = s.alpha_amp_deg * kDeg;
  alpha = a0 - a1;  // at rest at the minimum angle, where cycles start
  alpha_rate = 0.0;
  cycle = 0;
  phase_deg = 0.0;
  if (t < t_motion_ || t >= t_motion_end_) return;
  const double tau = t - t_motion_;
  cycle = std::min(s.cycles, static_cast<int>(std::floor(tau / period_)) + 1);
  const double within = tau - (cycle - 1) * period_;
  phase_deg = 360.0 * within / period_;
  if (s.motion == MotionKind::kSine) {
    // alpha = alpha0 + alpha1 sin(omega t - pi/2): cycles start at the minimum.
    const double theta = omega_ * tau;
    alpha = a0 - a1 * std::cos(theta);
    alpha_rate = a1 * omega_ * std::sin(theta);
    return;
  }
  // Constant-rate ramp up, hold, ramp down, hold.
  const double rate = s.ramp_rate_deg_s * kDeg, ramp = 2.0 * a1 / rate, hold = s.ramp_hold_s;
  if (within < ramp) {
    alpha = a0 - a1 + rate * within;
    alpha_rate = rate;
  } else if (within < ramp + hold) {
    alpha = a0 + a1;
  } else if (within < 2 * ramp + hold) {
    alpha = a0 + a1 - rate * (within - ramp - hold);
    alpha_rate = -rate;
  }
}

void FlowModel::start_cycle(int cycle) {
  current_cycle_ = cycle;
  // Draw every per-cycle number whether used or not, so streams stay aligned.
  const double jitter = cycle_random_.normal();
  cycle_speed_[0] = cycle_random_.uniform(scenario_.speed_range[0], scenario_.speed_range[1]);
  cycle_speed_[1] = cycle_random_.uniform(scenario_.speed_range[0], scenario_.speed_range[1]);
  cycle_alpha_star_ = (scenario_.alpha_star_deg + (cycle > 0 ? scenario_.alpha_star_jitter_deg * jitter : 0.0)) * kDeg;
  released_ = false;
  reattached_ = false;
}

void FlowModel::step_aerodynamics(FlowSample& out) {
  const Scenario& s = scenario_;
  const double c = s.chord_m, b = 0.5 * c, u = velocity_;
  const double dt = 1.0 / fs_;
  // 3/4-chord downwash angle and its Wagner-lagged circulatory angle.
  const double downwash = out.alpha + b * (0.5 - a_) * out.alpha_rate / u;
  if (have_prev_) {
    const double ds = 2.0 * u * dt / c, dw = downwash - prev_downwash_;
    wagner_x1_ = wagner_x1_ * std::exp(-kWagnerB1 * ds) + kWagnerA1 * dw * std::exp(-0.5 * kWagnerB1 * ds);
    wagner_x2_ = wagner_x2_ * std::exp(-kWagnerB2 * ds) + kWagnerA2 * dw * std::exp(-0.5 * kWagnerB2 * ds);
  }
  prev_downwash_ = downwash;
  out.alpha_effective = downwash - wagner_x1_ - wagner_x2_;
  // Apparent mass (Theodorsen's non-circulatory terms; alpha-ddot is dropped for
  // ramps, where it is a train of impulses at the corners).
  out.cn_noncirculatory = kPi * b * out.alpha_rate / u;
  out.cm_noncirculatory = -0.5 * kPi * b * out.alpha_rate / u;

  if (s.motion == MotionKind::kSine && out.phase == Phase::kMotion) {
    // Exact Theodorsen response for the harmonic motion, blended in over the
    // first quarter cycle and out over the last, so the start from rest is smooth.
    const double tau = out.t - t_motion_, theta = omega_ * tau;
    const double blend = std::min(smoothstep(tau / (0.25 * period_)), smoothstep((t_motion_end_ - out.t) / (0.25 * period_)));
    const double a0 = s.alpha_mean_deg * kDeg, a1 = s.alpha_amp_deg * kDeg;
    const std::complex<double> phasor = a1 * std::exp(kI * (theta - 0.5 * kPi));
    const std::complex<double> circulatory = theory::theodorsen(k_) * (1.0 + kI * k_ * (0.5 - a_));
    const std::complex<double> apparent = kPi * (kI * k_ + a_ * k_ * k_);
    const std::complex<double> moment = theory::pitch_moment_quarter_chord_transfer(k_, a_);
    const double quasi_steady = out.alpha;
    out.alpha_effective = quasi_steady + blend * (a0 + (circulatory * phasor).imag() - quasi_steady);
    out.cn_noncirculatory = blend * (apparent * phasor).imag();
    out.cm_noncirculatory = blend * (moment * phasor).imag();
  }

  // Goman-Khrabrov separation point: tau1 dx/dt + x = x0(alpha - tau2 alpha_dot).
  const theory::SeparationFit fit{s.separation_steepness_per_deg / kDeg, cycle_alpha_star_};
  const theory::GomanKhrabrovTimes times{s.tau1_conv * c / u, s.tau2_conv * c / u};
  auto x0 = [&fit](double alpha) { return theory::static_separation(fit, alpha); };
  if (!have_prev_) {
    out.separation_x = x0(out.alpha - times.tau2 * out.alpha_rate);
  } else {
    Eigen::Vector2d t(prev_t_, out.t), alpha(prev_alpha_, out.alpha), rate(prev_rate_, out.alpha_rate);
    out.separation_x = theory::integrate_goman_khrabrov(t, alpha, rate, x0, times, out.separation_x)[1];
  }
  out.separation_x = std::clamp(out.separation_x, 0.0, 1.0);
  prev_t_ = out.t;
  prev_alpha_ = out.alpha;
  prev_rate_ = out.alpha_rate;
  have_prev_ = true;
  // Kirchhoff: Cn = Cn_alpha ((1 + sqrt x)/2)^2 alpha_E (linear in alpha_E, as Theodorsen).
  const double kirchhoff = std::pow(0.5 * (1.0 + std::sqrt(out.separation_x)), 2);
  out.cn_circulatory_target = s.lift_slope_per_rad * kirchhoff * out.alpha_effective;
}

void FlowModel::step_vortices(FlowSample& out, double dt) {
  const Scenario& s = scenario_;
  const double c = s.chord_m, u = velocity_;
  const double gamma_max = s.circulation_conv * u * c;
  auto make_vortex = [&](int generation) {
    Vortex v;
    v.track = ++tracks_;
    v.cycle = out.cycle;
    v.generation = generation;
    v.t_release = out.t;
    v.x_over_c = s.release_x_over_c;
    v.height_over_c = s.height_over_c;
    v.speed_over_u = cycle_speed_[generation - 1];
    v.core_radius_m = s.core_radius_over_c * c;
    return v;
  };
  std::vector<Vortex> born;

  // Primary release: the separation point first falls below onset_x in this cycle.
  if (out.phase == Phase::kMotion && !released_ && out.separation_x < s.onset_x) {
    released_ = true;
    born.push_back(make_vortex(1));
    events_.push_back({out.cycle, "stall_onset", out.t, out.separation_x});
    events_.push_back({out.cycle, "convection_speed", out.t, cycle_speed_[0]});
  }
  if (released_ && !reattached_ && out.separation_x > s.reattach_x) {
    reattached_ = true;
    events_.push_back({current_cycle_, "reattachment", out.t, out.separation_x});
  }

  std::vector<Vortex> kept;
  for (Vortex& v : out.vortices) {
    if (v.t_release < out.t) v.x_over_c += v.speed_over_u * u * dt / c;
    const double travelled = v.x_over_c - s.release_x_over_c;
    const double factor = v.generation == 1 ? 1.0 : s.secondary_strength;
    const double fed = std::clamp(travelled / (s.detach_x_over_c - s.release_x_over_c), 0.0, 1.0);
    // A leading-edge vortex over an airfoil in flow along +x turns clockwise.
    v.circulation = -factor * gamma_max * fed;
    v.height_over_c = s.height_over_c + s.height_growth * travelled;
    v.core_radius_m = (s.core_radius_over_c + s.core_growth * travelled) * c;
    v.cp_bump = factor * s.cp_peak * fed * s.height_over_c / v.height_over_c;
    if (!v.detached && v.x_over_c >= s.detach_x_over_c) {
      v.detached = true;
      if (v.generation == 1) events_.push_back({v.cycle, "vortex_detachment", out.t, v.x_over_c});
    }
    if (!v.passed_te && v.x_over_c >= 1.0) {
      v.passed_te = true;
      if (v.generation == 1) {
        events_.push_back({v.cycle, "vortex_te_passage", out.t, v.x_over_c});
        if (s.secondary && out.phase == Phase::kMotion && out.separation_x < s.onset_x &&
            v.cycle == out.cycle) {
          events_.push_back({out.cycle, "secondary_vortex", out.t, out.separation_x});
          born.push_back(make_vortex(2));
        }
      }
    }
    if (v.x_over_c <= 2.5) kept.push_back(v);
  }
  kept.insert(kept.end(), born.begin(), born.end());
  out.vortices = std::move(kept);
}

const FlowSample& FlowModel::next() {
  if (next_index_ >= samples_) throw std::logic_error("FlowModel: stepped past the end of the record");
  FlowSample& s = sample_;
  const double dt = 1.0 / fs_;
  s.index = next_index_++;
  s.t = static_cast<double>(s.index) * dt;
  s.phase = phase_at(s.t);
  s.wind = wind_at(s.t);
  motion_at(s.t, s.alpha, s.alpha_rate, s.cycle, s.phase_deg);
  if (current_cycle_ < 0 || (s.cycle != current_cycle_ && s.cycle > 0)) start_cycle(s.cycle);
  // Free-stream q fluctuation: first-order Gauss-Markov, rms q_fluctuation.
  const double decay = std::exp(-dt / scenario_.q_fluctuation_s);
  const double drive = scenario_.q_fluctuation * std::sqrt(1.0 - decay * decay);
  const double shock = q_random_.normal();
  q_state_ = s.index == 0 ? scenario_.q_fluctuation * shock : decay * q_state_ + drive * shock;
  s.q_pa = q_nominal_ * s.wind * (1.0 + q_state_);
  step_aerodynamics(s);
  step_vortices(s, dt);
  return s;
}

std::vector<PhysicalEvent> FlowModel::take_events() {
  std::vector<PhysicalEvent> out;
  out.swap(events_);
  return out;
}

}  // namespace stallscope::synth
