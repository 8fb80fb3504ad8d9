// The draws of a Monte Carlo replica: pure functions of their key, standard
// normal, and read from [uncertainty] with clear errors.
#include "pipeline/perturbation.hpp"

#include <gtest/gtest.h>

#include <cmath>
#include <fstream>

#include "pipeline/errors.hpp"
#include "tests/support/test_support.hpp"

namespace stallscope {
namespace {

using testing::ScratchDir;

TEST(Perturbation, ADrawDependsOnlyOnItsKey) {
  UncertaintyModel m;
  const Perturbation a(m, 3), b(m, 3), other(m, 4);
  const double first = a.normal("zero:p01", 0);
  EXPECT_NE(a.normal("zero:p02", 0), first);
  EXPECT_NE(a.normal("zero:p01", 1), first);
  EXPECT_EQ(b.normal("zero:p01", 0), first) << "same key, same draw, whoever asks";
  EXPECT_NE(other.normal("zero:p01", 0), first) << "another replica draws anew";
  UncertaintyModel reseeded = m;
  reseeded.seed = 2;
  EXPECT_NE(Perturbation(reseeded, 3).normal("zero:p01", 0), first) << "another seed draws anew";
  EXPECT_EQ(a.error(0.0, "zero:p01"), 0.0);
  EXPECT_DOUBLE_EQ(a.error(2.5, "zero:p01"), 2.5 * first);
}

// Checked against scipy.stats.kstest (Kolmogorov-Smirnov against N(0, 1)),
// an independent implementation, on 20000 draws across replicas and indices.
TEST(Perturbation, DrawsAreStandardNormalByScipysKolmogorovSmirnovTest) {
  UncertaintyModel m;
  ScratchDir dir;
  const auto file = dir / "draws.txt";
  {
    std::ofstream out(file);
    out.precision(17);
    for (std::size_t r = 0; r < 200; ++r)
      for (std::uint64_t i = 0; i < 100; ++i) out << Perturbation(m, r).normal("tube_length", i) << "\n";
  }
  const auto script = dir.write("ks.py",
                                "import sys, numpy as np\nfrom scipy import stats\n"
                                "x = np.loadtxt(sys.argv[1])\n"
                                "r = stats.kstest(x, 'norm')\n"
                                "print(f'{r.pvalue:.6g} {x.mean():.6g} {x.std(ddof=1):.6g}')\n");
  const auto r = testing::run_python(script, testing::shell_quote(file.string()));
  ASSERT_EQ(r.exit_code, 0) << r.err;
  double p = 0, mean = 1, sd = 0;
  ASSERT_EQ(std::sscanf(r.out.c_str(), "%lf %lf %lf", &p, &mean, &sd), 3) << r.out;
  EXPECT_GT(p, 1e-3) << r.out;
  EXPECT_LT(std::abs(mean), 4.0 / std::sqrt(20000.0)) << r.out;  // 4 standard errors
  EXPECT_LT(std::abs(sd - 1.0), 0.03) << r.out;
}

TEST(UncertaintyModel, ReadsItsSectionAndNamesABadKey) {
  ScratchDir dir;
  auto model_of = [&](const std::string& text) {
    ConfigFile config = ConfigFile::parse("[uncertainty]\n" + text, dir / "run.toml");
    ConfigSection s(config, "uncertainty");
    UncertaintyModel m = UncertaintyModel::from(s);
    s.reject_unknown_keys();
    return m;
  };
  const UncertaintyModel m = model_of("replicas = 8\nseed = 7\ntaps_gain_relative = 0.01\nzero_drift = false\n");
  EXPECT_EQ(m.replicas, 8u);
  EXPECT_EQ(m.seed, 7u);
  EXPECT_EQ(m.taps_gain_relative, 0.01);
  EXPECT_FALSE(m.zero_drift);
  EXPECT_TRUE(m.calibration_residuals);
  try {
    model_of("replicas = 1\n");
    FAIL() << "one replica has no spread";
  } catch (const InputError& e) {
    EXPECT_NE(std::string(e.what()).find("run.toml:2"), std::string::npos) << e.what();
    EXPECT_NE(std::string(e.what()).find("replicas"), std::string::npos) << e.what();
  }
  EXPECT_THROW(model_of("q_relative = -0.1\n"), InputError);
  EXPECT_THROW(model_of("tube_lenght_relative = 0.1\n"), InputError);
}

}  // namespace
}  // namespace stallscope
