#include "stages/piv/tracking.hpp"

#include <algorithm>
#include <cmath>
#include <limits>
#include <tuple>

namespace stallscope::piv {

namespace {

struct Live {
  Track track;
  int missed = 0;
};

// Position predicted `frames_ahead` frames after the last observation.
void predict(const std::vector<Observation>& obs, const Track& t, double frames_ahead, double& xc, double& yc,
             double& xm, double& ym) {
  const Observation& a = obs[t.observations.back()];
  xc = a.x_over_c, yc = a.y_over_c, xm = a.x_m, ym = a.y_m;
  if (t.observations.size() < 2) return;
  const Observation& b = obs[t.observations[t.observations.size() - 2]];
  const double per_frame = frames_ahead / static_cast<double>(a.frame - b.frame);
  xc += (a.x_over_c - b.x_over_c) * per_frame;
  yc += (a.y_over_c - b.y_over_c) * per_frame;
  xm += (a.x_m - b.x_m) * per_frame;
  ym += (a.y_m - b.y_m) * per_frame;
}

}  // namespace

std::vector<Track> track_vortices(const std::vector<Observation>& obs, const std::vector<std::int64_t>& frames,
                                  const FieldOfView& view, const TrackingOptions& o) {
  std::vector<Track> done;
  std::vector<Live> live;
  std::int64_t next_id = 0;
  std::size_t cursor = 0;
  auto finish = [&](Live& l) {
    double xc, yc, xm, ym;
    predict(obs, l.track, 1.0, xc, yc, xm, ym);
    const Observation& last = obs[l.track.observations.back()];
    l.track.end_reason = view.contains(xm, ym, last.radius_m) ? "lost" : "left the field of view";
    done.push_back(std::move(l.track));
  };
  for (const std::int64_t frame : frames) {
    const std::size_t begin = cursor;
    while (cursor < obs.size() && obs[cursor].frame == frame) ++cursor;
    // Candidate pairs inside the gate, nearest first (ties by track, then
    // detection, so the result never depends on the order of equal distances).
    std::vector<std::tuple<double, std::size_t, std::size_t>> pairs;
    for (std::size_t k = 0; k < live.size(); ++k) {
      const Track& t = live[k].track;
      double xc, yc, xm, ym;
      predict(obs, t, static_cast<double>(frame - obs[t.observations.back()].frame), xc, yc, xm, ym);
      for (std::size_t d = begin; d < cursor; ++d) {
        if (obs[d].sign != t.sign) continue;
        const double dist = std::hypot(obs[d].x_over_c - xc, obs[d].y_over_c - yc);
        if (dist <= o.gate_over_c) pairs.emplace_back(dist, k, d);
      }
    }
    std::sort(pairs.begin(), pairs.end());
    std::vector<char> track_taken(live.size(), 0), det_taken(cursor - begin, 0);
    for (const auto& [dist, k, d] : pairs) {
      if (track_taken[k] || det_taken[d - begin]) continue;
      track_taken[k] = 1;
      det_taken[d - begin] = 1;
      live[k].track.observations.push_back(d);
      live[k].missed = 0;
    }
    std::vector<Live> still;
    for (std::size_t k = 0; k < live.size(); ++k) {
      if (!track_taken[k] && ++live[k].missed > o.max_gap_frames) {
        finish(live[k]);
        continue;
      }
      still.push_back(std::move(live[k]));
    }
    live = std::move(still);
    for (std::size_t d = begin; d < cursor; ++d) {
      if (det_taken[d - begin]) continue;
      Live l;
      l.track.id = next_id++;
      l.track.sign = obs[d].sign;
      l.track.observations.push_back(d);
      live.push_back(std::move(l));
    }
  }
  for (auto& l : live) {
    l.track.end_reason = "end of record";
    done.push_back(std::move(l.track));
  }
  std::sort(done.begin(), done.end(), [](const Track& a, const Track& b) { return a.id < b.id; });
  return done;
}

SpeedFit fit_convection_speed(const std::vector<double>& t, const std::vector<double>& x) {
  SpeedFit s;
  s.points = t.size();
  if (t.size() < 3 || x.size() != t.size()) return s;
  const double n = static_cast<double>(t.size());
  double mt = 0, mx = 0;
  for (std::size_t k = 0; k < t.size(); ++k) mt += t[k], mx += x[k];
  mt /= n;
  mx /= n;
  double stt = 0, stx = 0;
  for (std::size_t k = 0; k < t.size(); ++k) stt += (t[k] - mt) * (t[k] - mt), stx += (t[k] - mt) * (x[k] - mx);
  if (!(stt > 0)) return s;
  s.speed = stx / stt;
  double ssr = 0;
  for (std::size_t k = 0; k < t.size(); ++k) {
    const double r = x[k] - (mx + s.speed * (t[k] - mt));
    ssr += r * r;
  }
  s.uncertainty = std::sqrt(ssr / (n - 2) / stt);
  s.ok = true;
  return s;
}

}  // namespace stallscope::piv
