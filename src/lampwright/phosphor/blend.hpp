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
//   - a discharge lamp adds the visible mercury lines as a set fraction of its visible output.
// Spectra are in W per nm per W of absorbed excitation power.
#include "lampwright/colour/assessment.hpp"
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
    std::string calibration;  // the calibration file applied ("" none)
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
};
// Throws Error for an impossible blend (as evaluate_blend; the fractions are not looked at).
BlendBasis blend_basis(const BlendInput& input);
// s_i = w_i g_i / sum_j w_j g_j for normalised mass fractions w; throws Error when nothing absorbs.
std::vector<double> photon_shares(const BlendBasis& basis, const std::vector<double>& mass_fractions);

// Evaluates the blend. Throws Error for an impossible blend (no components, non-positive
// fractions, Stokes rule broken, excitation outside a phosphor's data).
BlendResult evaluate_blend(const BlendInput& input, const AssessOptions& options = {});

// The phosphor's photon emission for this excitation: the Stokes check and the removal of the
// model tail at shorter wavelengths than the excitation. Throws Error when more than 1 % of the
// emitted photons would lie on the short side.
Spectrum emission_for_excitation(const Phosphor& p, const Excitation& e, double shift_nm = 0.0);

// Visible mercury lines (404.7, 435.8, 546.1 nm and the 577.0/579.1 nm pair, split 1:1) with the
// given relative powers per group, scaled to `power` in total; each line shared between the two
// 1 nm grid points around it so its power and centroid are kept.
Spectrum mercury_visible_lines(double power, const std::array<double, 4>& relative_power);
// One unit of power in one line group (0-3, kMercuryLineGroupsNm) on the emission grid.
Spectrum mercury_line_group(std::size_t group);

// Power within 380-780 nm (the CIE 15:2004 visible range) of a 1 nm spectrum.
double visible_power(const Spectrum& s);

}  // namespace lampwright
