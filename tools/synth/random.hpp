#pragma once
// Deterministic random numbers for synthetic runs. std::mt19937_64's sequence is
// fixed by the standard; the conversions to uniform and normal deviates are
// written here (the standard library's distributions are not portable), so a
// seed gives the same files on every platform. Independent streams are derived
// from (seed, stream name), so switching one nuisance on does not reshuffle
// the others.
#include <cmath>
#include <cstdint>
#include <numbers>
#include <random>
#include <string_view>

namespace stallscope::synth {

class Random {
 public:
  Random(std::uint64_t seed, std::string_view stream) : engine_(mix(seed, stream)) {}

  // Uniform in [0, 1) from the top 53 bits.
  double uniform() { return static_cast<double>(engine_() >> 11) * 0x1.0p-53; }
  double uniform(double lo, double hi) { return lo + (hi - lo) * uniform(); }
  // Standard normal (Box-Muller, both values used).
  double normal() {
    if (has_spare_) {
      has_spare_ = false;
      return spare_;
    }
    double u1 = 0.0;
    do u1 = uniform();
    while (u1 <= 0.0);
    const double u2 = uniform();
    const double r = std::sqrt(-2.0 * std::log(u1));
    spare_ = r * std::sin(2.0 * std::numbers::pi * u2);
    has_spare_ = true;
    return r * std::cos(2.0 * std::numbers::pi * u2);
  }

 private:
  // splitmix64 finaliser over the seed and an FNV-1a hash of the stream name.
  static std::uint64_t mix(std::uint64_t seed, std::string_view stream) {
    std::uint64_t h = 1469598103934665603ULL;
    for (char c : stream) h = (h ^ static_cast<unsigned char>(c)) * 1099511628211ULL;
    std::uint64_t z = seed + 0x9E3779B97F4A7C15ULL * (h | 1);
    z = (z ^ (z >> 30)) * 0xBF58476D1CE4E5B9ULL;
    z = (z ^ (z >> 27)) * 0x94D049BB133111EBULL;
    return z ^ (z >> 31);
  }
  std::mt19937_64 engine_;
  double spare_ = 0.0;
  bool has_spare_ = false;
};

}  // namespace stallscope::synth
