#include "tools/synth/piv_generator.hpp"

#include <algorithm>
#include <cmath>
#include <iterator>
#include <numbers>

#include "stages/theory/lamb_oseen.hpp"
#include "stages/theory/naca4.hpp"

namespace stallscope::synth {

namespace {

constexpr double kTriggerHighVolts = 5.0;
constexpr int kKelvinHelmholtzBlobs = 6;

}  // namespace

PivGenerator::PivGenerator(const Scenario& s, const FlowModel& model, const std::filesystem::path& file)
    : scenario_(s), chord_(s.chord_m), velocity_(s.velocity_m_s), pivot_(s.pivot_x_over_c), random_(s.seed, "piv") {
  if (!s.piv.enabled) return;
  const PivScenario& p = s.piv;
  const double drift = 1.0 + 1e-6 * p.clock_drift_ppm;
  if (p.phase_locked) {
    for (int c = 1; c <= s.cycles; ++c)
      for (double ph : p.phases_deg)
        triggers_.push_back(model.motion_start() + (c - 1 + ph / 360.0) * model.cycle_period());
    std::sort(triggers_.begin(), triggers_.end());
  } else {
    // The camera free-runs at rate_hz on its own clock, from the motion start.
    for (std::int64_t i = 0;; ++i) {
      const double t = model.motion_start() + (static_cast<double>(i) / p.rate_hz) / drift;
      if (t >= model.motion_end()) break;
      triggers_.push_back(t);
    }
  }
  if (p.max_frames > 0 && static_cast<std::int64_t>(triggers_.size()) > p.max_frames)
    triggers_.resize(static_cast<std::size_t>(p.max_frames));
  dropped_.assign(triggers_.size(), false);
  // Dropped frames: distinct, never the first or the last.
  Random drop_random(s.seed, "piv dropped frames");
  const int can_drop = std::max(0, static_cast<int>(triggers_.size()) - 2);
  for (int d = 0, tries = 0; d < std::min(p.dropped_frames, can_drop) && tries < 100 * (d + 1); ++tries) {
    const auto i = 1 + static_cast<std::size_t>(drop_random.uniform() * can_drop);
    if (i < triggers_.size() - 1 && !dropped_[i]) {
      dropped_[i] = true;
      ++d;
    }
  }
  for (int i = 0; i < p.nx; ++i)
    x_m_.push_back(chord_ * (p.x_range_over_c[0] + (p.x_range_over_c[1] - p.x_range_over_c[0]) * i / (p.nx - 1)));
  for (int j = 0; j < p.ny; ++j)
    y_m_.push_back(chord_ * (p.y_range_over_c[0] + (p.y_range_over_c[1] - p.y_range_over_c[0]) * j / (p.ny - 1)));

  file_ = create_reproducible_file(file);
  const std::vector<hsize_t> frame_shape = {static_cast<hsize_t>(p.ny), static_cast<hsize_t>(p.nx)};
  u_ = std::make_unique<AppendableDataset>(file_.get(), "piv/u", ElementType::kFloat32, frame_shape, 1, p.units);
  v_ = std::make_unique<AppendableDataset>(file_.get(), "piv/v", ElementType::kFloat32, frame_shape, 1, p.units);
  valid_ = std::make_unique<AppendableDataset>(file_.get(), "piv/valid", ElementType::kUint8, frame_shape, 1, "1");
  time_ = std::make_unique<AppendableDataset>(file_.get(), "piv/time_s", ElementType::kFloat64, std::vector<hsize_t>{},
                                              1024, "s");
  write_dataset(file_.get(), "piv/x_m", x_m_, {x_m_.size()}, "m");
  write_dataset(file_.get(), "piv/y_m", y_m_, {y_m_.size()}, "m");
}

double PivGenerator::trigger_volts(double t, double dt) {
  if (!enabled()) return 0.0;
  const double width = std::max(scenario_.piv.trigger_pulse_s, dt);
  while (trigger_cursor_ < triggers_.size() && triggers_[trigger_cursor_] + width <= t) ++trigger_cursor_;
  if (trigger_cursor_ < triggers_.size() && triggers_[trigger_cursor_] <= t) return kTriggerHighVolts;
  return 0.0;
}

std::vector<FieldVortex> PivGenerator::field_vortices(const FlowSample& s, double t) const {
  const PivScenario& p = scenario_.piv;
  const theory::Naca4Section section = theory::parse_naca4(scenario_.airfoil.substr(5));
  const double ahead = t - s.t;
  const double alpha = s.alpha + s.alpha_rate * ahead;
  auto lab = [&](double x_over_c, double y_over_c, double& x, double& y) {
    const double dx = (x_over_c - pivot_) * chord_, dy = y_over_c * chord_;
    x = dx * std::cos(alpha) + dy * std::sin(alpha);
    y = -dx * std::sin(alpha) + dy * std::cos(alpha);
  };
  auto surface_y = [&](double x_over_c) {
    return theory::naca4_upper_surface(section, std::clamp(x_over_c, 0.0, 1.0)).y;
  };
  std::vector<FieldVortex> out;
  for (const auto& v : s.vortices) {
    if (v.circulation == 0.0) continue;
    const double x = v.x_over_c + v.speed_over_u * velocity_ * ahead / chord_;
    FieldVortex f;
    f.kind = v.generation;
    f.track = v.track;
    lab(x, surface_y(x) + v.height_over_c, f.x_m, f.y_m);
    f.circulation = v.circulation;
    f.core_radius_m = v.core_radius_m;
    out.push_back(f);
    if (v.generation != 1) continue;
    if (p.secondary_vortex && x < 1.0) {
      // Induced under the leading-edge vortex by the reversed flow at the wall.
      FieldVortex w;
      w.kind = 3;
      w.track = v.track;
      lab(x - 0.4 * v.height_over_c, surface_y(x) + 0.3 * v.height_over_c, w.x_m, w.y_m);
      w.circulation = -0.3 * v.circulation;
      w.core_radius_m = 0.4 * v.core_radius_m;
      out.push_back(w);
    }
    if (p.te_vortex && x > 0.75) {
      FieldVortex te;
      te.kind = 4;
      te.track = v.track;
      const double grown = std::min(1.0, (x - 0.75) / 0.25);
      lab(1.0 + 0.8 * (x - 0.75), surface_y(1.0) - 0.02, te.x_m, te.y_m);
      te.circulation = -0.6 * grown * v.circulation;
      te.core_radius_m = 0.6 * v.core_radius_m;
      out.push_back(te);
    }
    if (p.kh_blobs && x < 1.0) {
      // Blobs riding the shear layer from the leading edge to the vortex.
      const double travel = 0.5 * velocity_ * t / (0.5 * chord_);
      for (int i = 0; i < kKelvinHelmholtzBlobs; ++i) {
        double f_along = std::fmod(static_cast<double>(i) / kKelvinHelmholtzBlobs + travel, 1.0);
        const double xb = 0.02 + f_along * (x - 0.02);
        const double yb = surface_y(0.02) + 0.01 + f_along * (surface_y(x) + v.height_over_c - surface_y(0.02) - 0.01);
        FieldVortex kh;
        kh.kind = 5;
        kh.track = v.track;
        lab(xb, yb, kh.x_m, kh.y_m);
        kh.circulation = -0.04 * velocity_ * chord_;
        kh.core_radius_m = 0.008 * chord_;
        out.push_back(kh);
      }
    }
  }
  if (p.airfoil_field) {
    // Bound circulation at the quarter chord, Kutta-Joukowski: Gamma = U c Cn / 2 (clockwise).
    // Its core stays inside the section: outside the body the bound flow is
    // irrotational and has no swirl, and a Lamb-Oseen core swirls only out to
    // its velocity peak, 1.12 r_c.
    FieldVortex b;
    b.kind = 6;
    lab(0.25, 0.0, b.x_m, b.y_m);
    b.circulation = -0.5 * velocity_ * chord_ * s.cn_circulatory_target;
    b.core_radius_m = 0.7 * theory::naca4_half_thickness(section, 0.25) * chord_;
    out.push_back(b);
  }
  return out;
}

void PivGenerator::velocity(const std::vector<FieldVortex>& vortices, double x, double y, double& u, double& v) const {
  u = velocity_;
  v = 0.0;
  for (const auto& f : vortices) {
    const theory::LambOseenVortex lo{f.x_m, f.y_m, f.circulation, f.core_radius_m};
    const Eigen::Vector2d w = theory::velocity_at(lo, x, y);
    u += w.x();
    v += w.y();
  }
}

void PivGenerator::observe(const FlowSample& s, double dt) {
  if (!enabled()) return;
  while (frame_cursor_ < triggers_.size() && triggers_[frame_cursor_] < s.t + dt) {
    const double t = triggers_[frame_cursor_];
    if (dropped_[frame_cursor_]) {
      stack_index_.push_back(-1);
    } else {
      stack_index_.push_back(frames_written_);
      render(s, std::max(t, s.t));
    }
    ++frame_cursor_;
  }
}

void PivGenerator::render(const FlowSample& s, double t) {
  const PivScenario& p = scenario_.piv;
  const theory::Naca4Section section = theory::parse_naca4(scenario_.airfoil.substr(5));
  const auto vortices = field_vortices(s, t);
  if (!truth_vortex_.empty())
    for (const auto& f : vortices) {
      const std::int64_t ints[] = {frames_written_, f.kind, f.track};
      const double reals[] = {f.x_m, f.y_m, f.circulation, f.core_radius_m};
      for (int j = 0; j < 3; ++j) truth_vortex_[j].append(&ints[j], 1);
      for (int j = 0; j < 4; ++j) truth_vortex_[3 + j].append(&reals[j], 1);
    }
  const double alpha = s.alpha + s.alpha_rate * (t - s.t);
  const double scale = p.units == "px/frame" ? p.pixels_per_m * p.pair_dt_s : 1.0;
  const std::size_t cells = static_cast<std::size_t>(p.nx) * p.ny;
  std::vector<float> u(cells), v(cells);
  std::vector<std::uint8_t> valid(cells, 1);
  for (int j = 0; j < p.ny; ++j) {
    for (int i = 0; i < p.nx; ++i) {
      const std::size_t c = static_cast<std::size_t>(j) * p.nx + i;
      const double x = x_m_[i], y = y_m_[j];
      // Airfoil frame of this grid point.
      const double xa = (x * std::cos(alpha) - y * std::sin(alpha)) / chord_ + pivot_;
      const double ya = (x * std::sin(alpha) + y * std::cos(alpha)) / chord_;
      double uu = 0, vv = 0;
      // Draw every random number in a fixed order per cell, whatever is switched on.
      const double n1 = random_.normal(), n2 = random_.normal();
      const double r_outlier = random_.uniform(), o1 = random_.uniform(), o2 = random_.uniform();
      const double r_reflect = random_.uniform(), f1 = random_.normal(), f2 = random_.normal();
      if (xa >= 0.0 && xa <= 1.0) {
        const double upper = theory::naca4_upper_surface(section, xa).y;
        const double lower = theory::naca4_lower_surface(section, xa).y;
        if (ya <= upper && ya >= lower) {
          valid[c] = 0;
          u[c] = v[c] = 0.0f;
          continue;
        }
        if (p.reflections && ya > upper && ya - upper < 0.015 && r_reflect < 0.5) {
          // Laser light off the wall: a spurious, nearly zero displacement.
          u[c] = static_cast<float>(scale * 0.05 * velocity_ * f1);
          v[c] = static_cast<float>(scale * 0.05 * velocity_ * f2);
          continue;
        }
      }
      velocity(vortices, x, y, uu, vv);
      uu += p.noise_m_s * n1;
      vv += p.noise_m_s * n2;
      if (r_outlier < p.outlier_fraction) {
        uu = velocity_ * (3.0 * o1 - 1.0);
        vv = velocity_ * (3.0 * o2 - 1.5);
      }
      u[c] = static_cast<float>(scale * uu);
      v[c] = static_cast<float>(scale * vv);
    }
  }
  const double t_camera = p.clock_offset_s + t * (1.0 + 1e-6 * p.clock_drift_ppm);
  u_->append(u.data(), 1);
  v_->append(v.data(), 1);
  valid_->append(valid.data(), 1);
  time_->append(&t_camera, 1);
  ++frames_written_;
}

void PivGenerator::stream_truth(hid_t truth_file) {
  if (!enabled()) return;
  const std::pair<const char*, const char*> columns[] = {{"frame", "1"}, {"kind", "1"}, {"track", "1"},
                                                         {"x_m", "m"},   {"y_m", "m"},  {"circulation", "m^2/s"},
                                                         {"core_radius_m", "m"}};
  for (std::size_t j = 0; j < std::size(columns); ++j)
    truth_vortex_.emplace_back(truth_file, std::string("truth/piv/vortex/") + columns[j].first,
                               j < 3 ? ElementType::kInt64 : ElementType::kFloat64, std::vector<hsize_t>{}, 4096,
                               columns[j].second);
}

void PivGenerator::finish(hid_t truth_file) {
  if (!enabled()) return;
  // Frames whose trigger the DAQ record never reached (none in practice) are left out.
  u_->flush();
  v_->flush();
  valid_->flush();
  time_->flush();
  h5::write_attribute(file_.get(), "piv", "frame",
                      std::string("lab frame, origin on the pitch axis, x downstream, y up"));
  h5::write_attribute(file_.get(), "piv", "clock", std::string("camera clock (drifts against the DAQ clock)"));
  u_.reset();
  v_.reset();
  valid_.reset();
  time_.reset();
  file_.close();

  const std::size_t n = stack_index_.size();
  std::vector<double> trig(triggers_.begin(), triggers_.begin() + static_cast<std::ptrdiff_t>(n));
  write_dataset(truth_file, "truth/piv/trigger_time_s", trig, {n}, "s");
  write_dataset(truth_file, "truth/piv/stack_index", stack_index_, "1");
  h5::write_attribute(truth_file, "truth/piv", "clock_drift_ppm", scenario_.piv.clock_drift_ppm);
  h5::write_attribute(truth_file, "truth/piv", "clock_offset_s", scenario_.piv.clock_offset_s);
  h5::write_attribute(truth_file, "truth/piv", "stack_index_note",
                      std::string("frame index in piv.h5 for each trigger; -1 where the frame was dropped"));
  for (auto& d : truth_vortex_) d.flush();
  truth_vortex_.clear();
  h5::write_attribute(truth_file, "truth/piv/vortex", "kind_note",
                      std::string("1 dynamic-stall vortex, 2 its secondary, 3 wall secondary, 4 trailing-edge "
                                  "vortex, 5 Kelvin-Helmholtz blob, 6 bound circulation"));
}

}  // namespace stallscope::synth
