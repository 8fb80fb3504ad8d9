// The [vortex] stage on hand-made detections: detachment by the eruption of a
// secondary vortex beneath the LE vortex, and a trailing-edge passage that is
// missing because the vortex left the field of view first.
#include <gtest/gtest.h>

#include <cmath>
#include <functional>

#include "pipeline/config.hpp"
#include "pipeline/perturbation.hpp"
#include "pipeline/progress.hpp"
#include "pipeline/provenance.hpp"
#include "stages/piv/vortex_stage.hpp"

namespace stallscope {
namespace {

constexpr double kChord = 0.2, kU = 10.0, kDt = 1e-3;

struct Detections {
  std::vector<std::int64_t> frame, sign, cells;
  std::vector<double> t, xm, ym, xc, yc, circ, peak, radius, sens;
  void add(int f, int s, double x, double y, double g) {
    frame.push_back(f), sign.push_back(s), cells.push_back(30), t.push_back(f * kDt);
    xm.push_back(x * kChord), ym.push_back(y * kChord), xc.push_back(x), yc.push_back(y);
    circ.push_back(g), peak.push_back(5), radius.push_back(0.03), sens.push_back(0.1);
  }
  Table table() const {
    Table d;
    d.add({"frame", "1", frame}).add({"t_s", "s", t}).add({"sign", "1", sign}).add({"x_m", "m", xm})
        .add({"y_m", "m", ym}).add({"x_over_c", "1", xc}).add({"y_over_c", "1", yc}).add({"circulation", "1", circ})
        .add({"peak_swirl", "1", peak}).add({"radius_over_c", "1", radius}).add({"circulation_sensitivity", "1", sens})
        .add({"cells", "1", cells});
    return d;
  }
};

// A LE vortex that grows until frame 15, then convects at 0.3 U (0.015 c per
// frame) and leaves the field of view, with a secondary vortex erupting
// beneath it from frame 10.
RunStore eruption_run(const std::function<void(int frame, Detections&)>& more = {}) {
  constexpr int kFrames = 70;
  Detections d;
  for (int f = 0; f < kFrames; ++f) {
    const double x = 0.15 + (f > 15 ? 0.3 * kU * kDt / kChord * (f - 15) : 0.0);
    if (x * kChord < 0.146) d.add(f, -1, x, 0.12, -0.05 * std::min(f, 15) - 0.1);
    if (f >= 10 && f < 18) d.add(f, +1, 0.16, 0.05, 0.2);
    if (more) more(f, d);
  }
  std::vector<std::int64_t> frame;
  std::vector<double> t;
  std::vector<std::string> status;
  for (int f = 0; f < kFrames; ++f) frame.push_back(f), t.push_back(f * kDt), status.push_back("ok");
  Table frames;
  frames.add({"frame", "1", frame}).add({"t_s", "s", t}).add({"status", "", status});
  RunStore store;
  store.put("piv/frames", frames);
  store.put("piv/detections", d.table());
  // The field of view ends at x = 0.15 m (x/c = 0.75).
  store.put("piv/grid_x_m", Series{Eigen::VectorXd::LinSpaced(61, 0.0, 0.15), "m"});
  store.put("piv/grid_y_m", Series{Eigen::VectorXd::LinSpaced(41, -0.05, 0.05), "m"});
  store.put("run/chord_m", Scalar{kChord, "m"});
  store.put("run/U_inf_m_s", Scalar{kU, "m/s"});
  return store;
}

void run_vortex(RunStore& store, const Perturbation* perturbation = nullptr) {
  ConfigFile config = ConfigFile::parse("[vortex]\n", "reduce.toml");
  ConfigSection s(config, "vortex");
  VortexStage stage;
  stage.configure(s);
  Provenance provenance = Provenance::start("test");
  Progress progress(Progress::Mode::kQuiet);
  RunContext context(store, provenance, progress, 1);
  context.set_perturbation(perturbation);
  stage.run(context);
}

TEST(VortexStage, DetachesAtTheSecondaryEruptionAndSaysWhyTheTrailingEdgeWasNotReached) {
  RunStore store = eruption_run();
  run_vortex(store);

  const Table& per = store.get<Table>("vortex/per_track");
  ASSERT_EQ(per.rows(), 2u);
  EXPECT_EQ(per.integers("le_vortex")[0], 1);
  EXPECT_EQ(per.texts("end_reason")[0], "left the field of view");
  EXPECT_EQ(per.texts("detachment")[0], "secondary vortex eruption beneath it");
  EXPECT_NEAR(per.numbers("convection_speed")[0], 0.3, 1e-9);  // positions after detachment only
  const Table& ev = store.get<Table>("vortex/events_per_cycle");
  ASSERT_EQ(ev.rows(), 5u);
  EXPECT_EQ(ev.texts("event")[1], "vortex_detachment");
  EXPECT_NEAR(ev.numbers("t_s")[1], 10 * kDt, 1e-12);
  EXPECT_EQ(ev.texts("event")[2], "vortex_te_passage");
  EXPECT_EQ(ev.texts("status")[2], "missing");
  EXPECT_NE(ev.texts("reason")[2].find("left the field of view"), std::string::npos) << ev.texts("reason")[2];
  EXPECT_TRUE(std::isnan(ev.numbers("t_s")[2]));
  EXPECT_NEAR(ev.numbers("t_conv")[0], 0.0, 1e-12);
}

TEST(VortexStage, LaterLeadingEdgeVorticesGiveTheSheddingTimesButShearLayerBlobsDoNot) {
  // The first vortex peaks at |Gamma| = 0.85 U c. A second is shed from the
  // leading edge at frame 40 (0.5 U c); a blob of 0.1 U c (under the 0.2 share) at frame 45.
  RunStore store = eruption_run([](int f, Detections& d) {
    if (f >= 40 && f < 48) d.add(f, -1, 0.2 + 0.005 * (f - 40), 0.12, -0.5);
    if (f >= 45 && f < 50) d.add(f, -1, 0.3, 0.25, -0.1);
  });
  run_vortex(store);
  const Table& ev = store.get<Table>("vortex/events_per_cycle");
  std::vector<double> shed;
  for (std::size_t k = 0; k < ev.rows(); ++k)
    if (ev.texts("event")[k] == "vortex_shedding") {
      EXPECT_EQ(ev.texts("status")[k], "ok") << ev.texts("reason")[k];
      shed.push_back(ev.numbers("t_s")[k]);
      EXPECT_NEAR(ev.numbers("value")[k], 0.5, 1e-12);
    }
  ASSERT_EQ(shed.size(), 1u);
  EXPECT_NEAR(shed[0], 40 * kDt, 1e-12);
  // Without the second vortex the cycle says there was none.
  RunStore single = eruption_run();
  run_vortex(single);
  const Table& one = single.get<Table>("vortex/events_per_cycle");
  EXPECT_EQ(one.texts("event")[4], "vortex_shedding");
  EXPECT_EQ(one.texts("status")[4], "missing");
  EXPECT_EQ(one.texts("reason")[4], "no later leading-edge vortex in this cycle");
}

TEST(VortexStage, InAReplicaShiftsEveryEventByThatReplicasClockError) {
  RunStore nominal = eruption_run();
  run_vortex(nominal);
  // The trigger fit's errors: 0.1 ms at its centre, 200 ppm of drift; plus a 0.5 ms latency.
  RunStore store = eruption_run();
  store.put("piv/sync_centre_s", Scalar{0.02, "s"});
  store.put("piv/sync_offset_uncertainty_s", Scalar{1e-4, "s"});
  store.put("piv/sync_drift_uncertainty", Scalar{2e-4, "1"});
  UncertaintyModel model;
  model.piv_delay_s = 5e-4;
  const Perturbation p(model, 3);
  run_vortex(store, &p);
  const double offset = p.error(1e-4, "piv_clock_offset") + p.error(5e-4, "piv_delay");
  const double drift = p.error(2e-4, "piv_clock_drift");
  ASSERT_NE(offset, 0.0);
  const Table &a = nominal.get<Table>("vortex/events_per_cycle"), &b = store.get<Table>("vortex/events_per_cycle");
  ASSERT_EQ(a.rows(), b.rows());
  std::size_t timed = 0;
  for (std::size_t k = 0; k < a.rows(); ++k) {
    const double t = a.numbers("t_s")[k];
    if (!std::isfinite(t)) continue;
    ++timed;
    // The same tracks, every time moved by offset + drift (t - centre): exact to round-off.
    EXPECT_NEAR(b.numbers("t_s")[k] - t, offset + drift * (t - 0.02), 1e-15) << a.texts("event")[k];
  }
  EXPECT_GE(timed, 2u);
  // Without the fit's errors only the latency remains.
  model.piv_clock_fit = false;
  RunStore latency = eruption_run();
  latency.put("piv/sync_offset_uncertainty_s", Scalar{1e-4, "s"});
  run_vortex(latency, &p);
  EXPECT_NEAR(latency.get<Table>("vortex/events_per_cycle").numbers("t_s")[0] - a.numbers("t_s")[0],
              p.error(5e-4, "piv_delay"), 1e-15);
}

}  // namespace
}  // namespace stallscope
