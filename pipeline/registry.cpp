#include "pipeline/registry.hpp"

#include "stages/calibrate.hpp"
#include "stages/conditions.hpp"
#include "stages/cp.hpp"
#include "stages/daq.hpp"
#include "stages/loads.hpp"
#include "stages/run.hpp"
#include "stages/tubing.hpp"
#include "stages/wall.hpp"
#include "stages/motion.hpp"
#include "stages/cycles.hpp"
#include "stages/phase.hpp"
#include "stages/damping.hpp"
#include "stages/static_polar.hpp"
#include "stages/events/events_stage.hpp"
#include "stages/fit/fit_stage.hpp"
#include "stages/piv/piv_stage.hpp"
#include "stages/piv/vortex_stage.hpp"

namespace stallscope {

const std::vector<StageInfo>& registered_stages() {
  static const std::vector<StageInfo> kStages = {
#define STAGE(Class) {Class::kName, Class::kSummary},
#include "pipeline/stages.def"
#undef STAGE
  };
  return kStages;
}

std::unique_ptr<Stage> make_stage(std::string_view name) {
#define STAGE(Class) \
  if (name == Class::kName) return std::make_unique<Class>();
#include "pipeline/stages.def"
#undef STAGE
  return nullptr;
}

}  // namespace stallscope
