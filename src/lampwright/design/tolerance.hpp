#pragma once
// Production tolerance of a blend by Monte Carlo: lamps are made in batches; the lamps of one batch
// share a powder mix (weighed once) from one lot of each phosphor, and each lamp has its own
// coating weight and its own measurement error. The result is the distribution of the lamp
// chromaticity in MacAdam steps around the target, its spread within and between batches, and the
// share of lamps inside an n-step ellipse.
//
// Sources of variation (kToleranceSources, phosphor/recipe_tolerance.hpp: default sigma, level and where it comes from):
//   per batch (shared by the batch's lamps):
//     weighing   relative (default): m_i = w_i (1 + sw_i z), absolute: m_i = w_i + sw_i z (sw_i in
//                mass-fraction units); negative masses set to 0; then normalised to sum 1;
//     peak       every band of component i moved by d_i = sp_i z nm (the same shift the thermal
//                model applies; a measured spectrum is moved by linear interpolation); components
//                whose emission model is "lines" (4f-4f lines of Eu3+, Tb3+; Mn4+ lines) are
//                never shifted, whatever sp_i;
//     QE         (brightness) QE_i (1 + sq_i z), at least 0;
//     d50        the lot's median grain size d50_i (1 + sd_i z); it enters the grain-area share
//                weight g_i ~ 1 / (rho_i d50_i) of a mercury lamp (phosphor/blend.hpp); the coating
//                optics keep the nominal d50 (see the fast path); an LED pump has no grain model,
//                so d50 does not enter there;
//     absorption the lot's per-mass absorption a_i (1 + sa_i z), at least 0: g_i scales with it;
//   per lamp:
//     coating    weight W = W0 + sc z mg/cm2 (at least W0 / 10): through the coating model
//                it sets the visible mercury-line fraction (and the UV absorbed, which changes the
//                light output, not the colour); only with a modelled coating (mercury, grain data);
//     measurement x += sm zx, y += sm zy, added to the lamp's chromaticity.
// The blend's X, Y, Z are linear in the photon shares s_i (README "Blend physics"):
// XYZ = sum_i s_i q_i [A_i(d_i) + V_i(d_i) M(W)] + L, with A_i the tristimuli of component i's
// phosphor light per unit share at its data-file QE, V_i its visible power, M(W) the tristimuli of
// the mercury lines (and the 365 nm group) that go with one W of visible phosphor light at coating
// weight W (zero for an LED), q_i the QE factor, and L the leaked pump light (LED,
// absorbed_fraction < 1), which does not depend on the shares.
// Fast path: A_i, V_i are tabulated at shifts on a grid (0.25 nm, over +-(6 sigma + 0.5 nm)) and
// read by cubic (Catmull-Rom) interpolation, linear beyond the grid; M(W) is tabulated from the
// full blend model at 61 coating weights over W0 +- 6 sigma and read linearly (held at the ends).
// A draw then costs a few dozen multiplications. The coating optics (line escape, UV absorbed) are
// those of the nominal fractions and grain sizes: the approximation beside the interpolation;
// tests compare the fast path with evaluate_blend on the drawn lamp.
//
// Random numbers: std::mt19937_64 seeded with `seed` and std::normal_distribution<double>; at the
// first lamp of each batch five normals per component in the order weighing, peak, QE, d50,
// absorption; then for every lamp three normals: coating weight, measurement x, measurement y. The
// mt19937_64 sequence is fixed by the C++ standard; the normal_distribution algorithm is not, so
// the same seed gives the same draws with one standard library (libstdc++ here) but may not with
// another.
#include "lampwright/colour/colour_fidelity.hpp"
#include "lampwright/phosphor/blend.hpp"
#include "lampwright/phosphor/recipe_tolerance.hpp"
#include "lampwright/design/targets.hpp"

#include <array>
#include <cstdint>
#include <functional>
#include <optional>
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
    std::vector<double> d50_sigma;         // relative, per powder lot
    std::vector<double> absorption_sigma;  // relative, per powder lot
    double coating_weight_sigma_mg_per_cm2 = 0;  // per lamp
    double measurement_sigma_xy = 0;             // per lamp, in x and in y
    std::size_t batch_size = 1;   // lamps per batch (1: every lamp independent)
    // Where each kToleranceSources value came from (key, words), for the report; may be empty.
    std::vector<std::pair<std::string, std::string>> origins;
    std::size_t draws = 100000;
    std::uint64_t seed = 1;
    // CIE 224 Rf and TM-30-20 Rg are computed for the first min(draws, fidelity_draws) draws only
    // (0: none): each costs one CIECAM02 of the 99 samples (about 20-30 us) against well under
    // 1 us for the chromaticity; 2000 draws give the sd to about 1.6 % (the sd of a sample sd of
    // n normal values is about sd / sqrt(2 (n - 1)); common practice, no source).
    std::size_t fidelity_draws = 2000;
};

struct ToleranceDraw {
    std::vector<double> mass_fractions;  // normalised
    std::vector<double> shift_nm;
    std::vector<double> qe_factor;
    std::vector<double> d50_factor;         // empty = 1
    std::vector<double> absorption_factor;  // empty = 1
    double coating_weight_mg_per_cm2 = 0;   // 0 = the nominal weight
    double measurement_dx = 0, measurement_dy = 0;
    std::size_t batch = 0;                  // which batch the lamp belongs to
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
    std::vector<Chromaticity> xy;     // per draw, when kept (measured: with the measurement error)
    // Batches (the lamps of a batch share the per-batch draws). Spread of x, y within a batch
    // (pooled sd about each batch's mean) and between batches (sd of the batch means), and the
    // same as RMS MacAdam steps: lamp from its batch mean, batch mean from the mean of the batch means;
    // the worst batch mean's distance from the target.
    std::size_t batch_size = 1, batches = 0;
    double sd_x_within = 0, sd_y_within = 0, sd_x_between = 0, sd_y_between = 0;
    double within_steps_rms = 0, between_steps_rms = 0, worst_batch_mean_steps = 0;
    std::vector<std::string> notes;   // what the model could not vary, and why
    // Rf and Rg of the first fidelity_draws draws that have a CCT (CIE 224 / TM-30-20 from the 99
    // samples' tristimulus sums, linear in the light as X, Y, Z are, on the same fast path; the
    // measurement error is a chromaticity error and does not enter): mean, sample sd, 5th and 95th
    // percentiles (type 7). NaN when no such draw.
    struct Spread {
        double mean = 0, sd = 0, p05 = 0, p95 = 0;
    };
    std::size_t fidelity_draws = 0;   // draws with Rf and Rg in the spreads
    Spread rf, rg;
    double nominal_rf = 0, nominal_rg = 0;  // of the recipe without errors (NaN without a CCT)
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
    // with_fidelity also tabulates the CIE 224 sample sums (for fidelity()).
    explicit ToleranceModel(const ToleranceProblem& problem, bool with_fidelity = false);
    std::size_t size() const { return nominal_.size(); }
    std::uint64_t seed() const { return seed_; }
    XYZ tristimulus(const ToleranceDraw& d) const;  // fast path
    Chromaticity chromaticity(const ToleranceDraw& d) const;
    // The same fast path for the CIE 224 sample sums, and Rf, Rg from them (CCT by Ohno from the
    // fast X, Y, Z); nullopt without a CCT. Needs the model built with_fidelity.
    CesTristimuli ces_tristimuli(const ToleranceDraw& d) const;
    std::optional<ColourFidelity> fidelity(const ToleranceDraw& d) const;
    bool has_fidelity() const { return !ces_table_.empty(); }
    const std::vector<double>& nominal_fractions() const { return nominal_; }
    double nominal_coating_weight() const { return w0_; }  // 0: no coating model
    const std::vector<std::string>& notes() const { return notes_; }
    // The draw of the recipe without errors.
    ToleranceDraw nominal_draw() const;

private:
    friend class ToleranceSampler;
    std::vector<double> nominal_, absorption_, sw_, sp_, sq_, sd_, sa_;
    std::vector<bool> grain_;                   // share weight ~ 1 / d50 (mercury grain model)
    double sc_ = 0, sm_ = 0, w0_ = 0;           // coating-weight and measurement sigmas; nominal weight
    std::size_t batch_size_ = 1;
    std::vector<double> weight_grid_;           // coating weights of M(W)
    std::vector<std::array<double, 3>> m_table_;  // M at those weights (one entry: no coating model)
    bool relative_ = true;
    std::uint64_t seed_ = 1;
    double grid_step_ = 0.25;
    std::vector<double> grid_lo_;               // first shift of each component's table
    std::vector<std::vector<std::array<double, 4>>> table_;  // A_i (X, Y, Z) and V_i at the grid shifts
    std::vector<std::string> notes_;
    std::array<double, 3> leak_{};
    // The CIE 224 sums of the same quantities: per component and grid shift (phosphor light),
    // per coating weight (mercury lines per W of visible phosphor light), and the leak.
    std::vector<std::vector<CesTristimuli>> ces_table_;
    std::vector<CesTristimuli> m_ces_table_;
    CesTristimuli ces_leak_{};
    // A draw's unnormalised share weight of component i and their sum (component i's table weighs
    // share_factor / share_total x its QE factor), and where its coating weight falls in the M(W)
    // table; shared by tristimulus() and ces_tristimuli(), with no allocation per draw.
    double share_factor(const ToleranceDraw& d, std::size_t i) const;
    double share_total(const ToleranceDraw& d) const;
    std::pair<std::size_t, double> weight_position(const ToleranceDraw& d) const;
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
    std::size_t lamp_ = 0;  // lamps drawn so far
    ToleranceDraw batch_;   // the current batch's shared draw
};

// The blend of a draw evaluated exactly: evaluate_blend on shifted phosphors with their QE,
// absorption and d50 scaled and the drawn coating weight (for checking the fast path; components
// with a zero fraction are left out). The measurement error is not in it: see measured().
BlendResult evaluate_draw_exactly(const BlendInput& blend, const ToleranceDraw& d);
// A chromaticity as measured: with the draw's measurement error added.
Chromaticity measured(const Chromaticity& xy, const ToleranceDraw& d);

// The Monte Carlo run. keep_steps keeps every draw's distance and chromaticity in the result.
ToleranceResult run_tolerance(const ToleranceProblem& problem, const ToleranceProgress& progress = {}, bool keep_steps = false);

}  // namespace lampwright
