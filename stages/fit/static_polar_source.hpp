#pragma once
// Where the fit's static Cn polar comes from: this run's static_polar stage,
// the archive of a reduced static (staircase) run -- its static_polar/points,
// or the fit/static_polar an earlier fit stored -- or a plain CSV with columns
// alpha_deg and cn (header row; lines starting with '#' are comments). Only
// the up-sweep points are used when the polar has a direction column (stall
// on the upstroke is what the loop meets first).
#include <filesystem>
#include <optional>
#include <string>

#include "pipeline/run_store.hpp"
#include "stages/fit/run_fit.hpp"

namespace stallscope::fit {

// Empty when the store holds neither static_polar/points nor fit/static_polar.
std::optional<StaticPolarPoints> polar_from_store(const RunStore& store, const std::string& source);
// InputError naming `where` and the file when it holds no polar.
StaticPolarPoints polar_from_archive(const std::filesystem::path& archive, const std::string& where);
StaticPolarPoints polar_from_csv(const std::filesystem::path& csv, const std::string& where);
// By extension: .h5 an archive, anything else CSV.
StaticPolarPoints read_static_polar(const std::filesystem::path& file, const std::string& where);

}  // namespace stallscope::fit
