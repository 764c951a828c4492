// lampwright fit on an LED layer design: loadings (and thickness) onto a target white.
#include "cli_common.hpp"

#include "lampwright/report/assessment_report.hpp"
#include "lampwright/core/error.hpp"
#include "lampwright/led/layer_design.hpp"
#include "lampwright/design/tolerance.hpp"
#include "lampwright/led/layer_fit.hpp"
#include "lampwright/led/layer_tolerance.hpp"
#include "lampwright/report/fit_report.hpp"
#include "lampwright/report/layer_report.hpp"

#include <fmt/format.h>

#include <chrono>
#include <iostream>

namespace lampwright::cli {

int run_layer_fit(const LayerFitProblem& problem, Format format, const std::string& design_out, const LayerFitExtras& extras) {
    std::optional<LayerSubsetChoice> subsets;
    LayerFitResult r;
    if (extras.choose > 0) {
        subsets = choose_layer_components(problem, extras.choose);
        if (!subsets->found) {
            std::cerr << subsets_text(*subsets, problem.design.components.size());
            print_error(fmt::format("no subset of {} of the {} components meets the target and constraints", extras.choose,
                                    problem.design.components.size()));
            return kExitBadInput;
        }
        r = subsets->result;
    } else {
        r = fit_layer(problem);
    }
    const auto& d = r.design;
    // The production spread of the fitted layer, on the full model.
    std::optional<LayerToleranceResult> tr;
    std::optional<LayerToleranceProblem> tp = extras.tolerance;
    std::string ellipse_source;
    double tol_ms = 0;
    if (tp && r.feasible) {
        tp->design = d;
        tp->ellipse = tolerance_ellipse(problem.target);
        ellipse_source = tolerance_ellipse_source(problem.target);
        const auto t0 = std::chrono::steady_clock::now();
        tr = run_layer_tolerance(*tp);
        tol_ms = std::chrono::duration<double, std::milli>(std::chrono::steady_clock::now() - t0).count();
    }
    switch (format) {
        case Format::text:
            std::cout << layer_fit_text(problem, r);
            if (subsets) std::cout << "\n" << subsets_text(*subsets, problem.design.components.size());
            if (extras.sensitivity && r.feasible)
                std::cout << sensitivity_text(layer_sensitivity(d), "one per cent more of each loading, and of the thickness (its row's value in um)");
            if (tr) std::cout << layer_tolerance_text(*tp, *tr, tol_ms, ellipse_source);
            break;
        case Format::csv: {
            auto [cols, vals] = layer_fit_csv(r);
            if (tp) {
                const auto [tc, tv] = layer_tolerance_csv(tr ? &*tr : nullptr);
                cols.insert(cols.end(), tc.begin(), tc.end());
                vals.insert(vals.end(), tv.begin(), tv.end());
            }
            std::cout << csv_line(cols) << '\n' << csv_line(vals) << '\n';
            break;
        }
        case Format::json: {
            auto j = layer_fit_json(r);
            if (subsets) j["subsets"] = subsets_json(*subsets);
            if (tr) j["tolerance"] = layer_tolerance_json(*tp, *tr, tol_ms, ellipse_source);
            std::cout << dump_json(j) << '\n';
            break;
        }
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
