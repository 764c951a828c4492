#pragma once
// The weight-fraction blend model of a thick phosphor coating (README "Blend physics"):
//   - every exciting photon is absorbed by the coating (or the fraction `absorbed_fraction`);
//   - phosphor i takes the share s_i = w_i g_i / sum_j w_j g_j of the absorbed photons, w the mass
//     fraction and g_i its share weight per unit mass:
//       mercury discharge (254 nm): every lamp phosphor grain is opaque at 254 nm, so a grain
//       takes the light that falls on its projected area, less what it reflects. Grains of
//       diameter d and density rho have a projected area per unit mass of 3 / (2 rho d) (spheres:
//       pi d^2/4 over rho pi d^3/6), so g_i = a_i (1 - R_i) / (rho_i d50_i), a_i the relative
//       absorption (1 for an opaque grain), R_i the grain's reflectance at 254 nm (geometric
//       optics of large absorbing spheres: Bohren and Huffman 1983, ch. 4 / van de Hulst 1957,
//       extinction cross-section -> geometric for x >> 1);
//       LED pump: g_i = a_i, the relative absorption per unit mass (Beer-Lambert in a dilute layer);
//   - it emits s_i QE_i photons along its emission shape; spectral power P(l) = N(l) h c / l;
//   - Stokes rule: no photon leaves with more energy than the exciting one;
//   - a discharge lamp adds the visible mercury lines as a set fraction of its visible output;
//   - mercury discharge: the UV is the 253.7 nm line and a share of 184.9 nm photons
//     (data/mercury/uv_lines.toml); every grain is opaque at both, so both are shared by grain
//     area alike, and each phosphor converts them with its QE at that line (at_254nm, at_185nm);
//   - mercury discharge: the coating is a two-flux layer of a given weight (phosphor/coating.hpp):
//     it sets how much of the discharge's UV is absorbed and how much of the light leaves, and so
//     the visible-line fraction, which is derived at the lamp type's default weight, and the
//     365 nm UV-A that leaves the lamp.
// Spectra are in W per nm per W of absorbed excitation power.
#include "lampwright/colour/assessment.hpp"
#include "lampwright/phosphor/coating.hpp"
#include "lampwright/phosphor/excitation.hpp"
#include "lampwright/phosphor/mercury_discharge.hpp"
#include "lampwright/phosphor/phosphor.hpp"

#include <array>
#include <optional>
#include <string>
#include <vector>

namespace lampwright {

struct BlendComponent {
    std::string label;    // shown in reports: the phosphor id, or the user's label
    Phosphor phosphor;
    double mass_fraction = 0;              // any positive scale; normalised by the model
    std::optional<double> absorption;      // overrides the phosphor's data at the excitation
    std::optional<double> quantum_efficiency;
    // Limits on the normalised mass fraction for the blend optimiser (recipe keys min_fraction,
    // max_fraction); evaluate_blend ignores them.
    std::optional<double> min_fraction, max_fraction;
    // Grain data of this lot (recipe keys density_g_per_cm3, d50_um); default: the phosphor's.
    std::optional<double> density_g_per_cm3, d50_um;
};

struct BlendInput {
    std::string name;
    Excitation excitation;
    std::vector<BlendComponent> components;
    // Visible mercury lines as a fraction of the lamp's visible (380-780 nm) radiant output, and
    // their ratios (404.7, 435.8, 546.1, 577+579 nm). Default for a discharge: the lamp type's
    // values from data/mercury (phosphor/mercury_discharge.hpp); ignored for LED pumps.
    std::optional<double> mercury_line_fraction;
    std::optional<std::array<double, 4>> mercury_line_ratios;
    std::optional<std::string> lamp_type;  // "halophosphate", "tri-band", "broadband"; default inferred
    double absorbed_fraction = 1.0;  // share of the excitation the coating absorbs (0, 1]
    // Mercury discharge: coating weight in mg/cm2 (default: the lamp type's, data/coating) and the
    // share of the UV photons at 184.9 nm (default: data/mercury/uv_lines.toml).
    std::optional<double> coating_weight_mg_per_cm2;
    std::optional<double> uv_185nm_fraction;
    std::string calibration;  // the calibration file applied ("" none)
    // Where mercury_line_fraction came from when not from the recipe itself (apply_calibration
    // sets "the calibration FILE"); "" means the recipe's own key.
    std::string mercury_line_fraction_from;
};

// What the coating model gave a mercury-discharge blend (README "Blend physics", "Coating weight").
struct CoatingResult {
    bool modelled = false;              // false: an LED pump, or no grain data
    double weight_mg_per_cm2 = 0;       // as used
    std::string weight_source;          // "the recipe" or the lamp type's default and its source
    double uv_absorbed = 0, uv_lost = 0, visible_escape = 0, line_escape = 0, uv365_escape = 0;
    double conversion = 0;              // uv_absorbed x visible_escape
    double optimum_weight_mg_per_cm2 = 0;  // the weight of the most light per W of UV, this blend
    double optimum_conversion = 0;
    double uv_185nm_fraction = 0;       // share of the UV photons at 184.9 nm, as used
    double uva_W_per_W = 0;             // UV-A (315-400 nm) leaving the lamp per W of absorbed excitation
    double luminous_efficacy_uv = 0;    // lm of phosphor light leaving the lamp per W of UV sent to the wall
};


struct ComponentResult {
    std::string label;
    double mass_fraction = 0;     // normalised
    double absorption = 0;        // relative, at the excitation
    double quantum_efficiency = 0;
    double density_g_per_cm3 = 0, d50_um = 0, reflectance = 0;  // as used by the grain model (0: not used)
    double share_weight = 0;      // g_i: absorbed-share weight per unit mass (see above), relative
    double photon_share = 0;      // s_i: share of the absorbed excitation photons
    double radiant_share = 0;     // share of the phosphor light's radiant power
    double luminous_share = 0;    // share of the phosphor light's luminous flux
    double stokes_efficiency = 0; // mean emitted photon energy / exciting photon energy
    double radiant_W_per_W = 0;   // light power per W of absorbed excitation
    double luminous_lm_per_W = 0; // lm per W of absorbed excitation
};

struct BlendResult {
    std::string name;
    Spectrum spectrum;            // all light leaving the lamp: phosphors + mercury lines + leaked pump
    Spectrum phosphor_spectrum;   // the phosphors' light alone
    std::vector<ComponentResult> components;
    double quantum_yield = 0;        // emitted photons per absorbed photon, sum s_i QE_i
    double stokes_efficiency = 0;    // blend: emitted power / (emitted photons x exciting photon energy)
    double radiant_efficiency = 0;   // W of phosphor light per W of absorbed excitation
    double luminous_efficacy_absorbed = 0;  // lm of phosphor light per W of absorbed excitation
    double mercury_line_fraction = 0;       // as applied
    std::array<double, 4> mercury_line_ratios{};  // as applied (435.8 nm = 1)
    std::string lamp_type;                  // whose mercury-line defaults apply ("" for an LED)
    std::string mercury_source;             // where the applied mercury-line values come from
    bool grain_model = false;               // shares by projected area (true) or by mass x absorption
    double pump_leak_W_per_W = 0;           // LED: leaked pump power per W absorbed
    CoatingResult coating;                  // mercury discharge: the coating model's figures
    Assessment assessment;                  // of `spectrum`
    std::string calibration;                // the calibration file applied ("" none)
};

// The blend's light is linear in the photon shares s (README "Blend physics"): spectrum =
// sum_i s_i light_i. The basis holds each component's part per unit share, computed once, so
// that a fit can vary the fractions without re-deriving the emission.
struct BlendBasis {
    std::vector<double> absorption;          // a_i, relative, at the excitation
    std::vector<double> share_weight;        // g_i, per unit mass (see the top of this file)
    std::vector<double> quantum_efficiency;  // QE_i
    std::vector<double> stokes_efficiency;   // mean emitted photon energy / exciting photon energy
    std::vector<Spectrum> phosphor_light;    // W/nm per W absorbed when s_i = 1
    std::vector<Spectrum> light;             // the same plus its share of the mercury lines / leaked pump
    double mercury_line_fraction = 0;        // as applied
    std::array<double, 4> mercury_line_ratios{};
    std::string lamp_type, mercury_source;
    bool grain_model = false;
    std::vector<std::string> notes;          // what the model had to assume (into the assessment's warnings)
    double pump_leak_W_per_W = 0;
    double uv_185nm_fraction = 0;            // mercury: share of the UV photons at 184.9 nm, as applied
    CoatingResult coating;                   // at the input's mass fractions (see blend_basis)
};
// Throws Error for an impossible blend (as evaluate_blend). The fractions matter only through the
// coating model (the layer's make-up sets its optics and so the visible-line fraction); a fit
// that moves them keeps the coating of the starting fractions (a small effect: the grains' areas
// per unit mass differ by tens of per cent, and only the line fraction depends on them).
BlendBasis blend_basis(const BlendInput& input);
// The coating model for a mercury-discharge blend at the given coating weight and the input's
// mass fractions; `modelled` false for an LED pump or without grain data. The optimum weight is
// left at 0: add_coating_optimum finds it (evaluate_blend does, for its report).
CoatingResult blend_coating(const BlendInput& input, double weight_mg_per_cm2);
// Fills the coating's optimum weight and its conversion for the input's mass fractions (Brent's
// search, coating.hpp); nothing when the coating is not modelled.
void add_coating_optimum(const BlendInput& input, CoatingResult& coating);
// s_i = w_i g_i / sum_j w_j g_j for normalised mass fractions w; throws Error when nothing absorbs.
std::vector<double> photon_shares(const BlendBasis& basis, const std::vector<double>& mass_fractions);

// Evaluates the blend. Throws Error for an impossible blend (no components, non-positive
// fractions, Stokes rule broken, excitation outside a phosphor's data).
BlendResult evaluate_blend(const BlendInput& input, const AssessOptions& options = {});

// The blend at each coating weight (mg/cm2), mercury discharge only: efficacy against coating
// weight, and the colour shift that comes with it (the visible-line fraction moves).
std::vector<BlendResult> coating_weight_sweep(const BlendInput& input, const std::vector<double>& weights_mg_per_cm2,
                                              const AssessOptions& options = {});

// The phosphor's photon emission for this excitation: the Stokes check and the removal of the
// model tail at shorter wavelengths than the excitation. Throws Error when more than 1 % of the
// emitted photons would lie on the short side.
// The components' mass fractions normalised to sum to one (all zero when they sum to none).
std::vector<double> normalised_mass_fractions(const BlendInput& in);

Spectrum emission_for_excitation(const Phosphor& p, const Excitation& e, double shift_nm = 0.0, double width_scale = 1.0);

// Visible mercury lines (404.7, 435.8, 546.1 nm and the 577.0/579.1 nm pair, split 1:1) with the
// given relative powers per group, scaled to `power` in total; each line shared between the two
// 1 nm grid points around it so its power and centroid are kept.
Spectrum mercury_visible_lines(double power, const std::array<double, 4>& relative_power);
// One unit of power in one line group (0-3, kMercuryLineGroupsNm) on the emission grid.
Spectrum mercury_line_group(std::size_t group);

// Power within 380-780 nm (the CIE 15:2004 visible range) of a 1 nm spectrum.
double visible_power(const Spectrum& s);

}  // namespace lampwright
