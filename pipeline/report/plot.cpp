#include "pipeline/report/plot.hpp"

#include <cairo-svg.h>
#include <fmt/format.h>

#include <algorithm>
#include <cmath>
#include <cstdint>
#include <numbers>

#include "pipeline/errors.hpp"

namespace stallscope::report {

namespace fs = std::filesystem;

namespace {

constexpr const char* kFont = "DejaVu Sans";  // Debian's fonts-dejavu-core; fontconfig substitutes otherwise
constexpr double kTickSize = 8.0;
constexpr double kLabelSize = 9.5;

// The 1-2-5 number nearest x (Heckbert's rounding rule).
double nice_number(double x, bool round) {
  const double e = std::floor(std::log10(x));
  const double f = x / std::pow(10.0, e);
  double nf;
  if (round) nf = f < 1.5 ? 1 : f < 3 ? 2 : f < 7 ? 5 : 10;
  else nf = f <= 1 ? 1 : f <= 2 ? 2 : f <= 5 ? 5 : 10;
  return nf * std::pow(10.0, e);
}

void set_colour(cairo_t* cr, Rgb c, double opacity = 1.0) { cairo_set_source_rgba(cr, c.r, c.g, c.b, opacity); }

void apply(cairo_t* cr, const Stroke& s) {
  set_colour(cr, s.colour, s.opacity);
  cairo_set_line_width(cr, s.width);
  cairo_set_line_join(cr, CAIRO_LINE_JOIN_ROUND);
  cairo_set_line_cap(cr, CAIRO_LINE_CAP_ROUND);
  cairo_set_dash(cr, s.dash.data(), static_cast<int>(s.dash.size()), 0);
}

// Splits "C_{p}" markup into runs: 0 normal, -1 subscript, +1 superscript.
struct Run {
  std::string text;
  int shift = 0;
};
std::vector<Run> runs_of(const std::string& s) {
  std::vector<Run> out{{"", 0}};
  for (std::size_t i = 0; i < s.size(); ++i) {
    const char c = s[i];
    if ((c == '_' || c == '^') && i + 1 < s.size()) {
      const int shift = c == '_' ? -1 : 1;
      std::string piece;
      if (s[i + 1] == '{') {
        const std::size_t close = s.find('}', i + 2);
        const std::size_t stop = close == std::string::npos ? s.size() : close;
        piece = s.substr(i + 2, stop - i - 2);
        i = stop;
      } else {
        // One UTF-8 character.
        std::size_t len = 1;
        const auto lead = static_cast<unsigned char>(s[i + 1]);
        if (lead >= 0xF0) len = 4;
        else if (lead >= 0xE0) len = 3;
        else if (lead >= 0xC0) len = 2;
        piece = s.substr(i + 1, len);
        i += len;
      }
      out.push_back({piece, shift});
      out.push_back({"", 0});
    } else {
      out.back().text += c;
    }
  }
  return out;
}

void marker_path(cairo_t* cr, double x, double y, Marker m, double r) {
  switch (m) {
    case Marker::kCircle: cairo_new_sub_path(cr); cairo_arc(cr, x, y, r, 0, 2 * std::numbers::pi); break;
    case Marker::kSquare: cairo_rectangle(cr, x - 0.85 * r, y - 0.85 * r, 1.7 * r, 1.7 * r); break;
    case Marker::kDiamond:
      cairo_move_to(cr, x, y - 1.2 * r); cairo_line_to(cr, x + r, y); cairo_line_to(cr, x, y + 1.2 * r);
      cairo_line_to(cr, x - r, y); cairo_close_path(cr); break;
    case Marker::kTriangle:
      cairo_move_to(cr, x, y - 1.15 * r); cairo_line_to(cr, x + r, y + 0.75 * r);
      cairo_line_to(cr, x - r, y + 0.75 * r); cairo_close_path(cr); break;
    case Marker::kTriangleDown:
      cairo_move_to(cr, x, y + 1.15 * r); cairo_line_to(cr, x + r, y - 0.75 * r);
      cairo_line_to(cr, x - r, y - 0.75 * r); cairo_close_path(cr); break;
    case Marker::kCross:
      cairo_move_to(cr, x - r, y - r); cairo_line_to(cr, x + r, y + r);
      cairo_move_to(cr, x - r, y + r); cairo_line_to(cr, x + r, y - r); break;
  }
}

}  // namespace

Ticks nice_ticks(Range r, int target) {
  Ticks t;
  if (!(r.span() > 0) || !std::isfinite(r.span())) return t;
  const double step = nice_number(r.span() / std::max(1, target - 1), true);
  t.decimals = std::max(0, static_cast<int>(-std::floor(std::log10(step) + 1e-9)));
  const double first = std::ceil(r.lo / step - 1e-9) * step;
  for (double v = first; v <= r.hi + 1e-9 * step; v += step) t.values.push_back(std::abs(v) < 1e-12 * step ? 0.0 : v);
  return t;
}

Range nice_range(const std::vector<double>& values, int target, double pad_fraction) {
  double lo = INFINITY, hi = -INFINITY;
  for (double v : values)
    if (std::isfinite(v)) {
      lo = std::min(lo, v);
      hi = std::max(hi, v);
    }
  if (!std::isfinite(lo)) return {0, 1};
  if (hi - lo < 1e-12 * std::max(1.0, std::abs(lo))) {
    const double half = std::max(0.5, 0.1 * std::abs(lo));
    lo -= half;
    hi += half;
  }
  const double pad = pad_fraction * (hi - lo);
  lo -= pad;
  hi += pad;
  const double step = nice_number((hi - lo) / std::max(1, target - 1), true);
  return {std::floor(lo / step) * step, std::ceil(hi / step) * step};
}

std::string tick_label(double v, int decimals) {
  std::string s = fmt::format("{:.{}f}", std::abs(v), decimals);
  const bool zero = s.find_first_not_of("0.") == std::string::npos;
  return (v < 0 && !zero ? "\u2212" : "") + s;
}

Marker marker_for(std::size_t index) {
  constexpr Marker kOrder[] = {Marker::kCircle,   Marker::kSquare,       Marker::kDiamond,
                               Marker::kTriangle, Marker::kTriangleDown, Marker::kCross};
  return kOrder[index % std::size(kOrder)];
}

Canvas::Canvas(fs::path file, double width_pt, double height_pt)
    : file_(std::move(file)), width_(width_pt), height_(height_pt) {
  surface_ = cairo_svg_surface_create(file_.c_str(), width_pt, height_pt);
  if (cairo_surface_status(surface_) != CAIRO_STATUS_SUCCESS) {
    cairo_surface_destroy(surface_);
    throw InputError(file_.string(), "cannot create the plot file");
  }
  cairo_svg_surface_restrict_to_version(surface_, CAIRO_SVG_VERSION_1_1);
  cr_ = cairo_create(surface_);
  cairo_set_source_rgb(cr_, 1, 1, 1);
  cairo_paint(cr_);
}

Canvas::~Canvas() {
  if (cr_) cairo_destroy(cr_);
  if (surface_) cairo_surface_destroy(surface_);
}

void Canvas::finish() {
  if (finished_) return;
  finished_ = true;
  cairo_destroy(cr_);
  cr_ = nullptr;
  cairo_surface_finish(surface_);
  const cairo_status_t status = cairo_surface_status(surface_);
  cairo_surface_destroy(surface_);
  surface_ = nullptr;
  if (status != CAIRO_STATUS_SUCCESS)
    throw InputError(file_.string(), std::string("plot not written: ") + cairo_status_to_string(status));
}

double Canvas::label_width(const std::string& text, double size, bool bold) {
  double w = 0;
  for (const Run& r : runs_of(text)) {
    if (r.text.empty()) continue;
    cairo_select_font_face(cr_, kFont, CAIRO_FONT_SLANT_NORMAL, bold ? CAIRO_FONT_WEIGHT_BOLD : CAIRO_FONT_WEIGHT_NORMAL);
    cairo_set_font_size(cr_, r.shift ? 0.72 * size : size);
    cairo_text_extents_t e;
    cairo_text_extents(cr_, r.text.c_str(), &e);
    w += e.x_advance;
  }
  return w;
}

void Canvas::label(double x, double y, const std::string& text, double size, Anchor anchor, double angle_rad,
                   Rgb colour, bool bold) {
  const double w = label_width(text, size, bold);
  cairo_save(cr_);
  cairo_translate(cr_, x, y);
  cairo_rotate(cr_, angle_rad);
  double pen = anchor == Anchor::kLeft ? 0 : anchor == Anchor::kCentre ? -0.5 * w : -w;
  set_colour(cr_, colour);
  for (const Run& r : runs_of(text)) {
    if (r.text.empty()) continue;
    cairo_select_font_face(cr_, kFont, CAIRO_FONT_SLANT_NORMAL, bold ? CAIRO_FONT_WEIGHT_BOLD : CAIRO_FONT_WEIGHT_NORMAL);
    cairo_set_font_size(cr_, r.shift ? 0.72 * size : size);
    cairo_move_to(cr_, pen, r.shift < 0 ? 0.28 * size : r.shift > 0 ? -0.42 * size : 0);
    cairo_show_text(cr_, r.text.c_str());
    cairo_text_extents_t e;
    cairo_text_extents(cr_, r.text.c_str(), &e);
    pen += e.x_advance;
  }
  cairo_restore(cr_);
}

Axes::Axes(Canvas& canvas, double left, double top, double width, double height, Range x, Range y)
    : canvas_(canvas), left_(left), top_(top), width_(width), height_(height), x_(x), y_(y) {
  if (!(x_.span() > 0)) x_ = {x_.lo - 0.5, x_.lo + 0.5};
  if (!(y_.span() > 0)) y_ = {y_.lo - 0.5, y_.lo + 0.5};
}

void Axes::clip() const {
  cairo_save(canvas_.cr());
  cairo_rectangle(canvas_.cr(), left_, top_, width_, height_);
  cairo_clip(canvas_.cr());
}

void Axes::unclip() const { cairo_restore(canvas_.cr()); }

void Axes::frame(const std::string& x_label, const std::string& y_label, bool grid, bool y_ticks) {
  cairo_t* cr = canvas_.cr();
  const Ticks tx = nice_ticks(x_), ty = y_ticks ? nice_ticks(y_, 6) : Ticks{};
  if (grid) {
    Stroke g{ink::kGrid, 0.6};
    apply(cr, g);
    for (double v : tx.values) {
      cairo_move_to(cr, px(v), top_);
      cairo_line_to(cr, px(v), top_ + height_);
    }
    for (double v : ty.values) {
      cairo_move_to(cr, left_, py(v));
      cairo_line_to(cr, left_ + width_, py(v));
    }
    cairo_stroke(cr);
  }
  apply(cr, Stroke{ink::kAxis, 0.8});
  cairo_rectangle(cr, left_, top_, width_, height_);
  for (double v : tx.values) {
    cairo_move_to(cr, px(v), top_ + height_);
    cairo_line_to(cr, px(v), top_ + height_ + 3.5);
  }
  for (double v : ty.values) {
    cairo_move_to(cr, left_, py(v));
    cairo_line_to(cr, left_ - 3.5, py(v));
  }
  cairo_stroke(cr);
  double widest = 0;
  for (double v : tx.values)
    canvas_.label(px(v), top_ + height_ + 5 + kTickSize, tick_label(v, tx.decimals), kTickSize, Anchor::kCentre, 0,
                  ink::kAxis);
  for (double v : ty.values) {
    const std::string s = tick_label(v, ty.decimals);
    widest = std::max(widest, canvas_.label_width(s, kTickSize));
    canvas_.label(left_ - 6, py(v) + 0.35 * kTickSize, s, kTickSize, Anchor::kRight, 0, ink::kAxis);
  }
  canvas_.label(left_ + 0.5 * width_, top_ + height_ + 18 + kLabelSize, x_label, kLabelSize, Anchor::kCentre);
  canvas_.label(left_ - 12 - widest, top_ + 0.5 * height_, y_label, kLabelSize, Anchor::kCentre,
                -0.5 * std::numbers::pi);
}

void Axes::line(const std::vector<double>& x, const std::vector<double>& y, const Stroke& stroke) {
  cairo_t* cr = canvas_.cr();
  clip();
  bool pen_down = false, any = false;
  for (std::size_t i = 0; i < std::min(x.size(), y.size()); ++i) {
    if (!std::isfinite(x[i]) || !std::isfinite(y[i])) {
      pen_down = false;
      continue;
    }
    if (pen_down) cairo_line_to(cr, px(x[i]), py(y[i]));
    else cairo_move_to(cr, px(x[i]), py(y[i]));
    pen_down = any = true;
  }
  if (any) {
    apply(cr, stroke);
    cairo_stroke(cr);
  }
  cairo_new_path(cr);
  unclip();
}

void Axes::band(const std::vector<double>& x, const std::vector<double>& lo, const std::vector<double>& hi,
                Rgb colour) {
  cairo_t* cr = canvas_.cr();
  clip();
  set_colour(cr, colour);
  cairo_set_line_width(cr, 0.6);
  cairo_set_dash(cr, nullptr, 0, 0);
  bool any = false;
  for (std::size_t i = 0; i + 1 < std::min({x.size(), lo.size(), hi.size()}); ++i) {
    const double v[] = {x[i], x[i + 1], lo[i], lo[i + 1], hi[i], hi[i + 1]};
    if (!std::all_of(std::begin(v), std::end(v), [](double d) { return std::isfinite(d); })) continue;
    cairo_move_to(cr, px(x[i]), py(lo[i]));
    cairo_line_to(cr, px(x[i + 1]), py(lo[i + 1]));
    cairo_line_to(cr, px(x[i + 1]), py(hi[i + 1]));
    cairo_line_to(cr, px(x[i]), py(hi[i]));
    cairo_close_path(cr);
    any = true;
  }
  if (any) {
    // Each quad filled on its own winding: stroke hides the hairline seams.
    cairo_set_fill_rule(cr, CAIRO_FILL_RULE_WINDING);
    cairo_fill_preserve(cr);
    cairo_stroke(cr);
  }
  cairo_new_path(cr);
  unclip();
}

void Axes::markers(const std::vector<double>& x, const std::vector<double>& y, Marker shape, Rgb colour, double size,
                   bool hollow) {
  cairo_t* cr = canvas_.cr();
  bool any = false;
  for (std::size_t i = 0; i < std::min(x.size(), y.size()); ++i) {
    if (!std::isfinite(x[i]) || !std::isfinite(y[i])) continue;
    if (x[i] < x_.lo || x[i] > x_.hi || y[i] < y_.lo || y[i] > y_.hi) continue;
    marker_path(cr, px(x[i]), py(y[i]), shape, size);
    any = true;
  }
  if (!any) return;
  cairo_set_dash(cr, nullptr, 0, 0);
  cairo_set_line_width(cr, shape == Marker::kCross ? 1.3 : 0.8);
  if (shape == Marker::kCross || hollow) {
    if (hollow && shape != Marker::kCross) {
      cairo_set_source_rgb(cr, 1, 1, 1);
      cairo_fill_preserve(cr);
    }
    set_colour(cr, colour);
    cairo_stroke(cr);
  } else {
    set_colour(cr, colour);
    cairo_fill_preserve(cr);
    cairo_set_source_rgb(cr, 1, 1, 1);
    cairo_set_line_width(cr, 0.6);
    cairo_stroke(cr);
  }
}

void Axes::horizontal(double y, const Stroke& stroke) {
  if (!std::isfinite(y) || y < y_.lo || y > y_.hi) return;
  line({x_.lo, x_.hi}, {y, y}, stroke);
}

void Axes::vertical(double x, const Stroke& stroke) {
  if (!std::isfinite(x) || x < x_.lo || x > x_.hi) return;
  line({x, x}, {y_.lo, y_.hi}, stroke);
}

void Axes::polygon(const std::vector<double>& x, const std::vector<double>& y, Rgb fill) {
  cairo_t* cr = canvas_.cr();
  clip();
  bool first = true;
  for (std::size_t i = 0; i < std::min(x.size(), y.size()); ++i) {
    if (!std::isfinite(x[i]) || !std::isfinite(y[i])) continue;
    if (first) cairo_move_to(cr, px(x[i]), py(y[i]));
    else cairo_line_to(cr, px(x[i]), py(y[i]));
    first = false;
  }
  if (!first) {
    cairo_close_path(cr);
    set_colour(cr, fill);
    cairo_fill(cr);
  }
  unclip();
}

void Axes::rectangle(double x0, double y0, double x1, double y1, Rgb fill, double opacity) {
  const double v[] = {x0, y0, x1, y1};
  if (!std::all_of(std::begin(v), std::end(v), [](double d) { return std::isfinite(d); })) return;
  cairo_t* cr = canvas_.cr();
  clip();
  const double a = px(std::min(x0, x1)), b = py(std::max(y0, y1));
  cairo_rectangle(cr, a, b, std::abs(px(x1) - px(x0)), std::abs(py(y1) - py(y0)));
  set_colour(cr, fill, opacity);
  cairo_fill(cr);
  unclip();
}

void Axes::image(const std::function<Rgb(double, double)>& colour, double resolution) {
  const int w = std::max(1, static_cast<int>(std::lround(width_ * resolution)));
  const int h = std::max(1, static_cast<int>(std::lround(height_ * resolution)));
  cairo_surface_t* img = cairo_image_surface_create(CAIRO_FORMAT_RGB24, w, h);
  cairo_surface_flush(img);
  unsigned char* data = cairo_image_surface_get_data(img);
  const int stride = cairo_image_surface_get_stride(img);
  for (int j = 0; j < h; ++j) {
    const double y = y_.hi - (j + 0.5) / h * y_.span();
    auto* row = reinterpret_cast<std::uint32_t*>(data + static_cast<std::ptrdiff_t>(j) * stride);
    for (int i = 0; i < w; ++i) {
      const Rgb c = colour(x_.lo + (i + 0.5) / w * x_.span(), y);
      auto byte = [](double v) { return static_cast<std::uint32_t>(std::lround(std::clamp(v, 0.0, 1.0) * 255)); };
      row[i] = (byte(c.r) << 16) | (byte(c.g) << 8) | byte(c.b);
    }
  }
  cairo_surface_mark_dirty(img);
  cairo_t* cr = canvas_.cr();
  cairo_save(cr);
  cairo_translate(cr, left_, top_);
  cairo_scale(cr, width_ / w, height_ / h);
  cairo_set_source_surface(cr, img, 0, 0);
  cairo_pattern_set_filter(cairo_get_source(cr), CAIRO_FILTER_BILINEAR);
  cairo_paint(cr);
  cairo_restore(cr);
  cairo_surface_destroy(img);
}

void Axes::note(double x, double y, const std::string& text, double size, Anchor anchor, Rgb colour, double dx,
                double dy) {
  if (!std::isfinite(x) || !std::isfinite(y)) return;
  canvas_.label(px(x) + dx, py(y) + dy, text, size, anchor, 0, colour);
}

void Axes::arrow(double x, double y, double dx, double dy, Rgb colour, double size) {
  if (!std::isfinite(x) || !std::isfinite(y)) return;
  const double ux = px(x + dx) - px(x), uy = py(y + dy) - py(y);
  const double n = std::hypot(ux, uy);
  if (!(n > 0)) return;
  const double cx = ux / n, cy = uy / n;
  cairo_t* cr = canvas_.cr();
  const double tx = px(x), ty = py(y);
  cairo_move_to(cr, tx + cx * size, ty + cy * size);
  cairo_line_to(cr, tx - cx * size * 0.6 - cy * size * 0.6, ty - cy * size * 0.6 + cx * size * 0.6);
  cairo_line_to(cr, tx - cx * size * 0.6 + cy * size * 0.6, ty - cy * size * 0.6 - cx * size * 0.6);
  cairo_close_path(cr);
  set_colour(cr, colour);
  cairo_fill(cr);
}

void colour_bar(Canvas& canvas, double left, double top, double width, double height, Range range,
                const Palette& palette, const std::string& label, bool reversed) {
  Axes bar(canvas, left, top, width, height, {0, 1}, range);
  bar.image([&](double, double y) {
    const double t = (y - range.lo) / range.span();
    return palette.at(reversed ? 1 - t : t);
  });
  cairo_t* cr = canvas.cr();
  apply(cr, Stroke{ink::kAxis, 0.8});
  cairo_rectangle(cr, left, top, width, height);
  const Ticks t = nice_ticks(range, 6);
  for (double v : t.values) {
    cairo_move_to(cr, left + width, bar.py(v));
    cairo_line_to(cr, left + width + 3, bar.py(v));
  }
  cairo_stroke(cr);
  double widest = 0;
  for (double v : t.values) {
    const std::string s = tick_label(v, t.decimals);
    widest = std::max(widest, canvas.label_width(s, kTickSize));
    canvas.label(left + width + 5, bar.py(v) + 0.35 * kTickSize, s, kTickSize, Anchor::kLeft, 0, ink::kAxis);
  }
  canvas.label(left + width + 12 + widest, top + 0.5 * height, label, kLabelSize, Anchor::kCentre,
               0.5 * std::numbers::pi);
}

void legend(Canvas& canvas, double left, double top, const std::vector<LegendEntry>& entries, double size,
            double max_width) {
  cairo_t* cr = canvas.cr();
  double x = left, y = top;
  for (const LegendEntry& e : entries) {
    const double w = 22 + canvas.label_width(e.text, size) + 12;
    if (x > left && x + w > left + max_width) {
      x = left;
      y += size + 6;
    }
    if (e.swatch) {
      set_colour(cr, e.swatch_colour);
      cairo_rectangle(cr, x, y - 0.5 * size - 3, 16, 7);
      cairo_fill(cr);
    }
    if (e.stroke.width > 0 && !e.swatch) {
      apply(cr, e.stroke);
      cairo_move_to(cr, x, y - 0.35 * size);
      cairo_line_to(cr, x + 16, y - 0.35 * size);
      cairo_stroke(cr);
    }
    if (e.has_marker) {
      marker_path(cr, x + 8, y - 0.35 * size, e.marker, 3.2);
      cairo_set_dash(cr, nullptr, 0, 0);
      set_colour(cr, e.marker_colour);
      if (e.marker == Marker::kCross) {
        cairo_set_line_width(cr, 1.3);
        cairo_stroke(cr);
      } else {
        cairo_fill(cr);
      }
    }
    canvas.label(x + 20, y, e.text, size, Anchor::kLeft, 0, ink::kText);
    x += w;
  }
}

}  // namespace stallscope::report
