#include "stages/calibrate.hpp"

#include <algorithm>
#include <cmath>
#include <fmt/format.h>
#include <map>

#include "calib/air/air.hpp"
#include "calib/lines/tap_table.hpp"
#include "calib/transducers/calibration_file.hpp"
#include "pipeline/errors.hpp"
#include "pipeline/perturbation.hpp"
#include "stages/numerics/spectrum.hpp"

namespace stallscope {

namespace {

using calib::CalibrationKind;

std::optional<calib::TimeWindow> window_option(ConfigSection& s, const std::string& key) {
  if (!s.has(key)) {
    s.numbers(key, {});
    return std::nullopt;
  }
  auto w = s.numbers(key, {});
  s.require(w.size() == 2 && w[0] < w[1], key, "expected a time window [start_s, end_s] with start < end");
  return calib::TimeWindow{w[0], w[1]};
}

struct Calibrated {
  const calib::CalibrationFile* file = nullptr;
  const calib::ChannelCalibration* cal = nullptr;
};

bool is_pressure_kind(CalibrationKind k) {
  return k == CalibrationKind::kPressureTransducers || k == CalibrationKind::kReferencePressure;
}

}  // namespace

Eigen::VectorXd shift_samples(const Eigen::VectorXd& x, double shift) {
  const Eigen::Index n = x.size();
  Eigen::VectorXd y(n);
  if (n == 0) return y;
  const double whole = std::floor(shift);
  const double u = shift - whole;
  const auto base = static_cast<Eigen::Index>(whole);
  auto at = [&](Eigen::Index i) { return x[std::clamp<Eigen::Index>(i, 0, n - 1)]; };
  // Catmull-Rom weights for p(-1), p(0), p(1), p(2) at parameter u in [0, 1).
  const double u2 = u * u, u3 = u2 * u;
  const double w0 = 0.5 * (-u3 + 2 * u2 - u), w1 = 0.5 * (3 * u3 - 5 * u2 + 2);
  const double w2 = 0.5 * (-3 * u3 + 4 * u2 + u), w3 = 0.5 * (u3 - u2);
  for (Eigen::Index k = 0; k < n; ++k) {
    const Eigen::Index i = k + base;
    y[k] = w0 * at(i - 1) + w1 * at(i) + w2 * at(i + 1) + w3 * at(i + 2);
  }
  return y;
}

Eigen::VectorXd centred_moving_mean(const Eigen::VectorXd& x, double window) {
  // The integral of the linear interpolant over [k - w/2, k + w/2], divided by w:
  // for a whole number of samples per period every harmonic cancels exactly.
  const Eigen::Index n = x.size();
  const double half = 0.5 * window;
  const auto h = static_cast<Eigen::Index>(std::floor(half));
  if (h < 1) return x;
  const double frac = half - static_cast<double>(h);
  const double edge = 0.5 + frac * (1 - 0.5 * frac), beyond = 0.5 * frac * frac;
  Eigen::VectorXd prefix(n + 1);
  prefix[0] = 0;
  for (Eigen::Index i = 0; i < n; ++i) prefix[i + 1] = prefix[i] + x[i];
  Eigen::VectorXd y(n);
  for (Eigen::Index k = 0; k < n; ++k) {
    const Eigen::Index lo = k - h, hi = k + h;
    if (lo - 1 < 0 || hi + 1 >= n) {  // near the ends: the plain mean of the samples that fit
      const Eigen::Index a = std::max<Eigen::Index>(0, lo), b = std::min<Eigen::Index>(n - 1, hi);
      y[k] = (prefix[b + 1] - prefix[a]) / static_cast<double>(b - a + 1);
      continue;
    }
    const double inner = prefix[hi] - prefix[lo + 1];  // |j| < h
    y[k] = (inner + edge * (x[lo] + x[hi]) + beyond * (x[lo - 1] + x[hi + 1])) / window;
  }
  return y;
}

double fundamental_frequency(const Eigen::VectorXd& x, double rate, double min_hz, double min_amplitude) {
  const int n = static_cast<int>(x.size());
  if (n < 8) return 0.0;
  const Eigen::VectorXd spectrum = numerics::amplitude_spectrum(x.array() - x.mean());
  std::vector<double> mag(static_cast<std::size_t>(spectrum.size()));
  for (std::size_t i = 0; i < mag.size(); ++i) mag[i] = spectrum[static_cast<Eigen::Index>(i)] * 2.0 / n;
  const auto first = static_cast<std::size_t>(std::ceil(min_hz * n / rate));
  std::size_t best = 0;
  for (std::size_t i = std::max<std::size_t>(1, first); i + 1 < mag.size(); ++i)
    if (best == 0 || mag[i] > mag[best]) best = i;
  if (best == 0 || mag[best] < min_amplitude) return 0.0;
  const double a = std::log(mag[best - 1] + 1e-300), b = std::log(mag[best]), c = std::log(mag[best + 1] + 1e-300);
  const double denom = a - 2 * b + c;
  const double delta = denom != 0.0 ? 0.5 * (a - c) / denom : 0.0;
  return (static_cast<double>(best) + std::clamp(delta, -0.5, 0.5)) * rate / n;
}

void CalibrateStage::configure(ConfigSection& s) {
  where_tap_table_ = s.where("tap_table");
  options_.tap_table = s.path("tap_table");
  // [calibrate.calibrations]: any names -> calibration files (paths relative to the config).
  ConfigSection cals = s.subsection("calibrations");
  where_calibrations_ = cals.where("");
  for (const auto& key : cals.keys()) options_.calibrations.push_back(cals.path(key));
  s.require(!options_.calibrations.empty(), "calibrations",
            "expected a table [calibrate.calibrations] naming at least one calibration file");
  cals.reject_unknown_keys();
  where_zero_before_ = s.where("zero_before_s");
  options_.zero_before = window_option(s, "zero_before_s");
  options_.zero_after = window_option(s, "zero_after_s");
  s.require(!options_.zero_after || options_.zero_before, "zero_after_s", "give zero_before_s as well");
  if (options_.zero_before && options_.zero_after)
    s.require(options_.zero_after->start_s >= options_.zero_before->end_s, "zero_after_s",
              "the after-run window must start after the before-run window ends");
  where_drift_ = s.where("max_zero_drift_pa");
  options_.max_zero_drift_pa = s.number("max_zero_drift_pa", options_.max_zero_drift_pa);
  s.require(options_.max_zero_drift_pa > 0, "max_zero_drift_pa", "expected a pressure > 0");
  options_.on_zero_drift = s.choice("on_zero_drift", {"error", "flag"}, options_.on_zero_drift);
  where_q_source_ = s.where("q_source");
  options_.q_source = s.choice("q_source", {"pitot", "contraction"}, options_.q_source);
  options_.contraction_factor = s.number("contraction_factor", options_.contraction_factor);
  s.require(options_.contraction_factor > 0, "contraction_factor", "expected a tunnel factor > 0");
  options_.q_average = s.choice("q_average", {"none", "cycle"}, options_.q_average);
  where_frequency_ = s.where("pitch_frequency_hz");
  options_.pitch_frequency_hz = s.number("pitch_frequency_hz", 0.0);
  s.require(options_.pitch_frequency_hz >= 0, "pitch_frequency_hz", "expected a frequency >= 0 (0: estimate)");
  options_.temperature_c = s.number("temperature_c", options_.temperature_c);
  s.require(options_.temperature_c > -100 && options_.temperature_c < 200, "temperature_c",
            "expected the air temperature in degrees Celsius");
  ConfigSection offsets = s.subsection("time_offsets");
  where_offsets_ = offsets.where("");
  for (const auto& channel : offsets.keys()) {
    const double d = offsets.number(channel);
    offsets.require(std::abs(d) < 1.0, channel, "expected a sampling skew in seconds, |offset| < 1");
    options_.time_offsets.emplace_back(channel, d);
  }
}

std::vector<std::string> CalibrateStage::inputs() const {
  return {"daq/time_s", "daq/volts", "daq/sample_rate_hz", "run/airfoil"};
}

std::vector<std::string> CalibrateStage::optional_inputs() const {
  return {"daq/roles/angle", "daq/roles/q_ref", "daq/roles/contraction_dp", "daq/roles/p_static",
          "daq/roles/temperature"};
}

std::vector<std::string> CalibrateStage::outputs() const {
  return {"signals/time_s",   "signals/alpha_deg", "signals/q_pa",       "signals/p_taps_raw_pa",
          "signals/taps",     "signals/pitch_frequency_hz", "signals/p_static_pa", "signals/T_K",
          "signals/rho_kg_m3"};
}

void CalibrateStage::run(RunContext& context) {
  RunStore& store = context.store();
  const Eigen::VectorXd& t = store.get<Series>("daq/time_s").values;
  const Matrix& volts = store.get<Matrix>("daq/volts");
  const double rate = store.get<Scalar>("daq/sample_rate_hz").value;
  auto channel_column = [&](const std::string& channel) -> Eigen::Index {
    for (std::size_t i = 0; i < volts.columns.size(); ++i)
      if (volts.columns[i] == channel) return static_cast<Eigen::Index>(i);
    return -1;
  };
  auto role = [&](const std::string& r) -> std::optional<std::string> {
    if (!store.contains("daq/roles/" + r)) return std::nullopt;
    return store.get<Text>("daq/roles/" + r).value;
  };

  // Tap table, with y/c from the section when the table leaves it empty.
  calib::TapTable taps = calib::read_tap_table(context.raw_input(options_.tap_table, "tap table"));
  // A Monte Carlo replica perturbs each uncertain input by its own draws.
  const Perturbation* mc = context.perturbation();
  if (mc && mc->model().tap_position_over_c > 0)
    for (std::size_t i = 0; i < taps.taps.size(); ++i)
      taps.taps[i].x_over_c =
          std::clamp(taps.taps[i].x_over_c + mc->error(mc->model().tap_position_over_c, "tap_x_over_c", i), 0.0, 1.0);
  const bool needs_y = std::any_of(taps.taps.begin(), taps.taps.end(), [](const calib::Tap& tp) { return !std::isfinite(tp.y_over_c); });
  if (needs_y) {
    std::string airfoil = store.get<Text>("run/airfoil").value;
    std::string digits = airfoil.rfind("NACA", 0) == 0 ? airfoil.substr(4) : airfoil;
    digits.erase(std::remove(digits.begin(), digits.end(), ' '), digits.end());
    theory::Naca4Section section;
    try {
      section = theory::parse_naca4(digits, false, "[run] airfoil");
    } catch (const InputError&) {
      throw InputError(taps.source, "some taps have no y_over_c and [run] airfoil = '" + airfoil +
                                        "' is not a NACA 4-digit section to take it from");
    }
    calib::fill_naca4_ordinates(taps, section);
  }

  // Calibrations: every channel calibrated once, every named channel present.
  std::vector<calib::CalibrationFile> files;
  for (const auto& path : options_.calibrations) {
    files.push_back(calib::read_calibration_file(context.raw_input(path, "calibration file")));
    context.calibration_used(files.back().id, path);
  }
  std::map<std::string, Calibrated> by_channel;
  for (const auto& f : files)
    for (const auto& [channel, cal] : f.channels) {
      if (channel_column(channel) < 0)
        throw InputError(f.where(channel), "channel '" + channel + "' is not in the DAQ file (check the DAQ channel names)");
      auto [it, fresh] = by_channel.emplace(channel, Calibrated{&f, &cal});
      if (!fresh)
        throw InputError(f.where(channel), "channel '" + channel + "' is also calibrated in " +
                                               it->second.file->source.string());
    }
  auto calibration_for = [&](const std::string& channel, const std::string& what) -> const Calibrated& {
    auto it = by_channel.find(channel);
    if (it == by_channel.end())
      throw InputError(where_calibrations_, "no calibration file names channel '" + channel + "' (" + what + ")");
    return it->second;
  };

  // Skew offsets: the tap table's, then [calibrate.time_offsets] for the others.
  std::map<std::string, double> offsets;
  for (const auto& tap : taps.taps) offsets[tap.channel] = tap.time_offset_s;
  for (const auto& [channel, d] : options_.time_offsets) {
    if (channel_column(channel) < 0)
      throw InputError(where_offsets_ + "." + channel, "channel '" + channel + "' is not in the DAQ file");
    auto it = offsets.find(channel);
    if (it != offsets.end() && it->second != 0.0)
      throw InputError(where_offsets_ + "." + channel, "the tap table already gives this channel a time_offset_s");
    offsets[channel] = d;
  }
  auto physical = [&](const std::string& channel, const Calibrated& c) {
    const auto v = volts.values.col(channel_column(channel));
    auto it = offsets.find(channel);
    if (it != offsets.end() && it->second != 0.0) return c.cal->evaluate(shift_samples(v, -it->second * rate));
    return c.cal->evaluate(v);
  };

  // Temperature first: the pressure transducers' thermal sensitivity needs it.
  std::optional<Eigen::VectorXd> temperature_c;
  if (auto ch = role("temperature")) {
    const Calibrated& c = calibration_for(*ch, "role temperature");
    if (c.file->kind != CalibrationKind::kTemperature)
      throw InputError(c.file->where(*ch), "the temperature channel needs a calibration of kind 'temperature'");
    temperature_c = physical(*ch, c);
    if (mc) temperature_c->array() += mc->error(mc->model().temperature_k, "temperature");
  }
  auto thermal = [&](Eigen::VectorXd p, const calib::ChannelCalibration& cal) {
    if (cal.temperature_coefficient_per_k == 0.0) return p;
    if (temperature_c) {
      for (Eigen::Index i = 0; i < p.size(); ++i) p[i] *= cal.temperature_factor((*temperature_c)[i]);
    } else {
      p *= cal.temperature_factor(options_.temperature_c);
    }
    return p;
  };
  // Wind-off zero of a differential pressure; returns the drift for gating.
  auto tare = [&](Eigen::VectorXd& p, const std::string& what) -> calib::WindOffZero {
    if (!options_.zero_before) return {};
    calib::WindOffZero z;
    try {
      z = calib::wind_off_zero(t, p, *options_.zero_before, options_.zero_after);
    } catch (const std::invalid_argument&) {
      throw InputError(where_zero_before_, "a wind-off window holds no DAQ sample (record spans " +
                                               fmt::format("{:g} to {:g} s", t[0], t[t.size() - 1]) + ")");
    }
    p -= z.at(t);
    if (std::abs(z.drift()) > options_.max_zero_drift_pa && options_.on_zero_drift == "error")
      throw InputError(where_drift_, fmt::format("{} zero drifted by {:.3g} Pa between the wind-off windows "
                                                 "(allowed {:g} Pa; set on_zero_drift = \"flag\" to keep it)",
                                                 what, z.drift(), options_.max_zero_drift_pa));
    return z;
  };
  // In a replica: a gain error whose size at the channel's largest pressure in
  // the run is its calibration residual, an independent and a shared gain
  // error, and the zero known only to within its drift (after the tare, which
  // would remove a constant error).
  auto perturb = [&](Eigen::VectorXd& p, const std::string& channel, const calib::ChannelCalibration& cal,
                     double shared_gain, const calib::WindOffZero& z) {
    if (!mc) return;
    const UncertaintyModel& m = mc->model();
    double gain = 1.0 + mc->error(m.channel_gain_relative, "channel_gain:" + channel) + shared_gain;
    const double peak = p.cwiseAbs().maxCoeff();
    if (m.calibration_residuals && cal.residual > 0 && peak > 0)
      gain += mc->error(cal.residual / peak, "calibration_residual:" + channel);
    p *= gain;
    if (m.zero_drift) p.array() += mc->error(std::abs(z.drift()) / std::sqrt(12.0), "zero:" + channel);
  };
  auto pressure = [&](const std::string& channel, const std::string& what, bool zero, double shared_gain = 0.0) {
    const Calibrated& c = calibration_for(channel, what);
    if (!is_pressure_kind(c.file->kind))
      throw InputError(c.file->where(channel), what + " needs a calibration of kind 'pressure_transducers' or "
                                                      "'reference_pressure', this file is '" +
                                                   std::string(calib::kind_name(c.file->kind)) + "'");
    Eigen::VectorXd p = thermal(physical(channel, c), *c.cal);
    calib::WindOffZero z;
    if (zero) z = tare(p, what);
    perturb(p, channel, *c.cal, shared_gain, z);
    return std::pair{std::move(p), z};
  };

  // Taps.
  Matrix p_taps;
  p_taps.units = "Pa";
  p_taps.values.resize(t.size(), static_cast<Eigen::Index>(taps.taps.size()));
  std::vector<double> zero_before, zero_drift;
  std::vector<std::int64_t> zero_flag;
  for (std::size_t i = 0; i < taps.taps.size(); ++i) {
    calib::Tap& tap = taps.taps[i];
    if (channel_column(tap.channel) < 0)
      throw InputError(taps.where(i), "channel '" + tap.channel + "' is not in the DAQ file");
    if (!by_channel.count(tap.channel))
      throw InputError(taps.where(i), "channel '" + tap.channel + "' is in no calibration file given by " +
                                          where_calibrations_);
    auto [p, z] = pressure(tap.channel, "tap " + tap.name, true,
                           mc ? mc->error(mc->model().taps_gain_relative, "taps_gain") : 0.0);
    p_taps.values.col(static_cast<Eigen::Index>(i)) = p;
    p_taps.columns.push_back(tap.name);
    zero_before.push_back(z.before);
    zero_drift.push_back(z.drift());
    const bool flagged = std::abs(z.drift()) > options_.max_zero_drift_pa;
    zero_flag.push_back(flagged ? 1 : 0);
    if (flagged && tap.status == calib::TapStatus::kOk) tap.status = calib::TapStatus::kSuspect;
  }

  // Encoder angle.
  auto angle_channel = role("angle");
  if (!angle_channel) throw InputError(where_tap_table_, "[calibrate] needs [daq.roles] angle (the pitch encoder)");
  const Calibrated& enc = calibration_for(*angle_channel, "role angle");
  if (enc.file->kind != CalibrationKind::kAngleEncoder)
    throw InputError(enc.file->where(*angle_channel), "the angle channel needs a calibration of kind 'angle_encoder'");
  Eigen::VectorXd alpha = physical(*angle_channel, enc);
  if (mc)
    alpha = alpha * (1.0 + mc->error(mc->model().encoder_gain_relative, "encoder_gain")) +
            Eigen::VectorXd::Constant(alpha.size(), mc->error(mc->model().encoder_offset_deg, "encoder_offset"));

  double f_pitch = options_.pitch_frequency_hz;
  if (f_pitch == 0.0) f_pitch = fundamental_frequency(alpha, rate, 0.05, 0.05);

  // Reference dynamic pressure.
  const bool pitot = options_.q_source == "pitot";
  const std::string q_role = pitot ? "q_ref" : "contraction_dp";
  auto q_channel = role(q_role);
  if (!q_channel)
    throw InputError(where_q_source_, "q_source = '" + options_.q_source + "' needs [daq.roles] " + q_role);
  auto [q, qz] = pressure(*q_channel, "role " + q_role, true, mc ? mc->error(mc->model().q_relative, "q_gain") : 0.0);
  if (!pitot) q *= options_.contraction_factor;
  Attributes q_attributes{{"source", options_.q_source}, {"zero_drift_pa", qz.drift()}};
  if (std::abs(qz.drift()) > options_.max_zero_drift_pa) q_attributes["zero_drift_flagged"] = std::int64_t{1};
  if (options_.q_average == "cycle") {
    if (f_pitch <= 0.0)
      throw InputError(where_frequency_, "q_average = \"cycle\" needs a pitch frequency, and the encoder shows no motion");
    q = centred_moving_mean(q, rate / f_pitch);
    q_attributes["averaged_over_s"] = 1.0 / f_pitch;
  }

  RunStore& s = store;
  s.put("signals/time_s", Series{t, "s"});
  // Where the angle came from, for the errors of the stages that read it.
  std::string angle_source = "channel '" + *angle_channel + "'";
  const Attributes& angle_role = store.entry("daq/roles/angle").attributes;
  if (auto it = angle_role.find("source"); it != angle_role.end())
    angle_source = std::get<std::string>(it->second) + ": " + angle_source;
  s.put("signals/alpha_deg", Series{alpha, "deg"}, {{"source", angle_source}});
  s.put("signals/q_pa", Series{q, "Pa"}, q_attributes);
  s.put("signals/pitch_frequency_hz", Scalar{f_pitch, "Hz"},
        {{"source", std::string(options_.pitch_frequency_hz > 0 ? "config" : "encoder spectrum")}});

  Table tap_table = calib::to_store_table(taps);
  tap_table.add({"zero_pa", "Pa", zero_before}).add({"zero_drift_pa", "Pa", zero_drift}).add({"zero_flagged", "", zero_flag});
  s.put("signals/taps", std::move(tap_table), {{"source", taps.source}});
  s.put("signals/p_taps_raw_pa", std::move(p_taps),
        {{"zero", std::string(options_.zero_before ? (options_.zero_after ? "before and after, interpolated" : "before")
                                                   : "none")}});

  if (temperature_c) s.put("signals/T_K", Series{(temperature_c->array() + air::kCelsiusToKelvin).matrix(), "K"});
  if (auto ch = role("p_static")) {
    Eigen::VectorXd p = pressure(*ch, "role p_static", false).first;
    if (mc) p.array() += mc->error(mc->model().p_static_pa, "p_static");
    Eigen::VectorXd rho(p.size());
    for (Eigen::Index i = 0; i < p.size(); ++i) {
      if (!(p[i] > 0))
        throw InputError(calibration_for(*ch, "").file->where(*ch),
                         fmt::format("static pressure is {:g} Pa at t = {:g} s; expected an absolute pressure > 0", p[i], t[i]));
      const double tk = (temperature_c ? (*temperature_c)[i] : options_.temperature_c) + air::kCelsiusToKelvin;
      rho[i] = air::density(p[i], tk);
    }
    s.put("signals/p_static_pa", Series{p, "Pa"});
    s.put("signals/rho_kg_m3", Series{rho, "kg/m^3"});
  }
}

}  // namespace stallscope
