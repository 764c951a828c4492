#pragma once
// Production tolerance of a blend by Monte Carlo: each draw is one lamp whose coating was weighed
// with random errors and whose phosphors come from lots that differ from the data file (emission
// peak shift, quantum efficiency). The result is the distribution of the lamp chromaticity in
// MacAdam steps around the target and the share of lamps inside an n-step ellipse.
//
// Model of one draw (all errors independent, normal):
//   weighing  relative (default): m_i = w_i (1 + sw_i z), absolute: m_i = w_i + sw_i z (sw_i in
//             mass-fraction units); negative masses set to 0; then normalised to sum 1;
//   peak      every band and line of component i moved by d_i = sp_i z nm (the same shift the
//             thermal model applies; a measured spectrum is moved by linear interpolation);
//   QE        QE_i (1 + sq_i z), at least 0.
// Absorption is not varied. The blend's X, Y, Z are linear in the photon shares s_i (README "Blend
// physics"): XYZ = sum_i s_i q_i U_i(d_i) + L, with U_i the tristimuli of component i's light
// (phosphor + its share of the mercury lines) per unit share at its data-file QE, q_i the QE factor,
// and L the leaked pump light (LED, absorbed_fraction < 1), which does not depend on the shares.
// Fast path: U_i(d) is tabulated at shifts on a grid (0.25 nm, over +-(6 sigma + 0.5 nm)) and read
// by cubic (Catmull-Rom) interpolation, linear beyond the grid; a draw then costs a few dozen
// multiplications. The approximation is the interpolation alone; tests compare it with
// evaluate_blend on shifted phosphors.
//
// Random numbers: std::mt19937_64 seeded with `seed` and std::normal_distribution<double>, three
// normals per component per draw in the order weighing, peak, QE. The mt19937_64 sequence is fixed
// by the C++ standard; the normal_distribution algorithm is not, so the same seed gives the same
// draws with one standard library (libstdc++ here) but may not with another.
#include "lampwright/phosphor/blend.hpp"
#include "lampwright/design/targets.hpp"

#include <array>
#include <cstdint>
#include <functional>
#include <random>
#include <string>
#include <vector>

namespace lampwright {

struct ToleranceProblem {
    BlendInput blend;               // the nominal recipe (its mass fractions are the aim)
    MacAdamEllipse ellipse;         // one-step ellipse; its centre is the target
    double steps = 4;               // the n-step ellipse of the yield
    // Per component, or one value for all (empty = 0).
    std::vector<double> weighing_sigma;
    bool weighing_relative = true;  // sigma as a share of each component's mass; else absolute
    std::vector<double> peak_sigma_nm;
    std::vector<double> qe_sigma;   // relative
    std::size_t draws = 100000;
    std::uint64_t seed = 1;
};

struct ToleranceDraw {
    std::vector<double> mass_fractions;  // normalised
    std::vector<double> shift_nm;
    std::vector<double> qe_factor;
};

// Progress: draws done and the total; called about every 1 % and at the end.
using ToleranceProgress = std::function<void(std::size_t done, std::size_t total)>;

struct ToleranceResult {
    std::size_t draws = 0;
    std::uint64_t seed = 0;
    double steps_limit = 0;
    Chromaticity target;
    Chromaticity nominal_xy;          // the recipe without errors
    double nominal_steps = 0;         // its distance from the target
    double mean_steps = 0, sd_steps = 0;
    double p50 = 0, p90 = 0, p95 = 0, p99 = 0, max_steps = 0;
    double mean_x = 0, mean_y = 0, sd_x = 0, sd_y = 0, corr_xy = 0;
    std::size_t inside = 0;           // draws within steps_limit
    // Draws whose chromaticity is not a finite number (every phosphor's QE drawn at zero: no
    // light, x = y = 0/0): failed lamps, outside the ellipse, left out of the means, standard
    // deviations and percentiles above (which are over the draws - failed others).
    std::size_t failed = 0;
    double yield = 0;                 // inside / draws
    double yield_standard_error = 0;  // sqrt(p (1 - p) / N)
    std::vector<double> steps;        // per draw, when kept (NaN for a failed draw)
};

// The one-step ellipse for a target: its own (ANSI C78.376 targets), else the one-step ellipse of
// the ANSI C78.376 lamp colour nearest to the target, moved to the target (values from memory,
// see data/targets/README.md).
MacAdamEllipse tolerance_ellipse(const Target& target);
// Where that ellipse comes from, in words.
std::string tolerance_ellipse_source(const Target& target);

// A phosphor whose emission bands and lines are moved by shift_nm (a measured spectrum: resampled,
// linear interpolation, zero outside its data).
Phosphor shifted_phosphor(const Phosphor& p, double shift_nm);

// The precomputed fast model of one problem.
class ToleranceModel {
public:
    // Throws Error for a malformed problem (negative sigma, wrong vector lengths, no draws).
    explicit ToleranceModel(const ToleranceProblem& problem);
    std::size_t size() const { return nominal_.size(); }
    std::uint64_t seed() const { return seed_; }
    XYZ tristimulus(const ToleranceDraw& d) const;  // fast path
    Chromaticity chromaticity(const ToleranceDraw& d) const;
    const std::vector<double>& nominal_fractions() const { return nominal_; }

private:
    friend class ToleranceSampler;
    std::vector<double> nominal_, absorption_, sw_, sp_, sq_;
    bool relative_ = true;
    std::uint64_t seed_ = 1;
    double grid_step_ = 0.25;
    std::vector<double> grid_lo_;               // first shift of each component's table
    std::vector<std::vector<std::array<double, 3>>> table_;  // U_i at the grid shifts
    std::array<double, 3> leak_{};
};

// The draw generator: deterministic for a seed (see the note on std::normal_distribution above).
class ToleranceSampler {
public:
    ToleranceSampler(const ToleranceModel& model, std::uint64_t seed);
    void next(ToleranceDraw& d);

private:
    const ToleranceModel* model_;
    std::mt19937_64 rng_;
    std::normal_distribution<double> normal_;
};

// The blend of a draw evaluated exactly: evaluate_blend on shifted phosphors with their QE scaled
// (for checking the fast path; components with a zero fraction are left out).
BlendResult evaluate_draw_exactly(const BlendInput& blend, const ToleranceDraw& d);

// The Monte Carlo run. keep_steps keeps every draw's distance in the result.
ToleranceResult run_tolerance(const ToleranceProblem& problem, const ToleranceProgress& progress = {}, bool keep_steps = false);

}  // namespace lampwright
