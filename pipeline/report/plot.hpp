#pragma once
// A small plotting layer over cairo's SVG surface: a canvas per file, axes
// with labelled quantities, nice ticks, lines, bands, markers, colour maps
// with a colour bar. Text is drawn by cairo as glyph outlines, so the SVG
// files need no fonts and no network to display the same everywhere.
#include <cairo.h>

#include <filesystem>
#include <functional>
#include <string>
#include <vector>

#include "pipeline/report/colour.hpp"

namespace stallscope::report {

struct Range {
  double lo = 0, hi = 1;
  double span() const { return hi - lo; }
};

// Tick positions at whole multiples of a 1, 2 or 5 x 10^n step (the rounding
// of Heckbert, "Nice numbers for graph labels", Graphics Gems, 1990), about
// `target` of them inside [lo, hi].
struct Ticks {
  std::vector<double> values;
  int decimals = 0;
};
Ticks nice_ticks(Range r, int target = 6);
// The smallest range of whole tick steps holding every finite value (a unit
// range about a single value; [0, 1] when there is none).
Range nice_range(const std::vector<double>& values, int target = 6, double pad_fraction = 0.02);
// A number as a tick label: fixed decimals, a true minus sign.
std::string tick_label(double v, int decimals);

enum class Anchor { kLeft, kCentre, kRight };
enum class Marker { kCircle, kSquare, kDiamond, kTriangle, kTriangleDown, kCross };
Marker marker_for(std::size_t index);

struct Stroke {
  Stroke(Rgb c = ink::kText, double w = 1.0, double o = 1.0, std::vector<double> d = {})
      : colour(c), width(w), opacity(o), dash(std::move(d)) {}
  Rgb colour;
  double width;
  double opacity;
  std::vector<double> dash;  // empty: solid
};

class Canvas {
 public:
  Canvas(std::filesystem::path file, double width_pt, double height_pt);
  Canvas(const Canvas&) = delete;
  Canvas& operator=(const Canvas&) = delete;
  ~Canvas();
  cairo_t* cr() const { return cr_; }
  double width() const { return width_; }
  double height() const { return height_; }
  // Text with a light markup: "_x" or "_{..}" subscript, "^{..}" superscript.
  void label(double x, double y, const std::string& text, double size, Anchor anchor = Anchor::kLeft,
             double angle_rad = 0, Rgb colour = ink::kText, bool bold = false);
  double label_width(const std::string& text, double size, bool bold = false);
  // Flushes the file; InputError (naming the file) if it cannot be written.
  void finish();

 private:
  std::filesystem::path file_;
  double width_, height_;
  cairo_surface_t* surface_ = nullptr;
  cairo_t* cr_ = nullptr;
  bool finished_ = false;
};

class Axes {
 public:
  // The plotting rectangle in canvas points, and the data ranges shown.
  Axes(Canvas& canvas, double left, double top, double width, double height, Range x, Range y);
  double px(double x) const { return left_ + (x - x_.lo) / x_.span() * width_; }
  double py(double y) const { return top_ + (1 - (y - y_.lo) / y_.span()) * height_; }
  const Range& x() const { return x_; }
  const Range& y() const { return y_; }

  // Grid, frame, ticks and the two axis labels (quantity and units).
  void frame(const std::string& x_label, const std::string& y_label, bool grid = true, bool y_ticks = true);
  // Connected line; a non-finite value breaks it. One SVG path per call.
  void line(const std::vector<double>& x, const std::vector<double>& y, const Stroke& stroke);
  // Fill between lo and hi along a curve that may turn back (a loop): drawn
  // as quadrilaterals between neighbouring points, so it never self-cancels.
  void band(const std::vector<double>& x, const std::vector<double>& lo, const std::vector<double>& hi, Rgb colour);
  void markers(const std::vector<double>& x, const std::vector<double>& y, Marker shape, Rgb colour,
               double size = 3.5, bool hollow = false);
  void horizontal(double y, const Stroke& stroke);
  void vertical(double x, const Stroke& stroke);
  // A filled closed polygon in data coordinates.
  void polygon(const std::vector<double>& x, const std::vector<double>& y, Rgb fill);
  // A filled rectangle in data coordinates.
  void rectangle(double x0, double y0, double x1, double y1, Rgb fill, double opacity = 1.0);
  // A colour map: colour(x, y) sampled at every device pixel of the plot
  // area (at `resolution` samples per point) and embedded as one image.
  void image(const std::function<Rgb(double x, double y)>& colour, double resolution = 2.0);
  // Text at a data position.
  void note(double x, double y, const std::string& text, double size, Anchor anchor = Anchor::kLeft,
            Rgb colour = ink::kText, double dx = 0, double dy = 0);
  // A small arrow head at (x, y) pointing along (dx, dy) in data units.
  void arrow(double x, double y, double dx, double dy, Rgb colour, double size = 5);
  void clip() const;
  void unclip() const;

 private:
  Canvas& canvas_;
  double left_, top_, width_, height_;
  Range x_, y_;
};

// A vertical colour bar in canvas points: the palette from range.lo (bottom)
// to range.hi (top), ticked, with its label.
void colour_bar(Canvas& canvas, double left, double top, double width, double height, Range range,
                const Palette& palette, const std::string& label, bool reversed = false);

// A row of legend entries starting at (left, top) in canvas points.
struct LegendEntry {
  // A line sample (none when the stroke's width is 0).
  LegendEntry(std::string t, Stroke s = Stroke(ink::kText, 0)) : text(std::move(t)), stroke(std::move(s)) {}
  static LegendEntry with_marker(std::string t, Marker m, Rgb c) {
    LegendEntry e(std::move(t));
    e.has_marker = true;
    e.marker = m;
    e.marker_colour = c;
    return e;
  }
  static LegendEntry with_swatch(std::string t, Rgb c) {
    LegendEntry e(std::move(t));
    e.swatch = true;
    e.swatch_colour = c;
    return e;
  }
  std::string text;
  Stroke stroke;
  bool has_marker = false;
  Marker marker = Marker::kCircle;
  Rgb marker_colour = ink::kText;
  bool swatch = false;  // a filled box instead
  Rgb swatch_colour = ink::kBand;
};
void legend(Canvas& canvas, double left, double top, const std::vector<LegendEntry>& entries, double size = 8.5,
            double max_width = 1e9);

}  // namespace stallscope::report
