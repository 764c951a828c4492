// The corrected recipe of a QC lot, printed for people and as an HTML fragment for the report.
#include "cli_common.hpp"

#include "lampwright/production/lot_correction.hpp"
#include "lampwright/production/qc.hpp"
#include "lampwright/phosphor/recipe.hpp"
#include "lampwright/report/qc_report.hpp"

#include <fmt/format.h>

#include <iostream>

namespace lampwright::cli {

std::string print_lot_correction(const QcRun& run, const std::string& recipe_path, bool text) {
    const Recipe recipe = load_recipe(recipe_path);
    if (run.lamps.empty()) throw InputError(recipe_path, 0, "no lamps were read: nothing to correct");
    const LotCorrection c = correct_recipe(recipe.blend, run.stats.centroid, run.spec.centre, run.spec.step_ellipse);
    const std::string t = lot_correction_text(c, recipe.blend, recipe_path);
    const std::string html = lot_correction_html(c, recipe.blend);
    if (text) std::cout << t;
    else std::cerr << t;
    return html;
}

}  // namespace lampwright::cli
