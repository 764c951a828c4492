#pragma once
// Fitting an LED layer design to a target white: the phosphor loadings (and, when asked, the
// layer thickness) that put the light at the operating temperature on the target, with the best
// figure of the objective within the chromaticity tolerance. The layer's colour is not linear in
// the loadings (Beer-Lambert and re-absorption), so this always uses NLopt COBYLA on the
// logarithms of the loadings (and thickness), first onto the target from several deterministic
// starts, then for the objective within the tolerance; the answer is re-checked with
// evaluate_layer. Problem and result types follow the blend optimiser's.
#include "lampwright/led/layer.hpp"
#include "lampwright/design/optimiser.hpp"
#include "lampwright/design/tradeoff.hpp"

namespace lampwright {

struct LayerFitProblem {
    LayerDesign design;  // the starting design
    Target target;
    FitObjective objective = FitObjective::closest_to_start;  // "efficacy" = lm per W of pump
    double r9_weight = 0.5;
    double rg_weight = 0.5;
    // Chromaticity constraint: inside the target's n-step MacAdam ellipse when it has one, else
    // within this u'v' distance (as for blends: target_distance_ratio2).
    double tolerance_uv_prime = kDefaultFitToleranceUvPrime;
    bool fit_thickness = false;
    double min_thickness_um = 5, max_thickness_um = 2000;
    double max_total_loading = 0.8;  // phosphor mass fraction of the layer, all components
    std::optional<double> min_ra, min_r9;
};

struct LayerFitResult {
    bool feasible = false;
    std::string message;
    LayerDesign design;        // the fitted design, named "<start name> (fitted)"
    LayerEvaluation evaluation;    // evaluate_layer_design(design)
    double distance_uv_prime = 0;
    std::optional<double> macadam_steps;
    double objective_value = 0;
    std::vector<ConstraintReport> constraints;
    int evaluations = 0;
};

// `progress` (optimiser.hpp) is asked before each start of the search onto the target; false stops
// the fit with FitCancelled.
LayerFitResult fit_layer(const LayerFitProblem& problem, int max_evaluations = 3000, const FitProgress& progress = {});

// Best k of the design's n components (n <= 8): every k-subset fitted (fit_layer), the feasible
// one with the largest objective kept (for the default objective: the smallest change of the
// loadings). The result's design holds only the chosen components. Throws Error unless 1 <= k <= n.
struct LayerSubsetChoice : SubsetTrials {
    LayerFitResult result;
};
LayerSubsetChoice choose_layer_components(const LayerFitProblem& problem, int k, int max_evaluations = 3000);

// The trade-off front of a layer design (design/tradeoff.hpp's epsilon-constraint sweep, each point
// one fit_layer): ra-efficacy (efficacy in lm per W pump), ra-ler, ra-r9; the points' amounts are
// the loadings. Throws Error for rf-efficacy (layer fits take no Rf floor) or when no layer meets
// the target.
TradeoffFront layer_tradeoff_front(const LayerFitProblem& problem, FrontKind kind, int points, int max_evaluations = 3000);

}  // namespace lampwright
