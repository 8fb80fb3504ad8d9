#include "stages/piv/piv_stage.hpp"

#include <algorithm>
#include <cmath>
#include <exception>
#include <limits>
#include <numbers>

#include <fmt/format.h>

#include "pipeline/errors.hpp"
#include "pipeline/perturbation.hpp"
#include "stages/piv/airfoil_frame.hpp"
#include "stages/piv/detection.hpp"
#include "stages/piv/frame_reduction.hpp"
#include "stages/piv/frame_source.hpp"
#include "stages/piv/orientation.hpp"
#include "stages/piv/registration.hpp"
#include "stages/piv/swirl.hpp"
#include "stages/piv/time_sync.hpp"
#include "stages/piv/validation.hpp"

namespace stallscope {

namespace {

constexpr double kNaN = std::numeric_limits<double>::quiet_NaN();

// Linear interpolation of y(t) at tq; NaN outside [t.front(), t.back()].
double interpolate(const Eigen::VectorXd& t, const Eigen::VectorXd& y, double tq) {
  const Eigen::Index n = t.size();
  if (n == 0 || !(tq >= t[0] && tq <= t[n - 1])) return kNaN;
  const auto* it = std::upper_bound(t.data(), t.data() + n, tq);
  const Eigen::Index k = std::clamp<Eigen::Index>(it - t.data(), 1, n - 1);
  const double w = (tq - t[k - 1]) / (t[k] - t[k - 1]);
  return y[k - 1] + w * (y[k] - y[k - 1]);
}

// The local scale of a `stallscope calib piv-target` file; recorded in provenance.
double calibration_scale(RunContext& context, const std::filesystem::path& file) {
  const std::string name = file.string();
  toml::table t;
  try {
    t = toml::parse_file(name);
  } catch (const toml::parse_error& e) {
    throw InputError(name + ":" + std::to_string(e.source().begin.line), std::string(e.description()));
  } catch (const std::exception&) {
    throw InputError(name, "PIV calibration file cannot be read");
  }
  if (t["kind"].value_or(std::string()) != "piv_target")
    throw InputError(name, "expected kind = \"piv_target\" (a file written by `stallscope calib piv-target`)");
  const std::string id = t["id"].value_or(std::string());
  const double scale = t["mapping"]["metres_per_pixel"].value_or(0.0);
  if (id.empty()) throw InputError(name, "expected a text id");
  if (!(scale > 0)) throw InputError(name, "expected [mapping] metres_per_pixel > 0");
  context.calibration_used(id, file);
  return scale;
}

struct FrameResult {
  piv::ValidationCounts counts;
  double noise = kNaN, threshold = kNaN, random_error = kNaN;
  std::vector<piv::Detection> detections;
  std::vector<double> gamma2;
  std::vector<std::int64_t> gamma2_width;
  std::int64_t not_cores = 0;  // detections dropped by gamma2_cores_only
  std::string reason;  // empty: processed
};

// A Monte Carlo replica's new noise on a frame: sigma (file units) on each
// component of each valid vector, keyed by frame and point so any thread
// order gives the same replica.
void add_random_error(const Perturbation& p, piv::Frame& frame, double sigma) {
  if (!(sigma > 0)) return;
  const std::uint64_t base = frame.index * frame.u.size();
  for (std::size_t k = 0; k < frame.u.size(); ++k) {
    if (!frame.valid[k]) continue;
    frame.u[k] += static_cast<float>(p.error(sigma, "piv_u", base + k));
    frame.v[k] += static_cast<float>(p.error(sigma, "piv_v", base + k));
  }
}

// Up to 12 frames spread over the angles seen, for the registration: which
// vectors each holds no valid measurement at.
// Up to 12 frames spread over the angles the run reaches, for registration
// and the orientation check.
struct SampleFrame {
  double alpha_deg = 0;
  piv::Frame frame;
};

std::vector<SampleFrame> sample_frames(piv::FrameSource& source, const std::vector<double>& alpha) {
  std::vector<std::size_t> order;
  for (std::size_t f = 0; f < alpha.size(); ++f)
    if (std::isfinite(alpha[f])) order.push_back(f);
  std::sort(order.begin(), order.end(), [&](std::size_t a, std::size_t b) { return alpha[a] < alpha[b]; });
  constexpr std::size_t kFrames = 12;
  std::vector<SampleFrame> out;
  std::vector<piv::Frame> one;
  for (std::size_t k = 0; k < std::min(kFrames, order.size()); ++k) {
    const std::size_t f = order[order.size() == 1 ? 0 : k * (order.size() - 1) / (std::min(kFrames, order.size()) - 1)];
    source.read(f, 1, one);
    out.push_back({alpha[f], std::move(one[0])});
  }
  return out;
}

// Where the samples hold no valid vector: the model, to register it by.
std::vector<piv::RegistrationFrame> registration_frames(const std::vector<SampleFrame>& samples) {
  std::vector<piv::RegistrationFrame> out;
  for (const SampleFrame& s : samples) {
    piv::RegistrationFrame r{s.alpha_deg, std::vector<std::uint8_t>(s.frame.u.size())};
    for (std::size_t p = 0; p < r.invalid.size(); ++p)
      r.invalid[p] = !piv::measured(s.frame, p);
    out.push_back(std::move(r));
  }
  return out;
}

// [piv.masks.NAME] tables: the user's regions.
std::vector<piv::MaskRegion> mask_regions(ConfigSection masks) {
  std::vector<piv::MaskRegion> out;
  for (const std::string& name : masks.keys()) {
    ConfigSection m = masks.subsection(name);
    piv::MaskRegion r;
    r.name = name;
    masks.require(!name.empty() && name.find_first_of(" \t\n") == std::string::npos, name,
                  "expected a region name without spaces");
    r.moves_with_model = m.choice("frame", {"lab", "airfoil"}, "lab") == "airfoil";
    r.x = m.numbers("x", {});
    r.y = m.numbers("y", {});
    m.require(r.x.size() >= 3, "x", "expected the polygon's vertices, at least 3 (lab: m, airfoil: x/c)");
    m.require(r.y.size() == r.x.size(), "y", "expected as many vertices as x has");
    for (std::size_t k = 0; k < r.x.size(); ++k) {
      m.require(std::isfinite(r.x[k]), "x", "expected finite vertices");
      m.require(std::isfinite(r.y[k]), "y", "expected finite vertices");
    }
    const std::vector<double> frames = m.numbers("frames", {});
    if (!frames.empty()) {
      m.require(frames.size() == 2 && frames[0] >= 0 && frames[1] >= frames[0] && frames[0] == std::floor(frames[0]) &&
                    frames[1] == std::floor(frames[1]) && frames[1] < 1e15,
                "frames", "expected [first, last], whole frame numbers from 0, first <= last");
      r.first_frame = static_cast<std::size_t>(frames[0]);
      r.last_frame = static_cast<std::size_t>(frames[1]);
    }
    m.reject_unknown_keys();
    out.push_back(std::move(r));
  }
  masks.reject_unknown_keys();
  return out;
}

}  // namespace

void PivStage::configure(ConfigSection& s) {
  Options& o = options_;
  where_file_ = s.where("file");
  o.file = s.path("file");
  where_units_ = s.where("text_units");
  o.text_units = s.choice("text_units", {"m/s", "px/frame"}, o.text_units);
  where_calibration_ = s.where("calibration");
  o.calibration = s.optional_path("calibration");
  o.metres_per_pixel = s.number("metres_per_pixel", o.metres_per_pixel);
  s.require(!(o.calibration && o.metres_per_pixel > 0), "metres_per_pixel",
            "give either a calibration file or metres_per_pixel, not both");
  s.require(o.metres_per_pixel >= 0, "metres_per_pixel", "expected a scale in m/px, > 0 (0: not given)");
  o.pulse_separation_s = s.number("pulse_separation_s", o.pulse_separation_s);
  s.require(o.pulse_separation_s >= 0, "pulse_separation_s", "expected the laser pulse separation in s, > 0");
  o.chunk_frames = s.integer("chunk_frames", o.chunk_frames);
  s.require(o.chunk_frames >= 1 && o.chunk_frames <= 100000, "chunk_frames", "expected 1 to 100000 frames");
  where_sync_ = s.where("sync");
  o.sync = s.choice("sync", {"auto", "trigger", "delay"}, o.sync);
  o.trigger_delay_s = s.number("trigger_delay_s", o.trigger_delay_s);
  o.first_pulse = s.integer("first_pulse", o.first_pulse);
  s.require(o.first_pulse >= 0, "first_pulse", "expected a pulse index >= 0");
  o.median_threshold = s.number("median_threshold", o.median_threshold);
  s.require(o.median_threshold > 0, "median_threshold", "expected a normalised residual > 0 (published: 2)");
  o.median_epsilon_px = s.number("median_epsilon_px", o.median_epsilon_px);
  s.require(o.median_epsilon_px >= 0, "median_epsilon_px", "expected >= 0 px (published: 0.1)");
  o.median_epsilon_m_s = s.number("median_epsilon_m_s", o.median_epsilon_m_s);
  s.require(o.median_epsilon_m_s >= 0, "median_epsilon_m_s", "expected >= 0 m/s (0: from median_epsilon_px)");
  o.median_min_neighbours = s.integer("median_min_neighbours", o.median_min_neighbours);
  s.require(o.median_min_neighbours >= 1 && o.median_min_neighbours <= 8, "median_min_neighbours",
            "expected 1 to 8 of the 8 neighbours");
  o.max_replaced_fraction = s.number("max_replaced_fraction", o.max_replaced_fraction);
  s.require(o.max_replaced_fraction > 0 && o.max_replaced_fraction <= 1, "max_replaced_fraction",
            "expected a fraction in (0, 1]");
  o.gradient = s.choice("gradient", {"central", "least_squares"}, o.gradient);
  o.pivot_x_m = s.number("pivot_x_m");
  o.pivot_y_m = s.number("pivot_y_m");
  o.chord_angle_offset_deg = s.number("chord_angle_offset_deg", o.chord_angle_offset_deg);
  s.require(std::abs(o.chord_angle_offset_deg) <= 180, "chord_angle_offset_deg", "expected degrees in [-180, 180]");
  where_registration_ = s.where("registration");
  o.registration = s.choice("registration", {"config", "data"}, o.registration);
  o.registration_search_over_c = s.number("registration_search_over_c", o.registration_search_over_c);
  s.require(o.registration_search_over_c > 0 && o.registration_search_over_c <= 1, "registration_search_over_c",
            "expected a search radius in chords, 0 to 1");
  o.registration_search_deg = s.number("registration_search_deg", o.registration_search_deg);
  s.require(o.registration_search_deg >= 0 && o.registration_search_deg <= 30, "registration_search_deg",
            "expected degrees, 0 to 30");
  where_airfoil_ = s.where("mask_airfoil");
  o.mask_airfoil = s.boolean("mask_airfoil", o.mask_airfoil);
  o.mask_offset_over_c = s.number("mask_offset_over_c", o.mask_offset_over_c);
  s.require(o.mask_offset_over_c >= 0 && o.mask_offset_over_c < 0.5, "mask_offset_over_c",
            "expected a wall band in chords, 0 to 0.5");
  o.reflection_band_over_c = s.number("reflection_band_over_c", o.reflection_band_over_c);
  s.require(o.reflection_band_over_c >= 0 && o.reflection_band_over_c < 0.5, "reflection_band_over_c",
            "expected a band in chords, 0 to 0.5 (0: no glare search)");
  o.reflection_speed_fraction = s.number("reflection_speed_fraction", o.reflection_speed_fraction);
  s.require(o.reflection_speed_fraction >= 0 && o.reflection_speed_fraction < 1, "reflection_speed_fraction",
            "expected a fraction of U_inf, 0 to 1");
  s.require(o.mask_airfoil || o.reflection_band_over_c == 0 || !s.has("reflection_band_over_c"),
            "reflection_band_over_c", "the glare band lies beside the airfoil mask: needs mask_airfoil = true");
  o.patch_min_cells = s.integer("patch_min_cells", o.patch_min_cells);
  s.require(o.patch_min_cells >= 0, "patch_min_cells", "expected a number of cells, >= 0 (0: fill every bad vector)");
  o.masks = mask_regions(s.subsection("masks"));
  o.noise_factor = s.number("noise_factor", o.noise_factor);
  s.require(o.noise_factor > 0, "noise_factor", "expected a multiple of the noise level, > 0");
  o.min_swirl_1_s = s.number("min_swirl_1_s", o.min_swirl_1_s);
  s.require(o.min_swirl_1_s >= 0, "min_swirl_1_s", "expected a swirl strength in 1/s, >= 0");
  o.min_region_cells = s.integer("min_region_cells", o.min_region_cells);
  s.require(o.min_region_cells >= 1, "min_region_cells", "expected at least 1 cell");
  o.cluster_gap_cells = s.integer("cluster_gap_cells", o.cluster_gap_cells);
  s.require(o.cluster_gap_cells >= 0 && o.cluster_gap_cells <= 20, "cluster_gap_cells", "expected 0 to 20 cells");
  o.random_error_replicas = s.boolean("random_error_replicas", o.random_error_replicas);
  o.orientation_check = s.boolean("orientation_check", o.orientation_check);
  o.gamma2 = s.boolean("gamma2", o.gamma2);
  o.gamma2_half_width = s.integer("gamma2_half_width", o.gamma2_half_width);
  s.require(o.gamma2_half_width >= 0 && o.gamma2_half_width <= 20, "gamma2_half_width",
            "expected 0 to 20 cells (0: each vortex's own size)");
  o.gamma2_cores_only = s.boolean("gamma2_cores_only", o.gamma2_cores_only);
  s.require(!o.gamma2_cores_only || o.gamma2, "gamma2_cores_only", "needs gamma2 = true");
}

std::vector<std::string> PivStage::inputs() const {
  std::vector<std::string> in = {"run/chord_m", "run/U_inf_m_s", "run/pivot_x_over_c", "signals/time_s",
                                 "motion/alpha_deg"};
  if (options_.mask_airfoil) in.push_back("run/airfoil");
  if (options_.sync == "trigger") in.insert(in.end(), {"daq/time_s", "daq/volts", "daq/roles/camera_trigger"});
  return in;
}

std::vector<std::string> PivStage::optional_inputs() const {
  if (options_.sync != "auto") return {};
  return {"daq/time_s", "daq/volts", "daq/roles/camera_trigger"};
}

std::vector<std::string> PivStage::outputs() const {
  return {"piv/frames",         "piv/detections",     "piv/grid_x_m",       "piv/grid_y_m",
          "piv/sync_method",    "piv/sync_offset_s",  "piv/sync_drift",     "piv/sync_residual_s",
          "piv/sync_centre_s",  "piv/sync_offset_uncertainty_s",            "piv/sync_drift_uncertainty",
          "piv/missing_frames", "piv/flagged_frames", "piv/velocity_units", "piv/processing",
          "piv/random_error_m_s", "piv/registration", "piv/orientation"};
}

void PivStage::run(RunContext& context) {
  const Options& o = options_;
  RunStore& store = context.store();
  const double chord = store.get<Scalar>("run/chord_m").value;
  const double speed = store.get<Scalar>("run/U_inf_m_s").value;
  if (!(speed > 0)) throw InputError("run/U_inf_m_s", "the PIV path normalises by U, which must be > 0");

  auto source = piv::open_frame_source(o.file, o.text_units,
                                       [&](const std::filesystem::path& p) { context.raw_input(p, "PIV frames"); });
  const piv::Grid& grid = source->grid();
  const std::vector<double>& camera = source->camera_time_s();
  const std::size_t frames = source->frames();

  // Velocity scale to m/s and the median test's epsilon in those units.
  const double metres_per_pixel = o.calibration ? calibration_scale(context, *o.calibration) : o.metres_per_pixel;
  double to_m_s = 1.0;
  if (source->units() == "px/frame") {
    if (!(metres_per_pixel > 0 && o.pulse_separation_s > 0))
      throw InputError(where_file_, source->source() + " is in px/frame: set metres_per_pixel and pulse_separation_s");
    to_m_s = metres_per_pixel / o.pulse_separation_s;
  }
  piv::MedianTestOptions median{o.median_threshold, 0.0, static_cast<int>(o.median_min_neighbours)};
  if (o.median_epsilon_m_s > 0) median.epsilon = o.median_epsilon_m_s;
  else if (source->units() == "px/frame")
    median.epsilon = o.median_epsilon_px * to_m_s;
  else if (metres_per_pixel > 0 && o.pulse_separation_s > 0)
    median.epsilon = o.median_epsilon_px * metres_per_pixel / o.pulse_separation_s;
  else if (source->units() == "m/s" && o.median_epsilon_px > 0)
    throw InputError(where_file_, source->source() + " is in m/s: the median test's epsilon (" +
                                      std::to_string(o.median_epsilon_px) +
                                      " px) needs metres_per_pixel and pulse_separation_s, or set median_epsilon_m_s");

  // Frame times on the DAQ clock.
  const bool use_trigger = o.sync == "trigger" || (o.sync == "auto" && store.contains("daq/roles/camera_trigger"));
  piv::TimeSync sync;
  if (use_trigger) {
    const std::string& channel = store.get<Text>("daq/roles/camera_trigger").value;
    const Matrix& volts = store.get<Matrix>("daq/volts");
    const auto col = std::find(volts.columns.begin(), volts.columns.end(), channel);
    if (col == volts.columns.end()) throw InputError("daq/roles/camera_trigger", "channel '" + channel + "' not in the DAQ record");
    const Eigen::VectorXd line = volts.values.col(col - volts.columns.begin());
    const auto edges = piv::rising_edges(store.get<Series>("daq/time_s").values, line);
    sync = piv::sync_to_trigger(camera, edges, static_cast<std::size_t>(o.first_pulse),
                                source->source() + " against camera trigger channel '" + channel + "'");
  } else {
    sync = piv::sync_constant_delay(camera, o.trigger_delay_s);
  }

  // Angle of attack at every frame; frames outside the DAQ record are flagged.
  const Eigen::VectorXd& signal_t = store.get<Series>("signals/time_s").values;
  const Eigen::VectorXd& alpha_series = store.get<Series>("motion/alpha_deg").values;
  std::vector<double> alpha(frames);
  std::size_t inside = 0;
  for (std::size_t f = 0; f < frames; ++f) {
    alpha[f] = interpolate(signal_t, alpha_series, sync.daq_time_s[f]);
    inside += std::isfinite(alpha[f]);
  }
  if (inside == 0)
    throw InputError(where_file_, "no PIV frame time (" + std::to_string(sync.daq_time_s.front()) + " to " +
                                      std::to_string(sync.daq_time_s.back()) + " s on the DAQ clock) lies inside the DAQ record (" +
                                      std::to_string(signal_t[0]) + " to " + std::to_string(signal_t[signal_t.size() - 1]) +
                                      " s); check the time sync");

  piv::FrameRecipe recipe;
  recipe.to_m_s = to_m_s;
  recipe.median = median;
  recipe.max_replaced_fraction = o.max_replaced_fraction;
  recipe.scheme = o.gradient == "central" ? piv::GradientScheme::kCentral : piv::GradientScheme::kLeastSquares;
  recipe.placement = {chord, store.get<Scalar>("run/pivot_x_over_c").value, o.pivot_x_m, o.pivot_y_m,
                      o.chord_angle_offset_deg};
  if (o.mask_airfoil) recipe.section = piv::mask_section(store.get<Text>("run/airfoil").value, where_airfoil_);
  recipe.mask_offset_over_c = o.mask_offset_over_c;
  recipe.reflection_band_over_c = o.reflection_band_over_c;
  recipe.reflection_speed_m_s = o.reflection_speed_fraction * speed;
  recipe.median.patch_min_cells = static_cast<int>(o.patch_min_cells);
  recipe.regions = o.masks;
  const std::vector<SampleFrame> samples = sample_frames(*source, alpha);
  if (recipe.section) {
    // The configured place checked against the data, or found from it.
    const std::vector<piv::RegistrationFrame> sample = registration_frames(samples);
    piv::Registration reg{recipe.placement, 1.0, sample.size()};
    if (o.registration == "data")
      reg = piv::register_from_data(grid, sample, *recipe.section, recipe.placement,
                                    o.registration_search_over_c * chord, o.registration_search_deg);
    else if (!sample.empty() && grid.nx() >= 2 && grid.ny() >= 2)
      reg.mismatch = piv::registration_mismatch(grid, sample, *recipe.section, recipe.placement);
    if (o.registration == "data") {
      if (!(reg.mismatch < 0.5))
        throw InputError(where_registration_,
                         fmt::format("the section covers the invalid vectors of {} frames poorly (mismatch {:.2f}, 0 is "
                                     "a perfect fit): the stack may not mark the model's vectors invalid, or the pitch "
                                     "axis is more than {:g} c from pivot_x_m, pivot_y_m; set registration = \"config\"",
                                     reg.frames, reg.mismatch, o.registration_search_over_c));
      recipe.placement = reg.placement;
    }
    Table t;
    t.add({"method", "", std::vector<std::string>{o.registration}})
        .add({"pivot_x_m", "m", std::vector<double>{recipe.placement.pivot_x_m}})
        .add({"pivot_y_m", "m", std::vector<double>{recipe.placement.pivot_y_m}})
        .add({"chord_angle_offset_deg", "deg", std::vector<double>{recipe.placement.chord_angle_offset_deg}})
        .add({"mismatch", "1", std::vector<double>{reg.mismatch}})
        .add({"frames", "1", std::vector<std::int64_t>{static_cast<std::int64_t>(reg.frames)}});
    store.put("piv/registration", std::move(t),
              {{"mismatch", std::string("cells where the section (no wall band) and the invalid vectors disagree, "
                                        "over the cells either marks; 0 is a perfect fit")}});
  }
  const piv::AirfoilPlacement& placement = recipe.placement;
  if (o.orientation_check) {
    std::vector<piv::OrientationSample> probe;
    for (const SampleFrame& s : samples) probe.push_back({&s.frame, s.alpha_deg});
    const piv::Orientation orientation = piv::check_orientation(grid, probe, placement, to_m_s, speed);
    if (orientation.x_reversed || orientation.y_reversed)
      throw InputError(where_file_, fmt::format("the PIV field looks {} (median u {:.2f} U; suction-side excess "
                                                "{:.3f} +- {:.3f} U over {} frames); vorticity signs would come out "
                                                "flipped. Export the field in the lab frame (x downstream, y up), "
                                                "or set orientation_check = false if it is right",
                                                orientation.verdict, orientation.streamwise,
                                                orientation.suction_excess, orientation.suction_error,
                                                orientation.frames_used));
    Table t;
    t.add({"median_u_over_u_inf", "1", std::vector<double>{orientation.streamwise}})
        .add({"suction_excess_over_u_inf", "1", std::vector<double>{orientation.suction_excess}})
        .add({"suction_excess_error", "1", std::vector<double>{orientation.suction_error}})
        .add({"frames", "1", std::vector<std::int64_t>{static_cast<std::int64_t>(orientation.frames_used)}})
        .add({"verdict", "", std::vector<std::string>{orientation.verdict}});
    store.put("piv/orientation", std::move(t),
              {{"method", std::string("median u of the sampled frames, and u over the suction side less u under "
                                      "the pressure side (x/c 0.1 to 0.9, 0.05 to 0.4 c off the chord) at 2 to 12 deg")}});
  }
  piv::DetectionOptions detect;
  detect.noise_factor = o.noise_factor;
  detect.min_threshold = o.min_swirl_1_s;
  detect.min_cells = static_cast<int>(o.min_region_cells);
  detect.cluster_gap_cells = static_cast<int>(o.cluster_gap_cells);

  std::vector<FrameResult> results(frames);
  std::vector<piv::Frame> chunk;
  const auto chunk_size = static_cast<std::size_t>(o.chunk_frames);
  const int threads = std::max(1, context.threads());
  const Perturbation* perturbation = o.random_error_replicas ? context.perturbation() : nullptr;
  context.progress().begin("piv frames", frames);
  for (std::size_t first = 0; first < frames; first += chunk_size) {
    const std::size_t count = std::min(chunk_size, frames - first);
    source->read(first, count, chunk);
    std::exception_ptr failure;
#pragma omp parallel for num_threads(threads) schedule(dynamic)
    for (std::size_t k = 0; k < count; ++k) {
      try {
        piv::Frame& frame = chunk[k];
        FrameResult& r = results[frame.index];
        if (!std::isfinite(alpha[frame.index])) {
          r.reason = "outside the DAQ record";
          continue;
        }
        const double random_error = piv::random_error(grid, frame);  // in the file's units, as the noise added
        r.random_error = random_error * to_m_s;
        if (perturbation) add_random_error(*perturbation, frame, random_error);
        piv::ReducedFrame reduced = piv::reduce_frame(grid, recipe, frame, alpha[frame.index]);
        r.counts = reduced.counts;
        if (!reduced.flag.empty()) {
          r.reason = reduced.flag;
          continue;
        }
        const piv::SwirlField& field = reduced.field;
        r.noise = piv::noise_swirl(field);
        r.detections = piv::detect_vortices(grid, field, reduced.replaced, detect, &r.threshold);
        if (o.gamma2) {
          std::vector<piv::Detection> kept;
          for (const auto& d : r.detections) {
            const int width = o.gamma2_half_width > 0 ? static_cast<int>(o.gamma2_half_width)
                                                      : piv::gamma2_half_width_for(grid, d.area_m2);
            const double g2 = piv::gamma2_at(grid, frame, d.centre_j, d.centre_i, width);
            if (o.gamma2_cores_only && !(std::abs(g2) > piv::gamma2_shear_ceiling(width))) {
              ++r.not_cores;
              continue;
            }
            kept.push_back(d);
            r.gamma2.push_back(g2);
            r.gamma2_width.push_back(width);
          }
          r.detections = std::move(kept);
        }
      } catch (...) {
#pragma omp critical(piv_failure)
        if (!failure) failure = std::current_exception();
      }
    }
    if (failure) std::rethrow_exception(failure);
    context.progress().advance(count);
  }

  // Per-frame table.
  std::vector<std::int64_t> frame_no, pulse, vectors, missing, outliers, replaced, unrecoverable, ndet;
  std::vector<std::int64_t> in_regions, reflections, patches;
  std::vector<double> t_cam, t_daq, t_sigma, alpha_col, noise, threshold, random_error;
  std::vector<std::string> status, reason;
  // Per-detection table.
  std::vector<std::int64_t> d_frame, d_sign, d_cells, d_replaced, d_regions;
  std::vector<double> d_t, d_xm, d_ym, d_xc, d_yc, d_circ, d_loose, d_strict, d_sens, d_peak, d_radius, d_gamma2;
  std::vector<std::int64_t> d_gamma2_width, d_gamma2_core, not_cores;
  std::int64_t flagged = 0;
  const double circulation_scale = 1.0 / (speed * chord), swirl_scale = chord / speed;
  for (std::size_t f = 0; f < frames; ++f) {
    const FrameResult& r = results[f];
    frame_no.push_back(static_cast<std::int64_t>(f));
    t_cam.push_back(camera[f]);
    t_daq.push_back(sync.daq_time_s[f]);
    t_sigma.push_back(std::hypot(sync.offset_uncertainty_s, sync.drift_uncertainty * (sync.daq_time_s[f] - sync.centre_s)));
    pulse.push_back(sync.pulse[f]);
    alpha_col.push_back(alpha[f]);
    vectors.push_back(static_cast<std::int64_t>(r.counts.vectors));
    missing.push_back(static_cast<std::int64_t>(r.counts.missing));
    outliers.push_back(static_cast<std::int64_t>(r.counts.outliers));
    replaced.push_back(static_cast<std::int64_t>(r.counts.replaced));
    unrecoverable.push_back(static_cast<std::int64_t>(r.counts.unrecoverable));
    in_regions.push_back(static_cast<std::int64_t>(r.counts.regions));
    reflections.push_back(static_cast<std::int64_t>(r.counts.reflections));
    patches.push_back(static_cast<std::int64_t>(r.counts.patches));
    noise.push_back(r.noise);
    random_error.push_back(r.random_error);
    threshold.push_back(r.threshold);
    ndet.push_back(static_cast<std::int64_t>(r.detections.size()));
    not_cores.push_back(r.not_cores);
    std::string why = r.reason;
    if (why.empty() && use_trigger && sync.pulse[f] < 0) why = "no trigger pulse (time from the clock fit)";
    status.push_back(r.reason.empty() ? (why.empty() ? "ok" : "suspect") : "flagged");
    flagged += !r.reason.empty();
    reason.push_back(why);
    for (std::size_t k = 0; k < r.detections.size(); ++k) {
      const piv::Detection& d = r.detections[k];
      const piv::AirfoilPoint a = piv::to_airfoil_frame(placement, alpha[f], d.x_m, d.y_m);
      d_frame.push_back(static_cast<std::int64_t>(f));
      d_t.push_back(sync.daq_time_s[f]);
      d_sign.push_back(d.sign);
      d_xm.push_back(d.x_m);
      d_ym.push_back(d.y_m);
      d_xc.push_back(a.x_over_c);
      d_yc.push_back(a.y_over_c);
      d_circ.push_back(d.circulation * circulation_scale);
      d_loose.push_back(d.circulation_loose * circulation_scale);
      d_strict.push_back(d.circulation_strict * circulation_scale);
      d_sens.push_back(std::abs(d.circulation_loose - d.circulation_strict) / (2.0 * std::abs(d.circulation)));
      d_peak.push_back(d.peak_swirl * swirl_scale);
      d_radius.push_back(std::sqrt(d.area_m2 / std::numbers::pi) / chord);
      d_cells.push_back(static_cast<std::int64_t>(d.cells));
      d_replaced.push_back(static_cast<std::int64_t>(d.replaced_cells));
      d_regions.push_back(static_cast<std::int64_t>(d.regions));
      d_gamma2.push_back(o.gamma2 ? r.gamma2[k] : kNaN);
      d_gamma2_width.push_back(o.gamma2 ? r.gamma2_width[k] : 0);
      d_gamma2_core.push_back(o.gamma2 && std::abs(r.gamma2[k]) > piv::gamma2_shear_ceiling(static_cast<int>(r.gamma2_width[k])) ? 1 : 0);
    }
  }
  Table ft;
  ft.add({"frame", "1", frame_no}).add({"camera_time_s", "s", t_cam}).add({"t_s", "s", t_daq})
      .add({"t_fit_uncertainty_s", "s", t_sigma}).add({"trigger_pulse", "1", pulse})
      .add({"alpha_deg", "deg", alpha_col}).add({"vectors", "1", vectors})
      .add({"missing", "1", missing}).add({"outliers", "1", outliers}).add({"replaced", "1", replaced})
      .add({"unrecoverable", "1", unrecoverable}).add({"masked_regions", "1", in_regions})
      .add({"masked_reflections", "1", reflections}).add({"masked_patches", "1", patches})
      .add({"random_error_m_s", "m/s", random_error})
      .add({"noise_swirl_1_s", "1/s", noise})
      .add({"threshold_1_s", "1/s", threshold}).add({"detections", "1", ndet})
      .add({"not_vortex_cores", "1", not_cores}).add({"status", "", status})
      .add({"reason", "", reason});
  store.put("piv/frames", std::move(ft),
            {{"note", std::string("t_s on the DAQ clock; flagged frames were not searched for vortices")},
             {"masked", std::string("masked_regions: inside the user's [piv.masks]; masked_reflections: slower than "
                                    "reflection_speed_fraction U within reflection_band_over_c of the airfoil mask; "
                                    "masked_patches: missing or spurious vectors in a connected patch of at least "
                                    "patch_min_cells (a shadow or dropout), left empty rather than filled")}});
  Table dt;
  dt.add({"frame", "1", d_frame}).add({"t_s", "s", d_t}).add({"sign", "1", d_sign}).add({"x_m", "m", d_xm})
      .add({"y_m", "m", d_ym}).add({"x_over_c", "1", d_xc}).add({"y_over_c", "1", d_yc})
      .add({"circulation", "1", d_circ}).add({"circulation_loose", "1", d_loose})
      .add({"circulation_strict", "1", d_strict}).add({"circulation_sensitivity", "1", d_sens})
      .add({"peak_swirl", "1", d_peak}).add({"radius_over_c", "1", d_radius}).add({"cells", "1", d_cells})
      .add({"replaced_cells", "1", d_replaced}).add({"regions", "1", d_regions}).add({"gamma2", "1", d_gamma2})
      .add({"gamma2_half_width", "1", d_gamma2_width}).add({"gamma2_core", "1", d_gamma2_core});
  store.put("piv/detections", std::move(dt),
            {{"normalised_by", std::string("circulation by U_inf c, peak_swirl by U_inf/c, radius by c")},
             {"circulation_sign", std::string("counter-clockwise positive, lab frame x downstream y up; "
                                              "the airfoil frame keeps the sign")},
             {"circulation_boundary", std::string("region where lambda_ci > threshold; loose/strict at 0.5x/2x")},
             {"gamma2", std::string(o.gamma2 ? "Graftieaux et al. 2001 at the centre, over 2 gamma2_half_width + 1 "
                                               "cells square; gamma2_core: |gamma2| above what a pure shear reaches there (2/pi over a disc)"
                                             : "not computed ([piv] gamma2 = false)")},
             {"gradient", o.gradient}});
  store.put("piv/grid_x_m", Series{Eigen::Map<const Eigen::VectorXd>(grid.x_m.data(), static_cast<Eigen::Index>(grid.nx())), "m"});
  store.put("piv/grid_y_m", Series{Eigen::Map<const Eigen::VectorXd>(grid.y_m.data(), static_cast<Eigen::Index>(grid.ny())), "m"});
  store.put("piv/sync_method", Text{sync.method});
  store.put("piv/sync_offset_s", Scalar{sync.offset_s, "s"});
  store.put("piv/sync_drift", Scalar{sync.drift, "1"});
  store.put("piv/sync_residual_s", Scalar{sync.residual_s, "s"});
  store.put("piv/sync_centre_s", Scalar{sync.centre_s, "s"});
  // The fit's standard error of the frame time at sync_centre_s.
  store.put("piv/sync_offset_uncertainty_s", Scalar{sync.offset_uncertainty_s, "s"});
  store.put("piv/sync_drift_uncertainty", Scalar{sync.drift_uncertainty, "1"});
  store.put("piv/missing_frames", Scalar{static_cast<double>(sync.missing_frames), "1"});
  store.put("piv/flagged_frames", Scalar{static_cast<double>(flagged), "1"});
  store.put("piv/velocity_units", Text{source->units()});
  std::vector<double> measured;
  for (double e : random_error)
    if (std::isfinite(e)) measured.push_back(e);
  store.put("piv/random_error_m_s", Scalar{measured.empty() ? kNaN : piv::median_of(measured), "m/s"});
  // How each frame was reduced, so one can be reduced again the same way.
  store.put("piv/processing",
            piv::recipe_table({recipe, std::filesystem::absolute(o.file).lexically_normal(), o.text_units}));
}

}  // namespace stallscope
