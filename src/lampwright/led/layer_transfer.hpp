#pragma once
// Light transport with conversion in an LED layer (README "LED layer physics"), two ways:
//   - transfer_two_flux: per wavelength the sublayered two-flux slab of led/layer_optics.hpp; the
//     pump enters as a collimated beam at the bottom; photons absorbed by phosphor j in sublayer m
//     are re-emitted there isotropically with j's QE along j's emission, and the re-absorption
//     of that light by every phosphor in every sublayer is solved over all generations as one
//     linear system (I - M^T Q) N = N_pump (Eigen);
//   - transfer_monte_carlo: single photons through the same slab, seeded and reproducible:
//     exponential free paths with mu_t = mu_a + mu_s, Henyey-Greenstein scattering (Henyey and
//     Greenstein 1941, Astrophys. J. 93, 70) with the same g, Fresnel reflection and total
//     internal reflection at the top, a Lambertian package reflector at the bottom, absorption by
//     phosphor j with mu_a,j / mu_a, re-emission with probability QE_j, isotropic, at a wavelength
//     drawn from j's emission; the reference the fast model is tested against.
// Both on the emission grid; photons per pump photon, energies in units of h c / (1 nm) per pump
// photon (a photon at l nm carries 1 / l).
#include <cstdint>
#include <vector>

namespace lampwright {

struct LayerMedium {
    double thickness_cm = 0;
    double binder_index = 1.41, outside_index = 1.0;
    double asymmetry = 0.85;
    double reflector_reflectance = 0.9;
    // The chip on the package bottom: its share of the bottom and its reflectance (both diffuse);
    // the bottom reflects f R_chip + (1 - f) R_reflector.
    double chip_area_fraction = 0, chip_reflectance = 0.8;
    // A hemispherical dome of index dome_index over the layer, its centre on the layer (README
    // "LED layer physics"): light crossing the layer | dome interface meets the dome surface at
    // normal incidence, leaves with 1 - R0(dome_index, outside_index), and R0 of it comes back
    // along its own ray onto the layer.
    bool dome = false;
    double dome_index = 1.41;
    std::vector<double> pump;        // pump photons per grid nm, sum 1
    std::vector<double> scattering;  // mu_s per grid nm, 1/cm (all grains)
    struct Absorber {
        std::vector<double> absorption;  // mu_a of this phosphor per grid nm, 1/cm
        std::vector<double> emission;    // photons per grid nm, sum 1
        double quantum_efficiency = 0;
    };
    std::vector<Absorber> components;
    int sublayers = 8;  // the two-flux model's depth resolution
};

struct TransferComponent {
    double pump_absorbed = 0, absorbed = 0, emitted = 0, escaping = 0;  // photons per pump photon
    double absorbed_energy = 0, emitted_energy = 0, escaping_energy = 0;
};

struct TransferResult {
    std::vector<double> leaked;     // pump photons leaving the top, per grid nm
    std::vector<double> converted;  // converted photons leaving the top, per grid nm
    std::vector<TransferComponent> components;
    double package_photons = 0, package_energy = 0;  // absorbed by the package bottom (reflector and chip)
    double chip_photons = 0, chip_energy = 0;        // of that, absorbed by the chip
    double leaked_photons() const;
};

// `generations` = 0 solves the re-absorption cascade exactly; n > 0 sums the first n generations.
// The bottom's reflectance, f R_chip + (1 - f) R_reflector, and the chip's share of what it absorbs.
double bottom_reflectance(const LayerMedium& m);
double chip_share_of_bottom_loss(const LayerMedium& m);
// The top as the layer sees it: reflectance for diffuse light from inside, and for the
// collimated beam at normal incidence (flat: the binder | outside interface; dome: the binder |
// dome interface with the dome's return, led/layer_optics.hpp).
double top_diffuse_reflectance(const LayerMedium& m);
double top_normal_reflectance(const LayerMedium& m);

TransferResult transfer_two_flux(const LayerMedium& m, int generations = 0);
TransferResult transfer_monte_carlo(const LayerMedium& m, std::int64_t photons, std::uint64_t seed);

}  // namespace lampwright
