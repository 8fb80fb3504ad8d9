#include "stages/piv/masks.hpp"

#include <algorithm>
#include <cmath>
#include <opencv2/imgproc.hpp>
#include <sstream>
#include <stdexcept>

#include <fmt/format.h>

#include "stages/piv/detection.hpp"
#include "stages/piv/validation.hpp"

namespace stallscope::piv {

std::size_t mark_regions(const Grid& grid, const AirfoilPlacement& placement, double alpha_deg, std::size_t frame,
                         const std::vector<MaskRegion>& regions, std::vector<std::uint8_t>& mask) {
  if (mask.empty()) mask.assign(grid.size(), 0);
  std::size_t marked = 0;
  for (const MaskRegion& r : regions) {
    if (frame < r.first_frame || frame > r.last_frame) continue;
    // OpenCV's polygon test takes single precision: ample for a mask drawn to a fraction of a vector spacing.
    std::vector<cv::Point2f> polygon;
    for (std::size_t k = 0; k < r.x.size(); ++k) polygon.emplace_back(static_cast<float>(r.x[k]), static_cast<float>(r.y[k]));
    // Bounding box first: most points of a field lie outside a small region.
    const auto [x0, x1] = std::minmax_element(r.x.begin(), r.x.end());
    const auto [y0, y1] = std::minmax_element(r.y.begin(), r.y.end());
    for (std::size_t j = 0; j < grid.ny(); ++j)
      for (std::size_t i = 0; i < grid.nx(); ++i) {
        std::uint8_t& m = mask[j * grid.nx() + i];
        if (m == 1) continue;  // the wall band (2) is a user's to mask as well
        double x = grid.x_m[i], y = grid.y_m[j];
        if (r.moves_with_model) {
          const AirfoilPoint a = to_airfoil_frame(placement, alpha_deg, x, y);
          x = a.x_over_c, y = a.y_over_c;
        }
        if (x < *x0 || x > *x1 || y < *y0 || y > *y1) continue;
        if (cv::pointPolygonTest(polygon, cv::Point2f(static_cast<float>(x), static_cast<float>(y)), false) >= 0)
          m = 1, ++marked;
      }
  }
  return marked;
}

std::size_t mark_reflections(const Grid& grid, const Frame& f, double speed_m_s, std::vector<std::uint8_t>& mask) {
  const std::size_t nx = grid.nx(), ny = grid.ny();
  std::vector<std::uint8_t> flow(mask.size());  // neighbours to compare with: measured, outside the section
  for (std::size_t p = 0; p < mask.size(); ++p) flow[p] = mask[p] != 1 && measured(f, p);
  std::vector<std::size_t> glare;
  std::vector<double> nu, nv;
  for (std::size_t j = 0; j < ny; ++j)
    for (std::size_t i = 0; i < nx; ++i) {
      const std::size_t p = j * nx + i;
      if (mask[p] != 2 || !flow[p] || std::hypot(f.u[p], f.v[p]) >= speed_m_s) continue;
      neighbours_kept(grid, f, j, i, flow, nu, nv);
      if (nu.empty()) continue;
      if (std::hypot(f.u[p] - median_in_place(nu), f.v[p] - median_in_place(nv)) > 2 * speed_m_s) glare.push_back(p);
    }
  for (std::uint8_t& m : mask)
    if (m == 2) m = 0;
  for (std::size_t p : glare) mask[p] = 1;
  return glare.size();
}

std::size_t mark_patches(const Grid& grid, const std::vector<std::uint8_t>& bad, int min_cells,
                         std::vector<std::uint8_t>& patch) {
  patch.assign(grid.size(), 0);
  if (bad.size() != grid.size()) throw std::logic_error("bad-vector map does not match its grid");
  if (bad.empty()) return 0;
  // The opening keeps only what holds 3 x 3 blocks of bad vectors: noisy data
  // scatters outliers densely enough to touch, but not in solid blocks.
  std::vector<std::uint8_t> solid(bad.size());
  const cv::Mat in(static_cast<int>(grid.ny()), static_cast<int>(grid.nx()), CV_8U, const_cast<std::uint8_t*>(bad.data()));
  cv::Mat out(static_cast<int>(grid.ny()), static_cast<int>(grid.nx()), CV_8U, solid.data());
  cv::morphologyEx(in, out, cv::MORPH_OPEN, cv::getStructuringElement(cv::MORPH_RECT, {3, 3}));
  std::vector<int> labels;
  const int n = label_regions(solid, grid.ny(), grid.nx(), labels);
  if (n == 0) return 0;
  std::vector<int> area(static_cast<std::size_t>(n) + 1, 0);
  for (int l : labels) ++area[static_cast<std::size_t>(l)];
  std::size_t marked = 0;
  for (std::size_t p = 0; p < labels.size(); ++p)
    if (labels[p] > 0 && area[static_cast<std::size_t>(labels[p])] >= min_cells) patch[p] = 1, ++marked;
  return marked;
}

std::string regions_text(const std::vector<MaskRegion>& regions) {
  std::string out;
  for (const MaskRegion& r : regions) {
    out += fmt::format("{} {} {} {}", r.name, r.moves_with_model ? "airfoil" : "lab", r.first_frame,
                       r.last_frame == std::numeric_limits<std::size_t>::max() ? std::string("end")
                                                                                 : std::to_string(r.last_frame));
    for (std::size_t k = 0; k < r.x.size(); ++k) out += fmt::format(" {:.17g},{:.17g}", r.x[k], r.y[k]);
    out += '\n';
  }
  return out;
}

std::vector<MaskRegion> regions_from_text(const std::string& text) {
  std::vector<MaskRegion> out;
  std::istringstream lines(text);
  std::string line;
  while (std::getline(lines, line)) {
    std::istringstream in(line);
    MaskRegion r;
    std::string frame, last;
    if (!(in >> r.name >> frame >> r.first_frame >> last)) throw std::logic_error("mask region text: " + line);
    r.moves_with_model = frame == "airfoil";
    if (last != "end") r.last_frame = std::stoull(last);
    std::string vertex;
    while (in >> vertex) {
      const auto comma = vertex.find(',');
      r.x.push_back(std::stod(vertex.substr(0, comma)));
      r.y.push_back(std::stod(vertex.substr(comma + 1)));
    }
    out.push_back(std::move(r));
  }
  return out;
}

}  // namespace stallscope::piv
