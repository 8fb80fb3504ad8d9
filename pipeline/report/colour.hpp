#pragma once
// Colour for the report: the OKLab space (Ottosson 2020; the matrices of the
// CSS Color 4 definition) and the palettes built in it. A palette is a path
// through OKLab with lightness changing monotonically, resampled at equal
// OKLab arc length so that equal steps in data are equal steps in perceived
// colour difference (Euclidean OKLab distance is the space's difference metric).
#include <array>
#include <string>
#include <vector>

namespace stallscope::report {

struct Rgb {  // sRGB, gamma-encoded, each in [0, 1]
  double r = 0, g = 0, b = 0;
};

struct Oklab {
  double L = 0, a = 0, b = 0;
};

Oklab to_oklab(const Rgb& c);
// Unclipped: components may fall outside [0, 1] for colours outside sRGB.
Rgb to_rgb(const Oklab& c);
bool in_srgb_gamut(const Oklab& c);
// OKLCh (hue in degrees) to OKLab.
Oklab from_lch(double L, double C, double hue_deg);
// Keeps L and hue, lowers chroma (bisection) until the colour is inside sRGB.
Oklab into_gamut(const Oklab& c);
double oklab_distance(const Oklab& x, const Oklab& y);
// "#rrggbb"
std::string hex(const Rgb& c);

// A colour map: a table of entries equally spaced in OKLab arc length.
class Palette {
 public:
  // From ink-indigo (dark) through wine and copper to pale sand: Cp, swirl magnitude.
  static const Palette& sequential();
  // Two arms from a near-white centre, blue-teal below and brick above: signed quantities.
  static const Palette& diverging();
  // t in [0, 1], clamped; linear between neighbouring entries.
  Rgb at(double t) const;
  const std::vector<Oklab>& entries() const { return entries_; }
  const std::string& name() const { return name_; }
  const std::string& construction() const { return construction_; }

 private:
  std::string name_, construction_;
  std::vector<Oklab> entries_;

 public:
  // Resamples a finely sampled OKLab path at `entries` points of equal arc length.
  static Palette resampled(std::string name, std::string construction, const std::vector<Oklab>& path,
                           std::size_t entries);
  // Entries taken as they are (e.g. two arms resampled on their own).
  static Palette of_entries(std::string name, std::string construction, std::vector<Oklab> entries);
};

// Colours for series that must be told apart (events): equal lightness and
// chroma, hues a golden angle apart, so none dominates.
Rgb category_colour(std::size_t index);

// The report's fixed inks.
namespace ink {
inline constexpr Rgb kText{0.13, 0.14, 0.17};
inline constexpr Rgb kAxis{0.30, 0.31, 0.35};
inline constexpr Rgb kGrid{0.90, 0.905, 0.92};
inline constexpr Rgb kMean{0.10, 0.16, 0.33};      // phase average: deep ink blue
inline constexpr Rgb kCycle{0.42, 0.47, 0.58};     // single cycles: slate, drawn faint
inline constexpr double kCycleOpacity = 0.35;      // the only stroke with this opacity (tests count it)
inline constexpr Rgb kBand{0.84, 0.87, 0.93};      // p05-p95 band, opaque tint of kMean
inline constexpr Rgb kWarning{0.75, 0.22, 0.17};   // negative damping
inline constexpr Rgb kWarningBand{0.98, 0.90, 0.88};
}  // namespace ink

}  // namespace stallscope::report
