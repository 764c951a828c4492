// lampwright fit on an LED layer design: loadings (and thickness) onto a target white.
#include "cli_common.hpp"

#include "lampwright/assessment_report.hpp"
#include "lampwright/error.hpp"
#include "lampwright/layer_design.hpp"
#include "lampwright/layer_fit.hpp"
#include "lampwright/layer_report.hpp"

#include <fmt/format.h>

#include <fstream>
#include <iostream>

namespace lampwright::cli {

int run_layer_fit(const LayerFitProblem& problem, Format format, const std::string& design_out) {
    const LayerFitResult r = fit_layer(problem);
    const auto& d = r.design;
    switch (format) {
        case Format::text: {
            std::cout << fmt::format("Fit of layer '{}'\n  target:     {} (x = {:.4f}, y = {:.4f})\n  objective:  {}\n  result:     {}\n\n",
                                     problem.design.name, problem.target.description, problem.target.xy.x, problem.target.xy.y,
                                     fit_objective_name(problem.objective), r.message);
            std::cout << fmt::format("  {:<36} {:>10} {:>10}\n", "component", "start", "fitted");
            for (std::size_t i = 0; i < d.components.size(); ++i)
                std::cout << fmt::format("  {:<36} {:>10.6f} {:>10.6f}\n", d.components[i].label, problem.design.components[i].loading,
                                         d.components[i].loading);
            if (problem.fit_thickness)
                std::cout << fmt::format("  {:<36} {:>10.1f} {:>10.1f}\n", "thickness (um)", problem.design.thickness_um, d.thickness_um);
            std::cout << "\n  constraints (re-checked with the layer model):\n";
            for (const auto& c : r.constraints) std::cout << "    " << c.text << '\n';
            std::cout << '\n' << layer_text(r.report);
            break;
        }
        case Format::csv: {
            auto cols = layer_columns();
            auto vals = layer_values(r.report);
            cols.push_back("fit_feasible");
            vals.push_back(r.feasible ? "1" : "0");
            cols.push_back("fit_delta_uv_prime");
            vals.push_back(fmt::format("{:.6f}", r.distance_uv_prime));
            cols.push_back("fit_thickness_um");
            vals.push_back(fmt::format("{:.3f}", d.thickness_um));
            for (const auto& c : d.components) {
                cols.push_back("fit_loading_" + c.label);
                vals.push_back(fmt::format("{:.6f}", c.loading));
            }
            std::cout << csv_line(cols) << '\n' << csv_line(vals) << '\n';
            break;
        }
        case Format::json: {
            auto j = layer_json(r.report);
            j["fit_feasible"] = r.feasible;
            j["fit_message"] = r.message;
            j["fit_delta_uv_prime"] = r.distance_uv_prime;
            j["fit_thickness_um"] = d.thickness_um;
            auto& l = j["fit_loadings"] = nlohmann::ordered_json::object();
            for (const auto& c : d.components) l[c.label] = c.loading;
            std::cout << j.dump(2) << '\n';
            break;
        }
    }
    const std::string caution = layer_caution(r.report);
    if (!caution.empty() && format != Format::text) std::cerr << "lampwright: CAUTION: " << caution << '\n';
    if (!r.feasible) {
        print_error(r.message);
        return kExitBadInput;
    }
    if (!design_out.empty()) {
        std::ofstream out(design_out);
        if (!out || !(out << "# Fitted by lampwright fit: " << problem.target.description << "\n" << layer_design_to_toml(d)))
            throw InputError(design_out, 0, "cannot be written");
    }
    return kExitOk;
}

}  // namespace lampwright::cli
