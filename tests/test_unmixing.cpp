// The inverse of the blend model (phosphor/spectral_unmixing.hpp, unmix_blend): spectra made by
// the forward model (evaluate_blend, README "Blend physics") are unmixed back to their mass
// fractions; noise gives errors within the reported uncertainty; the subset choice (BIC, Schwarz
// 1978) finds the phosphors that made the blend; the shift search finds a moved band.
#include "lampwright/core/bandpass.hpp"
#include "lampwright/phosphor/blend.hpp"
#include "lampwright/phosphor/recipe.hpp"
#include "lampwright/phosphor/spectral_unmixing.hpp"
#include "test_support.hpp"

#include <doctest/doctest.h>

#include <algorithm>
#include <cmath>
#include <random>
#include <string>
#include <vector>

using namespace lampwright;

using lwtest::library_component;
namespace {

// A forward blend's spectrum as a table on `step_nm` over 380-780 nm, seen through a triangular
// bandpass of FWHM `step_nm` (what a scanning instrument with that step records).
SampledSpectrum as_table(const Spectrum& s, int step_nm) {
    const Spectrum seen = triangular_bandpass(s, step_nm);
    std::vector<int> nm;
    for (int w = 380; w <= 780; w += step_nm) nm.push_back(w);
    const std::vector<double> v = values_at(seen, nm);
    return SampledSpectrum{s.name, std::vector<double>(nm.begin(), nm.end()), v};
}

void check_fractions(const BlendUnmixing& u, const BlendResult& truth, double tolerance) {
    REQUIRE(u.components.size() == truth.components.size());
    for (std::size_t i = 0; i < truth.components.size(); ++i) {
        CAPTURE(truth.components[i].label);
        CHECK(u.components[i].id == truth.components[i].label);
        CHECK(std::abs(u.components[i].mass_fraction - truth.components[i].mass_fraction) <= tolerance);
        CHECK(std::abs(u.components[i].photon_share - truth.components[i].photon_share) <= tolerance);
        CHECK(std::abs(u.components[i].radiant_share - truth.components[i].radiant_share) <= tolerance);
    }
}


}  // namespace

TEST_CASE("unmix: the tri-band 4000 K example blend (evaluate_blend) is unmixed back to its mass fractions within 1e-3, 1 nm and 5 nm tables") {
    // Source: examples/recipes/triband_4000K.toml through the forward model (evaluate_blend).
    const Recipe r = load_recipe(lwtest::example_recipe("triband_4000K.toml"));
    const BlendResult truth = evaluate_blend(r.blend);
    for (int step : {1, 5}) {
        CAPTURE(step);
        const BlendUnmixing u = unmix_blend(as_table(truth.spectrum, step), r.blend.components);
        MESSAGE("step ", step, ": residual ", u.relative_residual, ", mercury fraction ", u.discharge_line_fraction);
        CHECK(u.relative_residual < 1e-6);
        check_fractions(u, truth, 1e-3);
        CHECK(std::abs(u.discharge_line_fraction - truth.mercury_line_fraction) <= 1e-3);
        CHECK(std::abs(u.fit_assessment.xy.x - u.measured_assessment.xy.x) < 1e-5);
        REQUIRE(u.fit_assessment.rendering);
        REQUIRE(u.measured_assessment.rendering);
        CHECK(std::abs(u.fit_assessment.rendering->ra - u.measured_assessment.rendering->ra) < 0.01);
    }
}

TEST_CASE("unmix: the four-component multi-band 5000 K example blend is unmixed back to its mass fractions within 1e-3") {
    // Source: examples/recipes/multiband_5000K.toml (BAM, LAP, YOX, Mg fluorogermanate) through evaluate_blend.
    const Recipe r = load_recipe(lwtest::example_recipe("multiband_5000K.toml"));
    REQUIRE(r.blend.components.size() == 4);
    const BlendResult truth = evaluate_blend(r.blend);
    const BlendUnmixing u = unmix_blend(as_table(truth.spectrum, 5), r.blend.components);
    CHECK(u.relative_residual < 1e-6);
    check_fractions(u, truth, 1e-3);
}

TEST_CASE("unmix: an LED-pumped blend is unmixed with the pump band instead of the mercury lines, fractions within 1e-3") {
    // Source: examples/recipes/led395_module.toml through evaluate_blend, with 10 % of the pump leaking.
    Recipe r = load_recipe(lwtest::example_recipe("led395_module.toml"));
    REQUIRE(r.blend.excitation.kind == Excitation::Kind::led);
    r.blend.absorbed_fraction = 0.9;
    const BlendResult truth = evaluate_blend(r.blend);
    BlendUnmixingOptions o;
    o.excitation = r.blend.excitation;
    const BlendUnmixing u = unmix_blend(as_table(truth.spectrum, 1), r.blend.components, o);
    CHECK(u.relative_residual < 1e-6);
    check_fractions(u, truth, 1e-3);
    CHECK(u.pump_power > 0);
    CHECK(u.mercury_power[1] == 0);
    CHECK(u.discharge_line_fraction > 0);
}

TEST_CASE("unmix: with 1 % Gaussian noise the mass-fraction errors lie within the reported sd as a normal law says (50 seeds)") {
    // Source: the tri-band example through evaluate_blend, on a 2 nm table (as the demo
    // instrument), plus noise of sd 1 % of the table's peak (seeds 1-50). The reported sd comes
    // from cov = s^2 (A^T A)^-1 on the active set and the delta method; for a correct sd about
    // 68 % / 95 % / 99.7 % of the errors lie within 1 / 2 / 3 sd.
    const Recipe r = load_recipe(lwtest::example_recipe("triband_4000K.toml"));
    const BlendResult truth = evaluate_blend(r.blend);
    const SampledSpectrum clean = as_table(truth.spectrum, 2);
    double peak = 0;
    for (double v : clean.values) peak = std::max(peak, v);
    int within1 = 0, within2 = 0, within3 = 0, total = 0;
    for (unsigned seed = 1; seed <= 50; ++seed) {
        std::mt19937_64 rng(seed);
        std::normal_distribution<double> noise(0.0, 0.01 * peak);
        SampledSpectrum m = clean;
        for (double& v : m.values) v += noise(rng);
        const BlendUnmixing u = unmix_blend(m, r.blend.components);
        REQUIRE(u.uncertainty);
        for (std::size_t i = 0; i < u.components.size(); ++i) {
            const double sd = u.components[i].mass_fraction_sd;
            REQUIRE(std::isfinite(sd));
            REQUIRE(sd > 0);
            const double z = std::abs(u.components[i].mass_fraction - truth.components[i].mass_fraction) / sd;
            ++total;
            within1 += z <= 1;
            within2 += z <= 2;
            within3 += z <= 3;
        }
    }
    MESSAGE("within 1 sd ", within1, "/", total, ", 2 sd ", within2, "/", total, ", 3 sd ", within3, "/", total);
    CHECK(within2 >= 0.90 * total);
    CHECK(within3 >= 0.98 * total);
    // Not overstated either: a sd ten times too large would put nearly all within 1 sd.
    CHECK(within1 <= 0.85 * total);
}

TEST_CASE("unmix: without a component list the BIC subset choice picks the three phosphors a forward blend was made of") {
    // Sources: two forward blends (evaluate_blend) of library lamp phosphors: the tri-band example,
    // and a halophosphate-free 'de luxe'-like blend of Sr5(PO4)3Cl:Eu2+, Zn2SiO4:Mn2+ and YVO4:Eu3+;
    // the candidates are every library phosphor with use "lamp".
    const Recipe r = load_recipe(lwtest::example_recipe("triband_4000K.toml"));
    BlendInput other;
    other.name = "three-band test blend";
    other.excitation = Excitation::mercury();
    other.components = {library_component("Sr5(PO4)3Cl:Eu2+", 0.2), library_component("Zn2SiO4:Mn2+", 0.35), library_component("YVO4:Eu3+", 0.45)};
    const auto candidates = unmixing_candidates(PhosphorLibrary::builtin().all(), Excitation::mercury());
    REQUIRE(candidates.size() >= 15);
    for (const BlendInput& in : {r.blend, other}) {
        CAPTURE(in.name);
        const BlendResult truth = evaluate_blend(in);
        const BlendUnmixing u = unmix_blend_choosing(as_table(truth.spectrum, 5), candidates);
        std::vector<std::string> got, want;
        for (const auto& c : u.components) got.push_back(c.id);
        for (const auto& c : in.components) want.push_back(c.label);
        std::sort(got.begin(), got.end());
        std::sort(want.begin(), want.end());
        CHECK(got == want);
        CHECK(u.subsets_tried > 1000);
        CHECK(u.selection.find("BIC") != std::string::npos);
        MESSAGE(in.name, ": ", u.selection);
    }
}

TEST_CASE("unmix: the shift search finds a band emitter moved by 2 nm and recovers the fractions; line emitters stay put") {
    // Source: the tri-band example through evaluate_blend with the BAM blue band moved +2 nm (a
    // warm lamp, or another lot); unmixed against the library's unmoved BAM with --shift-nm 4.
    const Recipe r = load_recipe(lwtest::example_recipe("triband_4000K.toml"));
    BlendInput moved = r.blend;
    bool found = false;
    for (auto& c : moved.components)
        if (c.phosphor.emission_model == "bands") {
            for (auto& b : c.phosphor.bands) b.peak_nm += 2.0;
            found = true;
        }
    REQUIRE(found);
    const BlendResult truth = evaluate_blend(moved);
    const SampledSpectrum m = as_table(truth.spectrum, 1);
    const BlendUnmixing fixed = unmix_blend(m, r.blend.components);
    BlendUnmixingOptions o;
    o.max_shift_nm = 4;
    const BlendUnmixing shifted = unmix_blend(m, r.blend.components, o);
    MESSAGE("residual without shift ", fixed.relative_residual, ", with ", shifted.relative_residual);
    CHECK(fixed.relative_residual > 0.005);
    CHECK(shifted.relative_residual < 1e-4);
    for (std::size_t i = 0; i < shifted.components.size(); ++i) {
        const auto& c = shifted.components[i];
        CAPTURE(c.id);
        if (c.band_emitter) CHECK(std::abs(c.shift_nm - 2.0) < 0.02);
        else CHECK(c.shift_nm == 0.0);
        CHECK(std::abs(c.mass_fraction - truth.components[i].mass_fraction) <= 1e-3);
    }
}

TEST_CASE("unmix: the width search finds a band emitter 6 % wider, with a 1.5 nm shift, and recovers the fractions") {
    // Source: the tri-band example through evaluate_blend with the BAM band's FWHM times 1.06 and
    // its peak +1.5 nm (another lot, or a hotter lamp: bands broaden with temperature, common
    // practice, no source); unmixed against the library's BAM with --shift-nm 3 --width-pct 10.
    const Recipe r = load_recipe(lwtest::example_recipe("triband_4000K.toml"));
    BlendInput moved = r.blend;
    for (auto& c : moved.components)
        if (c.phosphor.emission_model == "bands")
            for (auto& b : c.phosphor.bands) b.fwhm_nm *= 1.06, b.peak_nm += 1.5;
    const BlendResult truth = evaluate_blend(moved);
    const SampledSpectrum m = as_table(truth.spectrum, 1);
    BlendUnmixingOptions shift_only;
    shift_only.max_shift_nm = 3;
    BlendUnmixingOptions both = shift_only;
    both.max_width_change = 0.10;
    const BlendUnmixing a = unmix_blend(m, r.blend.components, shift_only);
    const BlendUnmixing b = unmix_blend(m, r.blend.components, both);
    MESSAGE("residual with shift only ", a.relative_residual, ", with width too ", b.relative_residual);
    CHECK(a.relative_residual > 1e-3);
    CHECK(b.relative_residual < 1e-4);
    for (std::size_t i = 0; i < b.components.size(); ++i) {
        const auto& c = b.components[i];
        CAPTURE(c.id);
        if (c.band_emitter) {
            CHECK(c.width_change == doctest::Approx(0.06).epsilon(0.02));
            CHECK(std::abs(c.shift_nm - 1.5) < 0.02);
        } else {
            CHECK(c.width_change == 0.0);
        }
        CHECK(std::abs(c.mass_fraction - truth.components[i].mass_fraction) <= 1e-3);
    }
}

TEST_CASE("unmix: a spectrum off a uniform whole-nm grid, or without power, is refused with the problem named") {
    const Recipe r = load_recipe(lwtest::example_recipe("triband_4000K.toml"));
    SampledSpectrum m = as_table(evaluate_blend(r.blend).spectrum, 5);
    SampledSpectrum uneven = m;
    uneven.wavelengths_nm[3] += 2;
    CHECK_THROWS_WITH_AS(unmix_blend(uneven, r.blend.components), doctest::Contains("uniform wavelength step"), Error);
    SampledSpectrum fractional = m;
    for (double& w : fractional.wavelengths_nm) w += 0.5;
    CHECK_THROWS_WITH_AS(unmix_blend(fractional, r.blend.components), doctest::Contains("whole-nm"), Error);
    SampledSpectrum dark = m;
    for (double& v : dark.values) v = 0;
    CHECK_THROWS_WITH_AS(unmix_blend(dark, r.blend.components), doctest::Contains("no power"), Error);
    CHECK_THROWS_WITH_AS(unmix_blend(m, {}), doctest::Contains("no components"), Error);
}
