// Tracking: a convecting Lamb-Oseen vortex of known speed through swirl,
// detection and tracking, births and deaths, and the field-of-view reason.
#include "stages/piv/tracking.hpp"

#include <gtest/gtest.h>

#include "stages/piv/airfoil_frame.hpp"
#include "stages/piv/detection.hpp"
#include "tests/piv/piv_fields.hpp"

namespace stallscope::piv {
namespace {

Observation at(std::int64_t frame, int sign, double x, double y) {
  Observation o;
  o.frame = frame;
  o.t_s = 0.01 * static_cast<double>(frame);
  o.sign = sign;
  o.x_over_c = o.x_m = x;
  o.y_over_c = o.y_m = y;
  o.radius_m = 0.02;
  return o;
}

std::vector<std::int64_t> frames(std::int64_t n) {
  std::vector<std::int64_t> f(static_cast<std::size_t>(n));
  for (std::int64_t k = 0; k < n; ++k) f[static_cast<std::size_t>(k)] = k;
  return f;
}

TEST(TrackVortices, FollowsBirthsAndDeathsAndNamesWhyATrackEnded) {
  std::vector<Observation> obs;
  for (std::int64_t k = 0; k < 14; ++k) {
    if (k < 10) obs.push_back(at(k, -1, 0.2 + 0.09 * static_cast<double>(k), 0.1));  // convects out through x = 1
    if (k < 4) obs.push_back(at(k, +1, 0.5, -0.1));                       // dies in the field
    if (k >= 6) obs.push_back(at(k, -1, 0.1, 0.3));  // born later, same sign, far away; alive at the end
  }
  std::stable_sort(obs.begin(), obs.end(), [](const Observation& a, const Observation& b) { return a.frame < b.frame; });
  const FieldOfView view{0, 1.0, -0.5, 0.5};
  auto tracks = track_vortices(obs, frames(14), view, TrackingOptions{0.1, 2});
  ASSERT_EQ(tracks.size(), 3u);
  EXPECT_EQ(tracks[0].observations.size(), 10u);
  EXPECT_EQ(tracks[0].end_reason, "left the field of view");
  EXPECT_EQ(tracks[1].sign, +1);
  EXPECT_EQ(tracks[1].end_reason, "lost");
  EXPECT_EQ(tracks[2].observations.size(), 8u);
  EXPECT_EQ(tracks[2].end_reason, "end of record");
}

TEST(TrackVortices, BridgesAGapOfMissedFrames) {
  std::vector<Observation> obs = {at(0, 1, 0.1, 0), at(1, 1, 0.12, 0), at(4, 1, 0.18, 0), at(5, 1, 0.2, 0)};
  EXPECT_EQ(track_vortices(obs, frames(6), {-1, 1, -1, 1}, TrackingOptions{0.05, 2}).size(), 1u);
  EXPECT_EQ(track_vortices(obs, frames(6), {-1, 1, -1, 1}, TrackingOptions{0.05, 1}).size(), 2u);
}

TEST(FitConvectionSpeed, IsTheSlopeWithItsStandardError) {
  const SpeedFit exact = fit_convection_speed({0, 1, 2, 3}, {0.2, 0.6, 1.0, 1.4});
  ASSERT_TRUE(exact.ok);
  EXPECT_NEAR(exact.speed, 0.4, 1e-12);
  EXPECT_NEAR(exact.uncertainty, 0.0, 1e-12);
  // Residuals +-e alternate: SSR = 4 e^2, Stt = 5: se = sqrt(4 e^2 / 2 / 5).
  const SpeedFit noisy = fit_convection_speed({0, 1, 2, 3}, {0.21, 0.59, 1.01, 1.39});
  EXPECT_NEAR(noisy.uncertainty, std::sqrt(4 * 1e-4 / 2 / 5), 2e-3);
  EXPECT_FALSE(fit_convection_speed({0, 1}, {0, 1}).ok);
}

TEST(ConvectingLambOseenVortex, FittedSpeedMatchesTheKnownSpeed) {
  // A clockwise vortex (r_c = 0.05 c) carried at 0.4 U over a 40-frame record on a
  // grid of r_c/4, with 2 % velocity noise. Chord 0.2 m, U = 10 m/s.
  constexpr double kChord = 0.2, kU = 10.0, kSpeed = 0.4, kDt = 1e-3;
  const Grid g = testing::uniform_grid(0.0, 0.3, -0.05, 0.05, 0.0025);
  AirfoilPlacement placement{kChord, 0.0, 0.0, 0.0, 0.0};
  std::vector<Observation> obs;
  for (int k = 0; k < 40; ++k) {
    const theory::LambOseenVortex v{0.02 + kSpeed * kU * kDt * k, 0.001, -0.05, 0.01};
    const Frame f = testing::vortex_frame(g, {v}, kU, 0.02 * theory::peak_tangential_velocity(v), 10 + k);
    const SwirlField s = swirl_field(g, f, GradientScheme::kCentral);
    for (const auto& d : detect_vortices(g, s, {}, DetectionOptions{})) {
      if (d.cells < 10) continue;  // noise blobs
      const AirfoilPoint a = to_airfoil_frame(placement, 0.0, d.x_m, d.y_m);
      Observation o{k, k * kDt, d.sign, a.x_over_c, a.y_over_c, d.x_m, d.y_m, std::sqrt(d.area_m2 / 3.14159),
                    d.circulation / (kU * kChord)};
      obs.push_back(o);
    }
  }
  auto tracks = track_vortices(obs, frames(40), {0.0, 0.3, -0.05, 0.05}, TrackingOptions{});
  const Track* lev = nullptr;
  for (const auto& t : tracks)
    if (t.sign < 0 && (!lev || t.observations.size() > lev->observations.size())) lev = &t;
  ASSERT_NE(lev, nullptr);
  EXPECT_GE(lev->observations.size(), 38u);
  std::vector<double> tc, xc;
  for (auto i : lev->observations) tc.push_back(obs[i].t_s * kU / kChord), xc.push_back(obs[i].x_over_c);
  const SpeedFit fit = fit_convection_speed(tc, xc);
  std::printf("fitted convection speed %.5f U +- %.5f (true 0.4)\n", fit.speed, fit.uncertainty);
  // Tolerance: 1 % of the speed (centroid noise ~0.02 grid spacings per frame over a 0.08 c path), and
  // the true value inside 3 standard errors.
  EXPECT_NEAR(fit.speed, kSpeed, 0.004);
  EXPECT_NEAR(fit.speed, kSpeed, 3 * fit.uncertainty + 1e-4);
}

}  // namespace
}  // namespace stallscope::piv
