#include "tools/synth/truth_criteria.hpp"

#include <algorithm>
#include <cmath>
#include <numbers>

#include "stages/theory/goman_khrabrov.hpp"

namespace stallscope::synth {

namespace {
constexpr double kDeg = std::numbers::pi / 180.0;
}

double static_stall_angle_deg(const Scenario& s) {
  const theory::SeparationFit fit{s.separation_steepness_per_deg / kDeg, s.alpha_star_deg * kDeg};
  auto cn = [&](double a_deg) {
    const double x0 = std::clamp(theory::static_separation(fit, a_deg * kDeg), 0.0, 1.0);
    return std::pow(0.5 * (1 + std::sqrt(x0)), 2) * a_deg * kDeg;
  };
  // Golden-section search on a bracket found by a coarse scan (Cn is smooth and single-peaked there).
  double best = 0;
  for (double a = 0; a <= 40; a += 0.05)
    if (cn(a) > cn(best)) best = a;
  double lo = best - 0.05, hi = best + 0.05;
  const double g = 0.5 * (std::sqrt(5.0) - 1);
  while (hi - lo > 1e-7) {
    const double a = hi - g * (hi - lo), b = lo + g * (hi - lo);
    (cn(a) > cn(b) ? hi : lo) = cn(a) > cn(b) ? b : a;
  }
  return 0.5 * (lo + hi);
}

void TruthCriteria::add(int cycle, double t, double alpha_deg, double rate_deg_s, double cm, double le_suction) {
  if (cycle != cycle_) close_cycle();
  cycle_ = cycle;
  if (cycle == 0) return;
  t_.push_back(t);
  alpha_.push_back(alpha_deg);
  rate_.push_back(rate_deg_s);
  cm_.push_back(cm);
  suction_.push_back(le_suction);
}

std::vector<CriterionEvent> TruthCriteria::finish() {
  close_cycle();
  return found_;
}

void TruthCriteria::close_cycle() {
  const std::size_t n = t_.size();
  auto between = [&](std::size_t i, double fa, double fb) { return t_[i - 1] + (t_[i] - t_[i - 1]) * fa / (fa - fb); };
  auto alpha_at = [&](std::size_t i, double t) {
    return alpha_[i - 1] + (alpha_[i] - alpha_[i - 1]) * (t - t_[i - 1]) / (t_[i] - t_[i - 1]);
  };
  if (cycle_ > 0 && n > 2) {
    const double a_ss = settings_.static_stall_angle_deg;
    std::size_t crossing = 0;
    for (std::size_t i = 1; i < n && !crossing; ++i)
      if (alpha_[i - 1] < a_ss && alpha_[i] >= a_ss && rate_[i] > 0) {
        const double t = between(i, alpha_[i - 1] - a_ss, alpha_[i] - a_ss);
        found_.push_back({cycle_, "static_stall_crossing", t, rate_[i - 1] + (rate_[i] - rate_[i - 1]) *
                                                                              (t - t_[i - 1]) / (t_[i] - t_[i - 1]),
                          a_ss});
        crossing = i;
      }
    if (crossing) {
      double run_max = -INFINITY;
      for (std::size_t i = 0; i < n; ++i) {
        run_max = std::max(run_max, cm_[i]);
        const double level = run_max - settings_.moment_stall_delta;
        if (i > crossing && cm_[i] < level) {
          const double t = between(i, cm_[i - 1] - level, cm_[i] - level);
          found_.push_back({cycle_, "moment_stall", t, run_max, alpha_at(i, t)});
          break;
        }
      }
    }
    // Leading-edge suction: the peak, with a parabola through the three samples round it.
    const std::size_t k = static_cast<std::size_t>(std::max_element(suction_.begin(), suction_.end()) - suction_.begin());
    const double peak = suction_[k];
    const double after = *std::min_element(suction_.begin() + static_cast<std::ptrdiff_t>(k), suction_.end());
    if (k > 0 && k + 1 < n && peak > 0 && after <= (1 - settings_.le_collapse_fraction) * peak) {
      const double ym = suction_[k - 1], y0 = peak, yp = suction_[k + 1], d = ym - 2 * y0 + yp;
      const double shift = d < 0 ? std::clamp(0.5 * (ym - yp) / d, -0.5, 0.5) : 0.0;
      const double t = t_[k] + shift * (t_[k + 1] - t_[k]);
      const double value = y0 - 0.25 * (ym - yp) * shift;
      found_.push_back({cycle_, "le_suction_collapse", t, -value, alpha_at(shift < 0 ? k : k + 1, t)});
    }
  }
  t_.clear();
  alpha_.clear();
  rate_.clear();
  cm_.clear();
  suction_.clear();
}

}  // namespace stallscope::synth
