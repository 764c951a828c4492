#pragma once
// The phosphor coating of a fluorescent tube as a two-flux (Kubelka-Munk) layer of grains
// (README "Blend physics", item "Coating weight"):
//   - per unit coating weight (mg/cm2), grains of density rho and median size d50 present a
//     projected area sigma = 3 / (2 rho d50) (opaque spheres);
//   - the hemispheric-mean two-flux equations (Meador and Weaver 1980, J. Atmos. Sci. 37, 630,
//     Table 1: gamma1 = 2 - omega (1 + g), gamma2 = omega (1 - g)) give the Kubelka-Munk
//     coefficients K = 2 mu_a and S = mu_s (1 - g) from the absorption and scattering
//     cross-sections per unit weight mu_a, mu_s and the asymmetry g;
//   - slab reflectance and transmittance: Kubelka 1948, J. Opt. Soc. Am. 38, 448 (hyperbolic
//     closed forms); thin slabs stacked by the adding rule (Kubelka 1954, JOSA 44, 330);
//   - 254 nm (and 185 nm) light: every grain is opaque, absorbs (1 - R) a of what it intercepts
//     and reflects R like a Lambertian sphere (data/coating/lamp_coating.toml);
//   - visible light: grains scatter (efficiency 1 beside diffraction) and absorb little (the
//     powder's reflectance R_inf sets K/S = (1 - R_inf)^2 / (2 R_inf), Kubelka-Munk);
//   - UV the coating reflects goes back across the tube and lands on the coating again; UV it
//     transmits is lost in the glass. Light a grain emits at depth z leaves through the glass
//     directly or goes back into the tube, from where it leaves through the coating elsewhere
//     with probability T / (1 - R) (the tube as a closed cavity; ends and electrodes neglected).
#include <string>
#include <vector>

namespace lampwright {

// Kubelka-Munk absorption and scattering coefficients per unit coating weight (cm2/mg).
struct TwoFluxCoefficients {
    double absorption = 0;  // K
    double scattering = 0;  // S
};

struct SlabOptics {
    double reflectance = 0, transmittance = 0;  // diffuse, for diffuse light incident on one face
};

// A homogeneous slab of weight X (mg/cm2) on a non-reflecting backing (Kubelka 1948).
SlabOptics kubelka_munk_slab(const TwoFluxCoefficients& c, double weight_mg_per_cm2);
// Reflectance of an infinitely thick layer: R_inf = 1 + K/S - sqrt((K/S)^2 + 2 K/S).
double kubelka_munk_infinite_reflectance(const TwoFluxCoefficients& c);
// Two slabs one on the other, light incident on the first (adding rule, symmetric slabs).
SlabOptics add_slabs(const SlabOptics& first, const SlabOptics& second);

// One phosphor of the coating as the coating model sees it.
struct CoatingGrain {
    double mass_fraction = 0;     // normalised over the coating
    double density_g_per_cm3 = 0;
    double d50_um = 0;
    double uv_absorption = 1;     // relative absorption at 254 nm (1: opaque)
    double uv_reflectance = 0;    // share of intercepted 254 nm light the grain reflects
    double absorption_365nm = 0;  // relative absorption at 365 nm (same scale; 0: transparent)
};

// The constants of data/coating/lamp_coating.toml.
struct CoatingData {
    double default_weight_halophosphate = 0, default_weight_triband = 0, default_weight_broadband = 0;
    std::string weight_source;
    double uv_reflection_asymmetry = 0;
    double visible_scattering_efficiency = 0, visible_asymmetry = 0, visible_powder_reflectance = 0;
    std::string source;  // where the optical constants come from, in words
};
const CoatingData& lamp_coating_data();
// The default coating weight of a lamp type ("halophosphate", "tri-band", "broadband").
double default_coating_weight(const std::string& lamp_type);

struct CoatingOptics {
    double weight_mg_per_cm2 = 0;
    TwoFluxCoefficients uv, visible, uv365;
    SlabOptics uv_slab, visible_slab, uv365_slab;
    double uv_absorbed = 0;      // of the UV photons the discharge sends to the wall, absorbed by phosphor (after every return)
    double uv_lost = 0;          // of them, transmitted into the glass
    double visible_escape = 0;   // of the photons the phosphors emit, leaving the tube (mean over the absorption depth)
    double line_escape = 0;      // of the discharge's visible light, leaving the tube: T / (1 - R)
    double uv365_escape = 0;     // of the discharge's 365 nm light, leaving the tube as UV-A
    // Phosphor photons out per UV photon the discharge sends to the wall, per unit QE.
    double conversion() const { return uv_absorbed * visible_escape; }
};

// Throws Error for an empty coating, non-positive grain data or a weight outside (0, 100].
CoatingOptics coating_optics(const std::vector<CoatingGrain>& grains, double weight_mg_per_cm2);

// The coating weight in [lo, hi] mg/cm2 that converts the most UV into light leaving the tube
// (Brent's method on conversion(); it is unimodal: UV loss falls and visible loss rises with weight).
double optimum_coating_weight(const std::vector<CoatingGrain>& grains, double lo = 0.2, double hi = 30.0);

}  // namespace lampwright
