#include "stages/run.hpp"

#include <algorithm>
#include <cctype>
#include <cmath>

namespace stallscope {

void RunStage::configure(ConfigSection& s) {
  options_.name = s.text("name");
  s.require(!options_.name.empty() && options_.name.size() <= 128 &&
                std::all_of(options_.name.begin(), options_.name.end(),
                            [](char c) { return std::isalnum(static_cast<unsigned char>(c)) || c == '-' || c == '_' || c == '.'; }) &&
                options_.name.front() != '.',
            "name", "expected a run name of letters, digits, '-', '_' or '.' (it names the archive file)");
  options_.description = s.text("description", "");
  options_.airfoil = s.text("airfoil", options_.airfoil);
  options_.chord_m = s.number("chord_m");
  s.require(options_.chord_m > 0 && options_.chord_m < 100, "chord_m", "expected a chord in metres, > 0");
  options_.span_m = s.number("span_m", 0.0);
  s.require(options_.span_m >= 0 && std::isfinite(options_.span_m), "span_m", "expected a finite span in metres, >= 0");
  options_.pivot_x_over_c = s.number("pivot_x_over_c", options_.pivot_x_over_c);
  s.require(options_.pivot_x_over_c >= -1 && options_.pivot_x_over_c <= 2, "pivot_x_over_c",
            "expected the pitch axis as a fraction of chord, between -1 and 2");
}

std::vector<std::string> RunStage::outputs() const {
  return {"run/name", "run/description", "run/airfoil", "run/chord_m", "run/span_m", "run/pivot_x_over_c"};
}

void RunStage::run(RunContext& context) {
  RunStore& s = context.store();
  s.put("run/name", Text{options_.name});
  s.put("run/description", Text{options_.description});
  s.put("run/airfoil", Text{options_.airfoil});
  s.put("run/chord_m", Scalar{options_.chord_m, "m"});
  s.put("run/span_m", Scalar{options_.span_m, "m"});
  s.put("run/pivot_x_over_c", Scalar{options_.pivot_x_over_c, "1"});
}

}  // namespace stallscope
