#pragma once
// Presenting fits: one blend fit, a trade-off front, the best-k-of-n trials and a production
// tolerance run, as text, CSV and JSON (and the front as SVG). The CSV and JSON keys are stable:
// a blend fit's CSV row is blend_columns() then fit_feasible, fit_delta_uv_prime,
// fit_objective_value, fit_<component>..., and with a tolerance run tol_draws ... tol_nominal_steps.
#include "lampwright/design/optimiser.hpp"
#include "lampwright/design/tolerance.hpp"
#include "lampwright/design/tradeoff.hpp"
#include "lampwright/led/layer_fit.hpp"
#include "lampwright/led/layer_tolerance.hpp"

#include <nlohmann/json.hpp>

#include <string>
#include <utility>
#include <vector>

namespace lampwright {

std::string fit_text(const FitProblem& p, const FitResult& r, double ms);
// How the fit treats the chromaticity: "aimed at the target centre" for the default objective,
// "held within <tolerance> while maximising <figure>" otherwise.
std::string fit_chromaticity_aim(const FitProblem& p);
nlohmann::ordered_json fit_json(const FitProblem& p, const FitResult& r, double ms);
// Column names and cells of the one CSV row of a blend fit: the same columns for a feasible and an
// infeasible fit (one c<i>_* group per recipe component; empty cells where there is no value);
// tolerance columns when `tolerance` is given or `tolerance_run` (empty cells without a result).
std::pair<std::vector<std::string>, std::vector<std::string>> fit_csv(const FitProblem& p, const FitResult& r,
                                                                      const ToleranceResult* tolerance = nullptr, bool tolerance_run = false);
std::string sensitivity_text(const std::vector<SensitivityRow>& rows);

std::string front_text(const FitProblem& p, const TradeoffFront& f, double ms);
nlohmann::ordered_json front_json(const FitProblem& p, const TradeoffFront& f, double ms);
// CSV: floor, feasible, the figures, x, y, delta u'v', one fraction column per component.
std::string front_csv(const FitProblem& problem, const TradeoffFront& front);
// SVG chart: the objective against the floor figure (the floor figure on x).
std::string front_svg(const FitProblem& problem, const TradeoffFront& front);

std::string subsets_text(const SubsetTrials& c, std::size_t n);
nlohmann::ordered_json subsets_json(const SubsetTrials& c);

std::string tolerance_text(const ToleranceProblem& t, const ToleranceResult& r, double ms, const std::string& ellipse_source);
nlohmann::ordered_json tolerance_json(const ToleranceProblem& t, const ToleranceResult& r, double ms, const std::string& ellipse_source);

// A layer fit: the fitted loadings (and thickness), the constraints, then the layer's own report;
// CSV is layer_columns() then fit_feasible, fit_delta_uv_prime, fit_thickness_um, fit_loading_<id>...
std::string layer_fit_text(const LayerFitProblem& problem, const LayerFitResult& r);
std::pair<std::vector<std::string>, std::vector<std::string>> layer_fit_csv(const LayerFitResult& r);
nlohmann::ordered_json layer_fit_json(const LayerFitResult& r);
// The production spread of a fitted layer (led/layer_tolerance.hpp).
std::string layer_tolerance_text(const LayerToleranceProblem& t, const LayerToleranceResult& r, double ms, const std::string& ellipse_source);
nlohmann::ordered_json layer_tolerance_json(const LayerToleranceProblem& t, const LayerToleranceResult& r, double ms, const std::string& ellipse_source);
// CSV columns appended to the layer fit row (empty cells without a run).
std::pair<std::vector<std::string>, std::vector<std::string>> layer_tolerance_csv(const LayerToleranceResult* r);
// The sensitivity table; `heading` says what one step is.
std::string sensitivity_text(const std::vector<SensitivityRow>& rows, const std::string& heading);

}  // namespace lampwright
