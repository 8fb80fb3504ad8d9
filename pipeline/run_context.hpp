#pragma once
// What a running stage may touch: the run's store, its provenance recorder
// (inputs are hashed as they are opened), the progress reporter, and the
// number of threads it may use.
#include <filesystem>
#include <string>

#include "pipeline/progress.hpp"
#include "pipeline/provenance.hpp"
#include "pipeline/run_store.hpp"

namespace stallscope {

class Perturbation;  // pipeline/perturbation.hpp

class RunContext {
 public:
  RunContext(RunStore& store, Provenance& provenance, Progress& progress, int threads = 1)
      : store_(store), provenance_(provenance), progress_(progress), threads_(threads) {}

  RunStore& store() { return store_; }
  const RunStore& store() const { return store_; }
  Progress& progress() { return progress_; }
  int threads() const { return threads_; }
  // Set in a Monte Carlo replica: the stages that read an uncertain input
  // perturb it by the replica's draws. Null in the nominal reduction.
  const Perturbation* perturbation() const { return perturbation_; }
  void set_perturbation(const Perturbation* p) { perturbation_ = p; }

  // Every raw file a stage reads goes through here: it must exist and be
  // readable, and it is hashed into provenance so `verify` can re-check it.
  // Returns the path unchanged for the caller to open read-only.
  const std::filesystem::path& raw_input(const std::filesystem::path& path, const std::string& role);
  // A calibration file used: its id and hash go into provenance.
  void calibration_used(const std::string& id, const std::filesystem::path& file);

 private:
  RunStore& store_;
  Provenance& provenance_;
  Progress& progress_;
  int threads_;
  const Perturbation* perturbation_ = nullptr;
};

}  // namespace stallscope
