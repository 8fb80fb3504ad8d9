// The [piv] and [vortex] stages end to end on a small invented run: a
// clockwise leading-edge vortex that grows in place, detaches and convects
// past the trailing edge at a known speed, seen through a camera whose clock
// drifts against the DAQ's, with an empty frame and frames after the DAQ
// record ended.
#include <gtest/gtest.h>

#include <cmath>
#include <map>
#include <numbers>
#include <numeric>

#include "pipeline/config.hpp"
#include "pipeline/errors.hpp"
#include "pipeline/hdf5.hpp"
#include "pipeline/perturbation.hpp"
#include "pipeline/progress.hpp"
#include "pipeline/provenance.hpp"
#include "stages/piv/airfoil_frame.hpp"
#include "stages/piv/piv_stage.hpp"
#include "stages/piv/swirl.hpp"
#include "stages/piv/vortex_stage.hpp"
#include "tests/piv/piv_fields.hpp"
#include "tests/support/test_support.hpp"

namespace stallscope {
namespace {

constexpr double kChord = 0.2, kU = 10.0, kSpeed = 0.35;  // convection speed / U
constexpr double kOffset = 0.003, kDrift = 1e-5;           // camera clock against the DAQ's
constexpr int kFrames = 90, kGrowthFrames = 20, kEmptyFrame = 30;
constexpr double kDaqEnd = 0.085;

double daq_time(int n) { return kOffset + (1 + kDrift) * 0.001 * n; }
double alpha_at(double t) { return 8.0 + 20.0 * t; }
double x_over_c(int n) { return 0.2 + (n > kGrowthFrames ? kSpeed * kU * 0.001 * (n - kGrowthFrames) / kChord : 0.0); }

struct PivRun {
  stallscope::testing::ScratchDir dir;
  RunStore store;
  Provenance provenance = Provenance::start("test");
  Progress progress{Progress::Mode::kQuiet};

  // to_px > 0: the stack is written in px/frame, velocity x to_px.
  explicit PivRun(double to_px = 0) {
    const piv::Grid g = piv::testing::uniform_grid(-0.02, 0.28, -0.04, 0.10, 0.0025);
    const piv::AirfoilPlacement placement{kChord, 0.25, 0.05, 0.0, 0.0};
    const std::size_t n = g.size();
    std::vector<float> u(kFrames * n), v(kFrames * n);
    std::vector<double> camera(kFrames);
    for (int k = 0; k < kFrames; ++k) {
      camera[static_cast<std::size_t>(k)] = 0.001 * k;
      const double gamma = -1.0 * kU * kChord * (k < kGrowthFrames ? (k + 1.0) / kGrowthFrames
                                                                    : 1.0 - 0.002 * (k - kGrowthFrames));
      double x = 0, y = 0;
      piv::to_lab_frame(placement, alpha_at(daq_time(k)), {x_over_c(k), 0.12}, x, y);
      const theory::LambOseenVortex vortex{x, y, gamma, 0.04 * kChord};
      const piv::Frame f = piv::testing::vortex_frame(g, {vortex}, kU, 0.01 * kU, 50 + k);
      for (std::size_t p = 0; p < n; ++p) {
        const float scale = to_px > 0 ? static_cast<float>(to_px) : 1.0f;
        u[k * n + p] = k == kEmptyFrame ? std::nanf("") : f.u[p] * scale;
        v[k * n + p] = k == kEmptyFrame ? std::nanf("") : f.v[p] * scale;
      }
    }
    h5::File file = h5::File::create(dir / "piv.h5");
    const std::string units = to_px > 0 ? "px/frame" : "m/s";
    h5::write_floats(file.id(), "piv/u", u.data(), {kFrames, g.ny(), g.nx()}, units);
    h5::write_floats(file.id(), "piv/v", v.data(), {kFrames, g.ny(), g.nx()}, units);
    h5::write_numbers(file.id(), "piv/x_m", g.x_m.data(), {g.nx()}, "m");
    h5::write_numbers(file.id(), "piv/y_m", g.y_m.data(), {g.ny()}, "m");
    h5::write_numbers(file.id(), "piv/time_s", camera.data(), {camera.size()}, "s");
    file.close();

    // DAQ at 10 kHz with the camera trigger: 0/5 V, 0.2 ms linear edges.
    const int samples = static_cast<int>(std::lround((kDaqEnd + 0.01) * 1e4)) + 1;
    Eigen::VectorXd t(samples), alpha(samples);
    Eigen::MatrixXd volts = Eigen::MatrixXd::Zero(samples, 2);
    for (int i = 0; i < samples; ++i) {
      t[i] = -0.01 + i * 1e-4;
      alpha[i] = alpha_at(t[i]);
      volts(i, 0) = 1.0;
      const int k = static_cast<int>(std::lround((t[i] - kOffset) / 0.001));
      const double s = t[i] - daq_time(std::clamp(k, 0, kFrames - 1));
      double level = 0;
      if (std::abs(s) < 1e-4) level = (s + 1e-4) / 2e-4;
      else if (s >= 1e-4 && s < 4e-4) level = 1;
      volts(i, 1) = 5.0 * level;
    }
    store.put("run/chord_m", Scalar{kChord, "m"});
    store.put("run/U_inf_m_s", Scalar{kU, "m/s"});
    store.put("run/pivot_x_over_c", Scalar{0.25, "1"});
    store.put("run/airfoil", Text{"NACA 0012"});
    store.put("daq/time_s", Series{t, "s"});
    store.put("daq/volts", Matrix{volts, "V", {"alpha_enc", "cam_trigger"}});
    store.put("daq/roles/camera_trigger", Text{"cam_trigger"});
    store.put("signals/time_s", Series{t, "s"});
    store.put("motion/alpha_deg", Series{alpha, "deg"});
  }

  template <typename S>
  void run_stage(const std::string& toml, const std::string& section, int threads,
                 const Perturbation* perturbation = nullptr) {
    ConfigFile config = ConfigFile::parse(toml, dir / "reduce.toml");
    ConfigSection s(config, section);
    S stage;
    stage.configure(s);
    s.reject_unknown_keys();
    RunContext context(store, provenance, progress, threads);
    context.set_perturbation(perturbation);
    stage.run(context);
  }
};

const std::string kConfig =
    "[piv]\nfile = \"piv.h5\"\npivot_x_m = 0.05\npivot_y_m = 0.0\nmedian_epsilon_m_s = 0.05\nchunk_frames = 16\n"
    "[vortex]\n";

TEST(PivAndVortexStages, FindTheLeadingEdgeVortexAndItsEvents) {
  PivRun run;
  run.run_stage<PivStage>(kConfig, "piv", 2);
  const RunStore& s = run.store;
  EXPECT_EQ(s.get<Text>("piv/sync_method").value, "camera trigger");
  // The edges are exact on linear ramps, so offset and drift are too (to round-off).
  EXPECT_NEAR(s.get<Scalar>("piv/sync_offset_s").value, kOffset, 1e-9);
  EXPECT_NEAR(s.get<Scalar>("piv/sync_drift").value, kDrift, 1e-8);
  const Table& frames = s.get<Table>("piv/frames");
  ASSERT_EQ(frames.rows(), static_cast<std::size_t>(kFrames));
  EXPECT_EQ(frames.texts("reason")[kEmptyFrame], "no valid vectors");
  for (int k = 0; k < kFrames; ++k) {
    const bool outside = daq_time(k) > kDaqEnd;
    if (outside) {
      EXPECT_EQ(frames.texts("reason")[static_cast<std::size_t>(k)], "outside the DAQ record") << k;
    } else if (k != kEmptyFrame) {
      EXPECT_EQ(frames.texts("status")[static_cast<std::size_t>(k)], "ok") << k;
    }
  }

  run.run_stage<VortexStage>(kConfig, "vortex", 2);
  const Table& per = s.get<Table>("vortex/per_track");
  std::size_t le = per.rows();
  for (std::size_t k = 0; k < per.rows(); ++k)
    if (per.integers("le_vortex")[k]) le = k;
  ASSERT_LT(le, per.rows());
  EXPECT_EQ(per.integers("sign")[le], -1);
  // The empty frame is bridged: one track from birth to the end of the record.
  EXPECT_EQ(per.integers("first_frame")[le], 0);
  EXPECT_EQ(per.texts("end_reason")[le], "end of record");
  // Convection: 2 % velocity noise on an r_c/3.2 grid; tolerance 2 % of the speed (common practice).
  EXPECT_NEAR(per.numbers("convection_speed")[le], kSpeed, 0.007);
  const Table& ev = s.get<Table>("vortex/events_per_cycle");
  for (std::size_t k = 0; k < ev.rows(); ++k)
    std::printf("%s %s t=%.5f s alpha=%.3f value=%.4f %s\n", ev.texts("event")[k].c_str(), ev.texts("status")[k].c_str(),
                ev.numbers("t_s")[k], ev.numbers("alpha_deg")[k], ev.numbers("value")[k], ev.texts("reason")[k].c_str());
  std::printf("tracks kept: %zu; LE speed %.4f +- %.4f U\n", per.rows(), per.numbers("convection_speed")[le],
              per.numbers("convection_speed_uncertainty")[le]);
  ASSERT_EQ(ev.rows(), 5u);  // with "no later leading-edge vortex" for the shedding
  auto event = [&](const std::string& name) {
    for (std::size_t k = 0; k < ev.rows(); ++k)
      if (ev.texts("event")[k] == name) return k;
    return ev.rows();
  };
  for (const char* name : {"vortex_detection", "vortex_detachment", "vortex_te_passage", "convection_speed"}) {
    ASSERT_LT(event(name), ev.rows()) << name;
    EXPECT_EQ(ev.texts("status")[event(name)], "ok") << name << ": " << ev.texts("reason")[event(name)];
  }
  EXPECT_NEAR(ev.numbers("t_s")[event("vortex_detection")], daq_time(0), 1e-9);
  // Detachment: circulation peaks at frame 19-20; within 2 frames.
  EXPECT_NEAR(ev.numbers("t_s")[event("vortex_detachment")], daq_time(kGrowthFrames), 2.5e-3);
  // Trailing-edge passage: x/c = 1 at frame 20 + 0.8 c / (0.35 U 1 ms) = 65.71; within one frame.
  const double te_frame = kGrowthFrames + 0.8 * kChord / (kSpeed * kU * 0.001);
  EXPECT_NEAR(ev.numbers("t_s")[event("vortex_te_passage")], daq_time(0) + 0.001 * te_frame, 1e-3);
  EXPECT_NEAR(ev.numbers("alpha_deg")[event("vortex_te_passage")], alpha_at(daq_time(0) + 0.001 * te_frame), 0.03);
  EXPECT_NEAR(ev.numbers("value")[event("convection_speed")], kSpeed, 0.007);
}

TEST(PivAndVortexStages, ReduceTheOnsetFrameAgainForTheSwirlMap) {
  PivRun run;
  run.run_stage<PivStage>(kConfig, "piv", 2);
  run.run_stage<VortexStage>(kConfig, "vortex", 1);
  const RunStore& s = run.store;
  ASSERT_TRUE(s.contains("vortex/onset_swirl"));
  const Eigen::MatrixXd& field = s.get<Matrix>("vortex/onset_swirl").values;
  const Attributes& at = s.entry("vortex/onset_swirl").attributes;
  const Eigen::VectorXd &gx = s.get<Series>("piv/grid_x_m").values, &gy = s.get<Series>("piv/grid_y_m").values;
  ASSERT_EQ(field.rows(), gy.size());
  ASSERT_EQ(field.cols(), gx.size());
  // One cycle (no [cycles]): the onset is the LE vortex's first frame, 0.
  EXPECT_EQ(std::get<std::int64_t>(at.at("frame")), 0);
  EXPECT_NEAR(std::get<double>(at.at("alpha_deg")), alpha_at(daq_time(0)), 1e-9);
  // Reduced again the same way: the map's extreme beside the detection is its peak swirl, exactly.
  const Table& det = s.get<Table>("piv/detections");
  std::size_t d = det.rows();
  for (std::size_t k = 0; k < det.rows(); ++k)
    if (det.integers("frame")[k] == 0 && det.integers("sign")[k] == -1) d = k;
  ASSERT_LT(d, det.rows());
  double lowest = 0;
  Eigen::Index masked = 0;
  for (Eigen::Index j = 0; j < field.rows(); ++j)
    for (Eigen::Index i = 0; i < field.cols(); ++i) {
      if (!std::isfinite(field(j, i))) {
        ++masked;
        continue;
      }
      if (std::hypot(gx[i] - det.numbers("x_m")[d], gy[j] - det.numbers("y_m")[d]) < 0.01) lowest = std::min(lowest, field(j, i));
    }
  EXPECT_DOUBLE_EQ(-lowest, det.numbers("peak_swirl")[d]);
  EXPECT_GT(masked, 0);  // the section and its wall band
  // Lamb-Oseen core: solid-body rotation Omega0 = Gamma / (2 pi r_c^2) at the centre
  // (Lamb 1932); 5 % for a 0.31 r_c grid, an off-grid centre and 1 % U noise (common practice).
  const double omega0 = kU * kChord / 20 / (2 * std::numbers::pi * std::pow(0.04 * kChord, 2));
  EXPECT_NEAR(-lowest, omega0 * kChord / kU, 0.05 * omega0 * kChord / kU);
}

TEST(PivStage, AReplicaAddsNoiseOfTheEstimatedRandomErrorOnlyWhenAskedTo) {
  const UncertaintyModel model;
  const Perturbation replica(model, 2);
  PivRun nominal, off, on, again;
  nominal.run_stage<PivStage>(kConfig, "piv", 2);
  off.run_stage<PivStage>(kConfig, "piv", 2, &replica);
  const std::string piv_only = kConfig.substr(0, kConfig.find("[vortex]")) + "random_error_replicas = true\n";
  on.run_stage<PivStage>(piv_only, "piv", 2, &replica);
  again.run_stage<PivStage>(piv_only, "piv", 1, &replica);
  const Table &a = nominal.store.get<Table>("piv/detections"), &b = off.store.get<Table>("piv/detections");
  const Table &c = on.store.get<Table>("piv/detections"), &d = again.store.get<Table>("piv/detections");
  EXPECT_EQ(a.numbers("circulation"), b.numbers("circulation"));  // not asked: the nominal frames
  // The field's own noise is 1 % of U per component; the estimate from each frame finds it.
  const double estimated = nominal.store.get<Scalar>("piv/random_error_m_s").value;
  EXPECT_NEAR(estimated, 0.01 * kU, 0.05 * 0.01 * kU);
  EXPECT_EQ(on.store.get<Scalar>("piv/random_error_m_s").value, estimated);  // estimated before the new noise
  EXPECT_EQ(c.numbers("circulation"), d.numbers("circulation"));  // the same replica on any thread count
  // The vortex of each frame (its strongest detection) moves a little: new noise of
  // sigma on a vortex of 0.05 to 1 U c.
  auto strongest = [](const Table& t) {
    std::map<std::int64_t, double> g;
    for (std::size_t k = 0; k < t.rows(); ++k) {
      double& best = g[t.integers("frame")[k]];
      if (std::abs(t.numbers("circulation")[k]) > std::abs(best)) best = t.numbers("circulation")[k];
    }
    return g;
  };
  const auto ga = strongest(a), gc = strongest(c);
  // The replica carries its frames' noise and the new (sqrt 2 sigma in all), so
  // the weakest early frames of the growing vortex may fall below its threshold.
  std::size_t both = 0, moved = 0;
  for (const auto& [frame, g] : ga) {
    if (!gc.count(frame)) continue;
    ++both;
    EXPECT_NEAR(gc.at(frame), g, 0.05 * std::abs(g)) << "frame " << frame;
    moved += gc.at(frame) != g;
  }
  EXPECT_GE(both, ga.size() * 9 / 10);
  EXPECT_GT(moved, both / 2);
}

TEST(PivStage, MasksTheUsersRegionsInTheirFramesAndCountsThem) {
  // A lab box over the downstream corner for frames 5 to 9, and a box riding
  // on the trailing edge for every frame.
  const std::string masks = kConfig.substr(0, kConfig.find("[vortex]")) +
                            "[piv.masks.window_edge]\nx = [0.2, 0.3, 0.3, 0.2]\ny = [0.05, 0.05, 0.2, 0.2]\n"
                            "frames = [5, 9]\n"
                            "[piv.masks.te_band]\nframe = \"airfoil\"\nx = [0.95, 1.1, 1.1, 0.95]\n"
                            "y = [-0.05, -0.05, 0.05, 0.05]\n";
  PivRun plain, masked;
  plain.run_stage<PivStage>(kConfig, "piv", 2);
  masked.run_stage<PivStage>(masks, "piv", 2);
  const Table &a = plain.store.get<Table>("piv/frames"), &b = masked.store.get<Table>("piv/frames");
  const piv::Grid g = piv::testing::uniform_grid(-0.02, 0.28, -0.04, 0.10, 0.0025);
  std::size_t corner = 0;  // grid points in the lab box
  for (double x : g.x_m)
    for (double y : g.y_m) corner += x >= 0.2 && x <= 0.3 && y >= 0.05 && y <= 0.2;
  ASSERT_GT(corner, 50u);
  for (std::size_t f = 0; f < 12; ++f) {
    EXPECT_EQ(a.integers("masked_regions")[f], 0);
    const std::int64_t in = b.integers("masked_regions")[f];
    // The trailing-edge box covers 0.15 c by 0.1 c less what the section's mask holds.
    const std::int64_t te = in - (f >= 5 && f <= 9 ? static_cast<std::int64_t>(corner) : 0);
    EXPECT_GT(te, 20) << f;
    EXPECT_LT(te, 0.15 * 0.1 * kChord * kChord / (0.0025 * 0.0025)) << f;
    EXPECT_EQ(b.integers("vectors")[f], a.integers("vectors")[f] - in) << f;
  }
  const std::string regions = masked.store.get<Table>("piv/processing").texts("mask_regions").at(0);
  EXPECT_NE(regions.find("window_edge lab 5 9 0.20000000000000001,0.050000000000000003"), std::string::npos) << regions;
  EXPECT_NE(regions.find("te_band airfoil 0 end"), std::string::npos) << regions;
}

TEST(PivStage, GivesTheSameDetectionsOnOneAndTwoThreads) {
  PivRun one, two;
  one.run_stage<PivStage>(kConfig, "piv", 1);
  two.run_stage<PivStage>(kConfig, "piv", 2);
  const Table &a = one.store.get<Table>("piv/detections"), &b = two.store.get<Table>("piv/detections");
  ASSERT_EQ(a.rows(), b.rows());
  EXPECT_EQ(a.integers("frame"), b.integers("frame"));
  EXPECT_EQ(a.numbers("x_over_c"), b.numbers("x_over_c"));
  EXPECT_EQ(a.numbers("circulation"), b.numbers("circulation"));
}

TEST(PivStage, ScalesPixelDisplacementsByTheTargetCalibration) {
  // 25 um/px and 50 us between pulses: 1 m/s is 2 px/frame.
  PivRun metres, pixels(2.0);
  metres.run_stage<PivStage>(kConfig, "piv", 2);
  pixels.dir.write("target.toml", "id = \"sheet-A\"\nkind = \"piv_target\"\n[mapping]\nmetres_per_pixel = 25e-6\n");
  pixels.run_stage<PivStage>("[piv]\nfile = \"piv.h5\"\npivot_x_m = 0.05\npivot_y_m = 0.0\n"
                             "calibration = \"target.toml\"\npulse_separation_s = 50e-6\n",
                             "piv", 2);
  // The default epsilon, 0.1 px, is 0.05 m/s here, as in the m/s run; x2 then x0.5 is exact
  // in floating point, so the detections are identical.
  const Table &a = metres.store.get<Table>("piv/detections"), &b = pixels.store.get<Table>("piv/detections");
  ASSERT_GT(a.rows(), 0u);
  EXPECT_EQ(pixels.store.get<Text>("piv/velocity_units").value, "px/frame");
  EXPECT_EQ(a.numbers("x_over_c"), b.numbers("x_over_c"));
  EXPECT_EQ(a.numbers("circulation"), b.numbers("circulation"));
  ASSERT_EQ(pixels.provenance.calibrations.size(), 1u);
  EXPECT_EQ(pixels.provenance.calibrations[0].id, "sheet-A");
}

TEST(PivStage, RejectsFramesThatAllLieOutsideTheDaqRecord) {
  PivRun run;
  const std::string config =
      "[piv]\nfile = \"piv.h5\"\npivot_x_m = 0.05\npivot_y_m = 0.0\nmedian_epsilon_m_s = 0.05\nsync = \"delay\"\n"
      "trigger_delay_s = 5.0\n";
  try {
    run.run_stage<PivStage>(config, "piv", 1);
    ADD_FAILURE() << "no error";
  } catch (const InputError& e) {
    EXPECT_NE(std::string(e.what()).find("lies inside the DAQ record"), std::string::npos) << e.what();
  }
}

TEST(PivStage, RegistrationFromDataNeedsTheModelsVectorsMarkedInvalid) {
  PivRun run;  // this stack has a valid vector everywhere, even inside the section
  try {
    run.run_stage<PivStage>("[piv]\nfile = \"piv.h5\"\npivot_x_m = 0.05\npivot_y_m = 0.0\nmedian_epsilon_m_s = 0.05\n"
                            "registration = \"data\"\n",
                            "piv", 1);
    ADD_FAILURE() << "no error";
  } catch (const InputError& e) {
    const std::string what = e.what();
    EXPECT_NE(what.find("reduce.toml:6"), std::string::npos) << what;
    EXPECT_NE(what.find("registration = \"config\""), std::string::npos) << what;
  }
  // Checked against the data instead, the configured place is recorded with its poor fit.
  run.run_stage<PivStage>(kConfig, "piv", 1);
  const Table& reg = run.store.get<Table>("piv/registration");
  EXPECT_EQ(reg.texts("method")[0], "config");
  EXPECT_EQ(reg.numbers("pivot_x_m")[0], 0.05);
  EXPECT_EQ(reg.numbers("mismatch")[0], 1.0);
}

TEST(PivStage, RejectsBadOptionsAtTheirKey) {
  PivRun run;
  try {
    run.run_stage<PivStage>("[piv]\nfile = \"piv.h5\"\npivot_x_m = 0\npivot_y_m = 0\ngradient = \"spline\"\n", "piv", 1);
    ADD_FAILURE() << "no error";
  } catch (const InputError& e) {
    EXPECT_NE(std::string(e.what()).find("gradient"), std::string::npos) << e.what();
  }
  try {
    run.run_stage<PivStage>("[piv]\nfile = \"piv.h5\"\npivot_x_m = 0\npivot_y_m = 0\n", "piv", 1);
    ADD_FAILURE() << "no error";
  } catch (const InputError& e) {
    EXPECT_NE(std::string(e.what()).find("median_epsilon_m_s"), std::string::npos) << e.what();
  }
}

// Gamma2 at each vortex's own scale (gamma2_half_width = 0): the leading-edge
// vortex of the invented run is a core there; gamma2_cores_only keeps exactly
// the detections marked as cores and counts the others per frame.
TEST(PivStage, Gamma2AtEachVortexsOwnScaleMarksTheCoresAndCanKeepOnlyThem) {
  // Options of [piv] go before the config's [vortex] table.
  auto with = [](const std::string& piv_options) {
    std::string config = kConfig;
    return config.insert(config.find("[vortex]"), piv_options);
  };
  PivRun all, cores;
  all.run_stage<PivStage>(with("gamma2 = true\n"), "piv", 1);
  cores.run_stage<PivStage>(with("gamma2 = true\ngamma2_cores_only = true\n"), "piv", 1);
  const Table& a = all.store.get<Table>("piv/detections");
  ASSERT_GT(a.rows(), 0u);
  std::size_t marked = 0;
  for (std::size_t r = 0; r < a.rows(); ++r) {
    EXPECT_GE(a.integers("gamma2_half_width")[r], 1);
    EXPECT_EQ(a.integers("gamma2_core")[r],
              std::abs(a.numbers("gamma2")[r]) > piv::gamma2_shear_ceiling(static_cast<int>(a.integers("gamma2_half_width")[r])));
    marked += static_cast<std::size_t>(a.integers("gamma2_core")[r]);
  }
  EXPECT_GT(marked, a.rows() / 2);  // most detections of the run are vortices, not shear
  const Table& c = cores.store.get<Table>("piv/detections");
  EXPECT_EQ(c.rows(), marked);
  for (std::int64_t core : c.integers("gamma2_core")) EXPECT_EQ(core, 1);
  const auto& dropped = cores.store.get<Table>("piv/frames").integers("not_vortex_cores");
  EXPECT_EQ(static_cast<std::size_t>(std::accumulate(dropped.begin(), dropped.end(), std::int64_t{0})),
            a.rows() - marked);
  try {
    PivRun bad;
    bad.run_stage<PivStage>(with("gamma2_cores_only = true\n"), "piv", 1);
    ADD_FAILURE() << "no error";
  } catch (const InputError& e) {
    EXPECT_NE(std::string(e.what()).find("gamma2_cores_only"), std::string::npos) << e.what();
  }
}

}  // namespace
}  // namespace stallscope
