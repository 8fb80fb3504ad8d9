#pragma once
// A stage: one step of the reduction. It declares the store keys it reads and
// writes, reads its options from its own TOML section, and runs on a
// RunContext. It never opens files except through RunContext (ingest stages)
// and never writes files: the archive does.
#include <string>
#include <string_view>
#include <vector>

#include "pipeline/config.hpp"
#include "pipeline/run_context.hpp"

namespace stallscope {

class Stage {
 public:
  virtual ~Stage() = default;

  virtual std::string_view name() const = 0;
  // One line for --list-stages and DEVELOPERS.md.
  virtual std::string_view summary() const = 0;

  // Read options from the stage's section. Called before any data is read, so
  // a bad value fails the run before work starts. Inputs and outputs may
  // depend on the options (a stage reads "motion/alpha_deg" only if enabled).
  virtual void configure(ConfigSection& section) = 0;

  // Store keys this stage needs (required) and may use (optional: used if a
  // stage that produces them is enabled, ordered before this one).
  virtual std::vector<std::string> inputs() const = 0;
  virtual std::vector<std::string> optional_inputs() const { return {}; }
  virtual std::vector<std::string> outputs() const = 0;

  virtual void run(RunContext& context) = 0;

  // Whether Monte Carlo replicas run this stage again. Ingest of raw data and
  // the PIV frame reduction run once; their results are shared by every replica.
  virtual bool repeated_in_replicas() const { return true; }
};

}  // namespace stallscope
