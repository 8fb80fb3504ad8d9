#include <gtest/gtest.h>

#include <algorithm>
#include <array>
#include <cmath>
#include <fstream>
#include <limits>
#include <random>
#include <sstream>
#include <vector>

#include "stages/numerics/binned_statistics.hpp"
#include "stages/numerics/bracket_gather.hpp"
#include "stages/numerics/plateaus.hpp"
#include "stages/numerics/resample.hpp"
#include "stages/numerics/spectrum.hpp"
#include "stages/numerics/statistics.hpp"
#include "tests/support/test_support.hpp"

namespace stallscope::numerics {
namespace {

using stallscope::testing::ScratchDir;

// numpy computes the same DFT in double precision; the two FFTs differ by rounding only.
constexpr double kFftRelativeTolerance = 1e-10;

Eigen::VectorXd two_tone(Eigen::Index n, double rate_hz) {
  std::mt19937 gen(3);
  std::normal_distribution<double> noise(0.0, 0.2);
  Eigen::VectorXd y(n);
  for (Eigen::Index i = 0; i < n; ++i) {
    const double t = static_cast<double>(i) / rate_hz;
    y[i] = 4.0 + 2.0 * std::sin(2 * M_PI * 3.7 * t + 0.4) + 0.5 * std::sin(2 * M_PI * 11.0 * t) + noise(gen);
  }
  return y;
}

// Reference: numpy.fft.rfft through Debian's /usr/bin/python3.
TEST(AmplitudeSpectrum, AgreesWithNumpysRealFft) {
  ScratchDir dir;
  const auto script = dir.write("rfft.py",
                                "import sys, numpy as np\n"
                                "y = np.loadtxt(sys.argv[1])\n"
                                "np.savetxt(sys.argv[2], np.abs(np.fft.rfft(y)), fmt='%.17g')\n"
                                "d = np.abs(np.fft.rfft(y - y.mean()))\n"
                                "print(int(np.argmax(d[1:]) + 1))\n");
  for (Eigen::Index n : {1000, 999}) {
    const double rate = 200.0;
    const Eigen::VectorXd y = two_tone(n, rate);
    {
      std::ofstream out(dir / "y.txt");
      out.precision(17);
      for (double v : y) out << v << "\n";
    }
    const auto r = stallscope::testing::run_python(script, (dir / "y.txt").string() + " " + (dir / "a.txt").string());
    ASSERT_EQ(r.exit_code, 0) << r.err;
    const Eigen::VectorXd a = amplitude_spectrum(y);
    std::ifstream in(dir / "a.txt");
    std::vector<double> reference;
    for (double v; in >> v;) reference.push_back(v);
    ASSERT_EQ(static_cast<Eigen::Index>(reference.size()), a.size()) << "n = " << n;
    for (Eigen::Index j = 0; j < a.size(); ++j)
      EXPECT_NEAR(a[j], reference[static_cast<std::size_t>(j)], kFftRelativeTolerance * reference.front())
          << "bin " << j << ", n = " << n;
    const SpectralPeak peak = spectral_peak(y, rate);
    EXPECT_EQ(peak.bin, std::stol(r.out)) << "n = " << n;
    // The refined peak lies within half a bin of the true 3.7 Hz (bin width 0.2 Hz).
    EXPECT_NEAR(peak.frequency_hz, 3.7, 0.5 * rate / static_cast<double>(n));
  }
}

// The selection is our own quickselect: the order statistics of a full sort,
// exactly, on random data, on data with many repeated values and on sorted data.
TEST(Percentile, SelectsTheSameOrderStatisticsAsAFullSort) {
  std::mt19937 gen(3);
  std::normal_distribution<double> normal;
  std::uniform_int_distribution<int> small(0, 4);
  for (int trial = 0; trial < 300; ++trial) {
    const std::size_t n = 1 + static_cast<std::size_t>(trial) * 7 % 700;
    std::vector<double> v(n);
    for (auto& x : v) x = trial % 3 == 0 ? small(gen) : normal(gen);
    if (trial % 10 == 5) std::sort(v.begin(), v.end());
    std::vector<double> sorted = v;
    std::sort(sorted.begin(), sorted.end());
    for (double p : {0.0, 0.05, 0.5, 0.95, 1.0}) {
      const double h = p * static_cast<double>(n - 1);
      const auto lo = static_cast<std::size_t>(std::floor(h));
      const double expected = lo + 1 < n ? sorted[lo] + (h - lo) * (sorted[lo + 1] - sorted[lo]) : sorted[lo];
      std::vector<double> w = v;
      EXPECT_DOUBLE_EQ(percentile(w, p), expected) << "n " << n << " p " << p;
    }
  }
}

// Bin statistics take p05 and p95 from the tails when a bin is large: the
// same values as percentile over the whole bin, whatever the distribution.
TEST(BinStatistics, TakeTheSamePercentilesAsTheWholeBinForAnyDistribution) {
  std::mt19937 gen(21);
  std::normal_distribution<double> normal;
  std::exponential_distribution<double> skewed(1.0);
  std::uniform_int_distribution<int> few(0, 2);
  const int bins = 12, rows = 6000;
  Eigen::MatrixXd y(rows, 5);
  for (int i = 0; i < rows; ++i) {
    y(i, 0) = normal(gen);
    y(i, 1) = std::pow(skewed(gen), 3);                  // long upper tail
    y(i, 2) = few(gen);                                   // three values only
    y(i, 3) = (i % 2 ? 10 : -10) + 0.01 * normal(gen);    // two clusters
    y(i, 4) = i % 7 == 0 ? 100.0 : 0.001 * normal(gen);  // rare outliers
  }
  std::vector<Eigen::Index> sample;
  std::vector<int> bin;
  for (int i = 0; i < rows; ++i) {
    sample.push_back(i);
    bin.push_back((i * 7 + i / 13) % bins);
  }
  const BinnedStatistics st = bin_statistics(y, sample, bin, bins);
  for (Eigen::Index j = 0; j < y.cols(); ++j)
    for (int b = 0; b < bins; ++b) {
      std::vector<double> v;
      for (int i = 0; i < rows; ++i)
        if (bin[static_cast<std::size_t>(i)] == b) v.push_back(y(i, j));
      std::vector<double> w = v;
      EXPECT_DOUBLE_EQ(st.p05(b, j), percentile(w, 0.05)) << "column " << j << " bin " << b;
      EXPECT_DOUBLE_EQ(st.p95(b, j), percentile(w, 0.95)) << "column " << j << " bin " << b;
      EXPECT_EQ(st.n(b, j), static_cast<int>(v.size()));
    }
}

TEST(OrderPair, GivesTheKthAndNextSmallestAndTheLargestTwiceAtTheEnd) {
  std::vector<double> v{5, 3, 9, 1, 7, 3, 8, 2, 6, 4, 0, 11, 10, 12, 15, 14, 13, 16, 17, 18, 19};
  std::vector<double> sorted = v;
  std::sort(sorted.begin(), sorted.end());
  for (std::size_t k = 0; k < v.size(); ++k) {
    std::vector<double> w = v;
    const auto [a, b] = order_pair(w, k);
    EXPECT_EQ(a, sorted[k]) << "k " << k;
    EXPECT_EQ(b, sorted[std::min(k + 1, v.size() - 1)]) << "k " << k;
  }
  std::vector<double> none;
  EXPECT_THROW(order_pair(none, 0), std::invalid_argument);
}

TEST(OrderPair, BracketsALargeSetExactlyWhateverItsShape) {
  // Above 4096 values a sample brackets k first: every shape of data, and k
  // where the sample's margin runs off either end, must give std::sort's answer.
  std::mt19937 rng(11);
  std::normal_distribution<double> normal(0.0, 1.0);
  std::uniform_int_distribution<int> few(0, 3);
  const std::size_t n = 20000;
  std::vector<std::vector<double>> shapes(5, std::vector<double>(n));
  for (std::size_t i = 0; i < n; ++i) {
    shapes[0][i] = normal(rng);                                            // noise
    shapes[1][i] = few(rng);                                               // four values only
    shapes[2][i] = static_cast<double>(i);                                 // sorted
    shapes[3][i] = static_cast<double>(n - i);                             // reversed
    shapes[4][i] = i % 7 == 0 ? 1e3 * normal(rng) : 1e-3 * normal(rng);   // a field: cores amid noise
  }
  for (std::size_t s = 0; s < shapes.size(); ++s) {
    std::vector<double> sorted = shapes[s];
    std::sort(sorted.begin(), sorted.end());
    for (const std::size_t k : {std::size_t{0}, std::size_t{5}, std::size_t{100}, n / 3, n / 2 - 1, n / 2,
                                n - 101, n - 2, n - 1}) {
      std::vector<double> w = shapes[s];
      const auto [a, b] = order_pair(w, k);
      EXPECT_EQ(a, sorted[k]) << "shape " << s << " k " << k;
      EXPECT_EQ(b, sorted[std::min(k + 1, n - 1)]) << "shape " << s << " k " << k;
      std::sort(w.begin(), w.end());
      EXPECT_EQ(w, sorted) << "shape " << s;  // reordered, nothing lost
    }
  }
}

// The median and MAD of a full sort, of the finite values only.
std::pair<double, double> sorted_median_and_mad(const std::vector<double>& x) {
  std::vector<double> f;
  for (double v : x)
    if (std::isfinite(v)) f.push_back(v);
  auto median = [](std::vector<double> a) {
    std::sort(a.begin(), a.end());
    const std::size_t n = a.size();
    return n % 2 ? a[n / 2] : 0.5 * (a[n / 2 - 1] + a[n / 2]);
  };
  const double m = median(f);
  for (double& v : f) v = std::abs(v - m);
  return {m, median(f)};
}

TEST(GatherBracket, CountsAndGathersAsAPlainLoopInItsOrder) {
  // Four values a step on AVX2 machines, the rest one by one: every length
  // modulo 4, values and deviations, NaN and infinities among them.
  std::mt19937 rng(2);
  std::normal_distribution<double> normal(0.0, 1.0);
  const double inf = std::numeric_limits<double>::infinity();
  for (const std::size_t n : {std::size_t{0}, std::size_t{3}, std::size_t{4}, std::size_t{1001}, std::size_t{1002},
                              std::size_t{1003}}) {
    std::vector<double> x(n);
    for (std::size_t i = 0; i < n; ++i) x[i] = i % 9 == 0 ? std::nan("") : i % 23 == 0 ? -inf : normal(rng);
    for (const bool deviations : {false, true}) {
      const double centre = 0.3, lo = deviations ? 0.2 : -0.5, hi = deviations ? 0.9 : 0.25;
      std::vector<double> band(n + 4);
      const BracketCount c = gather_bracket(x, deviations ? &centre : nullptr, lo, hi, band.data());
      BracketCount want;
      std::vector<double> kept;
      for (const double xi : x) {
        const double v = deviations ? std::abs(xi - centre) : xi;
        if (!std::isfinite(v)) continue;
        ++want.finite;
        if (v < lo) ++want.below;
        if (v >= lo && v <= hi) kept.push_back(v);
      }
      EXPECT_EQ(c.finite, want.finite) << n;
      EXPECT_EQ(c.below, want.below) << n;
      ASSERT_EQ(c.between, kept.size()) << n;
      EXPECT_EQ(std::vector<double>(band.begin(), band.begin() + static_cast<std::ptrdiff_t>(c.between)), kept) << n;
    }
  }
}

TEST(MedianAndMad, AreASortsExactlyWhateverTheShapeAndTheGaps) {
  // Small sets order every value; from 4096 a sample brackets the middle.
  // Every shape, odd and even counts, NaN and infinities among the values
  // (left out), must give the full sort's answer to the bit; x is not touched.
  std::mt19937 rng(5);
  std::normal_distribution<double> normal(0.0, 1.0);
  std::uniform_int_distribution<int> few(0, 3);
  const double inf = std::numeric_limits<double>::infinity(), nan = std::nan("");
  for (const std::size_t n : {std::size_t{1}, std::size_t{2}, std::size_t{7}, std::size_t{4095}, std::size_t{19200},
                              std::size_t{19201}}) {
    std::vector<std::vector<double>> shapes(7, std::vector<double>(n));
    for (std::size_t i = 0; i < n; ++i) {
      shapes[6][i] = normal(rng);
      shapes[0][i] = normal(rng);
      shapes[1][i] = few(rng);
      shapes[2][i] = static_cast<double>(i);
      shapes[3][i] = i % 7 == 0 ? 1e3 * normal(rng) : 1e-3 * normal(rng);  // cores amid noise
      shapes[4][i] = i % 3 == 0 ? nan : i % 11 == 0 ? -inf : i % 13 == 0 ? inf : normal(rng);  // a masked field
      shapes[5][i] = i < n / 2 ? nan : normal(rng);                          // half the field masked in one block
    }
    // Large values just where the sample of 512 evenly spaced values looks
    // (white box): its bracket misses the middle, and every value is ordered.
    for (std::size_t j = 0; j < 512 && n >= 4096; ++j) shapes[6][j * n / 512] = 1e9;
    for (std::size_t s = 0; s < shapes.size(); ++s) {
      const std::vector<double> before = shapes[s];
      const MedianSpread got = median_and_mad(shapes[s]);
      const std::size_t finite = static_cast<std::size_t>(
          std::count_if(before.begin(), before.end(), [](double v) { return std::isfinite(v); }));
      EXPECT_EQ(got.n, finite) << "shape " << s << " n " << n;
      if (!finite) {
        EXPECT_TRUE(std::isnan(got.median) && std::isnan(got.mad));
        continue;
      }
      const auto [m, mad] = sorted_median_and_mad(before);
      EXPECT_EQ(got.median, m) << "shape " << s << " n " << n;
      EXPECT_EQ(got.mad, mad) << "shape " << s << " n " << n;
      for (std::size_t i = 0; i < n; ++i)
        ASSERT_TRUE(shapes[s][i] == before[i] || (std::isnan(shapes[s][i]) && std::isnan(before[i])));
    }
  }
  const std::vector<double> none = {nan, inf, -inf};
  EXPECT_EQ(median_and_mad(none).n, 0u);
  EXPECT_TRUE(std::isnan(median_and_mad(std::vector<double>{}).median));
}

// Reference: numpy.nanmedian of the values and of their absolute deviations,
// through Debian's /usr/bin/python3.
TEST(MedianAndMad, AgreeWithNumpy) {
  ScratchDir dir;
  const auto script = dir.write("mad.py",
                                "import sys, numpy as np\n"
                                "x = np.loadtxt(sys.argv[1])\n"
                                "x = x[np.isfinite(x)]\n"
                                "m = np.median(x)\n"
                                "print(repr(float(m)), repr(float(np.median(np.abs(x - m)))))\n");
  std::mt19937 rng(8);
  std::lognormal_distribution<double> skewed(0.0, 1.0);
  std::vector<double> x(20000);
  for (std::size_t i = 0; i < x.size(); ++i) x[i] = i % 17 == 0 ? std::nan("") : skewed(rng);
  {
    std::ofstream out(dir / "x.txt");
    out.precision(17);
    for (double v : x) out << v << "\n";
  }
  const auto r = stallscope::testing::run_python(script, (dir / "x.txt").string());
  ASSERT_EQ(r.exit_code, 0) << r.err;
  std::istringstream in(r.out);
  double m = 0, mad = 0;
  in >> m >> mad;
  const MedianSpread got = median_and_mad(x);
  EXPECT_EQ(got.median, m);
  EXPECT_EQ(got.mad, mad);
}

TEST(Percentile, InterpolatesBetweenOrderStatisticsLikeNumpy) {
  // numpy.percentile([4, 1, 3, 2], q) with the default linear method: 2.5, 1.15, 3.85, 1, 4.
  std::vector<double> v{4, 1, 3, 2};
  EXPECT_DOUBLE_EQ(percentile(v, 0.5), 2.5);
  EXPECT_NEAR(percentile(v, 0.05), 1.15, 1e-12);
  EXPECT_NEAR(percentile(v, 0.95), 3.85, 1e-12);
  EXPECT_DOUBLE_EQ(percentile(v, 0.0), 1.0);
  EXPECT_DOUBLE_EQ(percentile(v, 1.0), 4.0);
  std::vector<double> one{7};
  EXPECT_DOUBLE_EQ(percentile(one, 0.95), 7.0);
  std::vector<double> none;
  EXPECT_THROW(percentile(none, 0.5), std::invalid_argument);
}

// published-checks section 11 [C]: t(0.975, nu) to 4 decimals, tolerance 1e-4.
TEST(StudentT, MatchesTheTabulatedQuantiles) {
  constexpr double kTableTolerance = 1e-4;
  const std::array<double, 8> nu{1, 2, 4, 5, 9, 10, 19, 29};
  const std::array<double, 8> t{12.7062, 4.3027, 2.7764, 2.5706, 2.2622, 2.2281, 2.0930, 2.0452};
  for (std::size_t i = 0; i < nu.size(); ++i)
    EXPECT_NEAR(student_t_quantile(0.975, nu[i]), t[i], kTableTolerance) << "nu = " << nu[i];
  EXPECT_NEAR(student_t_quantile(0.975, 1e9), 1.9600, kTableTolerance);  // the normal limit
  EXPECT_NEAR(student_t_quantile(0.025, 9), -2.2622, kTableTolerance);
  EXPECT_EQ(student_t_quantile(0.5, 3), 0.0);
  EXPECT_THROW(student_t_quantile(1.0, 3), std::invalid_argument);
}

// published-checks section 11 example [C]: 1..10 -> mean 5.5, s 3.027650, CI [3.334149, 7.665851].
TEST(MeanInterval, ReproducesTheWorkedExample) {
  std::vector<double> x{1, 2, 3, 4, 5, 6, 7, 8, 9, 10};
  const MeanInterval m = mean_interval95(x);
  EXPECT_DOUBLE_EQ(m.mean, 5.5);
  EXPECT_NEAR(m.std, 3.027650, 1e-6);
  EXPECT_NEAR(m.lo, 3.334149, 1e-6);
  EXPECT_NEAR(m.hi, 7.665851, 1e-6);
  EXPECT_TRUE(std::isnan(mean_interval95(std::vector<double>{1.0}).lo));
}

TEST(InterpolateLinear, IsExactOnStraightLinesAndNeverExtrapolates) {
  Eigen::VectorXd ts(4), ys(4), tt(5);
  ts << 0, 1, 2, 4;
  ys << 1, 3, 5, 9;  // y = 2 t + 1
  tt << 0.5, 2, 3.25, -0.1, 4.1;
  const Eigen::VectorXd y = interpolate_linear(ts, ys, tt);
  EXPECT_DOUBLE_EQ(y[0], 2.0);
  EXPECT_DOUBLE_EQ(y[1], 5.0);
  EXPECT_DOUBLE_EQ(y[2], 7.5);
  EXPECT_TRUE(std::isnan(y[3]));
  EXPECT_TRUE(std::isnan(y[4]));
}

// A staircase up and back down: 0, 2, 4, 6, 4, 2, 0 deg, 2 s each, 0.5 s moves, noise 0.02 deg.
TEST(FindPlateaus, FindsEveryStepOfANoisyStaircase) {
  const std::array<double, 7> levels{0, 2, 4, 6, 4, 2, 0};
  const double rate = 100, hold = 2.0, move = 0.5;
  std::mt19937 gen(11);
  std::normal_distribution<double> noise(0.0, 0.02);
  std::vector<double> tv, yv;
  for (std::size_t j = 0; j < levels.size(); ++j) {
    const double start = static_cast<double>(j) * (hold + move);
    for (int i = 0; i < static_cast<int>(hold * rate); ++i) {
      tv.push_back(start + i / rate);
      yv.push_back(levels[j] + noise(gen));
    }
    if (j + 1 < levels.size())
      for (int i = 0; i < static_cast<int>(move * rate); ++i) {
        tv.push_back(start + hold + i / rate);
        yv.push_back(levels[j] + (levels[j + 1] - levels[j]) * i / (move * rate) + noise(gen));
      }
  }
  const Eigen::VectorXd t = Eigen::Map<Eigen::VectorXd>(tv.data(), static_cast<Eigen::Index>(tv.size()));
  const Eigen::VectorXd y = Eigen::Map<Eigen::VectorXd>(yv.data(), static_cast<Eigen::Index>(yv.size()));
  const auto p = find_plateaus(t, y, 0.2, 1.0, 0.1);
  ASSERT_EQ(p.size(), levels.size());
  // Noise 0.02 over ~180 samples: the level's standard error is 0.0015 deg; 5 sigma.
  constexpr double kLevelTolerance = 0.0075;
  for (std::size_t j = 0; j < levels.size(); ++j) {
    EXPECT_NEAR(p[j].level, levels[j], kLevelTolerance) << "plateau " << j;
    EXPECT_NEAR(p[j].std, 0.02, 0.005) << "plateau " << j;
    EXPECT_GE(t[p[j].begin], p[j].t_start + 0.1 - 1e-9);  // the settling time is left out
  }
}

TEST(FitRamp, RecoversAnExactHoldRampHold) {
  // 5 deg for 1 s, 20 deg/s for 1 s, 25 deg for 1 s, at 500 Hz.
  const Eigen::Index n = 1500;
  Eigen::VectorXd t(n), y(n);
  for (Eigen::Index i = 0; i < n; ++i) {
    t[i] = static_cast<double>(i) / 500.0;
    y[i] = t[i] < 1 ? 5.0 : t[i] < 2 ? 5.0 + 20.0 * (t[i] - 1) : 25.0;
  }
  const RampFit r = fit_ramp(t, y);
  EXPECT_NEAR(r.rate, 20.0, 1e-9);
  EXPECT_NEAR(r.t_start, 1.0, 1e-9);
  EXPECT_NEAR(r.t_end, 2.0, 1e-9);
  EXPECT_NEAR(r.rms_residual, 0.0, 1e-9);
  EXPECT_THROW(fit_ramp(t, Eigen::VectorXd::Constant(n, 3.0)), std::invalid_argument);
}

}  // namespace
}  // namespace stallscope::numerics
