#include "stages/daq.hpp"

#include <algorithm>
#include <cmath>

#include "pipeline/errors.hpp"
#include "stages/ingest/daq_file.hpp"

namespace stallscope {

const std::vector<std::string>& DaqStage::known_roles() {
  static const std::vector<std::string> kRoles = {"angle", "q_ref", "p_static", "temperature", "camera_trigger",
                                                  "contraction_dp"};
  return kRoles;
}

void DaqStage::configure(ConfigSection& s) {
  options_.file = s.path("file");
  options_.max_rate_jitter = s.number("max_rate_jitter", options_.max_rate_jitter);
  s.require(options_.max_rate_jitter > 0 && options_.max_rate_jitter < 1, "max_rate_jitter",
            "expected a fraction of the sample interval, between 0 and 1");
  ConfigSection roles = s.subsection("roles");
  for (const auto& role : known_roles()) {
    std::string channel = roles.text(role, "");
    if (channel.empty()) continue;
    options_.roles.emplace_back(role, channel);
    role_where_.push_back(roles.where(role));
  }
  roles.reject_unknown_keys();
}

std::vector<std::string> DaqStage::outputs() const {
  std::vector<std::string> out = {"daq/time_s", "daq/volts", "daq/sample_rate_hz"};
  for (const auto& [role, _] : options_.roles) out.push_back("daq/roles/" + role);
  return out;
}

void DaqStage::run(RunContext& context) {
  DaqRecord r = read_daq_file(context.raw_input(options_.file, "DAQ file"));
  if (r.time_s.size() < 2) throw InputError(r.source, "DAQ record has fewer than 2 samples");

  // A steady clock is assumed by every spectral stage: check it here.
  Eigen::VectorXd dt = r.time_s.tail(r.time_s.size() - 1) - r.time_s.head(r.time_s.size() - 1);
  std::vector<double> sorted(dt.data(), dt.data() + dt.size());
  std::nth_element(sorted.begin(), sorted.begin() + sorted.size() / 2, sorted.end());
  const double median_dt = sorted[sorted.size() / 2];
  Eigen::Index worst = 0;
  const double jitter = ((dt.array() - median_dt).abs() / median_dt).maxCoeff(&worst);
  if (jitter > options_.max_rate_jitter)
    throw InputError(r.where(worst + 1), "sample interval jumps by " + std::to_string(100 * jitter) + " % at sample " +
                                   std::to_string(worst + 1) + " (t = " + std::to_string(r.time_s[worst + 1]) +
                                   " s); allowed is [daq] max_rate_jitter = " +
                                   std::to_string(options_.max_rate_jitter));

  for (std::size_t i = 0; i < options_.roles.size(); ++i) {
    const auto& [role, channel] = options_.roles[i];
    if (r.channel_index(channel) < 0) {
      std::string have;
      for (const auto& c : r.channels) have += (have.empty() ? "" : ", ") + c;
      throw InputError(role_where_[i], "channel '" + channel + "' is not in " + r.source + " (it has: " + have + ")");
    }
    context.store().put("daq/roles/" + role, Text{channel}, {{"source", r.source}});
  }
  RunStore& s = context.store();
  s.put("daq/sample_rate_hz", Scalar{1.0 / median_dt, "Hz"});
  s.put("daq/time_s", Series{std::move(r.time_s), "s"});
  s.put("daq/volts", Matrix{std::move(r.volts), "V", std::move(r.channels)});
}

}  // namespace stallscope
