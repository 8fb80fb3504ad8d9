// PIV spatial calibration: a target image rendered through a known projective
// mapping (anti-aliased, 4 x 4 sub-samples per pixel), found again by OpenCV
// and fitted with a homography.
#include "calib/piv/piv_target.hpp"

#include <gtest/gtest.h>

#include <Eigen/Dense>
#include <cmath>
#include <opencv2/core.hpp>
#include <opencv2/imgcodecs.hpp>
#include <sstream>
#include <toml++/toml.h>

#include "pipeline/errors.hpp"
#include "tests/support/test_support.hpp"

namespace stallscope::calib {
namespace {

// The true pixel -> lab mapping: 25 um/px, a small rotation and a perspective
// tilt (the scale changes by 8 % across the image); pixel (100, 80) is the target's first point.
Eigen::Matrix3d true_homography() {
  Eigen::Matrix3d shift;
  shift << 1, 0, -100, 0, 1, -80, 0, 0, 1;
  Eigen::Matrix3d h;
  h << 2.5e-5, 1e-6, 0, -1e-6, -2.5e-5, 0, 1e-4, 5e-5, 1;
  return h * shift;
}

cv::Mat render(const PivTarget& t, const Eigen::Matrix3d& h) {
  cv::Mat img(480, 640, CV_8U);
  const double s = t.spacing_m;
  for (int py = 0; py < img.rows; ++py)
    for (int px = 0; px < img.cols; ++px) {
      double white = 0;
      for (int a = 0; a < 4; ++a)
        for (int b = 0; b < 4; ++b) {
          const Eigen::Vector2d p = pixel_to_lab(h, px + (a + 0.5) / 4 - 0.5, py + (b + 0.5) / 4 - 0.5);
          const double x = p.x() - t.origin_x_m, y = p.y() - t.origin_y_m;
          bool w = true;
          if (t.pattern == "chessboard") {
            const bool on_board = x >= -s && x <= t.columns * s && y <= s && y >= -t.rows * s;
            if (on_board) w = (static_cast<long>(std::floor(x / s)) + static_cast<long>(std::floor(y / s))) % 2 == 0;
          } else {
            const double cx = std::round(x / s), cy = std::round(-y / s);
            if (cx >= 0 && cx < t.columns && cy >= 0 && cy < t.rows) w = std::hypot(x - cx * s, -y - cy * s) > 0.3 * s;
          }
          white += w ? 1.0 / 16 : 0.0;
        }
      img.at<std::uint8_t>(py, px) = static_cast<std::uint8_t>(std::lround(30 + 190 * white));
    }
  return img;
}

void expect_recovers_the_mapping(const PivTarget& t, double tolerance_px) {
  const Eigen::Matrix3d h = true_homography();
  const PivCalibration c = calibrate_piv_target(render(t, h), t, "target.png");
  EXPECT_EQ(c.points, t.columns * t.rows);
  EXPECT_DOUBLE_EQ(c.handedness, -1.0);  // image y down, lab y up
  EXPECT_NEAR(c.metres_per_pixel, 2.5e-5 / 1.05, 0.03 * 2.5e-5);
  EXPECT_LT(c.residual_px, tolerance_px);
  std::printf("%s: residual %.4f px, scale %.5g m/px\n", t.pattern.c_str(), c.residual_px, c.metres_per_pixel);
  // Anywhere on the target the fitted mapping agrees with the true one.
  for (double px : {100.0, 250.0, 400.0})
    for (double py : {80.0, 180.0, 260.0}) {
      const Eigen::Vector2d a = pixel_to_lab(c.homography, px, py), b = pixel_to_lab(h, px, py);
      EXPECT_LT((a - b).norm() / c.metres_per_pixel, tolerance_px) << px << ", " << py;
    }
}

TEST(PivTarget, ChessboardGivesTheTrueMappingToAFewTenthsOfAPixel) {
  // Sub-pixel corners on an anti-aliased, tilted render: measured 0.096 px rms; 0.15 px allowed
  // (common practice: corner detection is good to about a tenth of a pixel).
  PivTarget t;
  t.columns = 9, t.rows = 6, t.spacing_m = 0.001;
  expect_recovers_the_mapping(t, 0.15);
}

TEST(PivTarget, DotGridGivesTheTrueMappingToAFewTenthsOfAPixel) {
  // Dot centres are blob centroids, biased by perspective: measured 0.010 px; 0.3 px allowed (common practice).
  PivTarget t;
  t.pattern = "circles";
  t.columns = 7, t.rows = 5, t.spacing_m = 0.001;
  expect_recovers_the_mapping(t, 0.3);
}

TEST(PivTarget, SaysSoWhenTheTargetIsNotInTheImage) {
  PivTarget t;
  cv::Mat blank(200, 300, CV_8U, cv::Scalar(128));
  try {
    calibrate_piv_target(blank, t, "blank.png");
    ADD_FAILURE() << "no error";
  } catch (const InputError& e) {
    EXPECT_NE(std::string(e.what()).find("blank.png: no 9 x 6 chessboard"), std::string::npos) << e.what();
  }
  stallscope::testing::ScratchDir dir;
  EXPECT_THROW(calibrate_piv_target_image(dir.write("x.png", "not an image"), t), InputError);
}

TEST(PivTargetCommand, WritesACalibrationFileThatReadsBack) {
  stallscope::testing::ScratchDir dir;
  PivTargetRequest r;
  r.target.columns = 9, r.target.rows = 6, r.target.spacing_m = 0.001;
  r.image = dir / "target.png";
  r.output = dir / "piv_target.toml";
  ASSERT_TRUE(cv::imwrite(r.image.string(), render(r.target, true_homography())));
  std::ostringstream out;
  EXPECT_EQ(run_piv_target_command(r, out), 0);
  const toml::table t = toml::parse_file(r.output.string());
  EXPECT_EQ(t["id"].value_or(std::string()), "target");
  EXPECT_EQ(t["kind"].value_or(std::string()), "piv_target");
  const toml::array* h = t["mapping"]["homography"].as_array();
  ASSERT_NE(h, nullptr);
  ASSERT_EQ(h->size(), 9u);
  EXPECT_THROW(run_piv_target_command(r, out), InputError);  // exists, no --force
}

TEST(CalibCommand, RunsPivTargetFromTheCommandLine) {
  using stallscope::testing::run_stallscope;
  using stallscope::testing::shell_quote;
  stallscope::testing::ScratchDir dir;
  PivTarget t;
  t.spacing_m = 0.001;
  const std::string image = (dir / "sheet.png").string(), out = (dir / "sheet.toml").string();
  ASSERT_TRUE(cv::imwrite(image, render(t, true_homography())));
  const auto ok = run_stallscope("calib piv-target " + shell_quote(image) + " -o " + shell_quote(out) +
                                 " --spacing-m 0.001");
  EXPECT_EQ(ok.exit_code, 0) << ok.err;
  EXPECT_TRUE(std::filesystem::exists(out));
  const auto no_spacing = run_stallscope("calib piv-target " + shell_quote(image) + " -o " +
                                         shell_quote((dir / "other.toml").string()));
  EXPECT_EQ(no_spacing.exit_code, 2);
  EXPECT_NE(no_spacing.err.find("--spacing-m"), std::string::npos) << no_spacing.err;
  EXPECT_FALSE(std::filesystem::exists(dir / "other.toml"));
}

// One `calib` subcommand in the main command line, with help at each level.
TEST(CalibCommand, ListsItsHelpersInTheHelpAndNeedsOne) {
  using stallscope::testing::run_stallscope;
  const auto top = run_stallscope("--help");
  EXPECT_EQ(top.exit_code, 0);
  EXPECT_NE(top.out.find("calib"), std::string::npos) << top.out;
  const auto calib = run_stallscope("calib --help");
  EXPECT_EQ(calib.exit_code, 0);
  EXPECT_NE(calib.out.find("transducer"), std::string::npos) << calib.out;
  EXPECT_NE(calib.out.find("piv-target"), std::string::npos) << calib.out;
  const auto transducer = run_stallscope("calib transducer --help");
  EXPECT_EQ(transducer.exit_code, 0);
  EXPECT_NE(transducer.out.find("--max-residual-pa"), std::string::npos) << transducer.out;
  const auto piv = run_stallscope("calib piv-target --help");
  EXPECT_EQ(piv.exit_code, 0);
  EXPECT_NE(piv.out.find("--spacing-m"), std::string::npos) << piv.out;
  const auto none = run_stallscope("calib");
  EXPECT_EQ(none.exit_code, 2);
  const auto unknown = run_stallscope("calib wobble");
  EXPECT_EQ(unknown.exit_code, 2);
}

}  // namespace
}  // namespace stallscope::calib
