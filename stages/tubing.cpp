#include "stages/tubing.hpp"

#include <fftw3.h>

#include <algorithm>
#include <cmath>
#include <fmt/format.h>
#include <map>
#include <mutex>
#include <optional>
#include <numbers>
#include <stdexcept>

#include "calib/air/air.hpp"
#include "calib/lines/lines_file.hpp"
#include "calib/lines/tap_table.hpp"
#include "calib/tubing/bergh_tijdeman.hpp"
#include "pipeline/errors.hpp"
#include "pipeline/perturbation.hpp"
#include "stages/numerics/fftw_planner.hpp"

namespace stallscope {

namespace tubing {

namespace {

// Real record -> spectrum x gain(bin) -> real record, zero-padded to a fast size.
// Plans are made once; run() may be called from several threads at once.
class SpectralFilter {
 public:
  explicit SpectralFilter(int n) : n_(n), nfft_(fast_fft_size(n)) {
    std::lock_guard lock(numerics::fftw_planner_mutex());
    double* in = fftw_alloc_real(static_cast<std::size_t>(nfft_));
    fftw_complex* out = fftw_alloc_complex(static_cast<std::size_t>(bins()));
    forward_ = fftw_plan_dft_r2c_1d(nfft_, in, out, FFTW_ESTIMATE);
    inverse_ = fftw_plan_dft_c2r_1d(nfft_, out, in, FFTW_ESTIMATE);
    fftw_free(in);
    fftw_free(out);
  }
  SpectralFilter(const SpectralFilter&) = delete;
  SpectralFilter& operator=(const SpectralFilter&) = delete;
  ~SpectralFilter() {
    std::lock_guard lock(numerics::fftw_planner_mutex());
    fftw_destroy_plan(forward_);
    fftw_destroy_plan(inverse_);
  }
  int bins() const { return nfft_ / 2 + 1; }
  double bin_hz(double rate) const { return rate / nfft_; }

  // gains[k] multiplies bin k. The end-to-end line is taken out first and put back after.
  Eigen::VectorXd run(const Eigen::VectorXd& x, const std::vector<std::complex<double>>& gains) const {
    Eigen::VectorXd y(n_);
    run(x, gains, y);
    return y;
  }
  // The same into y (a column of the corrected record), with no copies between.
  void run(Eigen::Ref<const Eigen::VectorXd> x, const std::vector<std::complex<double>>& gains,
           Eigen::Ref<Eigen::VectorXd> y) const {
    double* in = fftw_alloc_real(static_cast<std::size_t>(nfft_));
    fftw_complex* spec = fftw_alloc_complex(static_cast<std::size_t>(bins()));
    const double x0 = x[0], slope = n_ > 1 ? (x[n_ - 1] - x[0]) / (n_ - 1) : 0.0;
    for (int i = 0; i < n_; ++i) in[i] = x[i] - (x0 + slope * i);
    std::fill(in + n_, in + nfft_, 0.0);
    fftw_execute_dft_r2c(forward_, in, spec);
    for (int k = 0; k < bins(); ++k) {
      const std::complex<double> v = std::complex<double>(spec[k][0], spec[k][1]) * gains[static_cast<std::size_t>(k)];
      spec[k][0] = v.real();
      spec[k][1] = v.imag();
    }
    fftw_execute_dft_c2r(inverse_, spec, in);
    for (int i = 0; i < n_; ++i) y[i] = in[i] / nfft_ + x0 + slope * i;
    fftw_free(in);
    fftw_free(spec);
  }

 private:
  int n_, nfft_;
  fftw_plan forward_ = nullptr, inverse_ = nullptr;
};

// H tabulated on a uniform grid up to f_top and interpolated linearly (H is
// smooth on the grid spacing: far finer than any resonance width).
std::vector<std::complex<double>> bin_gains(const SpectralFilter& filter, double rate, const Response& h,
                                            double f_top, int grid, bool invert, double cutoff, double taper) {
  std::vector<std::complex<double>> table(static_cast<std::size_t>(grid) + 1);
  for (int i = 0; i <= grid; ++i) table[static_cast<std::size_t>(i)] = h(f_top * i / grid);
  std::vector<std::complex<double>> g(static_cast<std::size_t>(filter.bins()), 0.0);
  for (int k = 0; k < filter.bins(); ++k) {
    const double f = k * filter.bin_hz(rate);
    if (f > f_top) break;
    const double u = f / f_top * grid;
    const auto i = std::min(static_cast<int>(u), grid - 1);
    const double w = u - i;
    const std::complex<double> hk =
        (1 - w) * table[static_cast<std::size_t>(i)] + w * table[static_cast<std::size_t>(i) + 1];
    g[static_cast<std::size_t>(k)] = invert ? taper_weight(f, cutoff, taper) / hk : hk;
  }
  return g;
}

}  // namespace

int fast_fft_size(int n) {
  for (int m = std::max(1, n);; ++m) {
    int r = m;
    for (int p : {2, 3, 5, 7})
      while (r % p == 0) r /= p;
    if (r == 1) return m;
  }
}

double taper_weight(double f, double cutoff, double taper) {
  const double start = (1 - taper) * cutoff;
  if (f <= start) return 1.0;
  if (f >= cutoff) return 0.0;
  return 0.5 * (1 + std::cos(std::numbers::pi * (f - start) / (cutoff - start)));
}

double usable_bandwidth(const Response& h, double min_gain, double f_max, int steps) {
  double previous = 0.0;
  for (int i = 1; i <= steps; ++i) {
    const double f = f_max * i / steps;
    if (std::abs(h(f)) < min_gain) {
      double lo = previous, hi = f;
      for (int k = 0; k < 40; ++k) {
        const double mid = 0.5 * (lo + hi);
        (std::abs(h(mid)) >= min_gain ? lo : hi) = mid;
      }
      return lo;
    }
    previous = f;
  }
  return f_max;
}

Eigen::VectorXd correct(const Eigen::VectorXd& x, double rate, const Response& h, double cutoff, double taper, int grid) {
  if (x.size() < 2) return x;
  SpectralFilter filter(static_cast<int>(x.size()));
  return filter.run(x, bin_gains(filter, rate, h, cutoff, grid, true, cutoff, taper));
}

Eigen::VectorXd apply(const Eigen::VectorXd& x, double rate, const Response& h) {
  if (x.size() < 2) return x;
  SpectralFilter filter(static_cast<int>(x.size()));
  return filter.run(x, bin_gains(filter, rate, h, 0.5 * rate, 8192, false, 0, 0));
}

}  // namespace tubing

void TubingStage::configure(ConfigSection& s) {
  where_lines_ = s.where("lines");
  options_.lines = s.optional_path("lines");
  options_.min_gain = s.number("min_gain", options_.min_gain);
  s.require(options_.min_gain > 0 && options_.min_gain < 1, "min_gain",
            "expected a gain between 0 and 1 (the correction amplifies noise at most 1/min_gain times)");
  options_.cutoff_hz = s.number("cutoff_hz", options_.cutoff_hz);
  s.require(options_.cutoff_hz >= 0, "cutoff_hz", "expected a frequency >= 0 (0: each tap's usable bandwidth)");
  options_.taper_fraction = s.number("taper_fraction", options_.taper_fraction);
  s.require(options_.taper_fraction > 0 && options_.taper_fraction < 1, "taper_fraction", "expected a fraction in (0, 1)");
  options_.harmonics = static_cast<int>(s.integer("harmonics", options_.harmonics));
  s.require(options_.harmonics >= 1 && options_.harmonics <= 10, "harmonics", "expected 1 to 10 pitch harmonics");
}

void TubingStage::run(RunContext& context) {
  RunStore& store = context.store();
  const Matrix& raw = store.get<Matrix>("signals/p_taps_raw_pa");
  const double rate = store.get<Scalar>("daq/sample_rate_hz").value;
  const double f_pitch = store.get<Scalar>("signals/pitch_frequency_hz").value;
  const calib::TapTable taps = calib::from_store_table(store.get<Table>("signals/taps"),
                                                       std::get<std::string>(store.entry("signals/taps").attributes.at("source")));
  const double t_k = store.contains("run/T_K") ? store.get<Scalar>("run/T_K").value : 20.0 + air::kCelsiusToKelvin;
  const double p_pa = store.contains("run/p_static_pa") ? store.get<Scalar>("run/p_static_pa").value : 101325.0;
  const calib::AirProperties air(t_k, p_pa);

  std::optional<calib::LinesFile> lines;
  if (options_.lines) lines = calib::read_lines_file(context.raw_input(*options_.lines, "lines file"));
  std::map<std::string, calib::MeasuredResponse> measured;
  std::map<std::string, calib::MeasuredResponse> perturbed_measured;  // a replica's draw of each measured line

  // Each tap's response. A Monte Carlo replica puts each line's length and
  // bore off by its draws; taps whose lines are specified alike share the
  // draw (one cut length: correlated, so conservative for the loads). A
  // measured line with its calibration's scatter is drawn row by row.
  const Perturbation* mc = context.perturbation();
  auto perturbed = [&](std::vector<calib::TubeSegment> segments, const std::string& line) {
    if (!mc) return segments;
    const double length = 1.0 + mc->error(mc->model().tube_length_relative, "tube_length:" + line);
    const double bore = 1.0 + mc->error(mc->model().tube_diameter_relative, "tube_diameter:" + line);
    for (auto& s : segments) {
      s.length *= std::max(length, 0.05);
      s.radius *= std::max(bore, 0.05);
    }
    return segments;
  };
  const std::size_t nt = taps.taps.size();
  std::vector<tubing::Response> response(nt);
  std::vector<std::string> model(nt), key(nt);  // taps with the same key share one line
  for (std::size_t i = 0; i < nt; ++i) {
    const calib::Tap& tap = taps.taps[i];
    if (!tap.line.empty()) {
      if (!lines)
        throw InputError(taps.where(i), "names line '" + tap.line + "' but [tubing] has no lines file (" + where_lines_ + ")");
      auto it = lines->lines.find(tap.line);
      if (it == lines->lines.end())
        throw InputError(taps.where(i), "line '" + tap.line + "' is not in " + lines->source);
      const calib::LineDefinition& d = it->second;
      if (!d.measured.empty()) {
        auto m = measured.find(tap.line);
        if (m == measured.end())
          m = measured.emplace(tap.line, calib::read_measured_response(context.raw_input(d.measured, "measured line response"))).first;
        if (mc && !m->second.gain_std.empty() && !perturbed_measured.count(tap.line))
          perturbed_measured.emplace(tap.line, m->second.perturbed([&](std::size_t k) {
            return mc->normal("measured_response:" + tap.line, k);
          }));
        const calib::MeasuredResponse* r = mc && perturbed_measured.count(tap.line) ? &perturbed_measured.at(tap.line)
                                                                                  : &m->second;
        response[i] = [r](double f) { return f <= r->max_frequency_hz() ? r->at(f) : std::complex<double>(1e-300, 0); };
        model[i] = "measured";
        key[i] = "line:" + tap.line;
      } else {
        std::vector<calib::TubeSegment> segments = perturbed(d.segments, tap.line);
        response[i] = [segments, air](double f) { return calib::line_response(segments, air, f); };
        model[i] = segments.size() == 1 ? "one_segment" : "series";
        key[i] = "line:" + tap.line;
      }
    } else if (std::isfinite(tap.tube_length_m) && tap.tube_length_m > 0) {
      if (!(std::isfinite(tap.tube_diameter_m) && tap.tube_diameter_m > 0))
        throw InputError(taps.where(i), "has a tube_length_m but no tube_diameter_m");
      const calib::TubeSegment nominal{tap.tube_length_m, 0.5 * tap.tube_diameter_m,
                                       std::isfinite(tap.volume_m3) ? tap.volume_m3 : 0.0};
      key[i] = fmt::format("tube:{:.17g}:{:.17g}:{:.17g}", nominal.length, nominal.radius, nominal.end_volume);
      const calib::TubeSegment seg = perturbed({nominal}, key[i])[0];
      response[i] = [seg, air](double f) { return calib::tube_response(seg, air, f); };
      model[i] = "one_segment";
    } else {
      model[i] = "none";
    }
  }

  // Bandwidth, cut-off and the inverse per distinct line (taps usually share a few).
  const double nyquist = 0.5 * rate;
  std::vector<double> bandwidth(nt, nyquist), cutoff(nt, nyquist);
  Matrix corrected{raw.values, "Pa", raw.columns};
  const Eigen::Index n = raw.values.rows();
  std::optional<tubing::SpectralFilter> filter;
  if (n >= 2) filter.emplace(static_cast<int>(n));
  std::map<std::string, std::vector<std::complex<double>>> gains;
  for (std::size_t i = 0; i < nt; ++i) {
    if (model[i] == "none") continue;
    const std::size_t first = static_cast<std::size_t>(std::find(key.begin(), key.end(), key[i]) - key.begin());
    if (first < i) {
      bandwidth[i] = bandwidth[first];
      cutoff[i] = cutoff[first];
      continue;
    }
    bandwidth[i] = tubing::usable_bandwidth(response[i], options_.min_gain, nyquist, 500);
    cutoff[i] = options_.cutoff_hz > 0 ? std::min(options_.cutoff_hz, bandwidth[i]) : bandwidth[i];
    if (filter)
      gains[key[i]] = tubing::bin_gains(*filter, rate, response[i], cutoff[i], 2048, true, cutoff[i], options_.taper_fraction);
  }
  if (filter) {
    const int count = static_cast<int>(nt);
#pragma omp parallel for num_threads(context.threads()) schedule(dynamic)
    for (int i = 0; i < count; ++i) {
      const auto k = static_cast<std::size_t>(i);
      if (model[k] == "none") continue;
      filter->run(raw.values.col(i), gains.at(key[k]), corrected.values.col(i));
    }
  }

  // What the correction removes at the first pitch harmonics.
  Table info;
  std::vector<std::string> names;
  std::vector<std::int64_t> was_corrected;
  for (std::size_t i = 0; i < nt; ++i) {
    names.push_back(taps.taps[i].name);
    was_corrected.push_back(model[i] == "none" ? 0 : 1);
  }
  info.add({"tap", "", names}).add({"model", "", model}).add({"corrected", "", was_corrected});
  info.add({"bandwidth_hz", "Hz", bandwidth}).add({"cutoff_hz", "Hz", cutoff});
  for (int h = 1; h <= options_.harmonics; ++h) {
    std::vector<double> gain(nt, std::nan("")), phase(nt, std::nan(""));
    const double f = h * f_pitch;
    for (std::size_t i = 0; i < nt && f_pitch > 0; ++i) {
      const std::complex<double> v = model[i] == "none" ? 1.0 : response[i](f);
      gain[i] = std::abs(v);
      phase[i] = std::arg(v) * 180.0 / std::numbers::pi;
    }
    info.add({fmt::format("gain_h{}", h), "1", gain}).add({fmt::format("phase_deg_h{}", h), "deg", phase});
  }
  store.put("signals/p_taps_pa", std::move(corrected));
  store.put("pressure/tubing/taps", std::move(info),
            {{"min_gain", options_.min_gain}, {"taper_fraction", options_.taper_fraction},
             {"pitch_frequency_hz", f_pitch}, {"air_temperature_k", t_k}, {"air_pressure_pa", p_pa},
             {"method", std::string("FFT division by H below the cut-off, raised-cosine roll-off, zero above")}});
}

}  // namespace stallscope
