#pragma once
// The Goman-Khrabrov normal force of one periodic loop:
//   Cn = Cn_alpha ((1 + sqrt x)/2)^2 g(alpha_E - alpha_0) + Cn_nc,
//   tau1 dx/dt* + x = x0(alpha - tau2 dalpha/dt*)  (t* = t U/c, times in c/U),
// with alpha_E the circulatory angle and Cn_nc the apparent mass of Theodorsen's
// theory (1935, NACA Report 496), so attached-flow unsteadiness is not folded
// into tau1 and tau2. The loop is one period at N equal phase steps; every
// harmonic n of alpha is passed through C(nk)[1 + i nk (1/2 - a)] (circulatory)
// and pi(i nk + a (nk)^2) (apparent mass), exact for any periodic motion. The
// state follows the geometric alpha (as the published model), and x is the
// periodic steady state (theory::periodic_goman_khrabrov). alpha_dot is the
// periodic central difference of the samples. Optionally the Leishman-Beddoes
// vortex lift is added (vortex_lift.hpp), fed by the attached circulatory Cn
// the separation x takes away.
#include <Eigen/Core>

#include "stages/fit/static_separation.hpp"
#include "stages/fit/vortex_lift.hpp"
#include "stages/theory/goman_khrabrov.hpp"

namespace stallscope::fit {

enum class AttachedLag { kTheodorsen, kQuasiSteady };

struct FlowScales {
  double chord_m = 0.0, velocity_m_s = 0.0, pivot_x_over_c = 0.25;
  double convective_s() const { return chord_m / velocity_m_s; }  // c/U
};

// The vortex-lift term of one loop: its onset (c/U from the loop's start,
// phase / 360 x period) and its time constants.
struct VortexLiftTerm {
  double onset_conv = 0.0;
  VortexLiftTimes times;
};

class LoopModel {
 public:
  // alpha_deg: one period at phases (b + 1/2)/N of period_s. Throws
  // std::invalid_argument for fewer than 8 samples or a non-finite angle.
  LoopModel(const Eigen::VectorXd& alpha_deg, double period_s, const FlowScales& flow,
            const StaticSeparation& x0, AttachedLag lag = AttachedLag::kTheodorsen);

  // Cn and, if asked, x for times in convective units.
  Eigen::VectorXd normal_force(const theory::GomanKhrabrovTimes& tau_conv, Eigen::VectorXd* x = nullptr) const;
  // The same plus the vortex lift, whose own share goes to cn_vortex if asked.
  Eigen::VectorXd normal_force(const theory::GomanKhrabrovTimes& tau_conv, const VortexLiftTerm& vortex,
                               Eigen::VectorXd* x = nullptr, Eigen::VectorXd* cn_vortex = nullptr) const;
  // Cn of the static curve at the same angles: Kirchhoff with x0(alpha), quasi-steady.
  Eigen::VectorXd static_normal_force() const;

  const Eigen::VectorXd& time_conv() const { return t_; }
  const Eigen::VectorXd& alpha_rad() const { return alpha_; }
  const Eigen::VectorXd& alpha_rate_per_conv() const { return rate_; }
  const Eigen::VectorXd& circulatory_angle() const { return alpha_e_; }
  const Eigen::VectorXd& apparent_mass_normal_force() const { return cn_nc_; }
  double period_conv() const { return period_; }
  double reduced_frequency() const { return k_; }
  // The lowest x0 the loop reaches (1: it never leaves the attached branch).
  double lowest_static_separation() const;

 private:
  void theodorsen_response(const FlowScales& flow);

  const StaticSeparation* x0_;
  double period_ = 0, k_ = 0;
  Eigen::VectorXd t_, alpha_, rate_, alpha_e_, cn_nc_, attached_;  // attached_: g(alpha_E - alpha_0)
};

}  // namespace stallscope::fit
