#pragma once
// Small PIV fields for the tests: Lamb-Oseen vortices sampled on a grid.
#include <cmath>
#include <random>
#include <vector>

#include "stages/piv/frame_source.hpp"
#include "stages/theory/lamb_oseen.hpp"

namespace stallscope::piv::testing {

inline Grid uniform_grid(double x0, double x1, double y0, double y1, double h) {
  Grid g;
  for (double x = x0; x <= x1 + 1e-9 * h; x += h) g.x_m.push_back(x);
  for (double y = y0; y <= y1 + 1e-9 * h; y += h) g.y_m.push_back(y);
  return g;
}

// Vortices on a uniform stream (u_inf, 0), optional Gaussian noise of std `noise` per component.
inline Frame vortex_frame(const Grid& g, const std::vector<theory::LambOseenVortex>& vortices, double u_inf = 0.0,
                          double noise = 0.0, unsigned seed = 1) {
  Frame f;
  f.u.resize(g.size());
  f.v.resize(g.size());
  f.valid.assign(g.size(), 1);
  std::mt19937 rng(seed);
  std::normal_distribution<double> n(0.0, 1.0);
  for (std::size_t j = 0; j < g.ny(); ++j)
    for (std::size_t i = 0; i < g.nx(); ++i) {
      double u = u_inf, v = 0;
      for (const auto& vx : vortices) {
        const Eigen::Vector2d w = theory::velocity_at(vx, g.x_m[i], g.y_m[j]);
        u += w[0], v += w[1];
      }
      if (noise > 0) u += noise * n(rng), v += noise * n(rng);
      f.u[j * g.nx() + i] = static_cast<float>(u);
      f.v[j * g.nx() + i] = static_cast<float>(v);
    }
  return f;
}

}  // namespace stallscope::piv::testing
