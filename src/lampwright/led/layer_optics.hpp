#pragma once
// Optics of a phosphor-in-silicone layer (README "LED layer physics"):
//   - scattering of one grain: anomalous diffraction (van de Hulst 1957, Light Scattering by Small
//     Particles, ch. 11): Q_ext = 2 - (4/rho) sin rho + (4/rho^2)(1 - cos rho), rho = 2 x (m - 1),
//     x = pi d / lambda, m = n_grain / n_binder; for the non-absorbing grain Q_sca = Q_ext (the
//     grains' absorption is carried separately by the mass absorption, led/layer.hpp);
//   - scattering coefficient of the layer: mu_s = N sigma Q = (3/2) f Q / d for spheres of volume
//     fraction f and diameter d (N = f / (pi d^3 / 6), sigma = pi d^2 / 4);
//   - Fresnel reflectance of unpolarised light at a plane interface (Born and Wolf, Principles of
//     Optics, sec. 1.5.2), total internal reflection beyond the critical angle;
//   - the reflectance of that interface for diffuse (Lambertian) light, the hemispheric cosine
//     mean of the Fresnel reflectance (Judd 1942, J. Res. NBS 29, 329);
//   - a homogeneous two-flux (Kubelka-Munk) slab cut into equal sublayers, bounded by that
//     interface on top and a diffuse reflector below, with K = 2 mu_a and S = mu_s (1 - g)
//     (hemispheric mean, Meador and Weaver 1980, as in phosphor/coating.hpp, whose slab functions
//     it uses): the response to a plane source of diffuse light, and to a collimated beam.
#include "lampwright/phosphor/coating.hpp"

#include <vector>

namespace lampwright {

// Extinction efficiency of a sphere in the anomalous-diffraction approximation (van de Hulst
// 1957, eq. in sec. 11.22), as a function of the phase shift rho = 2 x (m - 1); even in rho.
double anomalous_diffraction_efficiency(double rho);
// mu_s in 1/cm for grains of volume fraction f, diameter d50_um, index n_grain in a binder of
// index n_binder, at the vacuum wavelength lambda_nm (the wavelength in the binder is lambda / n_binder).
double grain_scattering_per_cm(double volume_fraction, double d50_um, double n_grain, double n_binder, double lambda_nm);

// Unpolarised Fresnel reflectance for light in medium n1 meeting medium n2 at cos(theta) = cos_i;
// 1 beyond the critical angle.
double fresnel_reflectance(double cos_i, double n1, double n2);
// Reflectance of the n1 | n2 interface for Lambertian light incident from the n1 side:
// 2 int_0^1 R(mu) mu dmu (48-point Gauss-Legendre in mu below the critical cosine, closed beyond).
double diffuse_interface_reflectance(double n1, double n2);
// The same interface n1 | n2 with a hemispherical dome of index n2 above it whose surface (to the
// outside, index n3) the light meets at normal incidence (a small source at the dome's centre;
// Moreno, Bermudez and Avendano-Alejo, "Light-emitting diode spherical packages", arXiv:1110.0537, the hemispherical package): of the
// light crossing at angle theta, R0 = ((n2 - n3)/(n2 + n3))^2 is reflected at the dome surface
// straight back along its ray, meets the interface again at theta and crosses it with T(theta) =
// 1 - R(theta). Reflectance towards n1 for light at cos theta = cos_i, summed over the bounces:
// R(theta) + T(theta)^2 R0 / (1 - R0 R(theta)); the rest, T (1 - R0) / (1 - R0 R), leaves.
double dome_reflectance(double cos_i, double n1, double n2, double n3);
// Its cosine mean for Lambertian light from the n1 side, 2 int_0^1 dome_reflectance(mu) mu dmu;
// exactly diffuse_interface_reflectance(n1, n2) when n2 = n3 (R0 = 0).
double diffuse_dome_reflectance(double n1, double n2, double n3);

// The layer for one wavelength: per-cm coefficients, thickness, boundaries.
struct TwoFluxLayer {
    double absorption_per_cm = 0;   // mu_a
    double scattering_per_cm = 0;   // mu_s
    double asymmetry = 0;           // g of the phase function
    double thickness_cm = 0;
    double top_reflectance = 0;     // diffuse internal reflectance of the top surface
    double top_normal_reflectance = 0;  // Fresnel reflectance at normal incidence (collimated pump)
    double bottom_reflectance = 0;  // the package reflector (diffuse)
    int sublayers = 16;
};

// Where the photons of a source end: through the top, into the package reflector, or absorbed in
// each sublayer (index 0 at the bottom). escaped + package + sum(absorbed) = source strength.
struct SlabResponse {
    double escaped = 0, package = 0;
    std::vector<double> absorbed;
};

class TwoFluxSlab {
public:
    static constexpr int kMaxSublayers = 128;
    explicit TwoFluxSlab(const TwoFluxLayer& layer);
    // Diffuse light leaving the reflector plane upwards (`up` photons), e.g. a Lambertian source
    // on the bottom; with no reflector and no top surface, escaped and package are Kubelka's T and R.
    SlabResponse bottom_source(double up) const;
    // Diffuse light emitted isotropically in sublayer m (placed at its mid-plane): half each way.
    SlabResponse sublayer_source(int m) const;
    // A collimated beam entering at the bottom, normal to the layer, 1 photon. It is attenuated by
    // the delta-scaled extinction mu_a + mu_s (1 - g^2) (Joseph, Wiscombe and Weinman 1976, J.
    // Atmos. Sci. 33, 2452: the forward peak g^2 of the scattering left in the beam); what it
    // scatters becomes diffuse at each sublayer's mid-plane, forward (1 + g') / 2 and backward
    // (1 - g') / 2 with g' = g / (1 + g); at the top (1 - R_normal) leaves as the beam, R_normal is
    // reflected back down as a beam, and what reaches the reflector returns diffusely. Without
    // scattering this is Beer-Lambert exactly: escaped = (1 - R_normal) exp(-mu_a d) (+ returns).
    SlabResponse collimated_beam() const;
    // Kubelka-Munk coefficients of the layer.
    TwoFluxCoefficients coefficients() const { return c_; }

private:
    TwoFluxLayer l_;
    TwoFluxCoefficients c_;
    double h_ = 0;  // sublayer thickness, cm
    // Indexed by position q in half sublayers (z = q h / 2): the slab of thickness q h / 2; the stack
    // from z to the top with the top surface; the stack from z to the bottom with the reflector.
    std::vector<SlabOptics> slab_, above_, below_;
    // Adds weight x the response to a plane source at q into r (r.absorbed sized on first use).
    void respond(int q, double up, double down, double weight, SlabResponse& r) const;
};

}  // namespace lampwright
