#pragma once
// PIV spatial calibration from an image of a flat target (a chessboard or a
// symmetric grid of dots) lying in the light sheet: the target's points are
// found (OpenCV findChessboardCorners / findCirclesGrid, corners refined to
// sub-pixel), and a homography maps pixels to lab metres; the rms residual of
// the points says how well a plane projection describes the optics.
//
// Point convention: the target's row 0 is the top row in the image and its
// column 0 the leftmost; the lab x axis runs along the rows (to the right)
// and lab y up the image, from the point (origin_x_m, origin_y_m) at row 0,
// column 0 — so y decreases with the row number.
#include <Eigen/Core>
#include <filesystem>
#include <ostream>
#include <string>

namespace cv {
class Mat;
}

namespace stallscope::calib {

struct PivTarget {
  std::string pattern = "chessboard";  // chessboard (inner corners) | circles (dot centres)
  int columns = 9, rows = 6;           // points per row, rows of points
  double spacing_m = 0.01;             // distance between neighbouring points
  double origin_x_m = 0, origin_y_m = 0;
};

struct PivCalibration {
  Eigen::Matrix3d homography = Eigen::Matrix3d::Identity();  // pixel (x right, y down) -> lab metres
  double residual_m = 0;      // rms distance between mapped and true target points
  double residual_px = 0;     // the same in pixels, through the local scale
  double metres_per_pixel = 0;  // local scale at the image centre (geometric mean of the two axes)
  double handedness = 0;      // sign of the Jacobian determinant: -1 for an image with y down onto lab y up
  int points = 0, width = 0, height = 0;
};

// Lab position of a pixel.
Eigen::Vector2d pixel_to_lab(const Eigen::Matrix3d& homography, double px, double py);

// Fits the calibration; InputError labelled `where` if the target is not found.
PivCalibration calibrate_piv_target(const cv::Mat& gray, const PivTarget& target, const std::string& where);
// Reads an 8- or 16-bit image file (PNG, TIFF, PGM, BMP ...) and calibrates.
PivCalibration calibrate_piv_target_image(const std::filesystem::path& image, const PivTarget& target);

// The calibration file (TOML, our own): id, date, kind = "piv_target", the
// target, the homography (row-major), residuals and scale.
void write_piv_calibration(std::ostream& out, const PivCalibration& c, const PivTarget& target, const std::string& id,
                           const std::filesystem::path& image);

// `stallscope calib piv-target IMAGE -o FILE`: calibrates and writes FILE
// (partial + rename); returns the exit code, prints a one-line summary.
struct PivTargetRequest {
  std::filesystem::path image, output;
  PivTarget target;
  std::string id;  // empty: the image's file stem
  bool force = false;
};
int run_piv_target_command(const PivTargetRequest& request, std::ostream& out);

}  // namespace stallscope::calib
