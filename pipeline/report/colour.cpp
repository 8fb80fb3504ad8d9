#include "pipeline/report/colour.hpp"

#include <fmt/format.h>

#include <algorithm>
#include <cmath>
#include <numbers>
#include <stdexcept>

namespace stallscope::report {

namespace {

double to_linear(double v) { return v <= 0.04045 ? v / 12.92 : std::pow((v + 0.055) / 1.055, 2.4); }
double to_gamma(double v) {
  return v <= 0.0031308 ? 12.92 * v : 1.055 * std::pow(v, 1.0 / 2.4) - 0.055;
}

Oklab lerp(const Oklab& x, const Oklab& y, double f) {
  return {x.L + f * (y.L - x.L), x.a + f * (y.a - x.a), x.b + f * (y.b - x.b)};
}

Rgb clipped(const Rgb& c) {
  return {std::clamp(c.r, 0.0, 1.0), std::clamp(c.g, 0.0, 1.0), std::clamp(c.b, 0.0, 1.0)};
}

// A path given by lightness, chroma and hue as functions of s in [0, 1],
// each point brought into gamut by lowering its chroma.
template <typename F>
std::vector<Oklab> lch_path(F lch, std::size_t points = 2049) {
  std::vector<Oklab> out;
  for (std::size_t i = 0; i < points; ++i) {
    const double s = static_cast<double>(i) / static_cast<double>(points - 1);
    const auto [L, C, h] = lch(s);
    out.push_back(into_gamut(from_lch(L, C, h)));
  }
  return out;
}

}  // namespace

Oklab to_oklab(const Rgb& c) {
  const double r = to_linear(c.r), g = to_linear(c.g), b = to_linear(c.b);
  const double l = std::cbrt(0.4122214708 * r + 0.5363325363 * g + 0.0514459929 * b);
  const double m = std::cbrt(0.2119034982 * r + 0.6806995451 * g + 0.1073969566 * b);
  const double s = std::cbrt(0.0883024619 * r + 0.2817188376 * g + 0.6299787005 * b);
  return {0.2104542553 * l + 0.7936177850 * m - 0.0040720468 * s,
          1.9779984951 * l - 2.4285922050 * m + 0.4505937099 * s,
          0.0259040371 * l + 0.7827717662 * m - 0.8086757660 * s};
}

Rgb to_rgb(const Oklab& c) {
  const double l = std::pow(c.L + 0.3963377774 * c.a + 0.2158037573 * c.b, 3);
  const double m = std::pow(c.L - 0.1055613458 * c.a - 0.0638541728 * c.b, 3);
  const double s = std::pow(c.L - 0.0894841775 * c.a - 1.2914855480 * c.b, 3);
  const double r = 4.0767416621 * l - 3.3077115913 * m + 0.2309699292 * s;
  const double g = -1.2684380046 * l + 2.6097574011 * m - 0.3413193965 * s;
  const double b = -0.0041960863 * l - 0.7034186147 * m + 1.7076147010 * s;
  auto encode = [](double v) { return v < 0 ? -to_gamma(-v) : to_gamma(v); };
  return {encode(r), encode(g), encode(b)};
}

bool in_srgb_gamut(const Oklab& c) {
  constexpr double kSlack = 1e-9;  // round-off at the gamut surface
  const Rgb x = to_rgb(c);
  for (double v : {x.r, x.g, x.b})
    if (!(v >= -kSlack && v <= 1 + kSlack)) return false;
  return true;
}

Oklab from_lch(double L, double C, double hue_deg) {
  const double h = hue_deg * std::numbers::pi / 180.0;
  return {L, C * std::cos(h), C * std::sin(h)};
}

Oklab into_gamut(const Oklab& c) {
  if (in_srgb_gamut(c)) return c;
  double lo = 0, hi = 1;
  for (int i = 0; i < 40; ++i) {
    const double mid = 0.5 * (lo + hi);
    (in_srgb_gamut({c.L, c.a * mid, c.b * mid}) ? lo : hi) = mid;
  }
  return {c.L, c.a * lo, c.b * lo};
}

double oklab_distance(const Oklab& x, const Oklab& y) {
  return std::sqrt((x.L - y.L) * (x.L - y.L) + (x.a - y.a) * (x.a - y.a) + (x.b - y.b) * (x.b - y.b));
}

std::string hex(const Rgb& c) {
  const Rgb k = clipped(c);
  auto byte = [](double v) { return static_cast<int>(std::lround(v * 255)); };
  return fmt::format("#{:02x}{:02x}{:02x}", byte(k.r), byte(k.g), byte(k.b));
}

Palette Palette::resampled(std::string name, std::string construction, const std::vector<Oklab>& path,
                           std::size_t entries) {
  if (path.size() < 2 || entries < 2) throw std::logic_error("a palette path needs at least two points");
  std::vector<double> arc(path.size(), 0.0);
  for (std::size_t i = 1; i < path.size(); ++i) arc[i] = arc[i - 1] + oklab_distance(path[i - 1], path[i]);
  std::vector<Oklab> out;
  std::size_t j = 1;
  for (std::size_t k = 0; k < entries; ++k) {
    const double want = arc.back() * static_cast<double>(k) / static_cast<double>(entries - 1);
    while (j + 1 < path.size() && arc[j] < want) ++j;
    const double span = arc[j] - arc[j - 1];
    const double f = span > 0 ? std::clamp((want - arc[j - 1]) / span, 0.0, 1.0) : 0.0;
    out.push_back(lerp(path[j - 1], path[j], f));
  }
  return of_entries(std::move(name), std::move(construction), std::move(out));
}

Palette Palette::of_entries(std::string name, std::string construction, std::vector<Oklab> entries) {
  if (entries.size() < 2) throw std::logic_error("a palette needs at least two entries");
  Palette p;
  p.name_ = std::move(name);
  p.construction_ = std::move(construction);
  p.entries_ = std::move(entries);
  return p;
}

Rgb Palette::at(double t) const {
  if (!std::isfinite(t)) return {1, 1, 1};
  const double x = std::clamp(t, 0.0, 1.0) * static_cast<double>(entries_.size() - 1);
  const std::size_t i = std::min(static_cast<std::size_t>(x), entries_.size() - 2);
  return clipped(to_rgb(lerp(entries_[i], entries_[i + 1], x - static_cast<double>(i))));
}

const Palette& Palette::sequential() {
  // Lightness 0.22 -> 0.96 linear; hue turns 290 -> 100 deg the long way round
  // through red (indigo, wine, copper, sand); chroma an arch peaking at 0.15.
  static const Palette p = Palette::resampled(
      "stallscope dusk",
      "OKLCh path: L 0.22 to 0.96 linear, hue 290 to 460 (=100) deg, chroma 0.03 + 0.12 sin(pi s); "
      "chroma lowered into sRGB; resampled to 256 entries of equal OKLab arc length",
      lch_path([](double s) {
        return std::array{0.22 + 0.74 * s, 0.03 + 0.12 * std::sin(std::numbers::pi * s), 290.0 + 170.0 * s};
      }),
      256);
  return p;
}

const Palette& Palette::diverging() {
  // Each arm: L from 0.34 at its end to 0.965 at the centre, chroma rising
  // from 0 to 0.13; the cold arm at hue 235 deg, the warm one at 40 deg. Each
  // arm is resampled on its own so that the centre sits exactly at t = 0.5.
  static const Palette p = [] {
    auto arm = [](double hue) {
      return lch_path([hue](double u) {  // u = 0 at the centre
        return std::array{0.965 - 0.625 * u, 0.13 * std::sin(0.5 * std::numbers::pi * u), hue};
      }, 1025);
    };
    std::vector<Oklab> cold = arm(235.0);
    std::reverse(cold.begin(), cold.end());
    const Palette low = resampled("", "", cold, 128), high = resampled("", "", arm(40.0), 128);
    std::vector<Oklab> both = low.entries();
    both.insert(both.end(), high.entries().begin() + 1, high.entries().end());
    return of_entries("stallscope tide and brick",
                      "two OKLCh arms meeting at L 0.965, C 0: L falls linearly to 0.34 and chroma rises as "
                      "0.13 sin(pi u / 2); hue 235 deg below the centre, 40 deg above; chroma lowered into sRGB; "
                      "each arm resampled to 128 entries of equal OKLab arc length",
                      std::move(both));
  }();
  return p;
}

Rgb category_colour(std::size_t index) {
  constexpr double kGoldenAngle = 137.50776;  // degrees: successive hues never repeat
  const double hue = std::fmod(25.0 + kGoldenAngle * static_cast<double>(index), 360.0);
  return clipped(to_rgb(into_gamut(from_lch(0.58, 0.14, hue))));
}

}  // namespace stallscope::report
