#include <gtest/gtest.h>

#include "pipeline/run_store.hpp"

namespace stallscope {
namespace {

TEST(RunStore, HoldsTypedValuesUnderArchivePaths) {
  RunStore s;
  s.put("run/chord_m", Scalar{0.3, "m"});
  s.put("loads/cn", Series{Eigen::VectorXd::LinSpaced(5, 0, 1), "1"}, {{"moment_ref_x_over_c", 0.25}});
  EXPECT_DOUBLE_EQ(s.get<Scalar>("run/chord_m").value, 0.3);
  EXPECT_EQ(s.get<Series>("loads/cn").values.size(), 5);
  EXPECT_EQ(std::get<double>(s.entry("loads/cn").attributes.at("moment_ref_x_over_c")), 0.25);
  EXPECT_EQ(s.keys(), (std::vector<std::string>{"loads/cn", "run/chord_m"}));
}

TEST(RunStore, AskingForTheWrongTypeOrAMissingKeyIsAnInternalError) {
  RunStore s;
  s.put("run/chord_m", Scalar{0.3, "m"});
  EXPECT_THROW(s.get<Series>("run/chord_m"), std::logic_error);
  EXPECT_THROW(s.get<Scalar>("run/span_m"), std::logic_error);
  EXPECT_THROW(s.put("/abs", Scalar{}), std::logic_error);
}

TEST(Table, ColumnsMustHaveEqualLength) {
  Table t;
  t.add({"cycle", "1", std::vector<std::int64_t>{1, 2, 3}});
  t.add({"t_s", "s", std::vector<double>{0.1, 0.2, 0.3}});
  EXPECT_EQ(t.rows(), 3u);
  EXPECT_THROW(t.add({"valid", "", std::vector<std::string>{"yes"}}), std::logic_error);
  EXPECT_DOUBLE_EQ(t.numbers("t_s")[2], 0.3);
  EXPECT_THROW(t.numbers("cycle"), std::logic_error);
}

}  // namespace
}  // namespace stallscope
