#pragma once
// Measurement uncertainty by Monte Carlo through the real stages: N replicas
// of the run, each reduced again by fresh instances of the same stages with
// its own perturbation of the uncertain inputs (see perturbation.hpp), and
// the spread over the replicas (sample standard deviation) stored beside each
// quantity: "<key>_uncertainty" for the loads, Cp, phase-averaged loops and
// fitted constants, "<column>_uncertainty" columns in the event and phase
// tables. This is the instruments' part only; the cycle-to-cycle spread is
// the statistics' business and stays separate.
#include <functional>
#include <memory>
#include <set>
#include <string>
#include <vector>

#include "pipeline/perturbation.hpp"
#include "pipeline/progress.hpp"
#include "pipeline/run_store.hpp"
#include "pipeline/stage.hpp"

namespace stallscope {

// Fresh, configured instances of the run's stages (any order: they are scheduled).
using StageFactory = std::function<std::vector<std::unique_ptr<Stage>>()>;

struct UncertaintyResult {
  std::size_t replicas = 0, failed = 0;
  std::vector<std::string> keys;  // what received an uncertainty, sorted
};

// `shared` are the nominal store's keys written by stages that replicas do
// not repeat; replicas start from those. Replicas run `threads` at a time, one
// thread each, and are accumulated in replica order, so the result does not
// depend on the thread count. A replica that fails is counted and left out;
// if every replica fails the first failure is rethrown.
UncertaintyResult propagate_uncertainty(const UncertaintyModel& model, const StageFactory& make_stages,
                                        const std::string& config_name, const std::set<std::string>& shared,
                                        RunStore& nominal, Progress& progress, int threads);

// The keys whose spread is stored (series, matrices, scalars) and the tables
// that get uncertainty columns.
bool has_uncertainty_series(const std::string& key);
bool has_uncertainty_columns(const std::string& key);

}  // namespace stallscope
