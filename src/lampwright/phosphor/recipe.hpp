#pragma once
// Blend recipes: a TOML file naming the excitation and the phosphors by mass fraction.
//
//   name = "4000 K tri-band tube"
//   excitation_nm = 253.7            # or:  [pump]  peak_nm = 395  fwhm_nm = 12
//   mercury_lines = 0.03             # optional: visible Hg lines, fraction of visible output
//   absorbed_fraction = 1.0          # optional: share of the excitation the coating absorbs
//   coating_weight_mg_per_cm2 = 3.0  # optional (mercury): default by lamp type, data/coating
//   uv_185nm_fraction = 0.08         # optional (mercury): share of the UV photons at 184.9 nm
//   phosphor_folders = ["mine"]      # optional: more phosphor files, relative to the recipe
//   calibration = "line2.toml"       # optional: a model calibration (lampwright calibrate), relative to the recipe
//   [tolerance]                      # optional: production-tolerance sigmas (phosphor/recipe_tolerance.hpp)
//   [[component]]
//   phosphor = "Y2O3:Eu3+"           # library id or unambiguous abbreviation, or:
//   # spectrum = "green.csv"  absorption = 0.8  quantum_efficiency = 0.9  (measured emission)
//   mass_fraction = 0.45
#include "lampwright/phosphor/blend.hpp"
#include "lampwright/io/toml_access.hpp"
#include "lampwright/phosphor/recipe_tolerance.hpp"

#include <string>
#include <vector>

namespace lampwright {

struct Recipe {
    std::string path;
    BlendInput blend;
    std::vector<std::string> phosphor_folders;  // resolved paths
    std::vector<std::string> notes;  // what of the recipe's calibration was not applied, and why
    RecipeTolerance tolerance;       // its [tolerance] table (checked; used by the tolerance run)
};

// Parses a recipe; errors name the file, the line and the key. `extra_folders` are more phosphor
// folders given on the command line.
Recipe load_recipe(const std::string& path, const std::vector<std::string>& extra_folders = {});
// The same from a parsed document (for files that embed a recipe, such as specs and designs).
Recipe recipe_from_toml(const TomlDoc& doc, const std::vector<std::string>& extra_folders,
                        const std::vector<std::string>& extra_root_keys = {});

// load_recipe without applying the recipe's `calibration` (accepted, noted in `notes`): the
// uncalibrated model, as `lampwright calibrate` fits it.
Recipe load_recipe_without_calibration(const std::string& path, const std::vector<std::string>& extra_folders = {});

// Writes a recipe back as TOML (components by library id), loadable by load_recipe.
std::string recipe_to_toml(const BlendInput& blend, const std::vector<std::string>& header_comments = {});

}  // namespace lampwright
