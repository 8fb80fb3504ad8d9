#include "pipeline/perturbation.hpp"

#include <cmath>
#include <numbers>

namespace stallscope {

namespace {

// SplitMix64 finaliser (Steele, Lea & Flood 2014): a counter-based generator,
// so each draw depends only on its key, never on the order of the draws.
std::uint64_t mix(std::uint64_t z) {
  z += 0x9e3779b97f4a7c15ULL;
  z = (z ^ (z >> 30)) * 0xbf58476d1ce4e5b9ULL;
  z = (z ^ (z >> 27)) * 0x94d049bb133111ebULL;
  return z ^ (z >> 31);
}

std::uint64_t hash_text(std::string_view s) {  // FNV-1a, 64 bit
  std::uint64_t h = 0xcbf29ce484222325ULL;
  for (unsigned char c : s) h = (h ^ c) * 0x100000001b3ULL;
  return h;
}

double unit_open(std::uint64_t bits) {  // (0, 1), never 0
  return (static_cast<double>(bits >> 11) + 0.5) * 0x1.0p-53;
}

}  // namespace

double Perturbation::normal(std::string_view what, std::uint64_t index) const {
  const std::uint64_t key = mix(mix(mix(model_.seed) ^ replica_) ^ hash_text(what)) ^ mix(index);
  // Box-Muller from two independent uniforms of the same key.
  const double u1 = unit_open(mix(key)), u2 = unit_open(mix(key ^ 0xd1b54a32d192ed03ULL));
  return std::sqrt(-2.0 * std::log(u1)) * std::cos(2.0 * std::numbers::pi * u2);
}

UncertaintyModel UncertaintyModel::from(ConfigSection& s) {
  UncertaintyModel m;
  const auto replicas = s.integer("replicas", static_cast<std::int64_t>(m.replicas));
  s.require(replicas >= 2 && replicas <= 100000, "replicas", "expected a number of replicas from 2 to 100000");
  m.replicas = static_cast<std::size_t>(replicas);
  const auto seed = s.integer("seed", static_cast<std::int64_t>(m.seed));
  s.require(seed >= 0, "seed", "expected a seed >= 0");
  m.seed = static_cast<std::uint64_t>(seed);
  m.calibration_residuals = s.boolean("calibration_residuals", m.calibration_residuals);
  m.zero_drift = s.boolean("zero_drift", m.zero_drift);
  auto sigma = [&](const char* key, double& into, double max, const char* what) {
    into = s.number(key, into);
    s.require(into >= 0 && into <= max, key, std::string("expected one standard deviation ") + what);
  };
  sigma("channel_gain_relative", m.channel_gain_relative, 0.5, "as a fraction, 0 to 0.5");
  sigma("taps_gain_relative", m.taps_gain_relative, 0.5, "as a fraction, 0 to 0.5");
  sigma("q_relative", m.q_relative, 0.5, "as a fraction, 0 to 0.5");
  sigma("p_static_pa", m.p_static_pa, 1e4, "in Pa, 0 to 10000");
  sigma("temperature_k", m.temperature_k, 20, "in K, 0 to 20");
  sigma("tap_position_over_c", m.tap_position_over_c, 0.05, "as a fraction of the chord, 0 to 0.05");
  sigma("tube_length_relative", m.tube_length_relative, 0.5, "as a fraction, 0 to 0.5");
  sigma("tube_diameter_relative", m.tube_diameter_relative, 0.5, "as a fraction, 0 to 0.5");
  sigma("encoder_offset_deg", m.encoder_offset_deg, 5, "in degrees, 0 to 5");
  sigma("encoder_gain_relative", m.encoder_gain_relative, 0.5, "as a fraction, 0 to 0.5");
  m.piv_clock_fit = s.boolean("piv_clock_fit", m.piv_clock_fit);
  sigma("piv_delay_s", m.piv_delay_s, 1.0, "in s, 0 to 1");
  return m;
}

}  // namespace stallscope
