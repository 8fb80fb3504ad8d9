#pragma once
// The tap table (CSV, interfaces.md), header exactly
//   tap,channel,x_over_c,y_over_c,surface,tube_length_m,tube_diameter_m,volume_m3,time_offset_s,line,status
// surface upper|lower; status ok|dead|suspect; empty time_offset_s = 0; empty
// y_over_c: taken from the section geometry; empty tube columns: no one-segment
// line given (then `line` must name one in the lines file if tubing is corrected).
#include <filesystem>
#include <string>
#include <vector>

#include "pipeline/values.hpp"
#include "stages/theory/naca4.hpp"

namespace stallscope::calib {

enum class TapStatus { kOk, kDead, kSuspect };
std::string_view status_name(TapStatus s);
std::string_view surface_name(theory::Surface s);

struct Tap {
  std::string name, channel;
  double x_over_c = 0.0;
  double y_over_c = 0.0;  // NaN until known
  theory::Surface surface = theory::Surface::kUpper;
  double tube_length_m = 0.0, tube_diameter_m = 0.0, volume_m3 = 0.0;  // NaN when empty
  double time_offset_s = 0.0;
  std::string line;  // empty: the one-segment columns
  TapStatus status = TapStatus::kOk;
  int row = 0;  // line in the file, for messages
};

struct TapTable {
  std::vector<Tap> taps;
  std::string source;
  // "file:line: tap <name>" for messages.
  std::string where(std::size_t i) const;
  int index(const std::string& tap_name) const;  // -1 if absent
};

TapTable read_tap_table(const std::filesystem::path& path);
TapTable parse_tap_table(const std::string& text, const std::string& source);

// Fills every empty y_over_c from a NACA 4-digit section: the surface point whose
// x equals the tap's x (for a cambered section x_u differs from the mean-line station).
void fill_naca4_ordinates(TapTable& table, const theory::Naca4Section& section);

// The table through the run store (signals/taps, pressure/taps) and back.
Table to_store_table(const TapTable& table);
TapTable from_store_table(const Table& table, const std::string& source);

}  // namespace stallscope::calib
