#include "stages/numerics/resample.hpp"

#include <algorithm>
#include <limits>
#include <stdexcept>

namespace stallscope::numerics {

Eigen::VectorXd interpolate_linear(const Eigen::VectorXd& t_source, const Eigen::VectorXd& y_source,
                                   const Eigen::VectorXd& t_target) {
  if (t_source.size() != y_source.size()) throw std::invalid_argument("interpolate_linear: lengths differ");
  if (t_source.size() == t_target.size() && t_source == t_target) return y_source;
  Eigen::VectorXd out(t_target.size());
  const double* begin = t_source.data();
  const double* end = begin + t_source.size();
  for (Eigen::Index i = 0; i < t_target.size(); ++i) {
    const double t = t_target[i];
    const double* hi = std::lower_bound(begin, end, t);
    if (hi == end || (hi == begin && t < *begin)) {
      out[i] = std::numeric_limits<double>::quiet_NaN();
    } else if (*hi == t) {
      out[i] = y_source[hi - begin];
    } else {
      const auto j = hi - begin;
      const double w = (t - t_source[j - 1]) / (t_source[j] - t_source[j - 1]);
      out[i] = y_source[j - 1] + w * (y_source[j] - y_source[j - 1]);
    }
  }
  return out;
}

}  // namespace stallscope::numerics
