// Phase-locked PIV: a few snapshots per cycle at set phases; the [vortex]
// stage averages the LE vortex of each snapshot per phase bin.
#include <gtest/gtest.h>

#include <cmath>

#include "pipeline/config.hpp"
#include "pipeline/progress.hpp"
#include "pipeline/provenance.hpp"
#include "stages/piv/vortex_stage.hpp"

namespace stallscope {
namespace {

TEST(VortexStagePhaseLocked, AveragesTheLeadingEdgeVortexPerPhase) {
  RunStore store;
  const int samples = 5001;
  Eigen::VectorXd t(samples), phase(samples);
  for (int i = 0; i < samples; ++i) t[i] = i * 1e-3, phase[i] = std::fmod(360.0 * t[i], 360.0);
  std::vector<std::int64_t> frame, dframe, sign;
  std::vector<double> ft, dt, x, y, circ, peak, zeros;
  std::vector<std::string> status;
  const double phases[] = {90, 180, 270};
  const double spread[] = {-0.01, 0.01, -0.01, 0.01};  // cycle-to-cycle scatter: std 0.011547 over 4
  int f = 0;
  for (int cycle = 0; cycle < 4; ++cycle)
    for (double ph : phases) {
      const double time = cycle + ph / 360.0 + 0.0002;
      frame.push_back(f), ft.push_back(time), status.push_back(f == 5 ? "flagged" : "ok");
      auto add = [&](int s, double xx, double yy, double g) {
        dframe.push_back(f), dt.push_back(time), sign.push_back(s), x.push_back(xx), y.push_back(yy);
        circ.push_back(g), peak.push_back(5.0), zeros.push_back(0.0);
      };
      add(-1, 0.1 + ph / 1000 + spread[cycle], 0.1, -1.0);  // the LE vortex
      add(-1, 0.8, 0.05, -0.2);                            // a weaker one downstream
      add(+1, 0.9, -0.05, 2.0);                            // the trailing-edge vortex
      ++f;
    }
  Table frames;
  frames.add({"frame", "1", frame}).add({"t_s", "s", ft}).add({"status", "", status});
  Table det;
  det.add({"frame", "1", dframe}).add({"t_s", "s", dt}).add({"sign", "1", sign}).add({"x_over_c", "1", x})
      .add({"y_over_c", "1", y}).add({"circulation", "1", circ}).add({"peak_swirl", "1", peak});
  store.put("piv/frames", frames);
  store.put("piv/detections", det);
  store.put("signals/time_s", Series{t, "s"});
  store.put("motion/phase_deg", Series{phase, "deg"});
  ConfigFile config = ConfigFile::parse("[vortex]\nmode = \"phase_locked\"\nphase_bin_deg = 10\n", "reduce.toml");
  ConfigSection s(config, "vortex");
  VortexStage stage;
  stage.configure(s);
  s.reject_unknown_keys();
  EXPECT_EQ(stage.outputs(), std::vector<std::string>{"vortex/phase_locked"});
  Provenance provenance = Provenance::start("test");
  Progress progress(Progress::Mode::kQuiet);
  RunContext context(store, provenance, progress, 1);
  stage.run(context);
  const Table& out = store.get<Table>("vortex/phase_locked");
  ASSERT_EQ(out.rows(), 3u);
  EXPECT_DOUBLE_EQ(out.numbers("phase_deg")[0], 95.0);  // the 90-100 deg bin
  EXPECT_EQ(out.integers("snapshots")[1], 4);
  EXPECT_EQ(out.integers("snapshots")[2], 3);           // frame 5 (cycle 1, 270 deg) is flagged
  EXPECT_EQ(out.integers("snapshots")[0], 4);
  EXPECT_NEAR(out.numbers("x_over_c")[0], 0.19, 1e-12);
  EXPECT_NEAR(out.numbers("x_over_c_std")[0], 0.0115470, 1e-6);
  EXPECT_NEAR(out.numbers("circulation")[2], -1.0, 1e-12);
}

}  // namespace
}  // namespace stallscope
