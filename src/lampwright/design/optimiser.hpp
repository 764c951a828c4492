#pragma once
// The blend optimiser: which mass fractions of a recipe's phosphors put the lamp on a target
// white, with the best colour rendering or efficacy. The problem (FitProblem: target, objective,
// constraints) is separate from the solver (solve):
//   - three components: the blend's X, Y, Z are linear in the absorbed-photon shares s (mercury
//     lines included, README "Blend physics"), so hitting a chromaticity is a 3x3 linear system;
//     s is converted back to mass fractions w_i ~ s_i / a_i. A target outside the triangle of the
//     three components' chromaticities is infeasible; the nearest reachable chromaticity (closest
//     point of the triangle in u'v') is reported. Never a negative fraction.
//   - four or more: the blends exactly on the target are an affine set in w (the two chromaticity
//     equations are linear and homogeneous in w, plus sum w = 1); NLopt COBYLA (derivative-free:
//     CIE 13.3 Ra jumps at 5000 K where the reference switches) searches its null space from
//     several deterministic starts under the fraction limits, then the best answer is polished
//     within the chromaticity tolerance in the full space (sum-to-one eliminated by letting one
//     component take 1 - the others). The same full-space search, first onto the target and then
//     for the objective, serves three components (from the exact solution) and the case where no
//     on-target blend meets the limits.
// Every returned answer is re-checked with evaluate_blend, on the fractions as written to a
// recipe (6 decimals); the report lists each constraint, its value and whether it is active.
#include "lampwright/phosphor/blend.hpp"
#include "lampwright/core/error.hpp"
#include "lampwright/design/targets.hpp"

#include <functional>
#include <optional>
#include <string>
#include <vector>

namespace lampwright {

enum class FitObjective {
    closest_to_start,  // minimise sum |w_i - w_i(start)|: the smallest change to the recipe
    ra,                // maximise CIE 13.3 Ra
    r9,                // maximise R9 (saturated red)
    ra_r9,             // maximise (1 - k) Ra + k R9, k = FitProblem::r9_weight
    ler,               // maximise the luminous efficacy of radiation (lm/W of light)
    efficacy,          // maximise lm of phosphor light per W of absorbed excitation
    rf,                // maximise the CIE 224:2017 colour fidelity index Rf
    rg,                // maximise the ANSI/IES TM-30-20 gamut index Rg (more saturated colours)
    rf_rg,             // maximise (1 - k) Rf + k Rg, k = FitProblem::rg_weight
};
// "change", "ra", "r9", "ra-r9", "ler", "efficacy", "rf", "rg", "rf-rg"; throws Error otherwise.
FitObjective parse_fit_objective(const std::string& name);
std::string fit_objective_name(FitObjective o);

// Default chromaticity tolerance: distance from the target in CIE 1976 u'v'.
inline constexpr double kDefaultFitToleranceUvPrime = 0.0005;

struct FitProblem {
    BlendInput blend;  // excitation and components; their mass fractions are the starting recipe
    Target target;
    FitObjective objective = FitObjective::closest_to_start;
    double r9_weight = 0.5;
    double rg_weight = 0.5;
    // Chromaticity constraint: within this u'v' distance of the target, unless the target has a
    // MacAdam ellipse (then inside its n-step contour).
    double tolerance_uv_prime = kDefaultFitToleranceUvPrime;
    // Per-component limits on the normalised mass fraction; unset entries come from the
    // component's min_fraction / max_fraction, else 0 and 1. Empty = all from the components.
    std::vector<double> min_fraction, max_fraction;
    std::optional<double> min_ra, min_r9, min_ler;
    std::optional<double> min_rf;  // CIE 224:2017 Rf lower bound (blend recipes)
    // ANSI/IES TM-30-20 gamut index bounds and a range on the local chroma shift of hue bin 1
    // (Rcs,h1, per cent; the reds, the bin TM-30-20 Annex E limits). Blend recipes.
    std::optional<double> min_rg, max_rg;
    std::optional<double> min_rcs_h1_percent, max_rcs_h1_percent;
    // Any constraint or the objective needs CIE 224 / TM-30 figures during the search.
    bool needs_fidelity() const {
        return objective == FitObjective::rf || objective == FitObjective::rg || objective == FitObjective::rf_rg || min_rf || min_rg || max_rg || min_rcs_h1_percent || max_rcs_h1_percent;
    }
};

enum class FitMethod { automatic, exact, nlopt };

// Called by solve before each search start with the starts done and the starts of that search;
// returning false stops the fit (solve then throws FitCancelled). For a caller that shows progress
// and lets the user stop a long fit (lampwright serve); empty = never asked.
using FitProgress = std::function<bool(int done, int total)>;

struct FitOptions {
    FitMethod method = FitMethod::automatic;
    int max_evaluations = 4000;  // per start and phase
    FitProgress progress{};
};

// A fit stopped by its FitOptions::progress callback.
class FitCancelled : public Error {
public:
    FitCancelled() : Error("the fit was cancelled") {}
};

struct ConstraintReport {
    std::string name;    // e.g. "chromaticity", "Ra >=", "fraction of Y2O3:Eu3+ <="
    double value = 0;    // as re-checked with evaluate_blend
    double limit = 0;
    bool satisfied = false;
    bool active = false;  // at its limit (within a small margin)
    std::string text;     // one line for people
};

struct FitResult {
    bool feasible = false;
    std::string method;              // "exact 3x3", "exact 3x3 + NLopt COBYLA", "NLopt COBYLA"
    std::string message;             // plain words: what was found, or why nothing is feasible
    std::vector<double> mass_fractions;  // per component of the problem (0 for a dropped one)
    BlendInput blend;                // the fitted recipe (components at zero left out)
    BlendResult result;              // evaluate_blend(blend)
    double objective_value = 0;      // of the objective, from `result`
    double distance_uv_prime = 0;    // from the target
    std::optional<double> macadam_steps;  // when the target has an ellipse
    std::optional<bool> inside_ansi_quadrangle;  // ANSI C78.377 targets
    std::vector<ConstraintReport> constraints;
    std::optional<Chromaticity> nearest_reachable;  // when infeasible and known
    int evaluations = 0;
    int starts = 0;
};

// The weights k of the two mixed objectives.
struct ObjectiveWeights {
    double r9 = 0.5;  // (1 - k) Ra + k R9
    double rg = 0.5;  // (1 - k) Rf + k Rg
};
// The figure an objective maximises, on assessed light: Ra, R9, (1 - k) Ra + k R9, LER, the
// efficacy given (lm per W of absorbed excitation for a blend, per W of pump for a layer), Rf, Rg,
// (1 - k) Rf + k Rg, or minus `change` (sum of |fraction changes| from the start). Ra/R9 and
// Rf/Rg objectives without colour rendering (no CCT) give a large negative penalty. Shared by the
// blend and layer fits.
double objective_figure(FitObjective o, const ObjectiveWeights& k, const Assessment& a, double efficacy, double change);
// (distance from the target / tolerance)^2, <= 1 inside: in MacAdam steps of the target's ellipse
// when it has one, else in u'v' against `tolerance_uv_prime`.
double target_distance_ratio2(const Target& t, double tolerance_uv_prime, const Assessment& a);

// Solves the problem; never throws for an infeasible target (feasible = false, message says why).
// Throws Error for a malformed problem (no components, bad limits, a component that absorbs nothing).
FitResult solve(const FitProblem& problem, const FitOptions& options = {});

// Every constraint of the problem checked on an evaluated blend (fractions per problem component).
std::vector<ConstraintReport> check_constraints(const FitProblem& problem, const std::vector<double>& mass_fractions,
                                                const BlendResult& result);

// Sensitivity of the blend to its fractions: the change of u', v', CCT, Duv and Ra when one
// component gets one percentage point more of the mass (w_i + 0.01, then all renormalised),
// by central differences (+-0.005) on the blend model. Ra and CCT near 5000 K are not smooth
// (CIE 13.3 switches the reference there): read those rows with care.
struct SensitivityRow {
    std::string label;
    double mass_fraction = 0;
    double d_u_prime = 0, d_v_prime = 0, d_cct_K = 0, d_duv = 0, d_ra = 0;
};
std::vector<SensitivityRow> fraction_sensitivity(const BlendInput& blend, double step = 0.01);

}  // namespace lampwright
