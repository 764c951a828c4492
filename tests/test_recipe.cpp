// Tests of blend recipes (src/lampwright/phosphor/recipe.hpp): good recipes, every refusal with the file,
// line and key in the message, and the recipe_to_toml round trip.
#include "lampwright/phosphor/blend.hpp"
#include "lampwright/core/error.hpp"
#include "lampwright/phosphor/recipe.hpp"
#include "lampwright/io/toml_access.hpp"
#include "lampwright/led/layer_design.hpp"
#include "lampwright/phosphor/phosphor.hpp"
#include "lampwright/production/qc.hpp"

#include "test_support.hpp"

#include <doctest/doctest.h>

#include <cmath>
#include <cstdio>
#include <filesystem>
#include <functional>
#include <string>
#include <vector>

using namespace lampwright;

namespace {

namespace fs = std::filesystem;

using lwtest::TempDir;

// A green band in relative power per nm (Gaussian, 530 nm, sigma 25 nm), 400-700 nm.
std::string green_csv() {
    std::string s = "wavelength_nm,spectral_power\n";
    char buf[64];
    for (int nm = 400; nm <= 700; nm += 5) {
        std::snprintf(buf, sizeof buf, "%d,%.10g\n", nm, std::exp(-0.5 * std::pow((nm - 530.0) / 25.0, 2)));
        s += buf;
    }
    return s;
}

using lwtest::example_recipe;

// Loads `text` as a recipe file and checks the refusal: an InputError naming the file, the line
// and the key (and `extra` when given).
void expect_refused(const std::string& text, std::size_t line, const std::string& key, const std::string& extra = "") {
    TempDir dir;
    const std::string path = dir.write("bad_recipe.toml", text);
    CAPTURE(text);
    try {
        (void)load_recipe(path);
        FAIL("recipe accepted");
    } catch (const InputError& e) {
        const std::string what = e.what();
        CAPTURE(what);
        CHECK(e.source() == path);
        CHECK(what.find(path) != std::string::npos);
        CHECK(e.line() == line);
        CHECK(what.find(path + ":" + std::to_string(line) + ":") != std::string::npos);
        CHECK(what.find(key) != std::string::npos);
        if (!extra.empty()) CHECK(what.find(extra) != std::string::npos);
    }
}

void check_same_recipe(const Recipe& a, const Recipe& b) {
    CHECK(a.blend.name == b.blend.name);
    CHECK(a.blend.excitation.kind == b.blend.excitation.kind);
    CHECK(a.blend.excitation.peak_nm == doctest::Approx(b.blend.excitation.peak_nm).epsilon(1e-12));
    CHECK(a.blend.excitation.fwhm_nm == doctest::Approx(b.blend.excitation.fwhm_nm).epsilon(1e-12));
    CHECK(a.blend.mercury_line_fraction.has_value() == b.blend.mercury_line_fraction.has_value());
    if (a.blend.mercury_line_fraction && b.blend.mercury_line_fraction)
        CHECK(*a.blend.mercury_line_fraction == doctest::Approx(*b.blend.mercury_line_fraction).epsilon(1e-12));
    CHECK(a.blend.absorbed_fraction == doctest::Approx(b.blend.absorbed_fraction).epsilon(1e-12));
    REQUIRE(a.blend.components.size() == b.blend.components.size());
    for (std::size_t i = 0; i < a.blend.components.size(); ++i) {
        const auto& ca = a.blend.components[i];
        const auto& cb = b.blend.components[i];
        CAPTURE(ca.label);
        CHECK(ca.label == cb.label);
        CHECK(ca.phosphor.id == cb.phosphor.id);
        CHECK(ca.phosphor.emission_model == cb.phosphor.emission_model);
        CHECK(ca.mass_fraction == doctest::Approx(cb.mass_fraction).epsilon(1e-9));
        CHECK(ca.absorption.has_value() == cb.absorption.has_value());
        if (ca.absorption && cb.absorption) CHECK(*ca.absorption == doctest::Approx(*cb.absorption).epsilon(1e-12));
        CHECK(ca.quantum_efficiency.has_value() == cb.quantum_efficiency.has_value());
        if (ca.quantum_efficiency && cb.quantum_efficiency)
            CHECK(*ca.quantum_efficiency == doctest::Approx(*cb.quantum_efficiency).epsilon(1e-12));
    }
}

Recipe round_trip(const Recipe& r, const TempDir& dir, const std::string& file = "round_trip.toml") {
    const std::string text = recipe_to_toml(r.blend, {"written by the round-trip test"});
    CAPTURE(text);
    const std::string path = dir.write(file, text);
    return load_recipe(path, r.phosphor_folders);
}

}  // namespace

TEST_CASE("recipe: mercury recipe with excitation_nm loads and blends") {
    // What the file says is what the blend gets (recipe.hpp format; common practice, no source).
    TempDir dir;
    const std::string path = dir.write("tri.toml", R"(# a tri-band test recipe
name = "tri-band test"
excitation_nm = 253.7
mercury_lines = 0.02

[[component]]
phosphor = "Y2O3:Eu3+"
mass_fraction = 0.45

[[component]]
phosphor = "LAP"          # by abbreviation
mass_fraction = 0.45
label = "green"

[[component]]
phosphor = "BaMgAl10O17:Eu2+"
mass_fraction = 10        # an integer is a number too; fractions need not sum to 1
)");
    const Recipe r = load_recipe(path);
    CHECK(r.path == path);
    CHECK(r.blend.name == "tri-band test");
    CHECK(r.blend.excitation.kind == Excitation::Kind::mercury);
    // 253.7 nm mercury resonance line: IUPAC Gold Book (shared/phosphor-facts.md).
    CHECK(r.blend.excitation.peak_nm == doctest::Approx(253.7).epsilon(1e-12));
    REQUIRE(r.blend.mercury_line_fraction.has_value());
    CHECK(*r.blend.mercury_line_fraction == doctest::Approx(0.02).epsilon(1e-12));
    CHECK(r.blend.absorbed_fraction == 1.0);
    REQUIRE(r.blend.components.size() == 3);
    CHECK(r.blend.components[0].phosphor.id == "Y2O3:Eu3+");
    CHECK(r.blend.components[0].label == "Y2O3:Eu3+");
    CHECK(r.blend.components[0].mass_fraction == doctest::Approx(0.45).epsilon(1e-12));
    CHECK(r.blend.components[1].phosphor.id == "LaPO4:Ce3+,Tb3+");
    CHECK(r.blend.components[1].label == "green");
    CHECK(r.blend.components[2].mass_fraction == doctest::Approx(10.0).epsilon(1e-12));
    CHECK_FALSE(r.blend.components[0].absorption.has_value());
    const BlendResult b = evaluate_blend(r.blend);
    CHECK(b.mercury_line_fraction == doctest::Approx(0.02).epsilon(1e-12));
    CHECK(b.components[1].label == "green");
    // Normalised: 10 / 10.9 of the mass is BAM (common practice, no source).
    CHECK(b.components[2].mass_fraction == doctest::Approx(10.0 / 10.9).epsilon(1e-12));
}

TEST_CASE("recipe: [pump] recipe loads as an LED excitation") {
    // UV/violet LED pumps 365-420 nm (data/phosphors/README.md; common practice, no source).
    TempDir dir;
    const std::string path = dir.write("led.toml", R"(name = "violet test"
absorbed_fraction = 0.9

[pump]
peak_nm = 405
fwhm_nm = 15.5

[[component]]
phosphor = "BAM"
mass_fraction = 0.3

[[component]]
phosphor = "CaAlSiN3:Eu2+"
mass_fraction = 0.7
)");
    const Recipe r = load_recipe(path);
    CHECK(r.blend.excitation.kind == Excitation::Kind::led);
    CHECK(r.blend.excitation.peak_nm == doctest::Approx(405.0).epsilon(1e-12));
    CHECK(r.blend.excitation.fwhm_nm == doctest::Approx(15.5).epsilon(1e-12));
    CHECK(r.blend.absorbed_fraction == doctest::Approx(0.9).epsilon(1e-12));
    CHECK_FALSE(r.blend.mercury_line_fraction.has_value());
    REQUIRE(r.blend.components.size() == 2);
    CHECK(r.blend.components[1].phosphor.id == "CaAlSiN3:Eu2+");
    const BlendResult b = evaluate_blend(r.blend);
    // (1 - 0.9) / 0.9 W of pump leak per W absorbed (energy conservation; common practice, no source).
    CHECK(b.pump_leak_W_per_W == doctest::Approx(0.1 / 0.9).epsilon(1e-12));
    CHECK(b.mercury_line_fraction == 0.0);
}

TEST_CASE("recipe: inline measured spectrum component with absorption and quantum efficiency") {
    // A measured emission given in the recipe, path relative to the recipe (recipe.hpp; common practice, no source).
    TempDir dir;
    dir.write("spectra/green.csv", green_csv());
    const std::string path = dir.write("inline.toml", R"(name = "inline green"
excitation_nm = 253.7
mercury_lines = 0.0

[[component]]
spectrum = "spectra/green.csv"
absorption = 0.5
quantum_efficiency = 0.8
mass_fraction = 0.6

[[component]]
phosphor = "YOX"
mass_fraction = 0.4
)");
    const Recipe r = load_recipe(path);
    REQUIRE(r.blend.components.size() == 2);
    const auto& c = r.blend.components[0];
    CHECK(c.phosphor.emission_model == "measured");
    CHECK(c.phosphor.id == "green");
    CHECK(c.label == "green");
    CHECK(fs::path(c.phosphor.origin) == dir.path / "spectra" / "green.csv");
    REQUIRE(c.absorption.has_value());
    REQUIRE(c.quantum_efficiency.has_value());
    CHECK(*c.absorption == doctest::Approx(0.5).epsilon(1e-12));
    CHECK(*c.quantum_efficiency == doctest::Approx(0.8).epsilon(1e-12));
    const BlendResult b = evaluate_blend(r.blend);
    // s = w a / sum w a with YOX's a = 1.0 at 254 nm (blend.hpp model; common practice, no source).
    const double s_green = 0.6 * 0.5 / (0.6 * 0.5 + 0.4 * 1.0);
    CHECK(b.components[0].photon_share == doctest::Approx(s_green).epsilon(1e-12));
    // The recipe's QE 0.8 serves both UV lines; YOX has 0.92 at 254 nm and 0.69 at 185 nm (data file,
    // from memory), weighted by the 184.9 nm share of data/mercury/uv_lines.toml.
    const double f = mercury_uv_lines().photon_fraction_185nm;
    CHECK(b.quantum_yield == doctest::Approx(s_green * 0.8 + (1 - s_green) * ((1 - f) * 0.92 + f * 0.69)).epsilon(1e-12));
}

TEST_CASE("recipe: phosphor_folders are read relative to the recipe, and extra folders are accepted") {
    // Relative paths in a file are relative to that file (common practice, no source).
    TempDir dir;
    dir.write("mine/x.csv", green_csv());
    dir.write("mine/green.toml", R"(id = "Test green:Eu2+"
use = ["led"]
model_note = "test"
[emission]
model = "measured"
file = "x.csv"
source = "synthetic test data"
[absorption]
points = [[220, 1.0], [420, 0.8], [480, 0.0], [600, 0.0]]
source = "model assumption, no source"
[quantum_efficiency]
at_365_405nm = 0.75
source = "model assumption, no source"
)");
    const std::string body = R"(
[pump]
peak_nm = 395
fwhm_nm = 12

[[component]]
phosphor = "Test green:Eu2+"
mass_fraction = 0.5

[[component]]
phosphor = "CASN"
mass_fraction = 0.5
)";
    const std::string with_folder = dir.write("recipes/with_folder.toml", "name = \"user green\"\nphosphor_folders = [\"../mine\"]\n" + body);
    const Recipe r = load_recipe(with_folder);
    REQUIRE(r.blend.components.size() == 2);
    CHECK(r.blend.components[0].phosphor.emission_model == "measured");
    CHECK(evaluate_blend(r.blend).components[0].quantum_efficiency == doctest::Approx(0.75).epsilon(1e-12));

    // Without the folder the id is unknown; given on the command line it loads (common practice, no source).
    const std::string plain = dir.write("plain.toml", "name = \"user green\"\n" + body);
    CHECK_THROWS_AS((void)load_recipe(plain), InputError);
    const Recipe r2 = load_recipe(plain, {(dir.path / "mine").string()});
    CHECK(r2.blend.components[0].phosphor.id == "Test green:Eu2+");
}

TEST_CASE("recipe: example recipes load and blend") {
    for (const std::string name : {"triband_4000K.toml", "halophosphate_3000K.toml", "multiband_5000K.toml", "led395_module.toml"}) {
        CAPTURE(name);
        const Recipe r = load_recipe(example_recipe(name));
        CHECK_FALSE(r.blend.name.empty());
        const BlendResult b = evaluate_blend(r.blend);
        // Emitted photons per absorbed photon cannot exceed one here (every QE <= 1), and the Stokes
        // loss keeps the radiant efficiency below it (common practice, no source).
        CHECK(b.quantum_yield > 0.5);
        CHECK(b.quantum_yield <= 1.0);
        CHECK(b.radiant_efficiency < b.quantum_yield);
    }
}

TEST_CASE("recipe: refusals name the file, the line and the key") {
    // Every case below is a mistake a user makes; the message must point at the file, line and key
    // (recipe.hpp contract; common practice, no source). Units: nm, not micrometres or angstroms
    // (253.7 nm mercury line, IUPAC Gold Book); fractions of one, not percent.
    SUBCASE("a recipe [pump] with a measured spectrum, which only layer designs read") {
        // It used to be accepted and silently unused (the Gaussian of peak_nm, fwhm_nm was used).
        expect_refused("name = \"x\"\n[pump]\npeak_nm = 395\nfwhm_nm = 12\nspectrum = \"pump.csv\"\n\n[[component]]\nphosphor = \"BAM\"\nmass_fraction = 0.5\n",
                       5, "pump.spectrum", "layer design");
    }
    SUBCASE("min_fraction above max_fraction, with both values") {
        expect_refused("name = \"x\"\nexcitation_nm = 253.7\n\n[[component]]\nphosphor = \"YOX\"\nmass_fraction = 0.5\n"
                       "min_fraction = 0.6\nmax_fraction = 0.4\n",
                       7, "component[1].min_fraction", "0.6 is above max_fraction 0.4");
    }
    SUBCASE("unknown phosphor") {
        expect_refused("name = \"x\"\nexcitation_nm = 253.7\n\n[[component]]\nphosphor = \"Unobtainium:Eu\"\nmass_fraction = 0.5\n",
                       5, "component[1].phosphor", "Unobtainium:Eu");
    }
    SUBCASE("ambiguous abbreviation") {
        expect_refused("name = \"x\"\nexcitation_nm = 253.7\n\n[[component]]\nphosphor = \"halo\"\nmass_fraction = 0.5\n", 5,
                       "component[1].phosphor", "(warm)");
    }
    SUBCASE("missing spectrum file") {
        expect_refused("name = \"x\"\nexcitation_nm = 253.7\n\n[[component]]\nspectrum = \"nope.csv\"\nabsorption = 1.0\n"
                       "quantum_efficiency = 0.9\nmass_fraction = 0.5\n",
                       5, "component[1].spectrum", "nope.csv");
    }
    SUBCASE("negative fraction") {
        expect_refused("name = \"x\"\nexcitation_nm = 253.7\n\n[[component]]\nphosphor = \"YOX\"\nmass_fraction = -0.2\n", 6,
                       "component[1].mass_fraction");
    }
    SUBCASE("zero fraction") {
        expect_refused("name = \"x\"\nexcitation_nm = 253.7\n\n[[component]]\nphosphor = \"YOX\"\nmass_fraction = 0.5\n\n"
                       "[[component]]\nphosphor = \"LAP\"\nmass_fraction = 0\n",
                       10, "component[2].mass_fraction");
    }
    SUBCASE("fraction written as text with a percent sign") {
        expect_refused("name = \"x\"\nexcitation_nm = 253.7\n\n[[component]]\nphosphor = \"YOX\"\nmass_fraction = \"45%\"\n", 6,
                       "component[1].mass_fraction", "45%");
    }
    SUBCASE("quantum efficiency in percent") {
        expect_refused("name = \"x\"\nexcitation_nm = 253.7\n\n[[component]]\nphosphor = \"YOX\"\nmass_fraction = 0.5\n"
                       "quantum_efficiency = 90\n",
                       7, "component[1].quantum_efficiency", "percent");
    }
    SUBCASE("coating weight out of range, 185 nm share in percent, coating weight for an LED") {
        expect_refused("name = \"x\"\nexcitation_nm = 253.7\ncoating_weight_mg_per_cm2 = 0.01\n\n[[component]]\nphosphor = \"YOX\"\nmass_fraction = 0.5\n",
                       3, "coating_weight_mg_per_cm2", "0.1-50 mg/cm2");
        expect_refused("name = \"x\"\nexcitation_nm = 253.7\nuv_185nm_fraction = 8\n\n[[component]]\nphosphor = \"YOX\"\nmass_fraction = 0.5\n", 3,
                       "uv_185nm_fraction", "percent?");
        expect_refused("name = \"x\"\ncoating_weight_mg_per_cm2 = 3\n\n[pump]\npeak_nm = 395\nfwhm_nm = 12\n\n[[component]]\nphosphor = \"BAM\"\n"
                       "mass_fraction = 0.5\n",
                       2, "coating_weight_mg_per_cm2", "only applies to a mercury discharge");
    }
    SUBCASE("absorbed_fraction for a mercury discharge (the coating model gives the absorbed UV)") {
        expect_refused("name = \"x\"\nexcitation_nm = 253.7\nabsorbed_fraction = 0.9\n\n[[component]]\nphosphor = \"YOX\"\nmass_fraction = 0.5\n", 3,
                       "absorbed_fraction", "LED pump only");
    }
    SUBCASE("excitation in micrometres") {
        expect_refused("name = \"x\"\nexcitation_nm = 0.2537\n\n[[component]]\nphosphor = \"YOX\"\nmass_fraction = 0.5\n", 2,
                       "excitation_nm", "micrometres");
    }
    SUBCASE("excitation in angstroms") {
        expect_refused("name = \"x\"\nexcitation_nm = 2537\n\n[[component]]\nphosphor = \"YOX\"\nmass_fraction = 0.5\n", 2,
                       "excitation_nm", "angstroms");
    }
    SUBCASE("LED wavelength given as excitation_nm") {
        expect_refused("name = \"x\"\nexcitation_nm = 395\n\n[[component]]\nphosphor = \"BAM\"\nmass_fraction = 0.5\n", 2,
                       "excitation_nm", "[pump]");
    }
    SUBCASE("both excitation_nm and [pump]") {
        expect_refused("name = \"x\"\nexcitation_nm = 253.7\n\n[pump]\npeak_nm = 395\nfwhm_nm = 12\n\n[[component]]\n"
                       "phosphor = \"BAM\"\nmass_fraction = 0.5\n",
                       2, "excitation_nm", "[pump]");
    }
    SUBCASE("missing name") {
        expect_refused("excitation_nm = 253.7\n\n[[component]]\nphosphor = \"YOX\"\nmass_fraction = 0.5\n", 1, "'name'");
    }
    SUBCASE("no components") {
        expect_refused("name = \"x\"\nexcitation_nm = 253.7\n", 1, "[[component]]");
    }
    SUBCASE("misspelt key") {
        expect_refused("name = \"x\"\nexcitation_nm = 253.7\n\n[[component]]\nphosphor = \"YOX\"\nmass_fracion = 0.5\n", 6,
                       "component[1].mass_fracion", "unknown key");
    }
    SUBCASE("pump peak outside the LED range") {
        expect_refused("name = \"x\"\n\n[pump]\npeak_nm = 254\nfwhm_nm = 12\n\n[[component]]\nphosphor = \"BAM\"\nmass_fraction = 0.5\n",
                       4, "pump.peak_nm", "340-430");
    }
    SUBCASE("mercury lines with an LED pump") {
        expect_refused("name = \"x\"\nmercury_lines = 0.03\n\n[pump]\npeak_nm = 395\nfwhm_nm = 12\n\n[[component]]\n"
                       "phosphor = \"BAM\"\nmass_fraction = 0.5\n",
                       2, "mercury_lines");
    }
    SUBCASE("phosphor without a QE for the excitation") {
        // YAG has only at_365_405nm (data/phosphors/Y3Al5O12_Ce.toml): it cannot be used under 253.7 nm.
        expect_refused("name = \"x\"\nexcitation_nm = 253.7\n\n[[component]]\nphosphor = \"YOX\"\nmass_fraction = 0.5\n\n"
                       "[[component]]\nphosphor = \"YAG\"\nmass_fraction = 0.5\n",
                       8, "component[2]", "Y3Al5O12:Ce3+");
    }
    SUBCASE("measured spectrum without absorption") {
        TempDir dir;
        dir.write("green.csv", green_csv());
        const std::string csv = (dir.path / "green.csv").string();
        expect_refused("name = \"x\"\nexcitation_nm = 253.7\n\n[[component]]\nspectrum = \"" + csv +
                           "\"\nquantum_efficiency = 0.9\nmass_fraction = 0.5\n",
                       4, "component[1]", "absorption");
    }
    SUBCASE("mercury-line ratios: four non-negative powers, not all zero") {
        const std::string tail = "\n[[component]]\nphosphor = \"YOX\"\nmass_fraction = 0.5\n";
        expect_refused("name = \"x\"\nexcitation_nm = 253.7\nmercury_line_ratios = [0.4, 1]\n" + tail, 3, "mercury_line_ratios", "must list 4 powers");
        expect_refused("name = \"x\"\nexcitation_nm = 253.7\nmercury_line_ratios = [0, 0, 0, 0]\n" + tail, 3, "mercury_line_ratios", "must not all be zero");
        expect_refused("name = \"x\"\nexcitation_nm = 253.7\nmercury_line_ratios = [0.4, -1, 0.5, 0.2]\n" + tail, 3, "mercury_line_ratios",
                       "numbers >= 0");
    }
    SUBCASE("an unknown lamp type, and grain data outside the powder range") {
        // Lamp phosphor powders: densities of a few g/cm3, d50 of a few micrometres (from memory).
        const std::string head = "name = \"x\"\nexcitation_nm = 253.7\n";
        expect_refused(head + "lamp_type = \"sodium\"\n\n[[component]]\nphosphor = \"YOX\"\nmass_fraction = 0.5\n", 3, "lamp_type",
                       "halophosphate, tri-band or broadband");
        expect_refused(head + "\n[[component]]\nphosphor = \"YOX\"\nmass_fraction = 0.5\nd50_um = 0\n", 7, "component[1].d50_um", "0.05-200 um");
        expect_refused(head + "\n[[component]]\nphosphor = \"YOX\"\nmass_fraction = 0.5\ndensity_g_per_cm3 = 50\n", 7,
                       "component[1].density_g_per_cm3", "0.5-12 g/cm3");
    }
    SUBCASE("TOML syntax error") {
        expect_refused("name = \"x\"\nexcitation_nm = 253.7\n\n[[component]]\nphosphor = \"YOX\"\nmass_fraction = = 0.5\n", 6, "TOML");
    }
}

TEST_CASE("recipe: a missing recipe file is an InputError naming it") {
    // common practice, no source
    TempDir dir;
    const std::string path = (dir.path / "no_such_recipe.toml").string();
    CHECK_THROWS_WITH_AS((void)load_recipe(path), doctest::Contains(path.c_str()), InputError);
}

TEST_CASE("recipe: recipe_to_toml round trip keeps components and fractions") {
    // A written recipe must load back to the same blend (recipe.hpp contract; TOML 1.0 string escapes;
    // common practice, no source).
    TempDir dir;
    SUBCASE("tri-band example") {
        const Recipe a = load_recipe(example_recipe("triband_4000K.toml"));
        const Recipe b = round_trip(a, dir);
        check_same_recipe(a, b);
        const BlendResult ra = evaluate_blend(a.blend), rb = evaluate_blend(b.blend);
        CHECK(rb.assessment.xy.x == doctest::Approx(ra.assessment.xy.x).epsilon(1e-12));
        CHECK(rb.assessment.xy.y == doctest::Approx(ra.assessment.xy.y).epsilon(1e-12));
    }
    SUBCASE("LED example with absorbed fraction") {
        const Recipe a = load_recipe(example_recipe("led395_module.toml"));
        CHECK(a.blend.absorbed_fraction == doctest::Approx(0.98).epsilon(1e-12));
        check_same_recipe(a, round_trip(a, dir));
    }
    SUBCASE("labels, overrides and a measured spectrum") {
        dir.write("green.csv", green_csv());
        const std::string path = dir.write("in.toml", R"(name = "round trip"
excitation_nm = 253.7

[[component]]
spectrum = "green.csv"
absorption = 0.55
quantum_efficiency = 0.85
mass_fraction = 0.123457
label = "our green lot 7"

[[component]]
phosphor = "YOX"
absorption = 0.9
mass_fraction = 0.876543
)");
        const Recipe a = load_recipe(path);
        check_same_recipe(a, round_trip(a, dir));
    }
    SUBCASE("a name with quotes, backslashes and a line break") {
        const std::string path = dir.write("in.toml", R"(name = "T8 \"special\" C:\\lamps\nline 2"
excitation_nm = 253.7

[[component]]
phosphor = "YOX"
mass_fraction = 1
)");
        const Recipe a = load_recipe(path);
        CHECK(a.blend.name == "T8 \"special\" C:\\lamps\nline 2");
        check_same_recipe(a, round_trip(a, dir));
    }
    SUBCASE("fractions keep their precision, a trace component does not become zero") {
        BlendInput in;
        in.name = "precise";
        in.excitation = Excitation::mercury();
        for (const auto& [id, w] : std::vector<std::pair<std::string, double>>{{"YOX", 1.0 / 3.0}, {"LAP", 2.0 / 3.0 - 2e-7}, {"BAM", 2e-7}}) {
            const Phosphor& p = PhosphorLibrary::builtin().find(id);
            in.components.push_back(BlendComponent{p.id, p, w, std::nullopt, std::nullopt, std::nullopt, std::nullopt, std::nullopt, std::nullopt});
        }
        Recipe a;
        a.blend = in;
        const Recipe b = round_trip(a, dir);
        REQUIRE(b.blend.components.size() == 3);
        for (std::size_t i = 0; i < 3; ++i)
            CHECK(b.blend.components[i].mass_fraction == doctest::Approx(in.components[i].mass_fraction).epsilon(1e-12));
    }
    SUBCASE("a measured spectrum from a recipe loaded by a relative path, written to another folder") {
        dir.write("lots/green.csv", green_csv());
        dir.write("lots/in.toml", "name = \"relative\"\nexcitation_nm = 253.7\n\n[[component]]\nspectrum = \"green.csv\"\n"
                                  "absorption = 0.5\nquantum_efficiency = 0.8\nmass_fraction = 1\n");
        const fs::path relative = fs::relative(dir.path / "lots" / "in.toml", fs::current_path());
        REQUIRE(relative.is_relative());
        const Recipe a = load_recipe(relative.string());
        // Written into another folder, at another depth than lots/.
        const Recipe b = round_trip(a, dir, "elsewhere/deeper/round_trip.toml");
        check_same_recipe(a, b);
        CHECK(fs::equivalent(b.blend.components[0].phosphor.origin, dir.path / "lots" / "green.csv"));
    }
    SUBCASE("a user phosphor with a measured spectrum stays a library phosphor") {
        dir.write("mine/x.csv", green_csv());
        dir.write("mine/green.toml", R"(id = "Test green:Eu2+"
use = ["lamp"]
model_note = "test"
[emission]
model = "measured"
file = "x.csv"
source = "synthetic test data"
[absorption]
points = [[220, 1.0], [300, 0.5], [400, 0.0]]
source = "model assumption, no source"
[quantum_efficiency]
at_254nm = 0.7
source = "model assumption, no source"
)");
        const std::string path = dir.write("user.toml", "name = \"user\"\nexcitation_nm = 253.7\nphosphor_folders = [\"mine\"]\n\n"
                                                         "[[component]]\nphosphor = \"Test green:Eu2+\"\nmass_fraction = 0.5\n\n"
                                                         "[[component]]\nphosphor = \"YOX\"\nmass_fraction = 0.5\n");
        const Recipe a = load_recipe(path);
        REQUIRE(a.phosphor_folders.size() == 1);
        const Recipe b = round_trip(a, dir);  // re-loaded with the same folders
        check_same_recipe(a, b);
        CHECK(b.blend.components[0].phosphor.qe_254nm.has_value());
        CHECK(evaluate_blend(b.blend).quantum_yield == doctest::Approx(evaluate_blend(a.blend).quantum_yield).epsilon(1e-12));
    }
}

namespace {

// "[a.a.a...]" with `levels` parts.
std::string deep_header(std::size_t levels) {
    std::string h = "[a";
    for (std::size_t k = 1; k < levels; ++k) h += ".a";
    return h + "]\n";
}

// The InputError a TOML reader throws (problem and line); fails the test when none is thrown.
InputError toml_refusal(const std::function<void()>& read) {
    try {
        read();
    } catch (const InputError& e) {
        return e;
    }
    FAIL("no InputError");
    return InputError("", 0, "");
}

}  // namespace

TEST_CASE("toml nesting: 50,000-level headers, arrays and inline tables are refused with the file and the line, never a stack overflow") {
    // Line 3 holds the deep part in every case, so the message must say line 3.
    const std::string lead = "# deep\nname = \"x\"\n";
    std::string arrays = "x = ", tables = "x = ";
    for (int k = 0; k < 50000; ++k) arrays += "[", tables += "{a=";
    const std::string texts[] = {lead + deep_header(50000), lead + arrays + "\n", lead + tables + "\n"};
    for (const auto& text : texts) {
        const InputError e = toml_refusal([&] { TomlDoc doc(text, "deep.toml"); });
        CHECK(e.source() == "deep.toml");
        CHECK(e.line() == 3);
        CHECK(e.problem().find("nested deeper than 64 levels") != std::string::npos);
    }
    // Every reader goes through the same guard: recipes, phosphor files, layer designs, QC specs.
    const TempDir dir("lampwright_toml_deep");
    const std::string file = dir.write("deep.toml", lead + deep_header(50000));
    const std::function<void()> readers[] = {
        [&] { (void)load_recipe(file); },
        [&] { (void)parse_phosphor(lwtest::slurp(file), file); },
        [&] { (void)load_layer_design(file); },
        [&] { (void)load_qc_spec(file); },
    };
    for (const auto& read : readers) {
        const InputError e = toml_refusal(read);
        CHECK(e.source() == file);
        CHECK(e.line() == 3);
        CHECK(e.problem().find("nested deeper than 64 levels") != std::string::npos);
    }
}

TEST_CASE("toml nesting: 64 levels, and brackets in strings, keys and comments, are still read") {
    std::string arrays = "x = ", closing;
    for (int k = 0; k < 63; ++k) arrays += "[", closing += "]";
    const std::string many(80, '[');
    const std::string dotted = "a.a.a.a.a.a.a.a.a.a.a.a.a.a.a.a.a.a.a.a.a.a.a.a.a.a.a.a.a.a.a.a.a.a.a.a.a.a.a.a.a.a.a.a.a.a.a.a.a.a.a.a.a.a.a.a.a.a.a.a.a.a.a.a.a.a";
    const std::string text = deep_header(64) + "v = 1\n[b]\ns = \"" + many + "{{{{\\\"\"\n" + "m = '''\n" + many + "\n'''\n" + "\"" + dotted + "\" = 2\n" +
                             "# " + many + "\n" + "t = { p = 1.5, q = [1, 2], r = {} }\n" + arrays + "1" + closing + "\n";
    const TomlDoc doc(text, "ok.toml");
    const toml::node* leaf = &doc.root();
    for (int k = 0; k < 64; ++k) leaf = leaf->as_table()->get("a");
    CHECK(leaf->as_table()->get("v")->value<int>() == 1);
    CHECK(doc.root()["b"]["s"].value<std::string>()->size() == 85);  // 80 '[', 4 '{', one '"'
    CHECK(doc.root()["b"][dotted].value<int>() == 2);
    CHECK(doc.root()["b"]["t"]["p"].value<double>() == 1.5);
    const toml::node* x = doc.root()["b"].as_table()->get("x");
    for (int k = 0; k < 63; ++k) x = x->as_array()->get(0);
    CHECK(x->value<int>() == 1);
}
