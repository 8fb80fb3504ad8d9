// Whole synthetic runs written to disk: the files carry the scenario.
#include <fftw3.h>
#include <gtest/gtest.h>
#include <sys/wait.h>

#include <cmath>
#include <complex>
#include <fstream>
#include <numbers>
#include <sstream>
#include <toml++/toml.h>

#include <Eigen/Dense>

#include "pipeline/errors.hpp"
#include "pipeline/hdf5.hpp"
#include "pipeline/sha256.hpp"
#include "stages/ingest/daq_file.hpp"
#include "stages/theory/lamb_oseen.hpp"
#include "tools/synth/synth_run.hpp"

namespace stallscope::synth {
namespace {

namespace fs = std::filesystem;
constexpr double kPi = std::numbers::pi;

fs::path fresh_dir(const std::string& name) {
  fs::path d = fs::temp_directory_path() / ("stallscope_synth_test_" + name + "_" + std::to_string(::getpid()));
  fs::remove_all(d);
  return d;
}

fs::path write_run(const std::string& name, const std::string& scenario_text) {
  const fs::path dir = fresh_dir(name);
  fs::create_directories(dir);
  const fs::path scenario = dir / "scenario.toml";
  std::ofstream(scenario) << scenario_text;
  Progress quiet(Progress::Mode::kQuiet);
  write_synthetic_run(load_scenario(scenario), dir / "run", false, quiet);
  return dir / "run";
}

std::vector<double> coefficients(const fs::path& calibration, const std::string& channel) {
  const toml::table t = toml::parse_file(calibration.string());
  std::vector<double> c;
  for (const auto& v : *t["channels"][channel]["coefficients"].as_array()) c.push_back(*v.value<double>());
  return c;
}

std::vector<double> column(const DaqRecord& r, const std::string& channel) {
  const int c = r.channel_index(channel);
  EXPECT_GE(c, 0) << channel;
  std::vector<double> out(static_cast<std::size_t>(r.volts.rows()));
  for (Eigen::Index i = 0; i < r.volts.rows(); ++i) out[i] = r.volts(i, c);
  return out;
}

double truth_attribute(const fs::path& truth, const std::string& name) {
  h5::File f = h5::File::open_read(truth);
  return std::get<double>(*h5::read_attribute(f.id(), "truth", name));
}

// f = 5 Hz exactly (k = pi f c / U with c = 0.15 m, U = 25 m/s): 400 samples a cycle at 2 kHz.
const std::string kFiveHertz = "[motion]\nreduced_frequency = 0.09424777960769379\ncycles = 8\n";

TEST(SynthRun, TheEncoderSpectrumCarriesThePitchFrequencyAndAmplitude) {
  const fs::path run = write_run("encoder", "[scenario]\nseed = 11\n" + kFiveHertz);
  const DaqRecord daq = read_daq_file(run / "daq.h5");
  const auto c = coefficients(run / "calib_encoder.toml", "alpha_enc");
  const auto volts = column(daq, "alpha_enc");
  const double fs = 2000.0, start = truth_attribute(run / "truth.h5", "motion_start_s");
  const auto first = static_cast<std::size_t>(std::llround(start * fs));
  const int n = 8 * 400;  // whole cycles: the pitch sits exactly on bin 8
  ASSERT_NEAR(daq.time_s[static_cast<Eigen::Index>(first)], start, 1e-9);
  std::vector<double> alpha(n);
  for (int i = 0; i < n; ++i) alpha[i] = c[0] + c[1] * volts[first + i];
  std::vector<std::complex<double>> spectrum(n / 2 + 1);
  fftw_plan plan = fftw_plan_dft_r2c_1d(n, alpha.data(), reinterpret_cast<fftw_complex*>(spectrum.data()),
                                        FFTW_ESTIMATE);
  for (int i = 0; i < n; ++i) alpha[i] = c[0] + c[1] * volts[first + i];  // planning may clobber the input
  fftw_execute(plan);
  fftw_destroy_plan(plan);
  int peak = 1;
  for (int k = 1; k <= n / 2; ++k)
    if (std::abs(spectrum[k]) > std::abs(spectrum[peak])) peak = k;
  const double frequency = peak * fs / n, amplitude = 2.0 * std::abs(spectrum[peak]) / n;
  const double mean = spectrum[0].real() / n;
  EXPECT_DOUBLE_EQ(frequency, 5.0);
  // Encoder noise (0.02 deg rms) and the electrical noise leave ~1e-3 deg on the bin.
  constexpr double kAngleTolerance = 0.01;  // degrees
  EXPECT_NEAR(amplitude, 8.0, kAngleTolerance);
  EXPECT_NEAR(mean, 10.0, kAngleTolerance);
}

TEST(SynthRun, TheSameSeedGivesByteIdenticalFiles) {
  const std::string text =
      "[scenario]\nseed = 5\n[motion]\ncycles = 2\n[piv]\nenabled = true\nnx = 20\nny = 12\nrate_hz = 200\n";
  const fs::path a = write_run("det_a", text), b = write_run("det_b", text);
  int compared = 0;
  for (const auto& entry : fs::directory_iterator(a)) {
    const fs::path name = entry.path().filename();
    EXPECT_EQ(sha256_file(a / name), sha256_file(b / name)) << name;
    ++compared;
  }
  EXPECT_EQ(compared, 13);  // 4 calibrations, daq, lines, measured line, piv, reduce, scenario, taps, truth, events
  const fs::path c = write_run("det_c", "[scenario]\nseed = 6\n[motion]\ncycles = 2\n[piv]\nenabled = true\nnx = 20\n"
                                        "ny = 12\nrate_hz = 200\n");
  EXPECT_NE(sha256_file(a / "daq.h5"), sha256_file(c / "daq.h5"));
}

TEST(SynthRun, DistortedTapsPassASlowPressureSignalUnchanged) {
  // Bergh-Tijdeman: gain -> 1 and phase -> 0 at low frequency (published-checks
  // section 5). Lines 10 % longer than the table and two stepped lines, nothing else.
  const fs::path run = write_run("slow", "[scenario]\npreset = \"clean\"\n[motion]\nreduced_frequency = 0.005\n"
                                         "alpha_mean_deg = 4\nalpha_amp_deg = 3\ncycles = 1\n[daq]\nsample_rate_hz = 500\n"
                                         "[lines]\ntube_length_error = 0.1\nstepped_taps = [\"p03\", \"p12\"]\n");
  const DaqRecord daq = read_daq_file(run / "daq.h5");
  h5::File truth = h5::File::open_read(run / "truth.h5");
  std::vector<hsize_t> dims;
  const auto cp = h5::read_floats(truth.id(), "truth/cp_taps", "truth.h5", &dims);
  const auto q = h5::read_numbers(truth.id(), "truth/q_pa", "truth.h5");
  const auto wind = h5::read_numbers(truth.id(), "truth/wind", "truth.h5");
  const auto names = tap_names(load_scenario(run / "scenario.toml"));
  for (const std::string tap : {"p03", "p05", "p12"}) {
    const std::size_t j = static_cast<std::size_t>(std::stoi(tap.substr(1)) - 1);
    const auto c = coefficients(run / "calib_taps.toml", tap);
    const auto volts = column(daq, tap);
    double worst = 0, scale = 0;
    for (std::size_t i = 0; i < volts.size(); ++i) {
      if (wind[i] < 1.0) continue;  // wind ramps are faster than the pitch
      const double measured = c[0] + c[1] * volts[i], expected = cp[i * dims[1] + j] * q[i];
      worst = std::max(worst, std::abs(measured - expected));
      scale = std::max(scale, std::abs(expected));
    }
    // The line lag (about 1.5 ms, 2.5e-3 rad at 0.27 Hz) bounds this; a gain error
    // would show at the full pressure scale.
    EXPECT_LT(worst, 5e-3 * scale) << tap;
  }
}

TEST(SynthRun, PivShowsLambOseenVorticesWithTheirPeakVelocityAtTheRightRadius) {
  // Phase-locked snapshots while the vortex crosses the chord, clean preset, fine grid.
  const fs::path run = write_run("piv", "[scenario]\npreset = \"clean\"\n[motion]\ncycles = 2\n"
                                        "[piv]\nenabled = true\nmode = \"phase_locked\"\n"
                                        "phases_deg = [150, 155, 160, 165, 170, 175]\nnx = 320\nny = 140\n");
  h5::File piv = h5::File::open_read(run / "piv.h5");
  std::vector<hsize_t> dims;
  const auto u = h5::read_floats(piv.id(), "piv/u", "piv.h5", &dims);
  const auto v = h5::read_floats(piv.id(), "piv/v", "piv.h5");
  const auto x = h5::read_numbers(piv.id(), "piv/x_m", "piv.h5");
  const auto y = h5::read_numbers(piv.id(), "piv/y_m", "piv.h5");
  h5::File truth = h5::File::open_read(run / "truth.h5");
  const auto frame = h5::read_integers(truth.id(), "truth/piv/vortex/frame", "truth.h5");
  const auto kind = h5::read_integers(truth.id(), "truth/piv/vortex/kind", "truth.h5");
  const auto vx = h5::read_numbers(truth.id(), "truth/piv/vortex/x_m", "truth.h5");
  const auto vy = h5::read_numbers(truth.id(), "truth/piv/vortex/y_m", "truth.h5");
  const auto gamma = h5::read_numbers(truth.id(), "truth/piv/vortex/circulation", "truth.h5");
  const auto core = h5::read_numbers(truth.id(), "truth/piv/vortex/core_radius_m", "truth.h5");
  const std::size_t ny = dims[1], nx = dims[2];
  const double u_inf = 25.0;
  int checked = 0;
  for (std::size_t r = 0; r < frame.size(); ++r) {
    if (kind[r] != 1 || std::abs(gamma[r]) < 0.5) continue;
    const auto f = static_cast<std::size_t>(frame[r]);
    // Only this frame's other vortices are removed, from their true parameters.
    std::vector<theory::LambOseenVortex> others;
    for (std::size_t o = 0; o < frame.size(); ++o)
      if (frame[o] == frame[r] && o != r) others.push_back({vx[o], vy[o], gamma[o], core[o]});
    const double rc = core[r];
    double worst = 0;
    std::vector<double> rs, ut;
    for (std::size_t j = 0; j < ny; ++j)
      for (std::size_t i = 0; i < nx; ++i) {
        const double dx = x[i] - vx[r], dy = y[j] - vy[r], rad = std::hypot(dx, dy);
        if (rad > 3 * rc || rad < 0.05 * rc) continue;
        const std::size_t c = (f * ny + j) * nx + i;
        double uu = u[c] - u_inf, vv = v[c];
        if (uu == -u_inf && vv == 0.0) continue;  // masked
        for (const auto& o : others) {
          const auto w = theory::velocity_at(o, x[i], y[j]);
          uu -= w.x();
          vv -= w.y();
        }
        // Azimuthal (counter-clockwise) component; Lamb-Oseen closed form
        // u_theta = Gamma/(2 pi r)(1 - exp(-r^2/r_c^2)) (Devenport et al. 1996).
        const double measured = (-dy * uu + dx * vv) / rad;
        const double expected = gamma[r] / (2 * kPi * rad) * (1 - std::exp(-rad * rad / (rc * rc)));
        worst = std::max(worst, std::abs(measured - expected));
        rs.push_back(rad / rc);
        ut.push_back(std::abs(measured));
      }
    // float32 storage of ~25 m/s velocities: ~2e-6 relative.
    EXPECT_LT(worst, 1e-4 * u_inf) << "frame " << f;
    // Peak radius: quadratic least squares of |u_theta|(r) over r in [1.0, 1.25] r_c.
    double s[5] = {}, t[3] = {};
    for (std::size_t k = 0; k < rs.size(); ++k) {
      if (rs[k] < 1.0 || rs[k] > 1.25) continue;
      double p = 1;
      for (int e = 0; e < 5; ++e, p *= rs[k]) s[e] += p;
      p = 1;
      for (int e = 0; e < 3; ++e, p *= rs[k]) t[e] += p * ut[k];
    }
    ASSERT_GT(s[0], 20) << "too few grid points near the velocity peak";
    // Normal equations [s0 s1 s2; s1 s2 s3; s2 s3 s4][c0 c1 c2] = [t0 t1 t2].
    Eigen::Matrix3d a;
    a << s[0], s[1], s[2], s[1], s[2], s[3], s[2], s[3], s[4];
    const Eigen::Vector3d coef = a.ldlt().solve(Eigen::Vector3d(t[0], t[1], t[2]));
    const double peak = -coef[1] / (2 * coef[2]);
    // Lamb-Oseen: r_max = 1.12091 r_c (published-checks section 6); the quadratic's
    // bias over this narrow window is below 0.5 %.
    EXPECT_NEAR(peak, 1.12091, 0.006) << "frame " << f;
    ++checked;
  }
  EXPECT_GE(checked, 2);
}

TEST(SynthRun, TheTapTableListsSkewDeadTapAndSteppedLines) {
  const fs::path run = write_run("table", "[scenario]\nseed = 2\n[motion]\ncycles = 1\n");
  std::ifstream in(run / "taps.csv");
  std::string header, line;
  std::getline(in, header);
  EXPECT_EQ(header, "tap,channel,x_over_c,y_over_c,surface,tube_length_m,tube_diameter_m,volume_m3,time_offset_s,line,status");
  int rows = 0;
  bool dead_listed = false, stepped = false, skewed = false;
  while (std::getline(in, line)) {
    ++rows;
    dead_listed = dead_listed || (line.rfind("p07,", 0) == 0 && line.find(",dead") != std::string::npos);
    stepped = stepped || (line.rfind("p03,", 0) == 0 && line.find("stepped_p03") != std::string::npos);
    skewed = skewed || line.rfind("p20,", 0) == 0;
  }
  EXPECT_EQ(rows, 20);
  EXPECT_TRUE(dead_listed);
  EXPECT_TRUE(stepped);
  const toml::table lines = toml::parse_file((run / "lines.toml").string());
  EXPECT_EQ(lines["lines"]["stepped_p03"]["segments"].as_array()->size(), 2u);
  // The dead tap's channel carries no pressure signal.
  const DaqRecord daq = read_daq_file(run / "daq.h5");
  const auto dead = column(daq, "p07"), live = column(daq, "p08");
  auto spread = [](const std::vector<double>& x) {
    auto [lo, hi] = std::minmax_element(x.begin(), x.end());
    return *hi - *lo;
  };
  EXPECT_LT(spread(dead), 0.01);
  EXPECT_GT(spread(live), 0.1);
  std::ifstream events(run / "truth_events.csv");
  std::getline(events, header);
  EXPECT_EQ(header, "cycle,event,status,reason,t_s,t_conv,t_uncertainty_s,phase_deg,alpha_deg,value");
}

TEST(SynthRun, CsvAndHdf5DaqFilesHoldTheSameRecord) {
  const fs::path h = write_run("fmt_h5", "[scenario]\nseed = 9\n[motion]\ncycles = 1\n");
  const fs::path c = write_run("fmt_csv", "[scenario]\nseed = 9\n[motion]\ncycles = 1\n[daq]\nformat = \"csv\"\n");
  const DaqRecord a = read_daq_file(h / "daq.h5"), b = read_daq_file(c / "daq.csv");
  ASSERT_EQ(a.channels, b.channels);
  ASSERT_EQ(a.volts.rows(), b.volts.rows());
  EXPECT_LT((a.volts - b.volts).cwiseAbs().maxCoeff(), 1e-5);  // 7 significant digits in CSV
  EXPECT_LT((a.time_s - b.time_s).cwiseAbs().maxCoeff(), 1e-9);
}

TEST(SynthRun, WrittenFilesFollowTheInterfaceFormatsCheckedWithH5py) {
  const fs::path run = write_run("h5py", "[scenario]\nseed = 4\n[motion]\ncycles = 2\n"
                                         "[piv]\nenabled = true\nnx = 24\nny = 16\nrate_hz = 200\n");
  const std::string script = std::string(STALLSCOPE_SOURCE_DIR) + "/tests/synth/check_formats.py";
  const std::string command = "/usr/bin/python3 " + script + " " + run.string() + " 2>&1";
  const int status = std::system(command.c_str());
  ASSERT_TRUE(WIFEXITED(status));
  EXPECT_EQ(WEXITSTATUS(status), 0);
}

std::pair<int, std::string> run_cli(const std::string& args) {
  const fs::path err = fresh_dir("cli_err.txt");
  const std::string command = std::string(STALLSCOPE_BINARY) + " " + args + " 2> " + err.string() + " > /dev/null";
  const int status = std::system(command.c_str());
  std::ifstream in(err);
  std::stringstream text;
  text << in.rdbuf();
  return {WIFEXITED(status) ? WEXITSTATUS(status) : -1, text.str()};
}

TEST(SynthRun, TheCommandLineRejectsBadScenarioKeysWithFileLineAndColumn) {
  const fs::path dir = fresh_dir("cli");
  fs::create_directories(dir);
  std::ofstream(dir / "bad_key.toml") << "[vortex]\ncp_peak = 2.0\nspeed_rang = [0.2, 0.4]\n";
  std::ofstream(dir / "bad_type.toml") << "[taps]\nper_surface = \"twelve\"\n";
  auto [code, message] = run_cli("synth " + (dir / "bad_key.toml").string() + " -o " + (dir / "out").string());
  EXPECT_EQ(code, 2);
  EXPECT_NE(message.find("bad_key.toml:3:14: vortex.speed_rang: unknown key"), std::string::npos) << message;
  std::tie(code, message) = run_cli("synth " + (dir / "bad_type.toml").string() + " -o " + (dir / "out").string());
  EXPECT_EQ(code, 2);
  EXPECT_NE(message.find("bad_type.toml:2:15: taps.per_surface: expected a whole number"), std::string::npos)
      << message;
  EXPECT_FALSE(fs::exists(dir / "out" / "truth.h5"));  // nothing half-written
}

TEST(SynthRun, AnExistingRunIsNotOverwrittenWithoutForce) {
  const fs::path run = write_run("force", "[motion]\ncycles = 1\n");
  Progress quiet(Progress::Mode::kQuiet);
  const Scenario s = load_scenario(run / "scenario.toml");
  EXPECT_THROW(write_synthetic_run(s, run, false, quiet), InputError);
  EXPECT_NO_THROW(write_synthetic_run(s, run, true, quiet));
}

}  // namespace
}  // namespace stallscope::synth
