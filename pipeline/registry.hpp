#pragma once
// The one registry of stages, expanded from pipeline/stages.def. No static
// self-registration: the table is the list, in the canonical pipeline order.
#include <memory>
#include <string>
#include <string_view>
#include <vector>

#include "pipeline/stage.hpp"

namespace stallscope {

struct StageInfo {
  std::string_view name;
  std::string_view summary;
};

// All registered stages, in the order of stages.def.
const std::vector<StageInfo>& registered_stages();
// nullptr for an unknown name.
std::unique_ptr<Stage> make_stage(std::string_view name);

}  // namespace stallscope
