#include "stages/piv/detection.hpp"

#include <algorithm>
#include <cmath>
#include <cstring>
#include <limits>
#include <numeric>
#include <opencv2/imgproc.hpp>

#include "stages/numerics/cpu_clones.hpp"
#include "stages/numerics/statistics.hpp"

namespace stallscope::piv {

double noise_swirl(const SwirlField& field) {
  const numerics::MedianSpread s = numerics::median_and_mad(field.vorticity);
  // 1.4826 MAD is the standard deviation of Gaussian noise.
  return s.n ? 0.5 * 1.4826 * s.mad : 0.0;
}

int label_regions(const std::vector<std::uint8_t>& mask, std::size_t ny, std::size_t nx, std::vector<int>& labels,
                  std::size_t first_row, std::size_t last_row) {
  if (mask.size() != ny * nx) throw std::logic_error("mask does not match its grid");
  labels.assign(ny * nx, 0);
  last_row = std::min(last_row, ny ? ny - 1 : 0);
  if (mask.empty() || first_row > last_row) return 0;
  const cv::Range rows(static_cast<int>(first_row), static_cast<int>(last_row) + 1);
  cv::Mat in(static_cast<int>(ny), static_cast<int>(nx), CV_8U, const_cast<std::uint8_t*>(mask.data()));
  cv::Mat out(static_cast<int>(ny), static_cast<int>(nx), CV_32S, labels.data());
  cv::Mat out_rows = out.rowRange(rows);  // labelled in place
  return cv::connectedComponents(in.rowRange(rows), out_rows, 8, CV_32S) - 1;  // without stats: only the labels
}

void label_regions_in_caller_threads() { cv::setNumThreads(1); }

namespace {

// Half the distance between the neighbours on each side (half a spacing at an edge).
std::vector<double> axis_widths(const std::vector<double>& s) {
  std::vector<double> w(s.size());
  for (std::size_t k = 0; k < s.size(); ++k) w[k] = 0.5 * std::abs(s[std::min(k + 1, s.size() - 1)] - s[k > 0 ? k - 1 : 0]);
  return w;
}

}  // namespace

std::vector<double> cell_areas(const Grid& g) {
  const auto wx = axis_widths(g.x_m), wy = axis_widths(g.y_m);
  std::vector<double> a(g.size());
  for (std::size_t j = 0; j < g.ny(); ++j)
    for (std::size_t i = 0; i < g.nx(); ++i) a[j * g.nx() + i] = wx[i] * wy[j];
  return a;
}

namespace {

// Cells whose swirl is above the threshold, by the sign of their vorticity
// (NaN compares false; an infinite swirl is no measurement). Built for AVX2 too.
STALLSCOPE_AVX2_CLONES
void mark_strong(const double* vorticity, const double* swirl, std::size_t n, double threshold,
                 std::uint8_t* positive, std::uint8_t* negative) {
  constexpr double kLargest = std::numeric_limits<double>::max();
  for (std::size_t p = 0; p < n; ++p) {
    const bool over = (swirl[p] > threshold) & (swirl[p] <= kLargest);
    positive[p] = over & (vorticity[p] > 0);
    negative[p] = over & (vorticity[p] < 0);
  }
}

// The cells marked in either mask, in order.
std::vector<std::size_t> marked_cells(const std::vector<std::uint8_t>& a, const std::vector<std::uint8_t>& b) {
  std::vector<std::size_t> out;
  const std::size_t n = a.size();
  for (std::size_t p = 0; p < n; ++p) {
    if (p + 8 <= n) {  // most of a field is below the threshold: eight cells a look
      std::uint64_t wa, wb;
      std::memcpy(&wa, a.data() + p, 8);
      std::memcpy(&wb, b.data() + p, 8);
      if ((wa | wb) == 0) {
        p += 7;
        continue;
      }
    }
    if (a[p] | b[p]) out.push_back(p);
  }
  return out;
}

struct UnionFind {
  std::vector<int> parent;
  explicit UnionFind(int n) : parent(static_cast<std::size_t>(n)) { std::iota(parent.begin(), parent.end(), 0); }
  int find(int a) {
    while (parent[static_cast<std::size_t>(a)] != a) a = parent[static_cast<std::size_t>(a)] = parent[static_cast<std::size_t>(parent[static_cast<std::size_t>(a)])];
    return a;
  }
  void join(int a, int b) {
    a = find(a), b = find(b);
    if (a != b) parent[static_cast<std::size_t>(std::max(a, b))] = std::min(a, b);
  }
};

}  // namespace

std::vector<Detection> detect_vortices(const Grid& grid, const SwirlField& field,
                                       const std::vector<std::uint8_t>& replaced, const DetectionOptions& o,
                                       double* threshold_out) {
  const std::size_t nx = grid.nx(), ny = grid.ny(), n = grid.size();
  const double threshold = std::max(o.min_threshold, o.noise_factor * noise_swirl(field));
  if (threshold_out) *threshold_out = threshold;
  // Cell areas as cell_areas gives them, from the widths along each axis.
  const std::vector<double> width_x = axis_widths(grid.x_m), width_y = axis_widths(grid.y_m);
  auto area = [&](std::size_t p) { return width_x[p % nx] * width_y[p / nx]; };
  auto above = [&](std::size_t p, double level, int sign) {
    const double w = field.vorticity[p], s = field.swirl[p];
    return std::isfinite(s) && s > level && (sign > 0 ? w > 0 : w < 0);
  };
  // Both signs' masks in one pass, and the cells above the threshold: the few
  // a region can hold.
  std::vector<std::uint8_t> positive(n), negative(n);
  mark_strong(field.vorticity.data(), field.swirl.data(), n, threshold, positive.data(), negative.data());
  const std::vector<std::size_t> strong = marked_cells(positive, negative);
  const std::size_t strong_count = strong.size();
  std::vector<Detection> out;
  std::vector<std::uint8_t> in(n, 0);  // cells of the region grown; cleared after each
  for (int sign : {+1, -1}) {
    const std::vector<std::uint8_t>& mask = sign > 0 ? positive : negative;
    // Only the rows that hold this sign's strong cells need labelling.
    std::size_t first_row = ny, last_row = 0;
    for (std::size_t k = 0; k < strong_count; ++k)
      if (mask[strong[k]]) first_row = std::min(first_row, strong[k] / nx), last_row = strong[k] / nx;
    std::vector<int> labels;
    const int count = label_regions(mask, ny, nx, labels, first_row, last_row);
    if (count == 0) continue;
    // Cells and bounding boxes of each region, then join regions that lie
    // within the clustering gap of each other.
    std::vector<std::vector<std::size_t>> cells(static_cast<std::size_t>(count) + 1);
    struct Box {
      long j0 = std::numeric_limits<long>::max(), j1 = -1, i0 = std::numeric_limits<long>::max(), i1 = -1;
    };
    std::vector<Box> boxes(static_cast<std::size_t>(count) + 1);
    for (std::size_t k = 0; k < strong_count; ++k) {
      const std::size_t p = strong[k];
      if (const int a = labels[p]) {
        cells[static_cast<std::size_t>(a)].push_back(p);
        Box& b = boxes[static_cast<std::size_t>(a)];
        const long j = static_cast<long>(p / nx), i = static_cast<long>(p % nx);
        b.j0 = std::min(b.j0, j), b.j1 = std::max(b.j1, j), b.i0 = std::min(b.i0, i), b.i1 = std::max(b.i1, i);
      }
    }
    UnionFind uf(count + 1);
    const long reach = o.cluster_gap_cells + 1;  // Chebyshev distance between cells that merge
    // A region with no later one whose box comes within reach of its own has
    // nothing to look for.
    auto has_neighbour = [&](int a) {
      const Box& x = boxes[static_cast<std::size_t>(a)];
      for (int b = a + 1; b <= count; ++b) {
        const Box& y = boxes[static_cast<std::size_t>(b)];
        if (y.j0 <= x.j1 + reach && x.j0 <= y.j1 + reach && y.i0 <= x.i1 + reach && x.i0 <= y.i1 + reach) return true;
      }
      return false;
    };
    // Only a region's edge needs looking from: from a cell whose 8 neighbours
    // are all its own, a step toward any cell in reach is a cell of the region
    // nearer to it, and so on until an edge cell, still in reach.
    auto interior = [&](std::size_t p, int a) {
      const std::size_t pj = p / nx, pi = p % nx;
      if (pj == 0 || pi == 0 || pj + 1 == ny || pi + 1 == nx) return false;
      for (std::size_t q : {p - nx - 1, p - nx, p - nx + 1, p - 1, p + 1, p + nx - 1, p + nx, p + nx + 1})
        if (labels[q] != a) return false;
      return true;
    };
    for (int a = 1; a <= count; ++a)
      for (const std::size_t p : has_neighbour(a) ? cells[static_cast<std::size_t>(a)] : std::vector<std::size_t>{}) {
        if (interior(p, a)) continue;
        const long pj = static_cast<long>(p / nx), pi = static_cast<long>(p % nx);
        for (long dj = -reach; dj <= reach; ++dj)
          for (long di = -reach; di <= reach; ++di) {
            const long qj = pj + dj, qi = pi + di;
            if (qj < 0 || qi < 0 || qj >= static_cast<long>(ny) || qi >= static_cast<long>(nx)) continue;
            const int b = labels[static_cast<std::size_t>(qj) * nx + static_cast<std::size_t>(qi)];
            if (b > a) uf.join(a, b);
          }
      }
    std::vector<int> root_rank(static_cast<std::size_t>(count) + 1, -1);
    std::vector<std::vector<std::size_t>> clusters;
    std::vector<std::size_t> members;
    for (int a = 1; a <= count; ++a) {
      const int r = uf.find(a);
      if (root_rank[static_cast<std::size_t>(r)] < 0) {
        root_rank[static_cast<std::size_t>(r)] = static_cast<int>(clusters.size());
        clusters.emplace_back();
        members.push_back(0);
      }
      const auto k = static_cast<std::size_t>(root_rank[static_cast<std::size_t>(r)]);
      auto& c = clusters[k];
      c.insert(c.end(), cells[static_cast<std::size_t>(a)].begin(), cells[static_cast<std::size_t>(a)].end());
      ++members[k];
    }
    for (std::size_t k = 0; k < clusters.size(); ++k) {
      auto& c = clusters[k];
      if (static_cast<int>(c.size()) < o.min_cells) continue;
      std::sort(c.begin(), c.end());
      Detection d;
      d.sign = sign;
      d.cells = c.size();
      d.regions = members[k];
      double wsum = 0, wx = 0, wy = 0;
      for (const std::size_t p : c) {
        in[p] = 1;
        const double s = field.swirl[p];
        const double x = grid.x_m[p % nx], y = grid.y_m[p / nx];
        wsum += s, wx += s * x, wy += s * y;
        d.circulation += field.vorticity[p] * area(p);
        if (s > o.strict_factor * threshold) d.circulation_strict += field.vorticity[p] * area(p);
        d.peak_swirl = std::max(d.peak_swirl, s);
        d.area_m2 += area(p);
        if (!replaced.empty() && replaced[p]) ++d.replaced_cells;
      }
      d.x_m = wx / wsum;
      d.y_m = wy / wsum;
      auto nearest = [](const std::vector<double>& axis, double v) {
        std::size_t best = 0;
        for (std::size_t k2 = 1; k2 < axis.size(); ++k2)
          if (std::abs(axis[k2] - v) < std::abs(axis[best] - v)) best = k2;
        return best;
      };
      d.centre_i = nearest(grid.x_m, d.x_m);
      d.centre_j = nearest(grid.y_m, d.y_m);
      // The looser boundary: grow the region through same-sign cells above it.
      std::vector<std::size_t> stack(c.begin(), c.end()), grown;
      d.circulation_loose = d.circulation;
      const double loose = o.loose_factor * threshold;
      while (!stack.empty()) {
        const std::size_t p = stack.back();
        stack.pop_back();
        const std::size_t pj = p / nx, pi = p % nx;
        for (std::size_t qj = pj ? pj - 1 : 0; qj <= std::min(pj + 1, ny - 1); ++qj)
          for (std::size_t qi = pi ? pi - 1 : 0; qi <= std::min(pi + 1, nx - 1); ++qi) {
            const std::size_t q = qj * nx + qi;
            if (in[q] || !above(q, loose, sign)) continue;
            in[q] = 1;
            d.circulation_loose += field.vorticity[q] * area(q);
            stack.push_back(q);
            grown.push_back(q);
          }
      }
      for (const std::size_t p : c) in[p] = 0;
      for (const std::size_t p : grown) in[p] = 0;
      out.push_back(d);
    }
  }
  return out;
}

}  // namespace stallscope::piv
