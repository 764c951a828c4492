// The corrected recipe of a QC lot, printed for people and as an HTML fragment for the report.
#include "cli_common.hpp"

#include "lampwright/lot_correction.hpp"
#include "lampwright/qc.hpp"
#include "lampwright/recipe.hpp"
#include "lampwright/svg_plot.hpp"

#include <fmt/format.h>

#include <iostream>

namespace lampwright::cli {

std::string print_lot_correction(const QcRun& run, const std::string& recipe_path, bool text) {
    const Recipe recipe = load_recipe(recipe_path);
    if (run.lamps.empty()) throw InputError(recipe_path, 0, "no lamps were read: nothing to correct");
    const LotCorrection c = correct_recipe(recipe.blend, run.stats.centroid, run.spec.centre, run.spec.step_ellipse);
    std::string t = fmt::format("\nCorrection of {} (lot centroid x {:.4f} y {:.4f}, {:.2f} steps from the target):\n", recipe_path,
                                c.lot_centroid.x, c.lot_centroid.y, c.offset_steps);
    std::string html = "<section id=\"correction\"><h2>Corrected recipe</h2><table><tr><th>component</th><th>was</th><th>new</th><th>change</th></tr>";
    for (std::size_t i = 0; i < c.old_fractions.size(); ++i) {
        const auto& label = recipe.blend.components[i].label;
        t += fmt::format("  {:<36} {:>8.4f} -> {:>8.4f}  ({:+.4f})\n", label, c.old_fractions[i], c.new_fractions[i], c.new_fractions[i] - c.old_fractions[i]);
        html += fmt::format("<tr><td>{}</td><td>{:.4f}</td><td>{:.4f}</td><td>{:+.4f}</td></tr>", xml_escape(label), c.old_fractions[i],
                            c.new_fractions[i], c.new_fractions[i] - c.old_fractions[i]);
    }
    t += fmt::format("  expected centroid x {:.4f} y {:.4f}: {:.2f} steps from the target{}\n", c.expected_centroid.x, c.expected_centroid.y,
                     c.expected_steps, c.message.empty() ? "" : " (" + c.message + ")");
    html += fmt::format("</table><p>Expected centroid x {:.4f}, y {:.4f}: {:.2f} MacAdam steps from the target. {}</p>", c.expected_centroid.x,
                        c.expected_centroid.y, c.expected_steps, xml_escape(c.message));
    const std::string toml = recipe_to_toml(c.corrected, {"Corrected by lampwright qc from the lot centroid; check it on a trial batch first."});
    t += "\n" + toml;
    html += "<pre>" + xml_escape(toml) + "</pre></section>";
    if (text) std::cout << t;
    else std::cerr << t;
    return html;
}

}  // namespace lampwright::cli
