#include "pipeline/scheduler.hpp"

#include <gtest/gtest.h>

#include "pipeline/errors.hpp"

namespace stallscope {
namespace {

// A stage that only declares keys, for ordering tests.
class FakeStage final : public Stage {
 public:
  FakeStage(std::string name, std::vector<std::string> in, std::vector<std::string> out,
            std::vector<std::string> optional = {})
      : name_(std::move(name)), in_(std::move(in)), out_(std::move(out)), optional_(std::move(optional)) {}
  std::string_view name() const override { return name_; }
  std::string_view summary() const override { return "fake"; }
  void configure(ConfigSection&) override {}
  std::vector<std::string> inputs() const override { return in_; }
  std::vector<std::string> optional_inputs() const override { return optional_; }
  std::vector<std::string> outputs() const override { return out_; }
  void run(RunContext&) override {}

 private:
  std::string name_;
  std::vector<std::string> in_, out_, optional_;
};

std::vector<std::string> names(const std::vector<Stage*>& order) {
  std::vector<std::string> out;
  for (auto* s : order) out.emplace_back(s->name());
  return out;
}

std::string error_of(const std::vector<std::unique_ptr<Stage>>& stages) {
  try {
    schedule(stages, "run.toml");
  } catch (const InputError& e) {
    return e.what();
  }
  return "(no error)";
}

TEST(Scheduler, OrdersStagesAfterTheProducersOfTheirInputs) {
  std::vector<std::unique_ptr<Stage>> s;
  s.push_back(std::make_unique<FakeStage>("loads", std::vector<std::string>{"pressure/cp"},
                                          std::vector<std::string>{"loads/cn"}));
  s.push_back(std::make_unique<FakeStage>("cp", std::vector<std::string>{"signals/p"},
                                          std::vector<std::string>{"pressure/cp"}));
  s.push_back(std::make_unique<FakeStage>("calibrate", std::vector<std::string>{},
                                          std::vector<std::string>{"signals/p"}));
  EXPECT_EQ(names(schedule(s, "run.toml")), (std::vector<std::string>{"calibrate", "cp", "loads"}));
}

TEST(Scheduler, KeepsRegistryOrderAmongIndependentStages) {
  std::vector<std::unique_ptr<Stage>> s;
  s.push_back(std::make_unique<FakeStage>("a", std::vector<std::string>{}, std::vector<std::string>{"x"}));
  s.push_back(std::make_unique<FakeStage>("b", std::vector<std::string>{}, std::vector<std::string>{"y"}));
  EXPECT_EQ(names(schedule(s, "run.toml")), (std::vector<std::string>{"a", "b"}));
}

TEST(Scheduler, OptionalInputsOrderOnlyWhenAProducerIsEnabled) {
  std::vector<std::unique_ptr<Stage>> s;
  s.push_back(std::make_unique<FakeStage>("loads", std::vector<std::string>{}, std::vector<std::string>{"loads/cn"},
                                          std::vector<std::string>{"motion/alpha_deg"}));
  EXPECT_EQ(names(schedule(s, "run.toml")), (std::vector<std::string>{"loads"}));
  s.push_back(std::make_unique<FakeStage>("motion", std::vector<std::string>{},
                                          std::vector<std::string>{"motion/alpha_deg"}));
  EXPECT_EQ(names(schedule(s, "run.toml")), (std::vector<std::string>{"motion", "loads"}));
}

TEST(Scheduler, MissingInputNamesTheStageAndTheKey) {
  std::vector<std::unique_ptr<Stage>> s;
  s.push_back(std::make_unique<FakeStage>("loads", std::vector<std::string>{"pressure/cp"},
                                          std::vector<std::string>{"loads/cn"}));
  EXPECT_EQ(error_of(s), "run.toml: stage 'loads' needs 'pressure/cp', which no enabled stage produces");
}

TEST(Scheduler, DependencyCycleIsReportedWithItsPath) {
  std::vector<std::unique_ptr<Stage>> s;
  s.push_back(std::make_unique<FakeStage>("a", std::vector<std::string>{"y"}, std::vector<std::string>{"x"}));
  s.push_back(std::make_unique<FakeStage>("b", std::vector<std::string>{"x"}, std::vector<std::string>{"y"}));
  EXPECT_EQ(error_of(s), "run.toml: stages depend on each other in a cycle: a needs b needs a");
}

TEST(Scheduler, TwoProducersOfOneKeyAreRejected) {
  std::vector<std::unique_ptr<Stage>> s;
  s.push_back(std::make_unique<FakeStage>("a", std::vector<std::string>{}, std::vector<std::string>{"x"}));
  s.push_back(std::make_unique<FakeStage>("b", std::vector<std::string>{}, std::vector<std::string>{"x"}));
  EXPECT_EQ(error_of(s), "run.toml: stages 'a' and 'b' both produce 'x'; enable only one of them");
}

}  // namespace
}  // namespace stallscope
