// lampwright fit on an LED layer design: loadings (and thickness) onto a target white.
#include "cli_common.hpp"

#include "lampwright/report/assessment_report.hpp"
#include "lampwright/core/error.hpp"
#include "lampwright/led/layer_design.hpp"
#include "lampwright/led/layer_fit.hpp"
#include "lampwright/report/fit_report.hpp"
#include "lampwright/report/layer_report.hpp"

#include <fmt/format.h>

#include <iostream>

namespace lampwright::cli {

int run_layer_fit(const LayerFitProblem& problem, Format format, const std::string& design_out) {
    const LayerFitResult r = fit_layer(problem);
    const auto& d = r.design;
    switch (format) {
        case Format::text: std::cout << layer_fit_text(problem, r); break;
        case Format::csv: {
            const auto [cols, vals] = layer_fit_csv(r);
            std::cout << csv_line(cols) << '\n' << csv_line(vals) << '\n';
            break;
        }
        case Format::json: std::cout << dump_json(layer_fit_json(r)) << '\n'; break;
    }
    for (const auto& w : r.evaluation.operating.assessment.warnings) print_warning(fmt::format("{}: {}", d.name, w));
    const std::string caution = layer_caution(r.evaluation);
    if (!caution.empty() && format != Format::text) print_warning("CAUTION: " + caution);
    if (!r.feasible) {
        print_error(r.message);
        return kExitBadInput;
    }
    if (!design_out.empty()) {
        write_output_or_throw(design_out, "# Fitted by lampwright fit: " + problem.target.description + "\n" + layer_design_to_toml(d));
    }
    return kExitOk;
}

}  // namespace lampwright::cli
