#include "lampwright/led/layer_optics.hpp"

#include "lampwright/core/error.hpp"

#include <boost/math/quadrature/gauss.hpp>

#include <array>
#include <cmath>
#include <numbers>

namespace lampwright {

double anomalous_diffraction_efficiency(double rho) {
    const double r = std::abs(rho);
    // Series for small phase shifts, where the closed form cancels: Q = rho^2 / 2 - rho^4 / 36 + O(rho^6)
    // (the Taylor expansion of van de Hulst's formula).
    if (r < 1e-2) return r * r / 2 - r * r * r * r / 36;
    return 2 - 4 / r * std::sin(r) + 4 / (r * r) * (1 - std::cos(r));
}

double grain_scattering_per_cm(double volume_fraction, double d50_um, double n_grain, double n_binder, double lambda_nm) {
    if (!(volume_fraction >= 0) || !(d50_um > 0) || !(n_grain > 0) || !(n_binder > 0) || !(lambda_nm > 0))
        throw Error("grain scattering needs a volume fraction >= 0 and a positive size, indices and wavelength");
    const double x = std::numbers::pi * d50_um * 1e3 * n_binder / lambda_nm;  // size parameter in the binder
    const double q = anomalous_diffraction_efficiency(2 * x * (n_grain / n_binder - 1));
    return 1.5 * volume_fraction * q / (d50_um * 1e-4);
}

double fresnel_reflectance(double cos_i, double n1, double n2) {
    const double ci = std::min(1.0, std::abs(cos_i));
    const double sin_t = n1 / n2 * std::sqrt(std::max(0.0, 1 - ci * ci));
    if (sin_t >= 1) return 1.0;
    const double ct = std::sqrt(1 - sin_t * sin_t);
    const double rs = (n1 * ci - n2 * ct) / (n1 * ci + n2 * ct);
    const double rp = (n1 * ct - n2 * ci) / (n1 * ct + n2 * ci);
    return 0.5 * (rs * rs + rp * rp);
}

double diffuse_interface_reflectance(double n1, double n2) {
    using Gauss = boost::math::quadrature::gauss<double, 48>;
    if (n1 <= n2) return 2 * Gauss::integrate([&](double mu) { return fresnel_reflectance(mu, n1, n2) * mu; }, 0.0, 1.0);
    // From the denser side: everything beyond the critical angle is reflected (the cosine-weighted
    // share 1 - (n2/n1)^2); inside the cone integrate over the transmitted direction mu_t, where
    // mu_i dmu_i = (n2/n1)^2 mu_t dmu_t and the integrand is smooth.
    const double q = (n2 / n1) * (n2 / n1);
    const double inside = Gauss::integrate(
        [&](double mu_t) {
            const double mu_i = std::sqrt(1 - q * (1 - mu_t * mu_t));
            return fresnel_reflectance(mu_i, n1, n2) * mu_t;
        },
        0.0, 1.0);
    return (1 - q) + 2 * q * inside;
}

double dome_reflectance(double cos_i, double n1, double n2, double n3) {
    const double r = fresnel_reflectance(cos_i, n1, n2);
    const double r0 = fresnel_reflectance(1.0, n2, n3);
    return r + (1 - r) * (1 - r) * r0 / (1 - r0 * r);
}

double diffuse_dome_reflectance(double n1, double n2, double n3) {
    using Gauss = boost::math::quadrature::gauss<double, 48>;
    const double r0 = fresnel_reflectance(1.0, n2, n3);
    const double plain = diffuse_interface_reflectance(n1, n2);
    if (r0 == 0) return plain;
    // The dome's return adds 2 int T^2 R0 / (1 - R0 R) mu dmu over the directions that cross the
    // interface; from the denser side integrated over the crossing direction as above.
    const auto added = [&](double mu_i) {
        const double t = 1 - fresnel_reflectance(mu_i, n1, n2);
        return t * t * r0 / (1 - r0 * (1 - t));
    };
    if (n1 <= n2) return plain + 2 * Gauss::integrate([&](double mu) { return added(mu) * mu; }, 0.0, 1.0);
    const double q = (n2 / n1) * (n2 / n1);
    return plain + 2 * q * Gauss::integrate([&](double mu_t) { return added(std::sqrt(1 - q * (1 - mu_t * mu_t))) * mu_t; }, 0.0, 1.0);
}

TwoFluxSlab::TwoFluxSlab(const TwoFluxLayer& layer) : l_(layer) {
    if (l_.sublayers < 1 || l_.sublayers > kMaxSublayers) throw Error("a two-flux layer needs 1 to 128 sublayers");
    // K = 2 mu_a, S = mu_s (1 - g): hemispheric mean (Meador and Weaver 1980, Table 1).
    c_ = {2 * l_.absorption_per_cm, l_.scattering_per_cm * (1 - l_.asymmetry)};
    h_ = l_.thickness_cm / l_.sublayers;
    // Every distance between a source plane (a sublayer's mid-plane or the bottom) and a sublayer
    // boundary is a multiple of h/2: the slab optics are computed once for each.
    const int q_max = 2 * l_.sublayers;
    for (int q = 0; q <= q_max; ++q) slab_.push_back(kubelka_munk_slab(c_, q * h_ / 2));
    const SlabOptics top{l_.top_reflectance, 1 - l_.top_reflectance}, bottom{l_.bottom_reflectance, 0.0};
    for (int q = 0; q <= q_max; ++q) {
        above_.push_back(add_slabs(slab_[static_cast<std::size_t>(q_max - q)], top));
        below_.push_back(add_slabs(slab_[static_cast<std::size_t>(q)], bottom));
    }
}


// The fluxes a plane source at position q (in half sublayers) sets up at every sublayer boundary
// (q = 2p), given the optics of the parts above and below each plane. U and D are the total fluxes
// leaving the source plane upwards and downwards after all reflections: U = (u + R_b d) / (1 - R_a R_b),
// D = (d + R_a u) / (1 - R_a R_b) (as in phosphor/coating.cpp). A boundary above the source sees U
// through the slab between them (R1, T1) and the stack above it (R_A): up = U T1 / (1 - R1 R_A),
// down = R_A up; below the source likewise with D.
void TwoFluxSlab::respond(int q, double up, double down, double weight, SlabResponse& r) const {
    const int n = l_.sublayers;
    const auto at = [](const std::vector<SlabOptics>& v, int i) -> const SlabOptics& { return v[static_cast<std::size_t>(i)]; };
    const SlabOptics &a = at(above_, q), &b = at(below_, q);
    const double denom = 1 - a.reflectance * b.reflectance;
    const double U = (up + b.reflectance * down) / denom, D = (down + a.reflectance * up) / denom;
    std::array<double, kMaxSublayers + 1> fu{}, fd{};
    for (int p = 0; p <= n; ++p) {
        const auto i = static_cast<std::size_t>(p);
        if (2 * p >= q) {
            const SlabOptics &s = at(slab_, 2 * p - q), &ap = at(above_, 2 * p);
            fu[i] = U * s.transmittance / (1 - s.reflectance * ap.reflectance);
            fd[i] = ap.reflectance * fu[i];
        } else {
            const SlabOptics &s = at(slab_, q - 2 * p), &bp = at(below_, 2 * p);
            fd[i] = D * s.transmittance / (1 - s.reflectance * bp.reflectance);
            fu[i] = bp.reflectance * fd[i];
        }
    }
    r.absorbed.resize(static_cast<std::size_t>(n), 0.0);
    // Net flux into each sublayer; the source's own photons counted in the sublayer holding it (a
    // source on the bottom plane q = 0 sits in front of the reflector, outside every sublayer).
    // The sums telescope, so escaped + package + absorbed = up + down to rounding.
    const int holder = q == 0 ? -1 : q / 2;
    for (int m = 0; m < n; ++m) {
        const auto i = static_cast<std::size_t>(m);
        r.absorbed[i] += weight * (fu[i] - fu[i + 1] + fd[i + 1] - fd[i] + (m == holder ? up + down : 0.0));
    }
    const auto top = static_cast<std::size_t>(n);
    r.escaped += weight * (fu[top] - fd[top]);
    r.package += weight * (fd[0] - fu[0] + (q == 0 ? up + down : 0.0));
}

SlabResponse TwoFluxSlab::sublayer_source(int m) const {
    if (m < 0 || m >= l_.sublayers) throw Error("sublayer index out of range");
    SlabResponse r;
    respond(2 * m + 1, 0.5, 0.5, 1.0, r);
    return r;
}

SlabResponse TwoFluxSlab::bottom_source(double up) const {
    SlabResponse r;
    respond(0, up, 0.0, 1.0, r);
    return r;
}

SlabResponse TwoFluxSlab::collimated_beam() const {
    const int n = l_.sublayers;
    SlabResponse r;
    r.absorbed.assign(static_cast<std::size_t>(n), 0.0);
    const double g = l_.asymmetry;
    const double mu_s = l_.scattering_per_cm * (1 - g * g);  // delta-scaled (Joseph et al. 1976)
    const double mu_t = l_.absorption_per_cm + mu_s;
    const double gp = g / (1 + g);
    const double forward = (1 + gp) / 2, backward = (1 - gp) / 2;
    const double scattered_share = mu_t > 0 ? mu_s / mu_t : 0.0;
    // One pass of the beam through the sublayers, from the bottom (upward) or from the top.
    auto pass = [&](double entering, bool upward) {
        for (int k = 0; k < n; ++k) {
            const int m = upward ? k : n - 1 - k;
            const double in = entering * std::exp(-mu_t * k * h_);
            const double removed = in * -std::expm1(-mu_t * h_);
            const double sc = removed * scattered_share;
            r.absorbed[static_cast<std::size_t>(m)] += removed - sc;
            if (sc > 0) {
                if (upward) respond(2 * m + 1, forward, backward, sc, r);
                else respond(2 * m + 1, backward, forward, sc, r);
            }
        }
        return entering * std::exp(-mu_t * l_.thickness_cm);
    };
    const double at_top = pass(1.0, true);
    r.escaped += (1 - l_.top_normal_reflectance) * at_top;
    const double at_bottom = pass(l_.top_normal_reflectance * at_top, false);
    r.package += (1 - l_.bottom_reflectance) * at_bottom;
    if (at_bottom > 0) respond(0, l_.bottom_reflectance * at_bottom, 0.0, 1.0, r);
    return r;
}

}  // namespace lampwright
