#include "tools/synth/instruments.hpp"

#include <cmath>
#include <fstream>
#include <numbers>
#include <stdexcept>

#include <fmt/format.h>

#include "pipeline/errors.hpp"

namespace stallscope::synth {

void write_calibration_file(const std::filesystem::path& path, const std::string& id, const std::string& date,
                            const std::string& kind, const std::vector<ChannelCalibration>& channels,
                            double residual, const std::string& residual_key) {
  std::ofstream out(path, std::ios::binary);
  if (!out) throw InputError(path.string(), "cannot write calibration file");
  out << "# Synthetic calibration written by stallscope synth: physical = c0 + c1 V.\n";
  out << fmt::format("id = \"{}\"\ndate = {}\nkind = \"{}\"\n", id, date, kind);
  for (const auto& c : channels) {
    out << fmt::format("\n[channels.{}]\ncoefficients = [{:.10g}, {:.10g}]\n", c.channel, c.offset, c.gain);
    if (!residual_key.empty()) out << fmt::format("{} = {:.6g}\n", residual_key, residual);
    if (c.temperature_coefficient_per_k != 0.0)
      out << fmt::format("temperature_coefficient_per_k = {:.10g}\nreference_temperature_c = {:.10g}\n",
                         c.temperature_coefficient_per_k, c.reference_temperature_c);
  }
  if (!out) throw InputError(path.string(), "cannot write calibration file (disk full?)");
}

ChannelNoise::ChannelNoise(Random random, double fs, double white_v, double pink_v, double mains_v, double mains_hz)
    : random_(std::move(random)), white_(white_v), mains_(mains_v), mains_hz_(mains_hz) {
  mains_phase_ = 2.0 * std::numbers::pi * random_.uniform();
  const double dt = 1.0 / fs;
  // Corners from fs/4 down by octaves.
  for (int i = 0; i < kPoles; ++i) {
    const double corner = 0.25 * fs / std::pow(2.0, i);
    decay_[i] = std::exp(-2.0 * std::numbers::pi * corner * dt);
    const double sigma = pink_v / std::sqrt(static_cast<double>(kPoles));
    drive_[i] = sigma * std::sqrt(1.0 - decay_[i] * decay_[i]);
    state_[i] = sigma * random_.normal();
  }
}

double ChannelNoise::next(double t) {
  double v = white_ * random_.normal();
  for (int i = 0; i < kPoles; ++i) {
    state_[i] = decay_[i] * state_[i] + drive_[i] * random_.normal();
    v += state_[i];
  }
  const double w = 2.0 * std::numbers::pi * mains_hz_ * t + mains_phase_;
  return v + mains_ * (std::sin(w) + std::sin(3.0 * w) / 3.0);
}

}  // namespace stallscope::synth
