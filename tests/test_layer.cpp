// LED conversion layer: limits, re-absorption cascade, balances, temperature.
#include "lampwright/phosphor/blend.hpp"
#include "lampwright/led/layer.hpp"
#include "lampwright/led/layer_design.hpp"
#include "lampwright/led/layer_optics.hpp"
#include "lampwright/report/layer_report.hpp"

#include "test_support.hpp"

#include <doctest/doctest.h>

#include <algorithm>
#include <cmath>
#include <string>

using namespace lampwright;

namespace {

// A test phosphor: one emission band, absorption flat (relative 1) from 300 nm to `absorbs_to`.
Phosphor test_phosphor(const std::string& id, double peak_nm, double fwhm_nm, double absorbs_to, double qe = 0.9) {
    Phosphor p;
    p.id = id;
    p.emission_model = "bands";
    p.bands = {{peak_nm, fwhm_nm, 1.0}};
    p.absorption_nm = {250, absorbs_to, absorbs_to + 0.5};
    p.absorption_rel = {1.0, 1.0, 0.0};
    p.qe_365_405nm = qe;
    p.density_g_per_cm3 = 4.0;
    return p;
}

using lwtest::TempDir;

LayerDesign single(double thickness_um, double loading, const Phosphor& p) {
    LayerDesign d;
    d.name = "test layer";
    d.pump = Excitation::led(395, 2);
    d.thickness_um = thickness_um;
    d.components.push_back({p.id, p, loading, std::nullopt});
    return d;
}

double layer_density(double loading, double rho_p, double rho_b) { return 1.0 / (loading / rho_p + (1 - loading) / rho_b); }

}  // namespace

TEST_CASE("layer: zero thickness passes the bare pump") {
    // Index-matched outside, no interface: transmission 1 (common practice, no source).
    LayerDesign d = single(0, 0.1, test_phosphor("G", 530, 60, 480));
    d.outside_index = d.binder_index;
    const auto r = evaluate_layer(d);
    CHECK(r.pump_photons_leaked == doctest::Approx(1.0).epsilon(1e-12));
    CHECK(r.converted_W == doctest::Approx(0.0));
    CHECK(r.total_efficiency == doctest::Approx(1.0).epsilon(1e-12));
    CHECK(r.converted_efficiency == doctest::Approx(0.0));
    CHECK(r.pump_leak_fraction == doctest::Approx(1.0).epsilon(1e-12));
    // Into air: the beam loses R0 = ((n - 1) / (n + 1))^2 at the surface (Fresnel, normal
    // incidence; Born and Wolf sec. 1.5.2); that light returns from the reflector (R_b) diffusely and
    // leaves with 1 - r_i per arrival at the surface, r_i the diffuse internal reflectance:
    // leaked = 1 - R0 + R0 R_b (1 - r_i) / (1 - R_b r_i), the rest absorbed by the package.
    const auto air = evaluate_layer(single(0, 0.1, test_phosphor("G", 530, 60, 480)));
    const double n = kSiliconeIndex, r0 = std::pow((n - 1) / (n + 1), 2), rb = kReflectorReflectance;
    const double ri = diffuse_interface_reflectance(n, 1.0);
    CHECK(air.pump_photons_leaked == doctest::Approx(1 - r0 + r0 * rb * (1 - ri) / (1 - rb * ri)).epsilon(1e-12));
    CHECK(air.photons_package == doctest::Approx(1 - air.pump_photons_leaked).epsilon(1e-9));
}

TEST_CASE("layer: a very thick layer leaks no pump") {
    const auto r = evaluate_layer(single(5000, 0.2, test_phosphor("G", 530, 60, 480)));
    CHECK(r.pump_photons_leaked < 1e-9);  // exp(-kappa a c d) with kappa c d ~ 1e3: common practice, no source
}

TEST_CASE("layer: leakage falls monotonically with thickness and with loading") {
    // Beer-Lambert: transmission exp(-alpha d) falls with d and with the concentration in alpha (common practice, no source).
    const auto p = test_phosphor("G", 530, 60, 480);
    double previous = 2;
    for (double t : {0.0, 5.0, 10.0, 20.0, 40.0, 80.0, 160.0}) {
        const double leak = evaluate_layer(single(t, 0.05, p)).pump_photons_leaked;
        CHECK(leak < previous);
        previous = leak;
    }
    previous = 2;
    for (double w : {0.01, 0.02, 0.05, 0.1, 0.2}) {
        const double leak = evaluate_layer(single(30, w, p)).pump_photons_leaked;
        CHECK(leak < previous);
        previous = leak;
    }
}

TEST_CASE("layer: a single non-re-absorbing phosphor without scattering matches the analytic Beer-Lambert result") {
    // Grains index-matched to the silicone (m = 1: no scattering, van de Hulst's Q = 0), outside
    // index-matched, no reflector. Absorption flat across the pump, none at its own emission (600
    // nm band, absorbs to 480 nm): leaked = exp(-kappa a c d), emitted = QE (1 - leaked) (Beer-Lambert
    // law); the isotropic emission goes half up (out) and half down (into the black bottom).
    auto p = test_phosphor("R", 600, 40, 480, 0.85);
    p.refractive_index = kSiliconeIndex;
    p.d50_um = 10;
    const double loading = 0.07, t_um = 25;
    LayerDesign d = single(t_um, loading, p);
    d.outside_index = d.binder_index;
    d.reflector_reflectance = 0;
    const auto r = evaluate_layer(d);
    const double c = loading * layer_density(loading, 4.0, kSiliconeDensity_g_per_cm3);
    const double leak = std::exp(-kReferenceMassAbsorption_cm2_per_g * c * t_um * 1e-4);
    CHECK(r.pump_photons_leaked == doctest::Approx(leak).epsilon(1e-9));
    CHECK(r.components[0].photons_emitted == doctest::Approx(0.85 * (1 - leak)).epsilon(1e-9));
    CHECK(r.photons_escaping == doctest::Approx(0.5 * 0.85 * (1 - leak)).epsilon(1e-9));
    CHECK(r.photons_package == doctest::Approx(0.5 * 0.85 * (1 - leak)).epsilon(1e-9));
}

TEST_CASE("layer: a red absorber takes green light and lowers the green output") {
    // Green 530 nm band (absorbs only below 480 nm); red absorber absorbs to 560 nm, emits at 650 nm.
    // Re-absorption can only remove green photons and add red ones (common practice, no source).
    const auto green = test_phosphor("G", 530, 40, 480, 0.9);
    const auto red = test_phosphor("R", 650, 60, 560, 0.8);
    LayerDesign d = single(30, 0.05, green);
    d.components.push_back({"R", red, 0.03, std::nullopt});
    const auto r = evaluate_layer(d);
    const auto alone = evaluate_layer(single(30, 0.05, green));
    const double escape = r.components[0].photons_escaping / r.components[0].photons_emitted;
    const double escape_alone = alone.components[0].photons_escaping / alone.components[0].photons_emitted;
    CHECK(escape < 0.95 * escape_alone);
    // The red phosphor absorbed more than the pump gave it: the re-absorbed green.
    CHECK(r.components[1].photons_absorbed > r.components[1].pump_photons_absorbed * 1.05);
}

TEST_CASE("layer: the cascade solution equals the generation-by-generation sum") {
    // Neumann series of (I - M^T Q)^-1 converges since every row of M^T Q sums below 1 (common practice, no source).
    LayerDesign d;
    d.name = "cascade";
    d.pump = Excitation::led(395, 12);
    d.thickness_um = 150;
    for (const auto& [id, w] : {std::pair{"BaMgAl10O17:Eu2+", 0.12}, {"beta-SiAlON:Eu2+", 0.07}, {"CaAlSiN3:Eu2+", 0.045}})
        d.components.push_back({id, PhosphorLibrary::builtin().find(id), w, std::nullopt});
    const auto exact = evaluate_layer(d);
    const auto summed = evaluate_layer(d, std::nullopt, {}, 60);
    const auto first = evaluate_layer(d, std::nullopt, {}, 1);
    for (std::size_t i = 0; i < 3; ++i) {
        CHECK(summed.components[i].photons_absorbed == doctest::Approx(exact.components[i].photons_absorbed).epsilon(1e-10));
        CHECK(first.components[i].photons_absorbed <= exact.components[i].photons_absorbed + 1e-15);
    }
    CHECK(exact.components[2].photons_absorbed > first.components[2].photons_absorbed * 1.05);  // the red nitride eats green
}

TEST_CASE("layer: photon and energy balance close, and efficiency is bounded by QE x lambda_pump / lambda_emission") {
    // Conservation of photons and energy; the Stokes bound on conversion (shared/phosphor-facts.md,
    // "common practice, no source").
    LayerDesign d;
    d.name = "balance";
    d.pump = Excitation::led(405, 15);
    d.pump_power_W = 0.35;
    d.thickness_um = 90;
    d.temperature_C = 120;
    for (const auto& [id, w] : {std::pair{"BaMgAl10O17:Eu2+", 0.10}, {"(Ba,Sr)2SiO4:Eu2+", 0.06}, {"(Sr,Ca)AlSiN3:Eu2+", 0.04}, {"K2SiF6:Mn4+", 0.08}})
        d.components.push_back({id, PhosphorLibrary::builtin().find(id), w, std::nullopt});
    for (double t : {25.0, 120.0}) {
        const auto r = evaluate_layer(d, t);
        // Photons: each pump photon is leaked, escapes as converted light, or is lost in a phosphor
        // or in the package (conservation).
        CHECK(r.pump_photons_leaked + r.photons_escaping + r.photons_lost + r.photons_package == doctest::Approx(1.0).epsilon(1e-12));
        // Energy: first law (common practice, no source).
        CHECK(r.leaked_pump_W + r.converted_W + r.stokes_loss_W + r.quantum_loss_W + r.package_loss_W ==
              doctest::Approx(r.pump_power_W).epsilon(1e-12));
        CHECK(r.stokes_loss_W > 0);
        CHECK(r.quantum_loss_W > 0);
    }
    // Single phosphor: converted W per absorbed pump W <= QE x lambda_pump_max / lambda_emission_min (Stokes).
    const auto g = test_phosphor("G", 530, 40, 480, 0.9);
    const auto r = evaluate_layer(single(40, 0.05, g));
    const double absorbed_W = r.pump_power_W - r.leaked_pump_W;
    const double lambda_em_min = 396.0;  // the emission is cut at the pump peak (Stokes rule in the model)
    CHECK(r.converted_W / absorbed_W <= 0.9 * 400.0 / lambda_em_min);
    CHECK(r.converted_W / absorbed_W < 0.9 * 395.0 / 530.0 * 1.1);
}

TEST_CASE("layer: no quenching and no peak shift give no colour shift") {
    // Nothing depends on temperature, so nothing moves (common practice, no source).
    auto p = test_phosphor("G", 530, 60, 480);
    LayerDesign d = single(60, 0.05, p);
    d.temperature_C = 150;
    // The pump's own drift with junction temperature (issue 14) moves the leak: held still here.
    d.pump_peak_shift_nm_per_K = 0;
    d.pump_fwhm_change_nm_per_K = 0;
    const auto rep = evaluate_layer_design(d);
    CHECK(rep.shift_steps == doctest::Approx(0.0).epsilon(1e-9));
}

TEST_CASE("layer: published thermal quenching figures round-trip") {
    // shared/phosphor-facts.md: Y2O3:Eu3+ loses about 7 % at 150 degC; LaPO4:Ce,Tb about 3 % (thermal-quenching study, confirmed).
    const auto& lib = PhosphorLibrary::builtin();
    LayerDesign d;
    d.name = "quench";
    d.pump = Excitation::led(395, 12);
    d.thickness_um = 50;
    d.components.push_back({"YOX", lib.find("Y2O3:Eu3+"), 0.05, std::nullopt});
    d.components.push_back({"LAP", lib.find("LaPO4:Ce3+,Tb3+"), 0.05, 0.9});
    const auto cold = evaluate_layer(d, 25.0), hot = evaluate_layer(d, 150.0);
    CHECK(hot.components[0].quantum_efficiency / cold.components[0].quantum_efficiency == doctest::Approx(0.93).epsilon(1e-9));
    CHECK(hot.components[1].quantum_efficiency / cold.components[1].quantum_efficiency == doctest::Approx(0.97).epsilon(1e-9));
}

TEST_CASE("layer design: the example designs load, and bad designs name file, line and key") {
    // Project contract for bad input: file, line and key named (common practice, no source).
    const std::string dir = LAMPWRIGHT_SOURCE_DIR "/examples/layers/";
    const auto d = load_layer_design(dir + "module395_150um.toml");
    CHECK(d.components.size() == 3);
    CHECK(d.thickness_um == 150);
    // Round trip through layer_design_to_toml.
    const TempDir tmp_dir;
    const std::string tmp = tmp_dir.write("lampwright_layer_roundtrip.toml", layer_design_to_toml(d));
    const auto again = load_layer_design(tmp);
    CHECK(again.components[1].loading == doctest::Approx(d.components[1].loading));

    struct Bad {
        const char* text;
        const char* expect;
    };
    const Bad cases[] = {
        {"name='x'\n[pump]\npeak_nm=395\nfwhm_nm=12\n[layer]\nthickness_um=-5\n[[component]]\nphosphor='BAM'\nloading=0.1\n", "thickness_um"},
        {"name='x'\n[pump]\npeak_nm=395\nfwhm_nm=12\n[layer]\nthickness_um=50\n[[component]]\nphosphor='BAM'\nloading=12\n", "percent"},
        {"name='x'\n[pump]\npeak_nm=0.395\nfwhm_nm=12\n[layer]\nthickness_um=50\n[[component]]\nphosphor='BAM'\nloading=0.1\n", "micrometres"},
        {"name='x'\n[pump]\npeak_nm=395\nfwhm_nm=12\n[layer]\nthickness_um=50\n[[component]]\nphosphor='nope'\nloading=0.1\n", "nope"},
        {"name='x'\n[pump]\npeak_nm=395\nfwhm_nm=12\n[layer]\nthickness_um=50\n[operating]\ntemperature_C=358\n[[component]]\nphosphor='BAM'\nloading=0.1\n", "kelvin"},
        {"name='x'\n[pump]\npeak_nm=395\nfwhm_nm=12\n[layer]\nthickness_um=50\n[[component]]\nphosphor='BAM'\nloading=0.6\n[[component]]\nphosphor='CASN'\nloading=0.5\n", "sum below 1"},
    };
    for (const auto& c : cases) {
        const std::string path = tmp_dir.write("lampwright_layer_bad.toml", c.text);
        try {
            (void)load_layer_design(path);
            FAIL("accepted a bad design: " << c.text);
        } catch (const InputError& e) {
            const std::string what = e.what();
            CHECK(what.find(path) != std::string::npos);
            CHECK(e.line() > 0);
            CHECK(what.find(c.expect) != std::string::npos);
        }
    }
}

TEST_CASE("layer report: UV leakage caution names IEC 62471 and the leaked power") {
    // IEC 62471 (photobiological safety of lamps and lamp systems) is the usual assessment of UV/violet leakage.
    const auto d = load_layer_design(LAMPWRIGHT_SOURCE_DIR "/examples/layers/module395_80um.toml");
    const auto rep = evaluate_layer_design(d);
    const std::string caution = layer_caution(rep);
    CHECK(caution.find("IEC 62471") != std::string::npos);
    CHECK(caution.find("mW") != std::string::npos);
    CHECK(rep.operating.leaked_uv_violet_W > 0.01);
    // A very thick layer: leak negligible, no caution.
    LayerDesign thick = d;
    thick.thickness_um = 3000;
    CHECK(layer_caution(evaluate_layer_design(thick)).empty());
}

namespace {

// The InputError load_layer_design gives for a design `text` (fails the test when it loads).
InputError design_error(const TempDir& dir, const std::string& text, std::string& path) {
    path = dir.write("design.toml", text);
    try {
        (void)load_layer_design(path);
    } catch (const InputError& e) {
        return e;
    }
    FAIL("the design was accepted: " << text);
    return InputError("", 0, "");
}

const char* kLayerBody = "[layer]\nthickness_um = 150\n[[component]]\nphosphor = 'BAM'\nloading = 0.12\n";

}  // namespace

TEST_CASE("layer design: a [pump] with both peak_nm and a measured spectrum is an InputError naming the file and the line") {
    // Which one was meant cannot be known; the spectrum used to win without a word.
    const TempDir dir;
    std::string pump_csv = "wavelength_nm,power\n";
    for (int nm = 360; nm <= 440; ++nm) pump_csv += std::to_string(nm) + "," + std::to_string(std::exp(-0.5 * std::pow((nm - 395) / 5.0, 2))) + "\n";
    dir.write("pump.csv", pump_csv);
    // The spectrum alone loads.
    const std::string ok = dir.write("ok.toml", std::string("name = 'x'\n[pump]\nspectrum = 'pump.csv'\n") + kLayerBody);
    CHECK(load_layer_design(ok).pump_spectrum.has_value());
    for (const char* pump : {"peak_nm = 395\nfwhm_nm = 12\nspectrum = 'pump.csv'\n", "spectrum = 'pump.csv'\npeak_nm = 405\n",
                             "spectrum = 'pump.csv'\nfwhm_nm = 12\n"}) {
        const std::string p = pump;
        CAPTURE(p);
        std::string path;
        const InputError e = design_error(dir, "name = 'x'\n[pump]\n" + p + kLayerBody, path);
        const std::string what = e.what();
        CAPTURE(what);
        CHECK(what.find(path) != std::string::npos);
        CHECK(e.line() >= 3);
        CHECK(e.line() <= 5);
        CHECK(what.find("spectrum") != std::string::npos);
        CHECK(what.find("not both") != std::string::npos);
    }
}

TEST_CASE("layer design: min_loading above max_loading is an InputError naming the file, the line and both values") {
    const TempDir dir;
    const std::string head = "name = 'x'\n[pump]\npeak_nm = 395\nfwhm_nm = 12\n[layer]\nthickness_um = 150\n[[component]]\nphosphor = 'BAM'\n";
    {
        std::string path;
        const InputError e = design_error(dir, head + "loading = 0.12\nmin_loading = 0.2\nmax_loading = 0.1\n", path);
        const std::string what = e.what();
        CAPTURE(what);
        CHECK(what.find(path) != std::string::npos);
        CHECK(e.line() == 10);
        CHECK(what.find("min_loading") != std::string::npos);
        CHECK(what.find("0.2") != std::string::npos);
        CHECK(what.find("max_loading 0.1") != std::string::npos);
    }
    // Each limit is a mass fraction of the layer.
    for (const char* bad : {"min_loading = -0.1\n", "max_loading = 12\n", "max_loading = 0\n"}) {
        const std::string b = bad;
        CAPTURE(b);
        std::string path;
        const InputError e = design_error(dir, head + "loading = 0.12\n" + b, path);
        CHECK(e.line() == 10);
        CHECK(std::string(e.what()).find("_loading") != std::string::npos);
    }
    // Read, kept and written back.
    const std::string good = dir.write("good.toml", head + "loading = 0.12\nmin_loading = 0.05\nmax_loading = 0.3\n");
    const LayerDesign d = load_layer_design(good);
    REQUIRE(d.components[0].min_loading.has_value());
    REQUIRE(d.components[0].max_loading.has_value());
    CHECK(*d.components[0].min_loading == 0.05);
    CHECK(*d.components[0].max_loading == 0.3);
    const LayerDesign again = load_layer_design(dir.write("again.toml", layer_design_to_toml(d)));
    CHECK(again.components[0].min_loading == d.components[0].min_loading);
    CHECK(again.components[0].max_loading == d.components[0].max_loading);
}

namespace {

const std::string kThermalFixtures = LAMPWRIGHT_SOURCE_DIR "/tests/data/phosphors_thermal";
const std::string kNoQuenchingWarning = "no quenching data for TestGreen:NoThermal: treated as constant with temperature";

// A 60 um layer of one fixture phosphor (tests/data/phosphors_thermal) on a 395 nm LED at `t_C`.
LayerDesign fixture_layer(const std::string& id, double t_C) {
    const auto lib = PhosphorLibrary::with_folders({kThermalFixtures});
    LayerDesign d = single(60, 0.05, lib.find(id));
    d.temperature_C = t_C;
    return d;
}

bool has_warning(const LayerResult& r, const std::string& text) {
    for (const auto& w : r.assessment.warnings)
        if (w == text) return true;
    return false;
}

bool has_quenching_warning(const LayerResult& r) {
    for (const auto& w : r.assessment.warnings)
        if (w.find("no quenching data") != std::string::npos) return true;
    return false;
}

}  // namespace

TEST_CASE("layer: a phosphor without [thermal] at 100 degC carries the warning 'no quenching data for <id>: treated as constant with temperature'") {
    // Project rule (issue 11): a missing thermal table is never a silent assumption.
    const auto rep = evaluate_layer_design(fixture_layer("TestGreen:NoThermal", 100));
    CHECK(has_warning(rep.operating, kNoQuenchingWarning));
    CHECK_FALSE(has_quenching_warning(rep.room));  // the 25 degC result is at the data's reference temperature
    // Once, even when the phosphor is in two components.
    LayerDesign two = fixture_layer("TestGreen:NoThermal", 100);
    two.components.push_back(two.components.front());
    two.components.back().label = "second";
    const auto r2 = evaluate_layer(two);
    CHECK(std::count(r2.assessment.warnings.begin(), r2.assessment.warnings.end(), kNoQuenchingWarning) == 1);
}

TEST_CASE("layer: at the reference temperature 25 degC a phosphor without [thermal] gives no quenching warning") {
    const auto rep = evaluate_layer_design(fixture_layer("TestGreen:NoThermal", 25));
    CHECK_FALSE(has_quenching_warning(rep.operating));
    CHECK_FALSE(has_quenching_warning(rep.room));
}

TEST_CASE("layer: a phosphor with [thermal] data at 100 degC gives no quenching warning and is quenched by its data") {
    const auto rep = evaluate_layer_design(fixture_layer("TestGreen:WithThermal", 100));
    CHECK_FALSE(has_quenching_warning(rep.operating));
    // Fixture: 1.0 at 25 degC, 0.8 at 150 degC, linear between: 0.88 at 100 degC.
    CHECK(rep.operating.components[0].quantum_efficiency / rep.room.components[0].quantum_efficiency == doctest::Approx(0.88).epsilon(1e-9));
}
