#include "stages/cycles.hpp"

#include <algorithm>
#include <cmath>
#include <cstdio>
#include <numbers>

#include "calib/air/air.hpp"
#include "pipeline/errors.hpp"
#include "stages/motion.hpp"
#include "stages/numerics/statistics.hpp"

namespace stallscope {

namespace {

std::string num(double v, int digits = 3) {
  char buf[64];
  std::snprintf(buf, sizeof buf, "%.*g", digits, v);
  return buf;
}

// Samples [first, last) of an increasing time base inside [t0, t1).
std::pair<Eigen::Index, Eigen::Index> span(const Eigen::VectorXd& t, double t0, double t1) {
  const double* b = t.data();
  const double* e = b + t.size();
  return {std::lower_bound(b, e, t0) - b, std::lower_bound(b, e, t1) - b};
}

double finite_mean(const Eigen::VectorXd& v, Eigen::Index first, Eigen::Index last) {
  double sum = 0;
  Eigen::Index n = 0;
  for (Eigen::Index i = first; i < last; ++i)
    if (std::isfinite(v[i])) {
      sum += v[i];
      ++n;
    }
  return n ? sum / static_cast<double>(n) : NAN;
}

double median(std::vector<double> v) {
  std::erase_if(v, [](double x) { return !std::isfinite(x); });
  return v.empty() ? NAN : numerics::percentile(v, 0.5);
}

}  // namespace

void CyclesStage::configure(ConfigSection& s) {
  min_cycles_where_ = s.where("min_cycles");
  options_.min_cycles = s.integer("min_cycles", options_.min_cycles);
  s.require(options_.min_cycles >= 2, "min_cycles", "expected at least 2 cycles (statistics need two)");
  options_.angle_dropout_deg = s.number("angle_dropout_deg", options_.angle_dropout_deg);
  s.require(options_.angle_dropout_deg > 0, "angle_dropout_deg", "expected an angle > 0 deg");
  options_.q_drift_tolerance = s.number("q_drift_tolerance", options_.q_drift_tolerance);
  s.require(options_.q_drift_tolerance > 0 && options_.q_drift_tolerance < 1, "q_drift_tolerance",
            "expected a fraction between 0 and 1");
  options_.k_drift_tolerance = s.number("k_drift_tolerance", options_.k_drift_tolerance);
  s.require(options_.k_drift_tolerance > 0 && options_.k_drift_tolerance < 1, "k_drift_tolerance",
            "expected a fraction between 0 and 1");
  options_.max_dead_taps = s.integer("max_dead_taps", options_.max_dead_taps);
  s.require(options_.max_dead_taps >= 0, "max_dead_taps", "expected a number of taps >= 0");
}

std::vector<std::string> CyclesStage::inputs() const {
  return {"motion/fit", "signals/time_s", "signals/alpha_deg", "run/chord_m", "run/U_inf_m_s",
          "run/rho_kg_m3", "run/T_K",      "run/p_static_pa"};
}

std::vector<std::string> CyclesStage::optional_inputs() const {
  return {"signals/q_pa", "signals/p_static_pa", "signals/T_K", "pressure/cp", "pressure/time_s"};
}

void CyclesStage::run(RunContext& context) {
  RunStore& s = context.store();
  const MotionFit motion = MotionFit::from_store(s, std::string(kName));
  if (motion.cycles < options_.min_cycles)
    throw InputError(min_cycles_where_,
                     "the record holds " + std::to_string(motion.cycles) + " complete pitch cycle(s) at " +
                         num(motion.freq_hz, 4) + " Hz, fewer than min_cycles = " +
                         std::to_string(options_.min_cycles) + " (record longer, or lower min_cycles)");
  const Eigen::VectorXd& t = s.get<Series>("signals/time_s").values;
  const Eigen::VectorXd& alpha = s.get<Series>("signals/alpha_deg").values;
  const double chord = s.get<Scalar>("run/chord_m").value;
  auto signal = [&](const char* key) -> const Eigen::VectorXd* {
    return s.contains(key) ? &s.get<Series>(key).values : nullptr;
  };
  const Eigen::VectorXd* q = signal("signals/q_pa");
  const Eigen::VectorXd* p_static = signal("signals/p_static_pa");
  const Eigen::VectorXd* temperature = signal("signals/T_K");
  const Matrix* cp = s.contains("pressure/cp") && s.contains("pressure/time_s") ? &s.get<Matrix>("pressure/cp") : nullptr;
  const Eigen::VectorXd* cp_t = cp ? &s.get<Series>("pressure/time_s").values : nullptr;

  const auto n = static_cast<std::size_t>(motion.cycles);
  std::vector<std::int64_t> index(n), dropouts(n), dead(n), k_flag(n), valid(n);
  std::vector<double> t0(n), t1(n), amin(n), amax(n), misfit(n), qc(n, NAN), u(n), rho(n), temp(n), re(n), k(n), freq(n);
  std::vector<std::string> reason(n);
  for (std::size_t c = 0; c < n; ++c) {
    index[c] = static_cast<std::int64_t>(c);
    t0[c] = motion.cycle_start_s(index[c]);
    t1[c] = motion.cycle_start_s(index[c] + 1);
    const auto [first, last] = span(t, t0[c], t1[c]);
    double lo = INFINITY, hi = -INFINITY, ss = 0;
    Eigen::Index finite = 0;
    for (Eigen::Index i = first; i < last; ++i) {
      const double off = alpha[i] - motion.alpha_deg(t[i]);
      if (!std::isfinite(off) || std::abs(off) > options_.angle_dropout_deg) ++dropouts[c];
      if (!std::isfinite(off)) continue;
      ++finite;
      ss += off * off;
      lo = std::min(lo, alpha[i]);
      hi = std::max(hi, alpha[i]);
    }
    amin[c] = lo;
    amax[c] = hi;
    misfit[c] = finite ? std::sqrt(ss / static_cast<double>(finite)) : NAN;

    temp[c] = temperature ? finite_mean(*temperature, first, last) : s.get<Scalar>("run/T_K").value;
    if (p_static || temperature) {
      const double p = p_static ? finite_mean(*p_static, first, last) : s.get<Scalar>("run/p_static_pa").value;
      rho[c] = air::density(p, temp[c]);
    } else {
      rho[c] = s.get<Scalar>("run/rho_kg_m3").value;
    }
    if (q) {
      qc[c] = finite_mean(*q, first, last);
      u[c] = std::sqrt(2 * qc[c] / rho[c]);
    } else {
      u[c] = s.get<Scalar>("run/U_inf_m_s").value;
    }
    re[c] = rho[c] * u[c] * chord / air::viscosity(temp[c]);
    freq[c] = 1.0 / (t1[c] - t0[c]);  // the cycle's own frequency (per-cycle phase follows a drift)
    k[c] = std::numbers::pi * freq[c] * chord / u[c];

    if (cp) {
      const auto [cf, cl] = span(*cp_t, t0[c], t1[c]);
      for (Eigen::Index j = 0; j < cp->values.cols(); ++j) {
        if (cl <= cf) break;
        const auto col = cp->values.col(j).segment(cf, cl - cf);
        const bool finite_all = col.allFinite();
        if (!finite_all || col.maxCoeff() == col.minCoeff()) ++dead[c];
      }
    }
  }

  // Drifts are measured from the run's median cycle, so a slow drift shows
  // even when the nominal conditions in the config are a little off.
  const double q_ref = q ? median(qc) : NAN, k_ref = median(k);
  for (std::size_t c = 0; c < n; ++c) {
    std::vector<std::string> why;
    if (dropouts[c] > 0)
      why.push_back("angle drop-out (" + std::to_string(dropouts[c]) + " samples off the fitted motion by more than " +
                    num(options_.angle_dropout_deg) + " deg or missing)");
    if (q) {
      const double drift = qc[c] / q_ref - 1;
      if (!std::isfinite(drift)) why.push_back("no dynamic pressure in the cycle");
      else if (std::abs(drift) > options_.q_drift_tolerance)
        why.push_back("q drift " + num(100 * drift) + " % from the run's median cycle (tolerance " +
                      num(100 * options_.q_drift_tolerance) + " %)");
    }
    if (dead[c] > options_.max_dead_taps)
      why.push_back(std::to_string(dead[c]) + " dead taps (flat or non-finite in the cycle; max_dead_taps = " +
                    std::to_string(options_.max_dead_taps) + ")");
    k_flag[c] = std::abs(k[c] / k_ref - 1) > options_.k_drift_tolerance ? 1 : 0;
    valid[c] = why.empty() ? 1 : 0;
    for (const auto& w : why) reason[c] += (reason[c].empty() ? "" : "; ") + w;
  }
  const auto valid_count = std::count(valid.begin(), valid.end(), 1);

  Table table;
  table.add({"cycle", "1", index})
      .add({"t_start_s", "s", t0})
      .add({"t_end_s", "s", t1})
      .add({"valid", "1", valid})
      .add({"reason", "", reason})
      .add({"alpha_min_deg", "deg", amin})
      .add({"alpha_max_deg", "deg", amax})
      .add({"angle_misfit_deg", "deg", misfit})
      .add({"dropout_samples", "1", dropouts})
      .add({"q_pa", "Pa", qc})
      .add({"U_m_s", "m/s", u})
      .add({"rho_kg_m3", "kg/m^3", rho})
      .add({"T_K", "K", temp})
      .add({"Re", "1", re})
      .add({"freq_hz", "Hz", freq})
      .add({"k", "1", k})
      .add({"k_drift", "1", k_flag})
      .add({"dead_taps", "1", dead});
  s.put("cycles", std::move(table),
        {{"phase_origin", std::string("cycle start at the minimum angle of the fitted fundamental")},
         {"valid_cycles", static_cast<std::int64_t>(valid_count)},
         {"k_reference", k_ref},
         {"q_reference_pa", q_ref},
         {"U_source", std::string(q ? "cycle-mean signals/q_pa" : "run/U_inf_m_s")}});
}

}  // namespace stallscope
