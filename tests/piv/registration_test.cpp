// The model's place in the PIV frame from the data: the invalid vectors of
// frames at several angles give the pitch axis and the angle offset.
#include "stages/piv/registration.hpp"

#include <gtest/gtest.h>

#include <filesystem>

#include "pipeline/archive.hpp"
#include "tests/piv/piv_fields.hpp"
#include "tests/support/test_support.hpp"

namespace stallscope::piv {
namespace {

std::vector<RegistrationFrame> frames_of(const Grid& g, const AirfoilPlacement& truth, const theory::Naca4Section& s,
                                         std::uint32_t holes_seed = 0) {
  std::vector<RegistrationFrame> frames;
  for (double alpha = 0; alpha <= 20; alpha += 4) {
    RegistrationFrame f{alpha, airfoil_mask(g, truth, s, alpha, 0.0)};
    // Dropped-out vectors in the flow, one in 40, as a real camera has.
    if (holes_seed)
      for (std::size_t p = (holes_seed + static_cast<std::size_t>(alpha)) % 40; p < f.invalid.size(); p += 40)
        f.invalid[p] = 1;
    frames.push_back(std::move(f));
  }
  return frames;
}

TEST(Registration, FindsThePitchAxisAndAngleOffsetToAFractionOfACell) {
  const Grid g = testing::uniform_grid(-0.06, 0.2, -0.06, 0.08, 0.0025);
  const theory::Naca4Section s = theory::parse_naca4("0012");
  const AirfoilPlacement truth{0.15, 0.25, 0.012, -0.006, 1.5};
  for (const std::uint32_t holes : {0u, 7u}) {
    AirfoilPlacement guess = truth;
    guess.pivot_x_m += 0.005, guess.pivot_y_m -= 0.004, guess.chord_angle_offset_deg -= 1.0;
    const Registration r = register_from_data(g, frames_of(g, truth, s, holes), s, guess, 0.02, 3.0);
    // A quarter of the 2.5 mm cell and 0.2 deg (1/10 of a cell at the trailing edge).
    EXPECT_NEAR(r.placement.pivot_x_m, truth.pivot_x_m, 0.6e-3) << holes;
    EXPECT_NEAR(r.placement.pivot_y_m, truth.pivot_y_m, 0.6e-3) << holes;
    EXPECT_NEAR(r.placement.chord_angle_offset_deg, truth.chord_angle_offset_deg, 0.2) << holes;
    EXPECT_LT(r.mismatch, holes ? 0.5 : 0.05) << holes;
    EXPECT_EQ(r.frames, 6u);
  }
}

TEST(Registration, TheMismatchOfAPlaceIsZeroAtTheTruthAndGrowsAway) {
  const Grid g = testing::uniform_grid(-0.06, 0.2, -0.06, 0.08, 0.0025);
  const theory::Naca4Section s = theory::parse_naca4("0012");
  const AirfoilPlacement truth{0.15, 0.25, 0.012, -0.006, 1.5};
  const std::vector<RegistrationFrame> frames = frames_of(g, truth, s);
  EXPECT_EQ(registration_mismatch(g, frames, s, truth), 0.0);
  AirfoilPlacement off = truth;
  double previous = 0.0;
  for (int cells = 1; cells <= 4; ++cells) {
    off.pivot_y_m = truth.pivot_y_m + cells * 0.0025;
    const double e = registration_mismatch(g, frames, s, off);
    EXPECT_GT(e, previous) << cells;
    previous = e;
  }
  // Nothing marked at all: no overlap to judge by.
  EXPECT_EQ(registration_mismatch(g, {}, s, truth), 1.0);
}

TEST(Registration, StaysWithinItsSearchRadius) {
  const Grid g = testing::uniform_grid(-0.06, 0.2, -0.06, 0.08, 0.0025);
  const theory::Naca4Section s = theory::parse_naca4("0012");
  const AirfoilPlacement truth{0.15, 0.25, 0.03, 0.0, 0.0};
  AirfoilPlacement guess = truth;
  guess.pivot_x_m = 0.0;
  const Registration r = register_from_data(g, frames_of(g, truth, s), s, guess, 0.01, 1.0);
  EXPECT_LE(std::hypot(r.placement.pivot_x_m, r.placement.pivot_y_m), 0.01 + 1e-12);
  EXPECT_GT(r.mismatch, 0.1);  // the truth lies outside: the fit stays poor, and says so
}

// The demo run registered from its own stack, from a guess 6 mm and 1 deg off
// (the grid cell is 4.7 mm): within a tenth of a cell of where synth put the model.
TEST(Registration, TheDemoStackGivesThePlaceSynthPutTheModel) {
  stallscope::testing::ScratchDir dir;
  const auto run = stallscope::testing::kSourceDir / "sample_data/kestrel_ridge/run1";
  std::string config = stallscope::testing::read_text(run / "reduce.toml");
  const std::string from = "pivot_x_m = 0\npivot_y_m = 0\n";
  ASSERT_NE(config.find(from), std::string::npos);
  config.replace(config.find(from), from.size(),
                 "pivot_x_m = 0.006\npivot_y_m = -0.005\nchord_angle_offset_deg = 1.0\nregistration = \"data\"\n");
  std::filesystem::copy(run, dir / "run1");
  dir.write("run1/registered.toml", config.substr(0, config.find("\n[vortex]")));
  const auto r = stallscope::testing::run_stallscope("reduce -q --no-report " +
                                                     stallscope::testing::shell_quote((dir / "run1/registered.toml").string()) +
                                                     " -o " + stallscope::testing::shell_quote((dir / "out").string()));
  ASSERT_EQ(r.exit_code, 0) << r.err;
  const RunStore a = read_archive(dir / "out" / "KR12-A-01.h5");
  const Table& reg = a.get<Table>("piv/registration");
  EXPECT_EQ(reg.texts("method")[0], "data");
  EXPECT_NEAR(reg.numbers("pivot_x_m")[0], 0.0, 0.47e-3);
  EXPECT_NEAR(reg.numbers("pivot_y_m")[0], 0.0, 0.47e-3);
  EXPECT_NEAR(reg.numbers("chord_angle_offset_deg")[0], 0.0, 0.2);
}

}  // namespace
}  // namespace stallscope::piv
