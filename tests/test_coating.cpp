// The coating of a fluorescent tube as a two-flux layer (phosphor/coating.hpp): the Kubelka-Munk
// closed forms against their textbook limits, the depth integrals against the closed forms, and
// what the coating weight does to a blend.
#include "lampwright/phosphor/blend.hpp"
#include "lampwright/phosphor/coating.hpp"
#include "lampwright/phosphor/recipe.hpp"
#include "lampwright/phosphor/mercury_discharge.hpp"

#include <doctest/doctest.h>

#include <cmath>

using namespace lampwright;

namespace {

CoatingGrain grain(double fraction, double density, double d50, double reflectance) {
    CoatingGrain g;
    g.mass_fraction = fraction;
    g.density_g_per_cm3 = density;
    g.d50_um = d50;
    g.uv_reflectance = reflectance;
    return g;
}

std::vector<CoatingGrain> triband_grains() {
    // YOX / LAP / BAM of the shipped 4000 K example with their data-file grain values.
    return {grain(0.431865, 5.03, 5.0, 0.10), grain(0.456782, 5.10, 4.5, 0.10), grain(0.111353, 3.70, 5.0, 0.10)};
}

}  // namespace

TEST_CASE("coating: Kubelka-Munk slab meets its textbook limits (Kubelka 1948, 1954)") {
    // No absorption: nothing is lost, R + T = 1, and T = 1 / (1 + S X).
    for (double sx : {0.01, 0.5, 3.0, 40.0}) {
        const SlabOptics o = kubelka_munk_slab({0.0, 1.0}, sx);
        CHECK(o.reflectance + o.transmittance == doctest::Approx(1.0).epsilon(1e-14));
        CHECK(o.transmittance == doctest::Approx(1 / (1 + sx)).epsilon(1e-14));
    }
    // No scattering: Beer-Lambert for the diffuse flux, T = exp(-K X), R = 0.
    const SlabOptics beer = kubelka_munk_slab({0.7, 0.0}, 2.0);
    CHECK(beer.reflectance == 0.0);
    CHECK(beer.transmittance == doctest::Approx(std::exp(-1.4)).epsilon(1e-14));
    // A thick layer reflects R_inf = 1 + K/S - sqrt((K/S)^2 + 2 K/S); K/S = 0.1 gives 0.6417.
    const TwoFluxCoefficients c{0.1, 1.0};
    CHECK(kubelka_munk_infinite_reflectance(c) == doctest::Approx(1.1 - std::sqrt(0.21)).epsilon(1e-14));
    CHECK(kubelka_munk_slab(c, 200.0).reflectance == doctest::Approx(kubelka_munk_infinite_reflectance(c)).epsilon(1e-12));
    CHECK(kubelka_munk_slab(c, 200.0).transmittance < 1e-30);
    // Adding rule: a slab of X1 + X2 is the two slabs stacked (Kubelka 1954).
    for (const TwoFluxCoefficients k : {TwoFluxCoefficients{0.1, 1.0}, TwoFluxCoefficients{1.08, 0.087}, TwoFluxCoefficients{1e-9, 0.3}}) {
        const SlabOptics whole = kubelka_munk_slab(k, 3.0);
        const SlabOptics stacked = add_slabs(kubelka_munk_slab(k, 1.2), kubelka_munk_slab(k, 1.8));
        CHECK(stacked.reflectance == doctest::Approx(whole.reflectance).epsilon(1e-12));
        CHECK(stacked.transmittance == doctest::Approx(whole.transmittance).epsilon(1e-12));
    }
    // A weak absorber keeps its precision: K/S = 1e-12 is all but non-absorbing.
    const SlabOptics weak = kubelka_munk_slab({1e-12, 1.0}, 2.0);
    CHECK(weak.transmittance == doctest::Approx(1.0 / 3.0).epsilon(1e-9));
}

TEST_CASE("coating: the depth integral of the absorbed UV equals 1 - R - T, and the coefficients follow the grain areas") {
    // Energy balance (common practice, no source): what is neither reflected nor transmitted is
    // absorbed; after every return of the reflected UV, absorbed + lost = 1.
    for (double w : {0.3, 1.0, 3.0, 8.0, 25.0}) {
        CAPTURE(w);
        const CoatingOptics o = coating_optics(triband_grains(), w);
        const double absorbed_closed = 1 - o.uv_slab.reflectance - o.uv_slab.transmittance;
        CHECK(o.uv_absorbed * (1 - o.uv_slab.reflectance) == doctest::Approx(absorbed_closed).epsilon(1e-9));
        CHECK(o.uv_absorbed + o.uv_lost == doctest::Approx(1.0).epsilon(1e-9));
        CHECK(o.visible_escape > 0.9);
        CHECK(o.visible_escape < 1.0);
    }
    // One phosphor, density 5 g/cm3, d50 5 um: projected area 3 / (2 rho d) = 600 cm2/g = 0.6 cm2/mg;
    // K = 2 x 0.6 x (1 - 0.1), S = 0.6 x 0.1 x (1 + 4/9) (Meador and Weaver 1980 with g = -4/9).
    const CoatingOptics one = coating_optics({grain(1.0, 5.0, 5.0, 0.1)}, 3.0);
    CHECK(one.uv.absorption == doctest::Approx(1.08).epsilon(1e-12));
    CHECK(one.uv.scattering == doctest::Approx(0.06 * (1 + 0.4444)).epsilon(1e-12));
}

TEST_CASE("coating: light per W of UV has an interior optimum in coating weight, and the optimiser finds it") {
    // Thin coatings let UV through into the glass; thick ones absorb more of the light they make.
    const auto grains = triband_grains();
    double best_w = 0, best = 0, previous_lost = 2;
    for (int k = 1; k <= 120; ++k) {
        const double w = 0.125 * k;
        const CoatingOptics o = coating_optics(grains, w);
        CHECK(o.uv_lost < previous_lost);
        previous_lost = o.uv_lost;
        if (o.conversion() > best) best = o.conversion(), best_w = w;
    }
    MESSAGE("scan optimum ", best_w, " mg/cm2, conversion ", best);
    CHECK(best_w > 2.0);
    CHECK(best_w < 14.0);
    const double opt = optimum_coating_weight(grains);
    CHECK(opt == doctest::Approx(best_w).epsilon(0.03));
    CHECK(coating_optics(grains, opt).conversion() >= best - 1e-12);
    CHECK(coating_optics(grains, 0.5).uv_lost > 0.3);
}

TEST_CASE("coating: a blend's visible-line fraction is the derived one at the default weight and rises on a thinner coating") {
    // data/mercury/low_pressure_lines.toml: tri-band visible fraction 0.0868 (CIE 15:2004 FL10-FL12),
    // taken at the tri-band default coating weight (data/coating/lamp_coating.toml).
    Recipe r = load_recipe(LAMPWRIGHT_SOURCE_DIR "/examples/recipes/triband_4000K.toml");
    const BlendResult at_default = evaluate_blend(r.blend);
    REQUIRE(at_default.coating.modelled);
    CHECK(at_default.coating.weight_mg_per_cm2 == doctest::Approx(default_coating_weight("tri-band")));
    CHECK(at_default.mercury_line_fraction == doctest::Approx(mercury_line_set("tri-band").visible_fraction).epsilon(1e-12));
    r.blend.coating_weight_mg_per_cm2 = 1.0;
    const BlendResult thin = evaluate_blend(r.blend);
    MESSAGE("line fraction at 1 mg/cm2: ", thin.mercury_line_fraction, "; at the default: ", at_default.mercury_line_fraction);
    CHECK(thin.mercury_line_fraction > at_default.mercury_line_fraction + 0.01);
    CHECK(thin.coating.luminous_efficacy_uv < 0.8 * at_default.coating.luminous_efficacy_uv);
    // The sweep gives the same figures as a single evaluation.
    const auto sweep = coating_weight_sweep(r.blend, {1.0, 3.0});
    CHECK(sweep[0].mercury_line_fraction == doctest::Approx(thin.mercury_line_fraction).epsilon(1e-12));
    CHECK(sweep[1].mercury_line_fraction == doctest::Approx(at_default.mercury_line_fraction).epsilon(1e-12));
}

TEST_CASE("coating: the 184.9 nm share lowers the quantum yield by the QE at 185 nm, and 0 gives the 254 nm figures") {
    Recipe r = load_recipe(LAMPWRIGHT_SOURCE_DIR "/examples/recipes/triband_4000K.toml");
    r.blend.uv_185nm_fraction = 0.0;
    const BlendResult only254 = evaluate_blend(r.blend);
    r.blend.uv_185nm_fraction = 0.2;
    const BlendResult with185 = evaluate_blend(r.blend);
    double qy254 = 0, qy = 0;
    for (std::size_t i = 0; i < r.blend.components.size(); ++i) {
        const Phosphor& p = r.blend.components[i].phosphor;
        qy254 += only254.components[i].photon_share * *p.qe_254nm;
        qy += with185.components[i].photon_share * (0.8 * *p.qe_254nm + 0.2 * *p.qe_185nm);
    }
    CHECK(only254.quantum_yield == doctest::Approx(qy254).epsilon(1e-12));
    CHECK(with185.quantum_yield == doctest::Approx(qy).epsilon(1e-12));
    CHECK(with185.luminous_efficacy_absorbed < only254.luminous_efficacy_absorbed);
}
