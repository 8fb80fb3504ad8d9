#include "calib/piv/piv_target.hpp"

#include <Eigen/Dense>
#include <chrono>
#include <cmath>
#include <fstream>
#include <opencv2/calib3d.hpp>
#include <opencv2/imgcodecs.hpp>
#include <opencv2/imgproc.hpp>
#include <vector>

#include <fmt/format.h>

#include "pipeline/errors.hpp"

namespace stallscope::calib {

namespace fs = std::filesystem;

Eigen::Vector2d pixel_to_lab(const Eigen::Matrix3d& h, double px, double py) {
  const Eigen::Vector3d q = h * Eigen::Vector3d(px, py, 1.0);
  return q.head<2>() / q[2];
}

PivCalibration calibrate_piv_target(const cv::Mat& gray, const PivTarget& t, const std::string& where) {
  if (gray.empty() || gray.type() != CV_8U) throw std::logic_error("calibrate_piv_target needs an 8-bit grey image");
  if (t.columns < 2 || t.rows < 2 || !(t.spacing_m > 0))
    throw InputError(where, "a target needs at least 2 x 2 points and a spacing > 0");
  const cv::Size size(t.columns, t.rows);
  std::vector<cv::Point2f> found;
  bool ok = false;
  if (t.pattern == "chessboard") {
    ok = cv::findChessboardCorners(gray, size, found, cv::CALIB_CB_ADAPTIVE_THRESH | cv::CALIB_CB_NORMALIZE_IMAGE);
    if (ok)
      cv::cornerSubPix(gray, found, cv::Size(5, 5), cv::Size(-1, -1),
                       cv::TermCriteria(cv::TermCriteria::EPS + cv::TermCriteria::COUNT, 50, 1e-3));
  } else if (t.pattern == "circles") {
    ok = cv::findCirclesGrid(gray, size, found, cv::CALIB_CB_SYMMETRIC_GRID);
  } else {
    throw InputError(where, "pattern must be \"chessboard\" or \"circles\", not '" + t.pattern + "'");
  }
  if (!ok || found.size() != static_cast<std::size_t>(t.columns * t.rows))
    throw InputError(where, fmt::format("no {} x {} {} found in the image (points per row x rows; check the target "
                                        "settings, focus and lighting)",
                                        t.columns, t.rows, t.pattern == "chessboard" ? "chessboard of inner corners" : "grid of dots"));
  // The detector may list the points from either end: make row 0 the top
  // row and column 0 the leftmost (the convention in the header).
  const cv::Point2f first = found.front(), last = found.back();
  if (first.x + first.y > last.x + last.y) std::reverse(found.begin(), found.end());
  std::vector<cv::Point2f> lab;
  for (int r = 0; r < t.rows; ++r)
    for (int c = 0; c < t.columns; ++c)
      lab.emplace_back(static_cast<float>(t.origin_x_m + c * t.spacing_m), static_cast<float>(t.origin_y_m - r * t.spacing_m));
  // Direct linear fit in double precision (all points, no outlier rejection:
  // the residual must show a bad point rather than hide it).
  const cv::Mat h = cv::findHomography(found, lab, 0);
  if (h.empty()) throw InputError(where, "the target points do not define a homography (degenerate layout)");
  PivCalibration out;
  for (int i = 0; i < 3; ++i)
    for (int j = 0; j < 3; ++j) out.homography(i, j) = h.at<double>(i, j);
  out.points = static_cast<int>(found.size());
  out.width = gray.cols;
  out.height = gray.rows;
  double sq = 0;
  for (std::size_t k = 0; k < found.size(); ++k) {
    const Eigen::Vector2d p = pixel_to_lab(out.homography, found[k].x, found[k].y);
    sq += std::pow(p.x() - lab[k].x, 2) + std::pow(p.y() - lab[k].y, 2);
  }
  out.residual_m = std::sqrt(sq / static_cast<double>(found.size()));
  // Local scale and handedness from the Jacobian at the image centre.
  const double cx = 0.5 * gray.cols, cy = 0.5 * gray.rows;
  const Eigen::Vector2d p0 = pixel_to_lab(out.homography, cx, cy);
  const Eigen::Vector2d dx = pixel_to_lab(out.homography, cx + 1, cy) - p0;
  const Eigen::Vector2d dy = pixel_to_lab(out.homography, cx, cy + 1) - p0;
  const double det = dx.x() * dy.y() - dx.y() * dy.x();
  out.metres_per_pixel = std::sqrt(std::abs(det));
  out.handedness = det < 0 ? -1.0 : 1.0;
  out.residual_px = out.residual_m / out.metres_per_pixel;
  return out;
}

PivCalibration calibrate_piv_target_image(const fs::path& image, const PivTarget& t) {
  std::error_code ec;
  if (!fs::is_regular_file(image, ec)) throw InputError(image.string(), "calibration image not found");
  cv::Mat raw = cv::imread(image.string(), cv::IMREAD_ANYDEPTH | cv::IMREAD_GRAYSCALE);
  if (raw.empty()) throw InputError(image.string(), "not an image OpenCV can read (PNG, TIFF, PGM, BMP, JPEG)");
  cv::Mat gray;
  if (raw.depth() == CV_8U) gray = raw;
  else cv::normalize(raw, gray, 0, 255, cv::NORM_MINMAX, CV_8U);  // 16-bit camera images
  return calibrate_piv_target(gray, t, image.string());
}

void write_piv_calibration(std::ostream& out, const PivCalibration& c, const PivTarget& t, const std::string& id,
                           const fs::path& image) {
  const auto today = std::chrono::floor<std::chrono::days>(std::chrono::system_clock::now());
  const std::chrono::year_month_day ymd{today};
  out << "# PIV spatial calibration: pixel (x right, y down) -> lab metres, lab = H [px, py, 1] (homogeneous)\n";
  out << fmt::format("id = \"{}\"\ndate = {:04d}-{:02d}-{:02d}\nkind = \"piv_target\"\nimage = \"{}\"\n\n", id,
                     static_cast<int>(ymd.year()), static_cast<unsigned>(ymd.month()), static_cast<unsigned>(ymd.day()),
                     image.filename().string());
  out << fmt::format("[target]\npattern = \"{}\"\ncolumns = {}\nrows = {}\nspacing_m = {:.9g}\norigin_x_m = {:.9g}\n"
                     "origin_y_m = {:.9g}\n\n",
                     t.pattern, t.columns, t.rows, t.spacing_m, t.origin_x_m, t.origin_y_m);
  out << "[mapping]\nhomography = [";
  for (int i = 0; i < 3; ++i)
    for (int j = 0; j < 3; ++j) out << fmt::format("{:.17g}{}", c.homography(i, j), i == 2 && j == 2 ? "" : ", ");
  out << fmt::format("]\nresidual_m = {:.6g}\nresidual_px = {:.6g}\nmetres_per_pixel = {:.9g}\nhandedness = {}\n"
                     "points = {}\nimage_width = {}\nimage_height = {}\n",
                     c.residual_m, c.residual_px, c.metres_per_pixel, static_cast<int>(c.handedness), c.points, c.width,
                     c.height);
}

int run_piv_target_command(const PivTargetRequest& r, std::ostream& out) {
  std::error_code ec;
  if (fs::exists(r.output, ec) && !r.force)
    throw InputError(r.output.string(), "calibration file exists (use --force to replace it)");
  const PivCalibration c = calibrate_piv_target_image(r.image, r.target);
  const fs::path partial = r.output.string() + ".partial";
  {
    std::ofstream f(partial, std::ios::binary);
    if (!f) throw InputError(partial.string(), "cannot write the calibration file");
    write_piv_calibration(f, c, r.target, r.id.empty() ? r.image.stem().string() : r.id, r.image);
    if (!f) throw InputError(partial.string(), "cannot write the calibration file (disk full?)");
  }
  fs::rename(partial, r.output);
  out << fmt::format("{}: {} points, {:.6g} m/px, residual {:.3g} px ({:.3g} m) -> {}\n", r.image.string(), c.points,
                     c.metres_per_pixel, c.residual_px, c.residual_m, r.output.string());
  return 0;
}

}  // namespace stallscope::calib
