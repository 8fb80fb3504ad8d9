#pragma once
// A synthetic-run scenario: everything `stallscope synth` needs to write one raw
// tunnel run with its ground truth. Read strictly from TOML (unknown keys and
// wrong types are InputErrors at file:line:column). Every key has the default
// written here; configs/scenarios/reference.toml lists them all with comments.
//
// `[scenario] preset = "clean"` turns every nuisance off (exact tests); the
// default "realistic" preset leaves them on. Keys given explicitly override
// the preset either way.
#include <cstdint>
#include <filesystem>
#include <string>
#include <vector>

#include "pipeline/config.hpp"

namespace stallscope::synth {

enum class MotionKind { kSine, kRamp };
enum class DaqFormat { kHdf5, kCsv };

// [piv]: a lab-frame vector-field stack over the suction side.
struct PivScenario {
  bool enabled = false;
  bool phase_locked = false;                    // mode = "time_resolved" | "phase_locked"
  double rate_hz = 250.0;                       // camera rate (time-resolved), on the DAQ clock
  std::vector<double> phases_deg = {0, 60, 120, 180, 240, 300};  // phase-locked snapshot phases
  std::int64_t max_frames = 0;                  // 0: every frame of the motion
  int nx = 56, ny = 32;
  std::vector<double> x_range_over_c = {-0.35, 1.15};  // lab frame, chords from the pitch axis
  std::vector<double> y_range_over_c = {-0.10, 0.55};
  std::string units = "m/s";                    // or "px/frame"
  bool text_frames = false;                     // format = "hdf5" (piv.h5) | "text" (piv/ folder, index.csv)
  double pixels_per_m = 4000.0;                 // for px/frame
  double pair_dt_s = 60e-6;                     // laser pulse separation, for px/frame
  double trigger_pulse_s = 1e-3;                // TTL width recorded in cam_trigger (at least one sample)
  // Nuisances (the clean preset turns them off).
  double noise_m_s = 0.15;
  double outlier_fraction = 0.02;
  double clock_drift_ppm = 40.0;
  double clock_offset_s = 3.217;                // camera clock reading at DAQ time 0
  int dropped_frames = 3;
  bool airfoil_field = true;     // bound circulation of the airfoil (a Lamb-Oseen vortex at c/4)
  bool kh_blobs = true;          // small co-rotating vortices along the separated shear layer
  bool te_vortex = true;         // counter-rotating trailing-edge vortex as the LEV nears the TE
  bool secondary_vortex = true;  // counter-rotating vortex under the LEV, near the wall
  bool reflections = true;       // spurious vectors next to the wall
};

struct Scenario {
  // [scenario]
  std::string preset = "realistic";
  std::string name = "synthetic-run";
  std::string description;
  std::uint64_t seed = 1;
  std::string calibration_date = "2026-11-20";  // TOML date written into the calibration files

  // [model]
  std::string airfoil = "NACA 0012";
  double chord_m = 0.15;
  double span_m = 0.45;
  double pivot_x_over_c = 0.25;

  // [flow]
  double velocity_m_s = 25.0;
  double temperature_c = 20.0;
  double static_pressure_pa = 101325.0;

  // [motion]
  MotionKind motion = MotionKind::kSine;
  double alpha_mean_deg = 10.0;
  double alpha_amp_deg = 8.0;
  double reduced_frequency = 0.1;  // k = pi f c / U (sine)
  int cycles = 8;
  double ramp_rate_deg_s = 60.0;  // ramp: constant pitch rate, up and back down
  double ramp_hold_s = 0.3;       // ramp: hold at the top and at the bottom of each cycle

  // [timeline]
  double tare_s = 0.5;        // wind-off, model at rest, at the start and at the end
  double wind_ramp_s = 0.5;   // q ramps smoothly between wind-off and wind-on
  double settle_s = 0.5;      // wind on, model at rest, before and after the motion

  // [daq]
  double sample_rate_hz = 2000.0;
  DaqFormat daq_format = DaqFormat::kHdf5;
  int chunk_samples = 4096;

  // [taps]
  int taps_per_surface = 10;
  double tap_x_first = 0.01;
  double tap_x_last = 0.95;
  double tube_length_m = 0.35;
  double tube_diameter_m = 1.0e-3;
  double transducer_volume_m3 = 1.0e-8;
  double fir_duration_s = 0.512;  // length of the tubing impulse response applied

  // [stall] attached loads, Goman-Khrabrov separation, per-cycle jitter
  double lift_slope_per_rad = 6.0;       // circulatory Cl slope (thin airfoil: 2 pi)
  double alpha_star_deg = 14.0;          // x0 = 1/2 here
  double separation_steepness_per_deg = 0.30;
  double tau1_conv = 2.0;                // GK relaxation time, c/U
  double tau2_conv = 3.0;                // GK separation delay, c/U
  double onset_x = 0.7;                  // vortex release when x first falls below this in a cycle
  double reattach_x = 0.9;               // reattachment when x rises back above this
  double alpha_star_jitter_deg = 0.6;    // per-cycle rms jitter of alpha_star (onset jitter)

  // [vortex] dynamic-stall vortex
  double release_x_over_c = 0.08;
  std::vector<double> speed_range = {0.25, 0.45};  // convection speed / U, drawn per cycle
  double circulation_conv = 1.2;       // |Gamma| / (U c) at detachment
  double detach_x_over_c = 0.55;       // feeding stops (detachment) here
  double height_over_c = 0.04;         // height above the surface at release
  double height_growth = 0.12;         // d(height)/d(x) as it convects
  double core_radius_over_c = 0.03;    // Lamb-Oseen core radius at release
  double core_growth = 0.05;           // d(r_c)/d(x)
  double cp_peak = 2.0;                // suction bump peak -Delta Cp at release strength
  bool secondary = true;               // a weaker vortex released when the first passes the TE
  double secondary_strength = 0.5;

  // [noise] (nuisances; the clean preset zeroes them all)
  double white_v = 2.0e-4;         // rms white noise on every channel, V
  double pink_v = 2.0e-4;          // rms 1/f noise, V
  double mains_v = 3.0e-4;         // pick-up amplitude, V
  double mains_hz = 50.0;
  double q_fluctuation = 0.01;     // rms fraction of q
  double q_fluctuation_s = 0.3;    // correlation time of the q fluctuation
  double zero_shift_pa = 8.0;      // rms transducer zero error versus the calibration file
  double zero_drift_pa = 2.0;      // rms drift of each zero from the first tare to the last
  double gain_spread = 0.02;       // rms relative spread of transducer gains (stated in the file)
  double encoder_noise_deg = 0.02; // rms encoder noise
  double temperature_rise_k = 0.4; // air warms during the run
  double temperature_coefficient_per_k = 2.0e-4;  // transducers' thermal sensitivity (each tap +-50 % rms), in the file

  // [scanner] multiplexed sampling: tap j of N is taken at t + j sweep / (N fs)
  double skew_sweep = 0.9;  // fraction of the sample period the scanner sweep takes (0: simultaneous)

  // [lines] real tubing differing from the tap table
  double tube_length_error = 0.10;  // true length = table length (1 + this)
  std::vector<std::string> stepped_taps = {"p03"};  // taps on a two-segment line (listed in lines.toml)
  double stepped_diameter_m = 1.6e-3;  // first segment's diameter for stepped lines
  double stepped_fraction = 0.3;       // first segment's share of the length
  // Taps whose line is given by a measured transfer function (line_<tap>.csv beside
  // lines.toml): the true line's Bergh-Tijdeman response every measured_step_hz up to
  // the Nyquist frequency, with the scatter of a sweep against a reference transducer.
  std::vector<std::string> measured_taps = {"p15"};
  double measured_step_hz = 5.0;
  double measured_gain_scatter = 0.01;      // rms relative gain error per frequency
  double measured_phase_scatter_deg = 0.5;  // rms phase error per frequency

  // [dead_tap]
  std::string dead_tap = "p07";  // "" for none: the channel reads a stuck value plus noise
  bool dead_tap_listed = true;   // status "dead" in the tap table (false: left "ok")

  PivScenario piv;

  // Where each key came from, for messages that name the scenario file.
  std::filesystem::path source;
  std::string text;  // the scenario file's text, copied beside the run
};

// Reads and validates; throws InputError naming file:line:column and key.
Scenario read_scenario(const ConfigFile& file);
Scenario load_scenario(const std::filesystem::path& path);

// Derived quantities the generator and the writers share.
double pitch_frequency_hz(const Scenario& s, double velocity_m_s);  // sine: k U / (pi c)
double cycle_period_s(const Scenario& s);
double motion_duration_s(const Scenario& s);
double record_duration_s(const Scenario& s);

}  // namespace stallscope::synth
