#include "stages/piv/validation.hpp"

#include <algorithm>
#include <array>
#include <cmath>
#include <limits>
#include <stdexcept>

#include "stages/numerics/statistics.hpp"
#include "stages/piv/masks.hpp"

namespace stallscope::piv {

namespace {

// The median of at most 8 values (a grid point's neighbours) by Batcher's
// odd-even merge network, the free places padded with +inf (19 compare-
// exchanges; Knuth, TAOCP vol. 3, 5.3.4): branch-free, where a selection's
// comparisons on noisy data mispredict half the time. It orders the values as
// sorting does, so the median is the same to the bit.
double median_of_few(std::span<const double> values) {
  std::array<double, 8> a;
  a.fill(std::numeric_limits<double>::infinity());
  std::copy(values.begin(), values.end(), a.begin());
  auto order = [&a](int i, int j) {
    const double lo = std::min(a[i], a[j]), hi = std::max(a[i], a[j]);
    a[i] = lo, a[j] = hi;
  };
  order(0, 1), order(2, 3), order(4, 5), order(6, 7);
  order(0, 2), order(1, 3), order(4, 6), order(5, 7);
  order(1, 2), order(5, 6);
  order(0, 4), order(1, 5), order(2, 6), order(3, 7);
  order(2, 4), order(3, 5);
  order(1, 2), order(3, 4), order(5, 6);
  const std::size_t n = values.size();
  return n % 2 ? a[n / 2] : 0.5 * (a[n / 2 - 1] + a[n / 2]);
}

}  // namespace

double median_in_place(std::span<double> values) {
  if (values.empty()) throw std::logic_error("median of no values");
  if (values.size() <= 8) return median_of_few(values);
  const std::size_t n = values.size(), mid = n / 2;
  if (n % 2) return numerics::order_pair(values, mid).first;
  const auto [lower, upper] = numerics::order_pair(values, mid - 1);
  return 0.5 * (lower + upper);
}

double median_of(std::vector<double> values) { return median_in_place(values); }

double normalised_median_residual(double value, std::span<const double> neighbours, double epsilon) {
  // The 8 neighbours of a grid point fit on the stack: no allocation per point.
  std::array<double, 8> buffer;
  std::vector<double> large(neighbours.size() > buffer.size() ? neighbours.size() : 0);
  const std::span<double> a(large.empty() ? buffer.data() : large.data(), neighbours.size());
  std::copy(neighbours.begin(), neighbours.end(), a.begin());
  const double um = median_in_place(a);
  for (std::size_t k = 0; k < a.size(); ++k) a[k] = std::abs(neighbours[k] - um);
  return std::abs(value - um) / (median_in_place(a) + epsilon);
}

void neighbours_kept(const Grid& grid, const Frame& f, std::size_t j, std::size_t i,
                     const std::vector<std::uint8_t>& keep, std::vector<double>& nu, std::vector<double>& nv) {
  const std::size_t nx = grid.nx(), ny = grid.ny();
  nu.clear();
  nv.clear();
  for (std::size_t jj = j ? j - 1 : 0; jj <= std::min(j + 1, ny - 1); ++jj)
    for (std::size_t ii = i ? i - 1 : 0; ii <= std::min(i + 1, nx - 1); ++ii) {
      const std::size_t q = jj * nx + ii;
      if ((jj != j || ii != i) && keep[q]) nu.push_back(f.u[q]), nv.push_back(f.v[q]);
    }
}

ValidationCounts validate_frame(const Grid& grid, Frame& f, const std::vector<std::uint8_t>& masked,
                                const MedianTestOptions& o, std::vector<std::uint8_t>& replaced) {
  const std::size_t nx = grid.nx(), ny = grid.ny(), n = grid.size();
  if (f.u.size() != n || f.v.size() != n || f.valid.size() != n)
    throw std::logic_error("PIV frame does not match its grid");
  ValidationCounts c;
  std::vector<std::uint8_t> usable(n, 0);
  for (std::size_t p = 0; p < n; ++p) {
    const bool out = !masked.empty() && masked[p];
    if (out) continue;
    ++c.vectors;
    usable[p] = measured(f, p);
    if (!usable[p]) ++c.missing;
  }
  std::vector<double> nu, nv;
  auto gather = [&](std::size_t j, std::size_t i, const std::vector<std::uint8_t>& keep) {
    neighbours_kept(grid, f, j, i, keep, nu, nv);
  };
  // The test runs on the field as measured; replacement comes after, so one
  // outlier does not bias the test of its neighbours' neighbours.
  std::vector<std::uint8_t> outlier(n, 0);
  for (std::size_t j = 0; j < ny; ++j)
    for (std::size_t i = 0; i < nx; ++i) {
      const std::size_t p = j * nx + i;
      if (!usable[p]) continue;
      gather(j, i, usable);
      if (static_cast<int>(nu.size()) < o.min_neighbours) continue;
      if (normalised_median_residual(f.u[p], nu, o.epsilon) > o.threshold ||
          normalised_median_residual(f.v[p], nv, o.epsilon) > o.threshold)
        outlier[p] = 1, ++c.outliers;
    }
  std::vector<std::uint8_t> good(n), patch;
  for (std::size_t p = 0; p < n; ++p) good[p] = usable[p] && !outlier[p];
  if (o.patch_min_cells > 0) {
    std::vector<std::uint8_t> bad(n);
    for (std::size_t p = 0; p < n; ++p) bad[p] = !good[p] && !(!masked.empty() && masked[p]);
    c.patches = mark_patches(grid, bad, o.patch_min_cells, patch);
  }
  replaced.assign(n, 0);
  std::vector<float> u = f.u, v = f.v;
  for (std::size_t j = 0; j < ny; ++j)
    for (std::size_t i = 0; i < nx; ++i) {
      const std::size_t p = j * nx + i;
      const bool out = (!masked.empty() && masked[p]) || (!patch.empty() && patch[p]);
      if (out) {
        u[p] = v[p] = std::nanf("");
        f.valid[p] = 0;
        continue;
      }
      if (good[p]) {
        f.valid[p] = 1;
        continue;
      }
      gather(j, i, good);
      if (static_cast<int>(nu.size()) < o.min_neighbours) {
        u[p] = v[p] = std::nanf("");
        f.valid[p] = 0;
        ++c.unrecoverable;
        continue;
      }
      u[p] = static_cast<float>(median_in_place(nu));
      v[p] = static_cast<float>(median_in_place(nv));
      f.valid[p] = 1;
      replaced[p] = 1;
      ++c.replaced;
    }
  f.u = std::move(u);
  f.v = std::move(v);
  return c;
}

double random_error(const Grid& grid, const Frame& f) {
  const std::size_t nx = grid.nx(), ny = grid.ny();
  auto usable = [&](std::size_t p) { return measured(f, p); };
  std::vector<double> r;
  for (std::size_t j = 1; j + 1 < ny; ++j)
    for (std::size_t i = 1; i + 1 < nx; ++i) {
      const std::size_t p = j * nx + i, e = p + 1, w = p - 1, n = p + nx, s = p - nx;
      if (!(usable(p) && usable(e) && usable(w) && usable(n) && usable(s))) continue;
      r.push_back(std::abs(f.u[p] - 0.25 * (static_cast<double>(f.u[e]) + f.u[w] + f.u[n] + f.u[s])));
      r.push_back(std::abs(f.v[p] - 0.25 * (static_cast<double>(f.v[e]) + f.v[w] + f.v[n] + f.v[s])));
    }
  if (r.size() < 20) return std::nan("");
  // A spurious vector spoils its own residual and its four neighbours': drop
  // residuals beyond 4 sigma of a first estimate, then estimate again.
  const double first = 1.4826 * median_in_place(r);
  std::erase_if(r, [&](double x) { return x > 4 * first; });
  return 1.4826 * median_in_place(r) / std::sqrt(1.25);
}

}  // namespace stallscope::piv
