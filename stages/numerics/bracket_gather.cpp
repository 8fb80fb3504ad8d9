#include "stages/numerics/bracket_gather.hpp"

#include <array>
#include <bit>
#include <cmath>
#include <cstdint>
#include <limits>

#if defined(__x86_64__) && defined(__GNUC__)
#include <immintrin.h>
#define STALLSCOPE_GATHER_AVX2 1
#endif

namespace stallscope::numerics {

namespace {

constexpr double kLargest = std::numeric_limits<double>::max();

// Branch-free: on noisy data a branch per value would mispredict often.
BracketCount gather_plain(const double* x, std::size_t n, const double* centre, double lo, double hi, double* band) {
  BracketCount c;
  for (std::size_t i = 0; i < n; ++i) {
    const double v = centre ? std::abs(x[i] - *centre) : x[i];
    const bool finite = std::abs(v) <= kLargest;
    c.finite += finite;
    c.below += finite & (v < lo);
    band[c.between] = v;
    c.between += finite & (v >= lo) & (v <= hi);
  }
  return c;
}

#ifdef STALLSCOPE_GATHER_AVX2
// For each 4-bit mask of kept lanes, the float-pair permutation that moves
// the kept doubles, in order, to the front.
constexpr std::array<std::array<std::int32_t, 8>, 16> kLeftPack = [] {
  std::array<std::array<std::int32_t, 8>, 16> t{};
  for (int m = 0; m < 16; ++m) {
    int out = 0;
    for (int lane = 0; lane < 4; ++lane)
      if (m & (1 << lane)) t[m][2 * out] = 2 * lane, t[m][2 * out + 1] = 2 * lane + 1, ++out;
    for (; out < 4; ++out) t[m][2 * out] = 0, t[m][2 * out + 1] = 1;
  }
  return t;
}();

__attribute__((target("avx2,popcnt"))) BracketCount gather_avx2(const double* x, std::size_t n, const double* centre,
                                                                 double lo, double hi, double* band) {
  const __m256d sign = _mm256_set1_pd(-0.0), largest = _mm256_set1_pd(kLargest);
  const __m256d vlo = _mm256_set1_pd(lo), vhi = _mm256_set1_pd(hi), vc = _mm256_set1_pd(centre ? *centre : 0.0);
  __m256i finite = _mm256_setzero_si256(), below = _mm256_setzero_si256();
  std::size_t between = 0, i = 0;
  for (; i + 4 <= n; i += 4) {
    __m256d v = _mm256_loadu_pd(x + i);
    if (centre) v = _mm256_andnot_pd(sign, _mm256_sub_pd(v, vc));
    const __m256d ok = _mm256_cmp_pd(_mm256_andnot_pd(sign, v), largest, _CMP_LE_OQ);
    const __m256d under = _mm256_and_pd(ok, _mm256_cmp_pd(v, vlo, _CMP_LT_OQ));
    const __m256d in = _mm256_and_pd(ok, _mm256_and_pd(_mm256_cmp_pd(v, vlo, _CMP_GE_OQ), _mm256_cmp_pd(v, vhi, _CMP_LE_OQ)));
    finite = _mm256_sub_epi64(finite, _mm256_castpd_si256(ok));  // a true lane is -1
    below = _mm256_sub_epi64(below, _mm256_castpd_si256(under));
    const int keep = _mm256_movemask_pd(in);
    const __m256i order = _mm256_loadu_si256(reinterpret_cast<const __m256i*>(kLeftPack[static_cast<std::size_t>(keep)].data()));
    _mm256_storeu_ps(reinterpret_cast<float*>(band + between), _mm256_permutevar8x32_ps(_mm256_castpd_ps(v), order));
    between += static_cast<std::size_t>(std::popcount(static_cast<unsigned>(keep)));
  }
  alignas(32) std::array<std::int64_t, 4> f{}, b{};
  _mm256_store_si256(reinterpret_cast<__m256i*>(f.data()), finite);
  _mm256_store_si256(reinterpret_cast<__m256i*>(b.data()), below);
  BracketCount rest = gather_plain(x + i, n - i, centre, lo, hi, band + between);
  rest.finite += static_cast<std::size_t>(f[0] + f[1] + f[2] + f[3]);
  rest.below += static_cast<std::size_t>(b[0] + b[1] + b[2] + b[3]);
  rest.between += between;
  return rest;
}
#endif

}  // namespace

BracketCount gather_bracket(std::span<const double> x, const double* centre, double lo, double hi, double* band) {
#ifdef STALLSCOPE_GATHER_AVX2
  static const bool avx2 = __builtin_cpu_supports("avx2") && __builtin_cpu_supports("popcnt");
  if (avx2) return gather_avx2(x.data(), x.size(), centre, lo, hi, band);
#endif
  return gather_plain(x.data(), x.size(), centre, lo, hi, band);
}

}  // namespace stallscope::numerics
