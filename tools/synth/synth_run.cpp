#include "tools/synth/synth_run.hpp"

#include <algorithm>
#include <cmath>
#include <complex>
#include <fstream>
#include <map>
#include <memory>
#include <numbers>

#include <fmt/format.h>

#include "calib/air/air.hpp"
#include "calib/tubing/bergh_tijdeman.hpp"
#include "pipeline/csv_writer.hpp"
#include "pipeline/errors.hpp"
#include "stages/theory/naca4.hpp"
#include "tools/synth/flow_model.hpp"
#include "tools/synth/h5_append.hpp"
#include "tools/synth/instruments.hpp"
#include "tools/synth/piv_generator.hpp"
#include "tools/synth/piv_text.hpp"
#include "tools/synth/surface_pressure.hpp"
#include "tools/synth/truth_criteria.hpp"
#include "tools/synth/tubing_filter.hpp"

namespace stallscope::synth {

namespace fs = std::filesystem;

namespace {

constexpr double kDeg = std::numbers::pi / 180.0;

// Events written per cycle, in this order (names as in events_per_cycle.csv;
// cycles numbered from 0 at the first cycle's minimum angle, as the pipeline does).
// Physical times: stall_onset = vortex release (x first below onset_x),
// vortex_detachment = feeding stops at detach_x_over_c, vortex_te_passage = the
// vortex centre at x/c = 1, reattachment = x back above reattach_x; lift_peak,
// normal_force_peak, cm_min = extrema of the true loads; static_stall_crossing,
// moment_stall, le_suction_collapse = those criteria on the undistorted state
// (truth_criteria.hpp). The lag of each pipeline criterion behind these times is
// measured on a realistic run by tests/events/synth_truth_test.cpp.
const std::vector<std::string> kCycleEvents = {
    "static_stall_crossing", "stall_onset",       "moment_stall", "le_suction_collapse", "convection_speed",
    "vortex_detachment",     "vortex_te_passage", "secondary_vortex", "reattachment",    "lift_peak",
    "normal_force_peak",     "cm_min"};

std::string tap_name(int i) { return fmt::format("p{:02d}", i + 1); }

// A round full-scale value at or above x (1, 2, 2.5, 5 x 10^n).
double nice_ceiling(double x) {
  const double decade = std::pow(10.0, std::floor(std::log10(x)));
  for (double m : {1.0, 2.0, 2.5, 5.0, 10.0})
    if (m * decade >= x) return m * decade;
  return 10.0 * decade;
}

theory::Naca4Section section_of(const Scenario& s) { return theory::parse_naca4(s.airfoil.substr(5)); }

struct TapChannel {
  std::string name;
  theory::TapLocation where;
  std::string line_name;
  std::vector<calib::TubeSegment> true_line;
  double time_offset_s = 0.0;
  bool dead = false;
  ChannelCalibration calibration;
  double zero_shift_pa = 0.0, zero_drift_pa = 0.0;
  std::unique_ptr<StreamingFir> tubing;
  std::unique_ptr<ChannelNoise> noise;
};

struct EventRow {
  int cycle = 0;
  std::string event;
  double t = NAN, value = NAN, alpha_deg = NAN;
};

struct CyclePeaks {
  double cl = -INFINITY, cn = -INFINITY, cm = INFINITY;
  double t_cl = NAN, t_cn = NAN, t_cm = NAN, a_cl = NAN, a_cn = NAN, a_cm = NAN;
};

void write_text_file(const fs::path& path, const std::string& text) {
  std::ofstream out(path, std::ios::binary);
  out << text;
  if (!out) throw InputError(path.string(), "cannot write file (disk full?)");
}

// A run config that reduces the run end to end with every stage its files feed.
std::string reduce_config(const Scenario& s, const std::string& daq_file, bool camera, double total_s,
                          double stall_angle_deg) {
  std::string out = fmt::format(
      "# Run config for the synthetic run '{}', written by stallscope synth.\n"
      "# Raw files beside it for the stages that read them: taps.csv, lines.toml,\n"
      "# calib_taps.toml, calib_encoder.toml, calib_reference.toml, calib_temperature.toml{}.\n"
      "# Wind-off tares: [0, {:.6g}) s and [{:.6g}, {:.6g}) s on the DAQ clock.\n\n"
      "[run]\nname = \"{}\"\ndescription = \"{}\"\nairfoil = \"{}\"\nchord_m = {:.10g}\nspan_m = {:.10g}\n"
      "pivot_x_over_c = {:.10g}\n\n"
      "[daq]\nfile = \"{}\"\n\n[daq.roles]\nangle = \"alpha_enc\"\nq_ref = \"q_pitot\"\np_static = \"p_static\"\n"
      "temperature = \"t_air\"\n{}\n"
      "[conditions]\ntemperature_c = {:.10g}\nstatic_pressure_pa = {:.10g}\nvelocity_m_s = {:.10g}\n",
      s.name, camera ? (s.piv.text_frames ? ", piv/" : ", piv.h5") : "", s.tare_s, total_s - s.tare_s, total_s, s.name, s.description, s.airfoil,
      s.chord_m, s.span_m, s.pivot_x_over_c, daq_file, camera ? "camera_trigger = \"cam_trigger\"\n" : "",
      s.temperature_c, s.static_pressure_pa, s.velocity_m_s);
  // Tares a little inside the wind-off windows, clear of the wind ramps.
  out += fmt::format(
      "\n[calibrate]\ntap_table = \"taps.csv\"\nzero_before_s = [0.0, {:.6g}]\nzero_after_s = [{:.6g}, {:.6g}]\n"
      "on_zero_drift = \"flag\"\n\n[calibrate.calibrations]\ntaps = \"calib_taps.toml\"\n"
      "encoder = \"calib_encoder.toml\"\nreference = \"calib_reference.toml\"\n"
      "temperature = \"calib_temperature.toml\"\n\n[tubing]\n{}\n"
      "[cp]\n\n[loads]\n\n[motion]\n\n[cycles]\n\n[phase]\n\n[damping]\n\n"
      "[events]\n# The scenario's static stall angle: the maximum of its static Kirchhoff Cn curve.\n"
      "static_stall_angle_deg = {:.6f}\n",
      0.9 * s.tare_s, total_s - 0.9 * s.tare_s, total_s,
      s.stepped_taps.empty() && s.measured_taps.empty() ? "" : "lines = \"lines.toml\"\n", stall_angle_deg);
  if (camera) {
    const PivScenario& p = s.piv;
    out += fmt::format("\n[piv]\nfile = \"{}\"\n# The stack's lab frame has its origin on the pitch axis.\n"
                       "pivot_x_m = 0\npivot_y_m = 0\n",
                       p.text_frames ? "piv" : "piv.h5");
    if (p.text_frames) out += fmt::format("text_units = \"{}\"\n", p.units);
    if (p.units == "px/frame")
      out += fmt::format("metres_per_pixel = {:.10g}\npulse_separation_s = {:.10g}\n", 1.0 / p.pixels_per_m,
                         p.pair_dt_s);
    else  // the published 0.1 px of the median test, in m/s for this camera
      out += fmt::format("median_epsilon_m_s = {:.6g}\n", 0.1 / (p.pixels_per_m * p.pair_dt_s));
    out += fmt::format("\n[vortex]\nmode = \"{}\"\n", p.phase_locked ? "phase_locked" : "time_resolved");
  }
  return out;
}

// Lab frame (origin on the pitch axis, x downstream, y up) from the airfoil frame (chords).
void to_lab(double x_over_c, double y_over_c, double pivot, double chord, double alpha, double& x_m, double& y_m) {
  const double dx = (x_over_c - pivot) * chord, dy = y_over_c * chord;
  x_m = dx * std::cos(alpha) + dy * std::sin(alpha);
  y_m = -dx * std::sin(alpha) + dy * std::cos(alpha);
}

}  // namespace

std::vector<std::string> tap_names(const Scenario& s) {
  std::vector<std::string> out;
  for (int i = 0; i < 2 * s.taps_per_surface; ++i) out.push_back(tap_name(i));
  return out;
}

std::string SynthSummary::brief() const {
  std::string out = fmt::format("synthetic run written to {}\n  {} DAQ samples", directory.string(), samples);
  if (frames > 0) out += fmt::format(", {} PIV frames", frames);
  out += fmt::format(", {} cycles with a dynamic-stall vortex\n", cycles_with_stall);
  for (const auto& f : files) out += "  " + f.filename().string() + "\n";
  return out;
}

SynthSummary write_synthetic_run(const Scenario& s, const fs::path& directory, bool force, Progress& progress) {
  std::error_code ec;
  if (fs::exists(directory / "truth.h5", ec) && !force)
    throw InputError(directory.string(), "already holds a synthetic run (truth.h5); use --force to overwrite it");
  fs::create_directories(directory, ec);
  if (ec) throw InputError(directory.string(), "cannot create the output folder: " + ec.message());
  const fs::path staging = directory / ".synth-partial";
  fs::remove_all(staging, ec);
  fs::create_directories(staging, ec);
  if (ec) throw InputError(staging.string(), "cannot create the staging folder: " + ec.message());

  FlowModel model(s);
  const theory::Naca4Section section = section_of(s);
  const auto layout = theory::naca4_tap_layout(section, s.taps_per_surface, s.tap_x_first, s.tap_x_last);
  SurfacePressure surface(section, layout, s.pivot_x_over_c);
  const double fs_hz = s.sample_rate_hz, dt = 1.0 / fs_hz, chord = s.chord_m;
  const double t_kelvin = s.temperature_c + air::kCelsiusToKelvin;
  const double total_s = static_cast<double>(model.samples()) / fs_hz;
  const calib::AirProperties tube_air(t_kelvin, s.static_pressure_pa);
  PivGenerator piv(s, model, staging / "piv.h5");

  // Instruments. Full scales: taps +-(nice >= 8 q), Pitot 0..(nice >= 1.3 q).
  const double q = model.q_nominal();
  const double tap_range = nice_ceiling(8.0 * q), q_range = nice_ceiling(1.3 * q);
  Random instrument_random(s.seed, "instruments");
  const ChannelCalibration encoder{"alpha_enc", -30.0, 6.0};  // degrees: 0..10 V over -30..30
  const ChannelCalibration pitot{"q_pitot", 0.0, q_range / kDaqRangeVolts};
  const ChannelCalibration barometer{"p_static", 80000.0, 5000.0};  // 80..130 kPa over 0..10 V
  const ChannelCalibration thermometer{"t_air", -20.0, 10.0};       // -20..80 C over 0..10 V
  const double pitot_zero = s.zero_shift_pa * 0.1 * instrument_random.normal();

  std::vector<TapChannel> taps(layout.size());
  const int n_taps = static_cast<int>(layout.size());
  const int fir_n = 2 * static_cast<int>(std::ceil(0.5 * s.fir_duration_s * fs_hz));
  std::map<std::string, std::vector<calib::TubeSegment>> stepped_lines;
  for (int i = 0; i < n_taps; ++i) {
    TapChannel& c = taps[i];
    c.name = tap_name(i);
    c.where = layout[i];
    c.time_offset_s = s.skew_sweep * i / (n_taps * fs_hz);
    c.dead = c.name == s.dead_tap;
    const double radius = 0.5 * s.tube_diameter_m;
    if (std::find(s.stepped_taps.begin(), s.stepped_taps.end(), c.name) != s.stepped_taps.end()) {
      c.line_name = "stepped_" + c.name;
      c.true_line = {{s.stepped_fraction * s.tube_length_m, 0.5 * s.stepped_diameter_m, 0.0},
                     {(1.0 - s.stepped_fraction) * s.tube_length_m, radius, s.transducer_volume_m3}};
      stepped_lines[c.line_name] = c.true_line;
    } else {
      c.true_line = {{s.tube_length_m * (1.0 + s.tube_length_error), radius, s.transducer_volume_m3}};
      if (std::find(s.measured_taps.begin(), s.measured_taps.end(), c.name) != s.measured_taps.end())
        c.line_name = "measured_" + c.name;
    }
    c.calibration = {c.name, 5.0 * s.gain_spread * instrument_random.normal(),
                     tap_range / kDaqRangeVolts * (1.0 + s.gain_spread * instrument_random.normal())};
    if (s.temperature_coefficient_per_k != 0.0) {
      Random thermal(s.seed, "thermal " + c.name);
      c.calibration.temperature_coefficient_per_k = s.temperature_coefficient_per_k * (1.0 + 0.5 * thermal.normal());
      c.calibration.reference_temperature_c = s.temperature_c;
    }
    c.zero_shift_pa = s.zero_shift_pa * instrument_random.normal();
    c.zero_drift_pa = s.zero_drift_pa * instrument_random.normal();
    c.tubing = std::make_unique<StreamingFir>(tubing_impulse_response(c.true_line, tube_air, fs_hz, fir_n), 0.0);
    c.noise = std::make_unique<ChannelNoise>(Random(s.seed, "noise " + c.name), fs_hz, s.white_v, s.pink_v,
                                             s.mains_v, s.mains_hz);
  }
  ChannelNoise encoder_noise(Random(s.seed, "noise alpha_enc"), fs_hz, s.white_v, s.pink_v, s.mains_v, s.mains_hz);
  ChannelNoise pitot_noise(Random(s.seed, "noise q_pitot"), fs_hz, s.white_v, s.pink_v, s.mains_v, s.mains_hz);
  ChannelNoise baro_noise(Random(s.seed, "noise p_static"), fs_hz, s.white_v, s.pink_v, s.mains_v, s.mains_hz);
  ChannelNoise thermo_noise(Random(s.seed, "noise t_air"), fs_hz, s.white_v, s.pink_v, s.mains_v, s.mains_hz);
  ChannelNoise trigger_noise(Random(s.seed, "noise cam_trigger"), fs_hz, s.white_v, 0.0, s.mains_v, s.mains_hz);
  Random encoder_random(s.seed, "encoder");
  Random dead_random(s.seed, "dead tap");

  std::vector<std::string> channels = {"alpha_enc", "q_pitot", "p_static", "t_air"};
  if (piv.enabled()) channels.push_back("cam_trigger");
  const std::size_t first_tap_column = channels.size();
  for (const auto& c : taps) channels.push_back(c.name);

  // Output files.
  const std::string daq_name = s.daq_format == DaqFormat::kHdf5 ? "daq.h5" : "daq.csv";
  const auto chunk = static_cast<hsize_t>(s.chunk_samples);
  std::unique_ptr<h5::Id> daq_file;
  std::unique_ptr<AppendableDataset> daq_time, daq_volts;
  std::ofstream daq_csv;
  if (s.daq_format == DaqFormat::kHdf5) {
    daq_file = std::make_unique<h5::Id>(create_reproducible_file(staging / daq_name));
    daq_time = std::make_unique<AppendableDataset>(daq_file->get(), "daq/time_s", ElementType::kFloat64,
                                                   std::vector<hsize_t>{}, chunk, "s");
    daq_volts = std::make_unique<AppendableDataset>(daq_file->get(), "daq/volts", ElementType::kFloat64,
                                                    std::vector<hsize_t>{channels.size()}, chunk, "V");
    h5::write_text_list_attribute(daq_volts->id(), "channels", channels);
    h5::write_attribute(daq_file->get(), "daq", "sample_rate_hz", fs_hz);
  } else {
    daq_csv.open(staging / daq_name, std::ios::binary);
    if (!daq_csv) throw InputError((staging / daq_name).string(), "cannot write the DAQ file");
    daq_csv << "time_s";
    for (const auto& c : channels) daq_csv << ',' << c;
    daq_csv << '\n';
  }

  h5::Id truth_file = create_reproducible_file(staging / "truth.h5");
  const hid_t tf = truth_file.get();
  piv.stream_truth(tf);
  struct Series {
    const char* name;
    const char* units;
  };
  const std::vector<Series> series = {{"time_s", "s"},        {"alpha_deg", "deg"},      {"cn", "1"},
                                      {"cc", "1"},            {"cl", "1"},               {"cd_p", "1"},
                                      {"cm", "1"},            {"cm_pivot", "1"},         {"separation_x", "1"},
                                      {"q_pa", "Pa"},         {"wind", "1"},             {"alpha_effective_deg", "deg"},
                                      {"phase_deg", "deg"},   {"cycle", "1"}};
  std::vector<AppendableDataset> truth_series;
  for (const auto& se : series)
    truth_series.emplace_back(tf, std::string("truth/") + se.name, ElementType::kFloat64, std::vector<hsize_t>{},
                              chunk, se.units);
  AppendableDataset truth_cp(tf, "truth/cp_taps", ElementType::kFloat32,
                             std::vector<hsize_t>{static_cast<hsize_t>(n_taps)}, chunk, "1");
  h5::write_text_list_attribute(truth_cp.id(), "columns", tap_names(s));
  struct VortexColumn {
    const char* name;
    const char* units;
    ElementType type;
  };
  const std::vector<VortexColumn> vortex_columns = {
      {"track", "1", ElementType::kInt64},        {"cycle", "1", ElementType::kInt64},
      {"generation", "1", ElementType::kInt64},   {"t_s", "s", ElementType::kFloat64},
      {"x_over_c", "1", ElementType::kFloat64},   {"y_over_c", "1", ElementType::kFloat64},
      {"height_over_c", "1", ElementType::kFloat64}, {"circulation", "m^2/s", ElementType::kFloat64},
      {"core_radius_m", "m", ElementType::kFloat64}, {"x_lab_m", "m", ElementType::kFloat64},
      {"y_lab_m", "m", ElementType::kFloat64},    {"cp_bump", "1", ElementType::kFloat64}};
  std::vector<AppendableDataset> vortex_truth;
  for (const auto& vc : vortex_columns)
    vortex_truth.emplace_back(tf, std::string("truth/vortex/") + vc.name, vc.type, std::vector<hsize_t>{}, chunk,
                              vc.units);

  // The stream. The model runs one sample ahead so a skewed tap channel can be
  // interpolated to its own sampling instant (the sample at DAQ time t was taken
  // at t + time_offset_s).
  const std::int64_t n = model.samples();
  progress.begin("synthesising " + s.name, static_cast<std::size_t>(n));
  std::vector<double> cp_now, cp_next, p_now(n_taps), p_next(n_taps), row(channels.size());
  std::vector<float> cp_row(n_taps);
  SectionLoads loads_now, loads_next;
  std::vector<EventRow> events;
  std::map<int, CyclePeaks> peaks;
  const double period = model.cycle_period();
  auto cycle_start = [&](int cycle) { return model.motion_start() + (cycle - 1) * period; };

  FlowSample now = model.next();
  surface.evaluate(now, cp_now, loads_now);
  auto tubing_step = [&](const std::vector<double>& cp, double q_pa, std::vector<double>& p) {
    for (int i = 0; i < n_taps; ++i) p[i] = taps[i].tubing->push(cp[i] * q_pa);
  };
  tubing_step(cp_now, now.q_pa, p_now);
  auto collect_events = [&](const FlowSample& at) {
    for (const auto& e : model.take_events()) events.push_back({e.cycle, e.event, e.t, e.value, at.alpha / kDeg});
  };
  collect_events(now);
  int stalled_cycles = 0;
  std::int64_t last_report = 0;
  const double stall_angle_deg = static_stall_angle_deg(s);
  TruthCriteria criteria({stall_angle_deg, 0.05, 0.3});  // the events stage's defaults
  std::vector<int> le_taps;  // upper taps at x/c <= 0.05, the events stage's leading-edge region
  for (int i = 0; i < n_taps; ++i)
    if (layout[i].surface == theory::Surface::kUpper && layout[i].x_over_c <= 0.05) le_taps.push_back(i);

  for (std::int64_t k = 0; k < n; ++k) {
    FlowSample next = now;
    if (k + 1 < n) {
      next = model.next();
      surface.evaluate(next, cp_next, loads_next);
      tubing_step(cp_next, next.q_pa, p_next);
      collect_events(next);
    } else {
      cp_next = cp_now;
      p_next = p_now;
      loads_next = loads_now;
    }
    const double t = now.t;
    // Instruments.
    const double alpha_deg = now.alpha / kDeg;
    row[0] = encoder.volts(alpha_deg + s.encoder_noise_deg * encoder_random.normal()) + encoder_noise.next(t);
    row[1] = pitot.volts(now.q_pa - pitot_zero) + pitot_noise.next(t);
    row[2] = barometer.volts(s.static_pressure_pa) + baro_noise.next(t);
    const double air_c = s.temperature_c + s.temperature_rise_k * t / total_s;
    row[3] = thermometer.volts(air_c) + thermo_noise.next(t);
    if (piv.enabled()) row[4] = piv.trigger_volts(t, dt) + trigger_noise.next(t);
    for (int i = 0; i < n_taps; ++i) {
      TapChannel& c = taps[i];
      double v;
      if (c.dead) {
        v = 0.37 + 0.5 * s.white_v * dead_random.normal();  // stuck: a blocked orifice or a failed sensor
      } else {
        const double frac = c.time_offset_s * fs_hz;
        const double p = p_now[i] + frac * (p_next[i] - p_now[i]);
        const double zero = c.zero_shift_pa + c.zero_drift_pa * t / total_s;
        const ChannelCalibration& cal = c.calibration;
        const double thermal = 1.0 + cal.temperature_coefficient_per_k * (air_c - cal.reference_temperature_c);
        v = cal.volts((p - zero) * thermal) + c.noise->next(t);
      }
      row[first_tap_column + i] = v;
    }
    for (double& v : row) v = std::clamp(v, -kDaqRangeVolts, kDaqRangeVolts);
    if (daq_volts) {
      daq_time->append(&t, 1);
      daq_volts->append(row.data(), 1);
    } else {
      daq_csv << fmt::format("{:.9f}", t);
      for (double v : row) daq_csv << fmt::format(",{:.7g}", v);
      daq_csv << '\n';
    }

    // Truth.
    const double values[] = {t,
                             alpha_deg,
                             loads_now.cn,
                             loads_now.cc,
                             loads_now.cl,
                             loads_now.cd_pressure,
                             loads_now.cm_quarter_chord,
                             loads_now.cm_pivot,
                             now.separation_x,
                             now.q_pa,
                             now.wind,
                             now.alpha_effective / kDeg,
                             now.phase_deg,
                             static_cast<double>(now.cycle)};
    for (std::size_t j = 0; j < truth_series.size(); ++j) truth_series[j].append(&values[j], 1);
    for (int i = 0; i < n_taps; ++i) cp_row[i] = static_cast<float>(cp_now[i]);
    truth_cp.append(cp_row.data(), 1);
    for (const auto& v : now.vortices) {
      const double x_surface = std::clamp(v.x_over_c, 0.0, 1.0);
      const double y = theory::naca4_upper_surface(section, x_surface).y + v.height_over_c;
      double x_lab = 0, y_lab = 0;
      to_lab(v.x_over_c, y, s.pivot_x_over_c, chord, now.alpha, x_lab, y_lab);
      const std::int64_t ints[] = {v.track, v.cycle, v.generation};
      const double reals[] = {t, v.x_over_c, y, v.height_over_c, v.circulation, v.core_radius_m, x_lab, y_lab,
                              v.cp_bump};
      for (int j = 0; j < 3; ++j) vortex_truth[j].append(&ints[j], 1);
      for (int j = 0; j < 9; ++j) vortex_truth[3 + j].append(&reals[j], 1);
    }
    if (now.cycle > 0) {
      CyclePeaks& pk = peaks[now.cycle];
      if (loads_now.cl > pk.cl) pk.cl = loads_now.cl, pk.t_cl = t, pk.a_cl = alpha_deg;
      if (loads_now.cn > pk.cn) pk.cn = loads_now.cn, pk.t_cn = t, pk.a_cn = alpha_deg;
      if (loads_now.cm_quarter_chord < pk.cm) pk.cm = loads_now.cm_quarter_chord, pk.t_cm = t, pk.a_cm = alpha_deg;
    }
    double le_suction = -INFINITY;
    for (int i : le_taps) le_suction = std::max(le_suction, -cp_now[i]);
    criteria.add(now.cycle, t, alpha_deg, now.alpha_rate / kDeg, loads_now.cm_quarter_chord, le_suction);
    piv.observe(now, dt);

    now = std::move(next);
    cp_now.swap(cp_next);
    p_now.swap(p_next);
    loads_now = loads_next;
    if (k - last_report >= 4096) {
      progress.advance(static_cast<std::size_t>(k - last_report));
      last_report = k;
    }
  }
  progress.advance(static_cast<std::size_t>(n - last_report));
  progress.end();

  if (daq_volts) {
    daq_time->flush();
    daq_volts->flush();
    daq_time.reset();
    daq_volts.reset();
    daq_file.reset();
  } else {
    daq_csv.close();
    if (!daq_csv) throw InputError((staging / daq_name).string(), "cannot write the DAQ file (disk full?)");
  }
  for (auto& d : truth_series) d.flush();
  truth_cp.flush();
  for (auto& d : vortex_truth) d.flush();
  // Truth attributes: the scenario's conventions and the facts a comparison needs.
  {
    h5::write_attribute(tf, "truth", "chord_m", chord);
    h5::write_attribute(tf, "truth", "U_inf_m_s", model.velocity());
    h5::write_attribute(tf, "truth", "q_pa", q);
    h5::write_attribute(tf, "truth", "rho_kg_m3", air::density(s.static_pressure_pa, t_kelvin));
    h5::write_attribute(tf, "truth", "pivot_x_over_c", s.pivot_x_over_c);
    h5::write_attribute(tf, "truth", "freq_hz", model.frequency_hz());
    h5::write_attribute(tf, "truth", "k", std::numbers::pi * model.frequency_hz() * chord / model.velocity());
    h5::write_attribute(tf, "truth", "alpha_mean_deg", s.alpha_mean_deg);
    h5::write_attribute(tf, "truth", "alpha_amp_deg", s.alpha_amp_deg);
    h5::write_attribute(tf, "truth", "motion", std::string(s.motion == MotionKind::kSine ? "sine" : "ramp"));
    h5::write_attribute(tf, "truth", "cycles", static_cast<std::int64_t>(s.cycles));
    h5::write_attribute(tf, "truth", "motion_start_s", model.motion_start());
    h5::write_attribute(tf, "truth", "motion_end_s", model.motion_end());
    h5::write_attribute(tf, "truth", "tare_start_s", std::string(fmt::format("[0, {:.9g})", s.tare_s)));
    h5::write_attribute(tf, "truth", "tare_end_s",
                        std::string(fmt::format("[{:.9g}, {:.9g})", model.last_tare().first, model.last_tare().second)));
    h5::write_attribute(tf, "truth", "seed", static_cast<std::int64_t>(s.seed));
    h5::write_attribute(tf, "truth", "static_stall_angle_deg", stall_angle_deg);
    h5::write_attribute(tf, "truth", "preset", s.preset);
    h5::write_attribute(tf, "truth", "dead_tap", s.dead_tap);
    h5::write_attribute(tf, "truth", "phase_origin", std::string("cycle start at minimum angle"));
    h5::write_attribute(tf, "truth", "circulation_sign", std::string("counter-clockwise positive"));
    h5::write_attribute(tf, "truth/cm", "moment_ref_x_over_c", 0.25);
    h5::write_attribute(tf, "truth/cm_pivot", "moment_ref_x_over_c", s.pivot_x_over_c);
    h5::write_attribute(tf, "truth/cp_taps", "note",
                        std::string("undistorted tap Cp at the DAQ time (before tubing, skew and noise)"));
    h5::write_attribute(tf, "truth/vortex", "frame",
                        std::string("x_over_c, y_over_c airfoil frame; x_lab_m, y_lab_m lab frame with origin on "
                                    "the pitch axis, x downstream, y up"));
  }
  piv.finish(tf);
  truth_file.close();
  if (piv.enabled() && s.piv.text_frames) {
    write_text_frames(staging / "piv.h5", staging / "piv");
    fs::remove(staging / "piv.h5");
  }

  // truth_events.csv: the physical events of each cycle, missing ones marked.
  {
    for (const auto& [cycle, pk] : peaks) {
      events.push_back({cycle, "lift_peak", pk.t_cl, pk.cl, pk.a_cl});
      events.push_back({cycle, "normal_force_peak", pk.t_cn, pk.cn, pk.a_cn});
      events.push_back({cycle, "cm_min", pk.t_cm, pk.cm, pk.a_cm});
    }
    for (const CriterionEvent& e : criteria.finish()) events.push_back({e.cycle, e.event, e.t, e.value, e.alpha_deg});
    std::vector<std::int64_t> cycle_col;
    std::vector<std::string> event_col, status_col, reason_col;
    std::vector<double> t_col, tconv_col, tunc_col, phase_col, alpha_col, value_col;
    for (int c = 1; c <= s.cycles; ++c) {
      for (const auto& name : kCycleEvents) {
        const EventRow* found = nullptr;
        for (const auto& e : events)
          if (e.cycle == c && e.event == name) {
            found = &e;
            break;
          }
        cycle_col.push_back(c - 1);
        event_col.push_back(name);
        if (found) {
          if (name == "stall_onset") ++stalled_cycles;
          status_col.push_back("ok");
          reason_col.push_back("");
          t_col.push_back(found->t);
          tconv_col.push_back((found->t - cycle_start(c)) * model.velocity() / chord);
          tunc_col.push_back(0.5 * dt);
          phase_col.push_back(360.0 * (found->t - cycle_start(c)) / period);
          alpha_col.push_back(found->alpha_deg);
          value_col.push_back(found->value);
        } else {
          status_col.push_back("missing");
          reason_col.push_back(name == "secondary_vortex" ? "no secondary vortex in this cycle"
                                                          : "not reached in the physical state this cycle");
          for (auto* col : {&t_col, &tconv_col, &tunc_col, &phase_col, &alpha_col, &value_col}) col->push_back(NAN);
        }
      }
    }
    Table t;
    t.add({"cycle", "1", cycle_col});
    t.add({"event", "", event_col});
    t.add({"status", "", status_col});
    t.add({"reason", "", reason_col});
    t.add({"t_s", "s", t_col});
    t.add({"t_conv", "1", tconv_col});
    t.add({"t_uncertainty_s", "s", tunc_col});
    t.add({"phase_deg", "deg", phase_col});
    t.add({"alpha_deg", "deg", alpha_col});
    t.add({"value", "1", value_col});
    write_csv_file(staging / "truth_events.csv", t);
  }

  // Tap table (nominal tubing, as the lab wrote it down) and the lines file.
  {
    std::vector<std::string> tap, channel, surface_col, line, status;
    std::vector<double> x, y, length, diameter, volume, offset;
    for (const auto& c : taps) {
      tap.push_back(c.name);
      channel.push_back(c.name);
      x.push_back(c.where.x_over_c);
      y.push_back(c.where.y_over_c);
      surface_col.push_back(c.where.surface == theory::Surface::kUpper ? "upper" : "lower");
      length.push_back(s.tube_length_m);
      diameter.push_back(s.tube_diameter_m);
      volume.push_back(s.transducer_volume_m3);
      offset.push_back(c.time_offset_s == 0.0 ? NAN : c.time_offset_s);
      line.push_back(c.line_name);
      status.push_back(c.dead && s.dead_tap_listed ? "dead" : "ok");
    }
    Table t;
    t.add({"tap", "", tap});
    t.add({"channel", "", channel});
    t.add({"x_over_c", "1", x});
    t.add({"y_over_c", "1", y});
    t.add({"surface", "", surface_col});
    t.add({"tube_length_m", "m", length});
    t.add({"tube_diameter_m", "m", diameter});
    t.add({"volume_m3", "m^3", volume});
    t.add({"time_offset_s", "s", offset});
    t.add({"line", "", line});
    t.add({"status", "", status});
    write_csv_file(staging / "taps.csv", t);
    std::string lines = "# Multi-segment tubing lines, from the tap to the transducer (stallscope synth).\n";
    for (const auto& [name, segs] : stepped_lines) {
      lines += fmt::format("\n[lines.{}]\nsegments = [\n", name);
      for (const auto& g : segs)
        lines += fmt::format("  {{ length_m = {:.10g}, diameter_m = {:.10g}, volume_m3 = {:.10g} }},\n", g.length,
                             2.0 * g.radius, g.end_volume);
      lines += "]\n";
    }
    // Measured lines: the true line's response as a sweep against a reference transducer gives it.
    Random scatter(s.seed, "measured lines");
    for (const auto& c : taps) {
      if (c.line_name.rfind("measured_", 0) != 0) continue;
      const std::string csv = "line_" + c.name + ".csv";
      lines += fmt::format("\n[lines.{}]\nmeasured = \"{}\"\n", c.line_name, csv);
      std::string rows = "frequency_hz,gain,phase_deg\n";
      double unwrapped = 0, previous = 0;
      for (double f = s.measured_step_hz; f <= 0.5 * fs_hz + 1e-9; f += s.measured_step_hz) {
        const std::complex<double> h = calib::line_response(c.true_line, tube_air, f);
        const double phase = std::arg(h) / kDeg;
        unwrapped += std::remainder(phase - previous, 360.0);
        previous = phase;
        const double gain = std::abs(h) * (1 + s.measured_gain_scatter * scatter.normal());
        rows += fmt::format("{:.10g},{:.8g},{:.8g}\n", f, std::max(gain, 1e-6),
                            unwrapped + s.measured_phase_scatter_deg * scatter.normal());
      }
      write_text_file(staging / csv, rows);
    }
    write_text_file(staging / "lines.toml", lines);
  }

  // Calibration files.
  {
    std::vector<ChannelCalibration> tap_cal;
    for (const auto& c : taps) tap_cal.push_back(c.calibration);
    const std::string id = s.name;
    write_calibration_file(staging / "calib_taps.toml", id + "-taps", s.calibration_date, "pressure_transducers",
                           tap_cal, 0.5 * tap_range * 1e-4, "residual_pa");
    write_calibration_file(staging / "calib_encoder.toml", id + "-encoder", s.calibration_date, "angle_encoder",
                           {encoder});
    write_calibration_file(staging / "calib_reference.toml", id + "-reference", s.calibration_date,
                           "reference_pressure", {pitot, barometer}, 0.0, "");
    write_calibration_file(staging / "calib_temperature.toml", id + "-temperature", s.calibration_date,
                           "temperature", {thermometer});
  }
  write_text_file(staging / "reduce.toml", reduce_config(s, daq_name, piv.enabled(), total_s, stall_angle_deg));
  write_text_file(staging / "scenario.toml", s.text);

  // Move the complete set in.
  SynthSummary summary;
  summary.directory = directory;
  summary.samples = n;
  summary.frames = piv.frames_written();
  summary.cycles_with_stall = stalled_cycles;
  std::vector<fs::path> produced;
  for (const auto& entry : fs::directory_iterator(staging)) produced.push_back(entry.path().filename());
  std::sort(produced.begin(), produced.end());
  for (const auto& f : produced) {
    if (fs::is_directory(directory / f, ec)) fs::remove_all(directory / f, ec);  // --force over text frames
    fs::rename(staging / f, directory / f, ec);
    if (ec) throw InputError((directory / f).string(), "cannot move the finished file into place: " + ec.message());
    summary.files.push_back(directory / f);
  }
  fs::remove_all(staging, ec);
  return summary;
}

}  // namespace stallscope::synth
