#include "tools/synth/scenario.hpp"

#include <algorithm>
#include <cmath>
#include <numbers>

#include "pipeline/errors.hpp"
#include "stages/theory/naca4.hpp"

namespace stallscope::synth {

namespace {

// Sections a scenario may have; anything else is an unknown key.
const std::vector<std::string> kSections = {"scenario", "model", "flow",    "motion",  "timeline", "daq",
                                            "taps",     "stall", "vortex",  "noise",   "scanner",  "lines",
                                            "dead_tap", "piv"};

void read_nuisances(ConfigSection& noise, ConfigSection& scanner, ConfigSection& lines, ConfigSection& dead,
                    Scenario& s, bool clean) {
  auto off = [clean](double v) { return clean ? 0.0 : v; };
  s.white_v = noise.number("white_v", off(s.white_v));
  s.pink_v = noise.number("pink_v", off(s.pink_v));
  s.mains_v = noise.number("mains_v", off(s.mains_v));
  s.mains_hz = noise.number("mains_hz", s.mains_hz);
  s.q_fluctuation = noise.number("q_fluctuation", off(s.q_fluctuation));
  s.q_fluctuation_s = noise.number("q_fluctuation_s", s.q_fluctuation_s);
  s.zero_shift_pa = noise.number("zero_shift_pa", off(s.zero_shift_pa));
  s.zero_drift_pa = noise.number("zero_drift_pa", off(s.zero_drift_pa));
  s.gain_spread = noise.number("gain_spread", off(s.gain_spread));
  s.encoder_noise_deg = noise.number("encoder_noise_deg", off(s.encoder_noise_deg));
  s.temperature_rise_k = noise.number("temperature_rise_k", off(s.temperature_rise_k));
  s.temperature_coefficient_per_k = noise.number("temperature_coefficient_per_k", off(s.temperature_coefficient_per_k));
  noise.require(std::abs(s.temperature_coefficient_per_k) < 0.01, "temperature_coefficient_per_k",
                "expected a thermal sensitivity per kelvin, |tc| < 0.01");
  for (const char* k : {"white_v", "pink_v", "mains_v", "q_fluctuation", "zero_shift_pa", "zero_drift_pa",
                        "gain_spread", "encoder_noise_deg"})
    noise.require(noise.used()[k].value_or(0.0) >= 0.0, k, "expected a value >= 0");
  noise.require(s.mains_hz > 0, "mains_hz", "expected a frequency > 0");
  noise.require(s.q_fluctuation < 0.5, "q_fluctuation", "expected an rms fraction of q below 0.5");
  noise.require(s.q_fluctuation_s > 0, "q_fluctuation_s", "expected a correlation time > 0");
  noise.require(s.gain_spread < 0.3, "gain_spread", "expected an rms relative spread below 0.3");

  s.skew_sweep = scanner.number("skew_sweep", off(s.skew_sweep));
  scanner.require(s.skew_sweep >= 0 && s.skew_sweep < 1, "skew_sweep",
                  "expected the fraction of a sample period the scanner sweep takes, in [0, 1)");

  s.tube_length_error = lines.number("tube_length_error", off(s.tube_length_error));
  lines.require(s.tube_length_error > -0.5 && s.tube_length_error < 2, "tube_length_error",
                "expected a relative length error between -0.5 and 2");
  s.stepped_taps = lines.texts("stepped_taps", clean ? std::vector<std::string>{} : s.stepped_taps);
  s.stepped_diameter_m = lines.number("stepped_diameter_m", s.stepped_diameter_m);
  lines.require(s.stepped_diameter_m > 0 && s.stepped_diameter_m < 0.05, "stepped_diameter_m",
                "expected a tube diameter in metres, > 0");
  s.stepped_fraction = lines.number("stepped_fraction", s.stepped_fraction);
  lines.require(s.stepped_fraction > 0 && s.stepped_fraction < 1, "stepped_fraction",
                "expected the first segment's share of the length, between 0 and 1");
  s.measured_taps = lines.texts("measured_taps", clean ? std::vector<std::string>{} : s.measured_taps);
  s.measured_step_hz = lines.number("measured_step_hz", s.measured_step_hz);
  lines.require(s.measured_step_hz > 0, "measured_step_hz", "expected a frequency step in Hz, > 0");
  s.measured_gain_scatter = lines.number("measured_gain_scatter", off(s.measured_gain_scatter));
  lines.require(s.measured_gain_scatter >= 0 && s.measured_gain_scatter < 0.5, "measured_gain_scatter",
                "expected an rms relative gain error in [0, 0.5)");
  s.measured_phase_scatter_deg = lines.number("measured_phase_scatter_deg", off(s.measured_phase_scatter_deg));
  lines.require(s.measured_phase_scatter_deg >= 0 && s.measured_phase_scatter_deg < 30, "measured_phase_scatter_deg",
                "expected an rms phase error in degrees, in [0, 30)");

  s.dead_tap = dead.text("tap", clean ? std::string() : s.dead_tap);
  s.dead_tap_listed = dead.boolean("listed", s.dead_tap_listed);
}

bool is_tap_name(const std::string& name, int taps) {
  if (name.size() < 3 || name[0] != 'p') return false;
  int n = 0;
  for (std::size_t i = 1; i < name.size(); ++i) {
    if (name[i] < '0' || name[i] > '9') return false;
    n = n * 10 + (name[i] - '0');
  }
  return n >= 1 && n <= taps;
}

}  // namespace

Scenario read_scenario(const ConfigFile& file) {
  Scenario s;
  s.source = file.path();
  s.text = file.text();
  ConfigSection top(file, "");
  for (const auto& k : kSections) (void)top.subsection(k);
  top.reject_unknown_keys();

  ConfigSection sc(file, "scenario");
  s.preset = sc.choice("preset", {"realistic", "clean"}, s.preset);
  const bool clean = s.preset == "clean";
  s.name = sc.text("name", s.name);
  sc.require(!s.name.empty() && s.name.size() <= 128 && s.name.front() != '.' &&
                 std::all_of(s.name.begin(), s.name.end(),
                             [](char c) {
                               return std::isalnum(static_cast<unsigned char>(c)) || c == '-' || c == '_' || c == '.';
                             }),
             "name", "expected a run name of letters, digits, '-', '_' or '.'");
  s.description = sc.text("description", s.description);
  const std::int64_t seed = sc.integer("seed", static_cast<std::int64_t>(s.seed));
  sc.require(seed >= 0, "seed", "expected a whole number >= 0");
  s.seed = static_cast<std::uint64_t>(seed);
  s.calibration_date = sc.text("calibration_date", s.calibration_date);
  sc.require(s.calibration_date.size() == 10 && s.calibration_date[4] == '-' && s.calibration_date[7] == '-',
             "calibration_date", "expected a date written YYYY-MM-DD");
  sc.reject_unknown_keys();

  ConfigSection model(file, "model");
  s.airfoil = model.text("airfoil", s.airfoil);
  {
    std::string digits = s.airfoil.rfind("NACA ", 0) == 0 ? s.airfoil.substr(5) : std::string();
    model.require(digits.size() == 4, "airfoil", "expected a NACA 4-digit section written like \"NACA 0012\"");
    (void)theory::parse_naca4(digits, false, model.where("airfoil"));
  }
  s.chord_m = model.number("chord_m", s.chord_m);
  model.require(s.chord_m > 0 && s.chord_m < 20, "chord_m", "expected a chord in metres, > 0");
  s.span_m = model.number("span_m", s.span_m);
  model.require(s.span_m > 0, "span_m", "expected a span in metres, > 0");
  s.pivot_x_over_c = model.number("pivot_x_over_c", s.pivot_x_over_c);
  model.require(s.pivot_x_over_c >= 0 && s.pivot_x_over_c <= 1, "pivot_x_over_c",
                "expected the pitch axis as a fraction of chord, in [0, 1]");
  model.reject_unknown_keys();

  ConfigSection flow(file, "flow");
  s.velocity_m_s = flow.number("velocity_m_s", s.velocity_m_s);
  flow.require(s.velocity_m_s > 0 && s.velocity_m_s < 120, "velocity_m_s",
               "expected a low-speed tunnel velocity in m/s, between 0 and 120");
  s.temperature_c = flow.number("temperature_c", s.temperature_c);
  flow.require(s.temperature_c > -40 && s.temperature_c < 80, "temperature_c",
               "expected an air temperature in degrees Celsius, between -40 and 80");
  s.static_pressure_pa = flow.number("static_pressure_pa", s.static_pressure_pa);
  flow.require(s.static_pressure_pa > 50000 && s.static_pressure_pa < 130000, "static_pressure_pa",
               "expected an absolute static pressure in Pa, between 50000 and 130000");
  flow.reject_unknown_keys();

  ConfigSection motion(file, "motion");
  s.motion = motion.choice("kind", {"sine", "ramp"}, "sine") == "sine" ? MotionKind::kSine : MotionKind::kRamp;
  s.alpha_mean_deg = motion.number("alpha_mean_deg", s.alpha_mean_deg);
  motion.require(std::abs(s.alpha_mean_deg) <= 40, "alpha_mean_deg", "expected a mean angle within +-40 degrees");
  s.alpha_amp_deg = motion.number("alpha_amp_deg", s.alpha_amp_deg);
  motion.require(s.alpha_amp_deg > 0 && s.alpha_amp_deg <= 30, "alpha_amp_deg",
                 "expected an amplitude in degrees, in (0, 30]");
  s.reduced_frequency = motion.number("reduced_frequency", s.reduced_frequency);
  motion.require(s.reduced_frequency > 0 && s.reduced_frequency <= 2, "reduced_frequency",
                 "expected k = pi f c / U in (0, 2]");
  const std::int64_t cycles = motion.integer("cycles", s.cycles);
  motion.require(cycles >= 1 && cycles <= 100000, "cycles", "expected between 1 and 100000 cycles");
  s.cycles = static_cast<int>(cycles);
  s.ramp_rate_deg_s = motion.number("ramp_rate_deg_s", s.ramp_rate_deg_s);
  motion.require(s.ramp_rate_deg_s > 0, "ramp_rate_deg_s", "expected a pitch rate in deg/s, > 0");
  s.ramp_hold_s = motion.number("ramp_hold_s", s.ramp_hold_s);
  motion.require(s.ramp_hold_s >= 0, "ramp_hold_s", "expected a hold time in s, >= 0");
  motion.reject_unknown_keys();

  ConfigSection timeline(file, "timeline");
  s.tare_s = timeline.number("tare_s", s.tare_s);
  timeline.require(s.tare_s > 0, "tare_s", "expected the wind-off tare length in s, > 0");
  s.wind_ramp_s = timeline.number("wind_ramp_s", s.wind_ramp_s);
  timeline.require(s.wind_ramp_s > 0, "wind_ramp_s", "expected the wind ramp time in s, > 0");
  s.settle_s = timeline.number("settle_s", s.settle_s);
  timeline.require(s.settle_s >= 0, "settle_s", "expected a settling time in s, >= 0");
  timeline.reject_unknown_keys();

  ConfigSection daq(file, "daq");
  s.sample_rate_hz = daq.number("sample_rate_hz", s.sample_rate_hz);
  daq.require(s.sample_rate_hz >= 50 && s.sample_rate_hz <= 200000, "sample_rate_hz",
              "expected a sample rate in Hz, between 50 and 200000");
  s.daq_format = daq.choice("format", {"hdf5", "csv"}, "hdf5") == "hdf5" ? DaqFormat::kHdf5 : DaqFormat::kCsv;
  const std::int64_t chunk = daq.integer("chunk_samples", s.chunk_samples);
  daq.require(chunk >= 16 && chunk <= (1 << 22), "chunk_samples", "expected between 16 and 4194304 samples");
  s.chunk_samples = static_cast<int>(chunk);
  daq.reject_unknown_keys();

  ConfigSection taps(file, "taps");
  const std::int64_t per_surface = taps.integer("per_surface", s.taps_per_surface);
  taps.require(per_surface >= 2 && per_surface <= 200, "per_surface", "expected between 2 and 200 taps a surface");
  s.taps_per_surface = static_cast<int>(per_surface);
  s.tap_x_first = taps.number("x_first", s.tap_x_first);
  s.tap_x_last = taps.number("x_last", s.tap_x_last);
  taps.require(s.tap_x_first > 0 && s.tap_x_first < s.tap_x_last, "x_first", "expected 0 < x_first < x_last");
  taps.require(s.tap_x_last <= 1, "x_last", "expected x_last <= 1");
  s.tube_length_m = taps.number("tube_length_m", s.tube_length_m);
  taps.require(s.tube_length_m > 0 && s.tube_length_m < 10, "tube_length_m", "expected a tube length in m, > 0");
  s.tube_diameter_m = taps.number("tube_diameter_m", s.tube_diameter_m);
  taps.require(s.tube_diameter_m > 0 && s.tube_diameter_m < 0.05, "tube_diameter_m",
               "expected a tube diameter in m, > 0");
  s.transducer_volume_m3 = taps.number("transducer_volume_m3", s.transducer_volume_m3);
  taps.require(s.transducer_volume_m3 >= 0, "transducer_volume_m3", "expected a volume in m^3, >= 0");
  s.fir_duration_s = taps.number("fir_duration_s", s.fir_duration_s);
  taps.require(s.fir_duration_s * s.sample_rate_hz >= 16, "fir_duration_s",
               "expected at least 16 samples of tubing impulse response");
  taps.reject_unknown_keys();

  ConfigSection stall(file, "stall");
  s.lift_slope_per_rad = stall.number("lift_slope_per_rad", s.lift_slope_per_rad);
  stall.require(s.lift_slope_per_rad > 0 && s.lift_slope_per_rad < 10, "lift_slope_per_rad",
                "expected a lift slope per radian, between 0 and 10");
  s.alpha_star_deg = stall.number("alpha_star_deg", s.alpha_star_deg);
  stall.require(s.alpha_star_deg > 0 && s.alpha_star_deg < 40, "alpha_star_deg", "expected degrees in (0, 40)");
  s.separation_steepness_per_deg = stall.number("separation_steepness_per_deg", s.separation_steepness_per_deg);
  stall.require(s.separation_steepness_per_deg > 0, "separation_steepness_per_deg", "expected a value > 0");
  s.tau1_conv = stall.number("tau1_conv", s.tau1_conv);
  stall.require(s.tau1_conv > 0, "tau1_conv", "expected a relaxation time in c/U, > 0");
  s.tau2_conv = stall.number("tau2_conv", s.tau2_conv);
  stall.require(s.tau2_conv >= 0, "tau2_conv", "expected a delay in c/U, >= 0");
  s.onset_x = stall.number("onset_x", s.onset_x);
  stall.require(s.onset_x > 0 && s.onset_x < 1, "onset_x", "expected a separation point in (0, 1)");
  s.reattach_x = stall.number("reattach_x", s.reattach_x);
  stall.require(s.reattach_x > s.onset_x && s.reattach_x < 1, "reattach_x", "expected onset_x < reattach_x < 1");
  s.alpha_star_jitter_deg = stall.number("alpha_star_jitter_deg", clean ? 0.0 : s.alpha_star_jitter_deg);
  stall.require(s.alpha_star_jitter_deg >= 0, "alpha_star_jitter_deg", "expected an rms in degrees, >= 0");
  stall.reject_unknown_keys();

  ConfigSection vortex(file, "vortex");
  s.release_x_over_c = vortex.number("release_x_over_c", s.release_x_over_c);
  vortex.require(s.release_x_over_c >= 0 && s.release_x_over_c < 0.5, "release_x_over_c",
                 "expected a release position in [0, 0.5)");
  s.speed_range = vortex.numbers("speed_range", s.speed_range);
  vortex.require(s.speed_range.size() == 2 && s.speed_range[0] > 0 && s.speed_range[0] <= s.speed_range[1] &&
                     s.speed_range[1] < 2,
                 "speed_range", "expected [lowest, highest] convection speed over U, 0 < lowest <= highest < 2");
  s.circulation_conv = vortex.number("circulation_conv", s.circulation_conv);
  vortex.require(s.circulation_conv > 0 && s.circulation_conv < 10, "circulation_conv",
                 "expected |Gamma|/(U c) in (0, 10)");
  s.detach_x_over_c = vortex.number("detach_x_over_c", s.detach_x_over_c);
  vortex.require(s.detach_x_over_c > s.release_x_over_c && s.detach_x_over_c < 1, "detach_x_over_c",
                 "expected release_x_over_c < detach_x_over_c < 1");
  s.height_over_c = vortex.number("height_over_c", s.height_over_c);
  vortex.require(s.height_over_c > 0 && s.height_over_c < 0.5, "height_over_c", "expected a height in (0, 0.5)");
  s.height_growth = vortex.number("height_growth", s.height_growth);
  vortex.require(s.height_growth >= 0 && s.height_growth < 2, "height_growth", "expected a slope in [0, 2)");
  s.core_radius_over_c = vortex.number("core_radius_over_c", s.core_radius_over_c);
  vortex.require(s.core_radius_over_c > 0 && s.core_radius_over_c < 0.5, "core_radius_over_c",
                 "expected a core radius in (0, 0.5) chords");
  s.core_growth = vortex.number("core_growth", s.core_growth);
  vortex.require(s.core_growth >= 0 && s.core_growth < 1, "core_growth", "expected a slope in [0, 1)");
  s.cp_peak = vortex.number("cp_peak", s.cp_peak);
  vortex.require(s.cp_peak >= 0 && s.cp_peak < 20, "cp_peak", "expected a suction bump -Delta Cp in [0, 20)");
  s.secondary = vortex.boolean("secondary", s.secondary);
  s.secondary_strength = vortex.number("secondary_strength", s.secondary_strength);
  vortex.require(s.secondary_strength > 0 && s.secondary_strength <= 1, "secondary_strength",
                 "expected a fraction of the primary's strength, in (0, 1]");
  vortex.reject_unknown_keys();

  ConfigSection noise(file, "noise"), scanner(file, "scanner"), lines(file, "lines"), dead(file, "dead_tap");
  read_nuisances(noise, scanner, lines, dead, s, clean);
  const int taps_total = 2 * s.taps_per_surface;
  for (const auto& t : s.stepped_taps)
    lines.require(is_tap_name(t, taps_total), "stepped_taps",
                  "expected tap names p01..p" + std::to_string(taps_total) + ", found '" + t + "'");
  if (!lines.has("measured_taps"))  // the default tap only where the section has that many taps
    std::erase_if(s.measured_taps, [&](const std::string& t) { return !is_tap_name(t, taps_total); });
  for (const auto& t : s.measured_taps) {
    lines.require(is_tap_name(t, taps_total), "measured_taps",
                  "expected tap names p01..p" + std::to_string(taps_total) + ", found '" + t + "'");
    lines.require(std::find(s.stepped_taps.begin(), s.stepped_taps.end(), t) == s.stepped_taps.end(),
                  "measured_taps", "tap '" + t + "' is already on a stepped line (stepped_taps)");
  }
  if (!s.dead_tap.empty())
    dead.require(is_tap_name(s.dead_tap, taps_total), "tap",
                 "expected a tap name p01..p" + std::to_string(taps_total) + " or \"\" for none");
  noise.reject_unknown_keys();
  scanner.reject_unknown_keys();
  lines.reject_unknown_keys();
  dead.reject_unknown_keys();

  ConfigSection piv(file, "piv");
  PivScenario& p = s.piv;
  p.enabled = piv.boolean("enabled", p.enabled);
  p.phase_locked = piv.choice("mode", {"time_resolved", "phase_locked"}, "time_resolved") == "phase_locked";
  p.rate_hz = piv.number("rate_hz", p.rate_hz);
  piv.require(p.rate_hz > 0 && (!p.enabled || p.rate_hz <= s.sample_rate_hz / 4), "rate_hz",
              "expected a camera rate > 0 and at most a quarter of [daq] sample_rate_hz (trigger pulses must be "
              "resolved)");
  p.phases_deg = piv.numbers("phases_deg", p.phases_deg);
  piv.require(!p.phases_deg.empty(), "phases_deg", "expected at least one phase");
  for (double ph : p.phases_deg) piv.require(ph >= 0 && ph < 360, "phases_deg", "expected phases in [0, 360)");
  p.max_frames = piv.integer("max_frames", p.max_frames);
  piv.require(p.max_frames >= 0, "max_frames", "expected a frame count >= 0 (0: all)");
  const std::int64_t nx = piv.integer("nx", p.nx), ny = piv.integer("ny", p.ny);
  piv.require(nx >= 4 && nx <= 4096, "nx", "expected between 4 and 4096 grid columns");
  piv.require(ny >= 4 && ny <= 4096, "ny", "expected between 4 and 4096 grid rows");
  p.nx = static_cast<int>(nx);
  p.ny = static_cast<int>(ny);
  p.x_range_over_c = piv.numbers("x_range_over_c", p.x_range_over_c);
  piv.require(p.x_range_over_c.size() == 2 && p.x_range_over_c[0] < p.x_range_over_c[1], "x_range_over_c",
              "expected [lowest, highest] x in chords from the pitch axis");
  p.y_range_over_c = piv.numbers("y_range_over_c", p.y_range_over_c);
  piv.require(p.y_range_over_c.size() == 2 && p.y_range_over_c[0] < p.y_range_over_c[1], "y_range_over_c",
              "expected [lowest, highest] y in chords from the pitch axis");
  p.units = piv.choice("units", {"m/s", "px/frame"}, p.units);
  p.text_frames = piv.choice("format", {"hdf5", "text"}, "hdf5") == "text";
  p.pixels_per_m = piv.number("pixels_per_m", p.pixels_per_m);
  piv.require(p.pixels_per_m > 0, "pixels_per_m", "expected a scale > 0");
  p.pair_dt_s = piv.number("pair_dt_s", p.pair_dt_s);
  piv.require(p.pair_dt_s > 0 && p.pair_dt_s < 0.1, "pair_dt_s", "expected a pulse separation in s, in (0, 0.1)");
  p.trigger_pulse_s = piv.number("trigger_pulse_s", p.trigger_pulse_s);
  piv.require(p.trigger_pulse_s > 0 && p.trigger_pulse_s < 0.5 / p.rate_hz, "trigger_pulse_s",
              "expected a pulse width > 0 and below half the frame interval");
  auto off = [clean](double v) { return clean ? 0.0 : v; };
  p.noise_m_s = piv.number("noise_m_s", off(p.noise_m_s));
  piv.require(p.noise_m_s >= 0, "noise_m_s", "expected an rms >= 0");
  p.outlier_fraction = piv.number("outlier_fraction", off(p.outlier_fraction));
  piv.require(p.outlier_fraction >= 0 && p.outlier_fraction < 0.5, "outlier_fraction", "expected a fraction in [0, 0.5)");
  p.clock_drift_ppm = piv.number("clock_drift_ppm", off(p.clock_drift_ppm));
  piv.require(std::abs(p.clock_drift_ppm) < 10000, "clock_drift_ppm", "expected a drift within +-10000 ppm");
  p.clock_offset_s = piv.number("clock_offset_s", off(p.clock_offset_s));
  const std::int64_t dropped = piv.integer("dropped_frames", clean ? 0 : p.dropped_frames);
  piv.require(dropped >= 0 && dropped < 1000000, "dropped_frames", "expected a count >= 0");
  p.dropped_frames = static_cast<int>(dropped);
  p.airfoil_field = piv.boolean("airfoil_field", !clean && p.airfoil_field);
  p.kh_blobs = piv.boolean("kh_blobs", !clean && p.kh_blobs);
  p.te_vortex = piv.boolean("te_vortex", !clean && p.te_vortex);
  p.secondary_vortex = piv.boolean("secondary_vortex", !clean && p.secondary_vortex);
  p.reflections = piv.boolean("reflections", !clean && p.reflections);
  piv.reject_unknown_keys();

  const double period = cycle_period_s(s);
  motion.require(period * s.sample_rate_hz >= 20, s.motion == MotionKind::kSine ? "reduced_frequency" : "ramp_rate_deg_s",
                 "a cycle must span at least 20 samples at [daq] sample_rate_hz");
  return s;
}

Scenario load_scenario(const std::filesystem::path& path) { return read_scenario(ConfigFile::load(path)); }

double pitch_frequency_hz(const Scenario& s, double velocity_m_s) {
  return s.reduced_frequency * velocity_m_s / (std::numbers::pi * s.chord_m);
}

double cycle_period_s(const Scenario& s) {
  if (s.motion == MotionKind::kSine) return 1.0 / pitch_frequency_hz(s, s.velocity_m_s);
  return 2.0 * (2.0 * s.alpha_amp_deg / s.ramp_rate_deg_s + s.ramp_hold_s);
}

double motion_duration_s(const Scenario& s) { return s.cycles * cycle_period_s(s); }

double record_duration_s(const Scenario& s) {
  return 2.0 * (s.tare_s + s.wind_ramp_s + s.settle_s) + motion_duration_s(s);
}

}  // namespace stallscope::synth
