#include "lampwright/phosphor/coating.hpp"

#include "lampwright/core/embedded_data.hpp"
#include "lampwright/core/error.hpp"
#include "lampwright/io/toml_access.hpp"

#include <boost/math/quadrature/gauss.hpp>
#include <boost/math/tools/minima.hpp>
#include <fmt/format.h>

#include <cmath>

namespace lampwright {

namespace {

constexpr const char* kDataPath = "coating/lamp_coating.toml";

// Projected area per unit weight of spheres, cm2 per mg: 3 / (2 rho d) with rho in g/cm3 and
// d in um is 3 / (2 rho d 1e-4) cm2/g = 15 / (rho d) cm2/mg.
double projected_area_cm2_per_mg(const CoatingGrain& g) { return 15.0 / (g.density_g_per_cm3 * g.d50_um); }

CoatingData load_coating_data() {
    const TomlDoc doc(std::string(embedded_file(kDataPath)), "data/" + std::string(kDataPath));
    const auto& r = doc.root();
    const auto table = [&](const char* name) -> const toml::table& {
        const auto* t = doc.table(r, name, "");
        if (!t) doc.fail(&r, "", fmt::format("missing table [{}]", name));
        return *t;
    };
    CoatingData d;
    const auto& w = table("coating_weight_mg_per_cm2");
    d.default_weight_halophosphate = doc.require_number(w, "halophosphate", "coating_weight_mg_per_cm2");
    d.default_weight_triband = doc.require_number(w, "tri-band", "coating_weight_mg_per_cm2");
    d.default_weight_broadband = doc.require_number(w, "broadband", "coating_weight_mg_per_cm2");
    d.weight_source = doc.string(w, "source", "coating_weight_mg_per_cm2").value_or("");
    const auto& uv = table("ultraviolet");
    d.uv_reflection_asymmetry = doc.require_number(uv, "reflection_asymmetry", "ultraviolet");
    const auto& vis = table("visible");
    d.visible_scattering_efficiency = doc.require_number(vis, "scattering_efficiency", "visible");
    d.visible_asymmetry = doc.require_number(vis, "asymmetry", "visible");
    d.visible_powder_reflectance = doc.require_number(vis, "powder_reflectance", "visible");
    if (!(d.visible_powder_reflectance > 0 && d.visible_powder_reflectance < 1))
        doc.fail(vis.get("powder_reflectance"), "visible.powder_reflectance", "must lie in (0, 1)");
    d.source = doc.string(uv, "source", "ultraviolet").value_or("") + " " + doc.string(vis, "source", "visible").value_or("");
    return d;
}

// Light emitted at depth z (isotropically: half towards each face) between the part above
// (towards the discharge) and the part below (towards the glass): the fluxes leaving the source
// plane upwards and downwards after every reflection between the two parts are
// u = (1 + R_below) / 2 / (1 - R_above R_below) and d = (1 + R_above) / 2 / (1 - R_above R_below).
// What goes up leaves the coating with T_above, crosses the tube and leaves through the coating
// elsewhere with T / (1 - R); what goes down leaves through the glass with T_below.
double escape_from_depth(const TwoFluxCoefficients& c, double z, double weight, const SlabOptics& whole) {
    const SlabOptics above = kubelka_munk_slab(c, z), below = kubelka_munk_slab(c, weight - z);
    const double denom = 1 - above.reflectance * below.reflectance;
    const double up = 0.5 * (1 + below.reflectance) / denom, down = 0.5 * (1 + above.reflectance) / denom;
    return down * below.transmittance + up * above.transmittance * whole.transmittance / (1 - whole.reflectance);
}

// Absorbed UV per unit weight at depth z for unit diffuse flux on the top face: K (I + J), with
// the downward flux I = T_above / (1 - R_above R_below) and the upward J = R_below I.
double uv_absorption_density(const TwoFluxCoefficients& c, double z, double weight) {
    const SlabOptics above = kubelka_munk_slab(c, z), below = kubelka_munk_slab(c, weight - z);
    const double down = above.transmittance / (1 - above.reflectance * below.reflectance);
    return c.absorption * down * (1 + below.reflectance);
}

}  // namespace

SlabOptics kubelka_munk_slab(const TwoFluxCoefficients& c, double x) {
    const double k = c.absorption, s = c.scattering;
    if (!(x > 0)) return {0.0, 1.0};
    if (!(s > 0)) return {0.0, std::exp(-k * x)};
    if (!(k > 0)) return {s * x / (1 + s * x), 1 / (1 + s * x)};
    // a = 1 + K/S, b = sqrt(a^2 - 1), y = b S X (Kubelka 1948): with e = exp(-2y),
    //   R = (1 - e) / ((a + b) - (a - b) e),  T = 2 b exp(-y) / ((a + b) - (a - b) e),
    // the hyperbolic forms rewritten so that neither a thick layer nor a weak absorber loses
    // precision ((a + b) - (a - b) e = 2 b + (a - b)(1 - e)).
    const double a = 1 + k / s, b = std::sqrt(k / s * (k / s + 2)), y = b * s * x;
    const double one_minus_e = -std::expm1(-2 * y);
    const double denom = 2 * b + (a - b) * one_minus_e;
    return {one_minus_e / denom, 2 * b * std::exp(-y) / denom};
}

double kubelka_munk_infinite_reflectance(const TwoFluxCoefficients& c) {
    if (!(c.scattering > 0)) return 0.0;
    const double q = c.absorption / c.scattering;
    return 1 + q - std::sqrt(q * (q + 2));
}

SlabOptics add_slabs(const SlabOptics& p, const SlabOptics& q) {
    const double denom = 1 - p.reflectance * q.reflectance;
    return {p.reflectance + p.transmittance * p.transmittance * q.reflectance / denom, p.transmittance * q.transmittance / denom};
}

const CoatingData& lamp_coating_data() {
    static const CoatingData data = load_coating_data();
    return data;
}

double default_coating_weight(const std::string& lamp_type) {
    const CoatingData& d = lamp_coating_data();
    if (lamp_type == "halophosphate") return d.default_weight_halophosphate;
    if (lamp_type == "tri-band") return d.default_weight_triband;
    if (lamp_type == "broadband") return d.default_weight_broadband;
    throw Error(fmt::format("no default coating weight for lamp type '{}'", lamp_type));
}

CoatingOptics coating_optics(const std::vector<CoatingGrain>& grains, double weight) {
    if (grains.empty()) throw Error("the coating has no phosphor");
    if (!(weight > 0 && weight <= 100))
        throw Error(fmt::format("coating weight must lie in (0, 100] mg/cm2, not {:g}", weight));
    const CoatingData& d = lamp_coating_data();
    double uv_abs = 0, uv_sca = 0, uv365_abs = 0, area = 0;
    for (const auto& g : grains) {
        if (!(g.density_g_per_cm3 > 0) || !(g.d50_um > 0) || !(g.mass_fraction >= 0))
            throw Error("coating grain data must be positive (density, d50, mass fraction)");
        const double sigma = g.mass_fraction * projected_area_cm2_per_mg(g);
        area += sigma;
        uv_abs += sigma * g.uv_absorption * (1 - g.uv_reflectance);
        uv_sca += sigma * g.uv_reflectance;
        uv365_abs += sigma * g.absorption_365nm * (1 - g.uv_reflectance);
    }
    CoatingOptics o;
    o.weight_mg_per_cm2 = weight;
    // K = 2 mu_a, S = mu_s (1 - g): hemispheric-mean two-flux (Meador and Weaver 1980).
    o.uv = {2 * uv_abs, uv_sca * (1 - d.uv_reflection_asymmetry)};
    const double vis_scattering = area * d.visible_scattering_efficiency * (1 - d.visible_asymmetry);
    const double r_inf = d.visible_powder_reflectance;
    o.visible = {vis_scattering * (1 - r_inf) * (1 - r_inf) / (2 * r_inf), vis_scattering};
    o.uv365 = {o.visible.absorption + 2 * uv365_abs, vis_scattering};
    o.uv_slab = kubelka_munk_slab(o.uv, weight);
    o.visible_slab = kubelka_munk_slab(o.visible, weight);
    o.uv365_slab = kubelka_munk_slab(o.uv365, weight);

    // Depth integrals by 30-point Gauss-Legendre (the integrands are sums of exponentials in z).
    using Gauss = boost::math::quadrature::gauss<double, 30>;
    const double absorbed = Gauss::integrate([&](double z) { return uv_absorption_density(o.uv, z, weight); }, 0.0, weight);
    const double absorbed_and_out = Gauss::integrate(
        [&](double z) { return uv_absorption_density(o.uv, z, weight) * escape_from_depth(o.visible, z, weight, o.visible_slab); }, 0.0,
        weight);
    const double returns = 1 / (1 - o.uv_slab.reflectance);  // reflected UV lands on the coating again
    o.uv_absorbed = absorbed * returns;
    o.uv_lost = o.uv_slab.transmittance * returns;
    o.visible_escape = absorbed > 0 ? absorbed_and_out / absorbed : 0.0;
    o.line_escape = o.visible_slab.transmittance / (1 - o.visible_slab.reflectance);
    o.uv365_escape = o.uv365_slab.transmittance / (1 - o.uv365_slab.reflectance);
    return o;
}

double optimum_coating_weight(const std::vector<CoatingGrain>& grains, double lo, double hi) {
    const auto loss = [&](double w) { return -coating_optics(grains, w).conversion(); };
    // 30 bits: the weight to about 1e-9 relative, far below any weighing tolerance.
    return boost::math::tools::brent_find_minima(loss, lo, hi, 30).first;
}

}  // namespace lampwright
