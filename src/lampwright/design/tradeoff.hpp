#pragma once
// Trade-offs on top of the blend optimiser (optimiser.hpp):
//   - the trade-off front between two figures by an epsilon-constraint sweep: maximise one figure
//     (efficacy, LER or Ra) subject to a floor on the other (Ra, R9 or CIE 224 Rf), for a sweep of
//     floors, each point one solve() of the fit problem with min_ra / min_r9 / min_rf set;
//   - the best k of a recipe's n components: every k-subset solved, the best feasible kept.
#include "lampwright/design/optimiser.hpp"

#include <string>
#include <vector>

namespace lampwright {

enum class FrontKind {
    ra_efficacy,  // maximise efficacy (lm per W absorbed) subject to Ra >= floor
    ra_ler,       // maximise LER subject to Ra >= floor
    ra_r9,        // maximise Ra subject to R9 >= floor
    rf_efficacy,  // maximise efficacy (lm per W absorbed) subject to Rf >= floor (CIE 224:2017)
};
// "ra-efficacy", "ra-ler", "ra-r9", "rf-efficacy"; throws Error otherwise.
FrontKind parse_front_kind(const std::string& name);
std::string front_kind_name(FrontKind k);  // the same words
// The figure maximised and the figure whose floor is swept, e.g. "efficacy" and "Ra".
std::string front_objective_label(FrontKind k);
std::string front_floor_label(FrontKind k);

struct FrontPoint {
    double floor = 0;       // the epsilon: Ra >= floor (R9 >= floor for ra_r9, Rf for rf_efficacy)
    bool feasible = false;  // a blend meeting every constraint of this point was found
    double objective = 0;   // the figure maximised, from the re-checked blend
    double ra = 0, r9 = 0, ler = 0, efficacy = 0;  // of the blend (evaluate_blend)
    double rf = 0, rg = 0;                          // CIE 224 Rf, TM-30-20 Rg (NaN without a CCT)
    Chromaticity xy;
    double distance_uv_prime = 0;
    std::vector<double> mass_fractions;  // per component of the problem
    // The blend was found by another point's solve (it meets this floor and beats this point's
    // own answer): the sweep keeps the best known feasible blend at every floor, which makes the
    // front monotone.
    bool from_other_point = false;
};

struct TradeoffFront {
    FrontKind kind = FrontKind::ra_efficacy;
    std::string objective_label, floor_label;  // "efficacy", "Ra", ...
    std::string objective_unit;                // "lm/W absorbed", "lm/W", ""
    double floor_low = 0, floor_high = 0;      // the sweep's range
    std::vector<FrontPoint> points;            // floor ascending
    int solves = 0;
    int evaluations = 0;
    std::string message;
};

// The front of the problem's target, limits and other floors (problem.objective and the swept
// floor of `problem` are replaced). The floor runs from the floor figure of the unconstrained
// best-objective blend up to the best reachable floor figure (less 0.02), in `points` equal steps
// (points >= 2). Throws Error for a malformed problem or when no blend meets the target at all.
TradeoffFront tradeoff_front(const FitProblem& problem, FrontKind kind, int points, const FitOptions& options = {});

// Best k of n components: every k-subset of the problem's components solved (n <= 8).
struct SubsetTrial {
    std::vector<std::size_t> indices;  // into problem.blend.components
    std::string labels;                // "A + B + C"
    bool feasible = false;
    double objective_value = 0;        // as FitResult::objective_value
    std::string message;               // why it is infeasible, when it is
};
// The trials of a best-k-of-n search (blend or layer), for the reports.
struct SubsetTrials {
    int k = 0;
    bool found = false;                // some subset is feasible
    std::size_t best = 0;              // index into trials
    std::vector<SubsetTrial> trials;   // in lexicographic order of the indices
};
struct SubsetChoice : SubsetTrials {
    FitResult result;                  // the best subset's fit, fractions per component of the
                                       // full problem (0 for the components left out)
};
// Every k-subset of n in lexicographic order (1 <= k <= n <= 8, else Error naming `what`).
std::vector<std::vector<std::size_t>> k_subsets(std::size_t n, int k, const std::string& what);
// "Best" by the problem's objective: the largest objective_value, or for closest_to_start the
// smallest change (measured on the subset, from the recipe's fractions of those components
// renormalised). A subset that leaves out a component with a minimum fraction above zero is
// reported infeasible without a solve. Ties go to the first subset in order.
// Throws Error unless 1 <= k <= n <= 8.
SubsetChoice choose_components(const FitProblem& problem, int k, const FitOptions& options = {});

}  // namespace lampwright
