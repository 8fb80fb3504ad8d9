#pragma once
// Orders the enabled stages from their declared inputs and outputs.
#include <memory>
#include <string>
#include <vector>

#include "pipeline/stage.hpp"

namespace stallscope {

// Returns the stages in an order where every stage runs after the producers
// of its inputs. InputError (labelled with `config_name`) when a required
// input has no producer, two stages produce the same key, or the stages
// depend on each other in a cycle. `available` are keys present beforehand.
std::vector<Stage*> schedule(const std::vector<std::unique_ptr<Stage>>& stages, const std::string& config_name,
                             const std::vector<std::string>& available = {});

}  // namespace stallscope
