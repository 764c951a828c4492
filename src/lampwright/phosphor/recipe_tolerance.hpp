#pragma once
// The sources of variation of the production-tolerance run (design/tolerance.hpp) and a recipe's
// [tolerance] table that sets them. Here, beside the recipe, so that a recipe is checked when it is
// loaded; the Monte Carlo itself is in design/.
#include "lampwright/io/toml_access.hpp"

#include <array>
#include <cstddef>
#include <string>
#include <utility>
#include <vector>

namespace lampwright {

// One source of variation: its recipe key (table [tolerance]), whether it is drawn per batch or
// per lamp, its default sigma, the range a recipe or the command line may set, and the source of
// the default. The one place for these numbers.
struct ToleranceSource {
    const char* key;
    const char* level;  // "batch" or "lamp"
    double default_value;
    double min, max;
    const char* unit;
    const char* source;
};
inline constexpr std::array<ToleranceSource, 8> kToleranceSources{{
    {"weighing_sigma", "batch", 0.005, 0, 0.5, "relative to each component's mass",
     "from memory: a powder batch is weighed once, to about 0.5 % of each component's mass"},
    {"d50_sigma", "batch", 0.05, 0, 0.5, "relative to the lot's d50",
     "from memory: lot-to-lot d50 of lamp phosphors within about +-10 % of the specification"},
    {"absorption_sigma", "batch", 0.02, 0, 0.5, "relative to the per-mass absorption", "from memory"},
    {"qe_sigma", "batch", 0.02, 0, 0.5, "relative to the QE (lot brightness)",
     "from memory: lot brightness within about +-3-5 % of the reference powder"},
    {"peak_sigma_nm", "batch", 0.5, 0, 20, "nm, band emitters only (line emitters never shift)", "from memory"},
    {"coating_weight_sigma_mg_per_cm2", "lamp", 0.15, 0, 2, "mg/cm2",
     "from memory: about 5 % of a 3 mg/cm2 tri-band coating from tube to tube"},
    {"measurement_sigma_xy", "lamp", 0.0015, 0, 0.02, "in x and in y",
     "from memory: repeatability of a lamp colour measurement about 0.001-0.002 in x, y"},
    {"batch_size", "batch", 50, 1, 1000000, "lamps per batch (whole number)", "common practice, no source"},
}};
// The entry for a key; throws Error for an unknown key.
const ToleranceSource& tolerance_source(const std::string& key);

// The [tolerance] table of a recipe file: the keys of kToleranceSources (numbers; the per-batch
// sigmas also an array of one per component). Values outside their ranges, unknown keys, and
// per-component arrays of the wrong length are InputError naming the file, the line and the key.
struct RecipeTolerance {
    std::string path;                                    // "" when the recipe has no [tolerance]
    std::vector<std::pair<std::string, std::vector<double>>> values;  // key, value(s), in file order
    const std::vector<double>* find(const std::string& key) const;
};
RecipeTolerance recipe_tolerance(const TomlDoc& doc, std::size_t n_components);


}  // namespace lampwright
