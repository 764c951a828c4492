// Tests of the phosphor library: the built-in files, the emission models, look-up by id and
// abbreviation, and user folders with measured spectra.
#include "lampwright/colour/colorimetry.hpp"
#include "lampwright/core/error.hpp"
#include "lampwright/phosphor/excitation.hpp"
#include "lampwright/phosphor/blend.hpp"
#include "lampwright/phosphor/phosphor.hpp"

#include "test_support.hpp"

#include <doctest/doctest.h>

#include <algorithm>
#include <cmath>
#include <cstdio>
#include <filesystem>
#include <set>
#include <string>
#include <vector>

using namespace lampwright;

namespace {

namespace fs = std::filesystem;

using lwtest::TempDir;

// Spectral power per nm of the model (photons x photon energy, up to a constant).
Spectrum power_of(const Phosphor& p) {
    Spectrum s = emission_photons(p);
    for (std::size_t i = 0; i < s.values.size(); ++i) s.values[i] /= (s.first_nm + static_cast<double>(i));
    return s;
}

double value_at(const Spectrum& s, int nm) { return s.values[static_cast<std::size_t>(nm - s.first_nm)]; }

// Wavelength of the global maximum, refined by a parabola through the three highest samples.
double refined_peak_nm(const Spectrum& s) {
    const auto it = std::max_element(s.values.begin(), s.values.end());
    const auto i = static_cast<std::size_t>(it - s.values.begin());
    REQUIRE(i > 0);
    REQUIRE(i + 1 < s.values.size());
    const double a = s.values[i - 1], b = s.values[i], c = s.values[i + 1];
    const double offset = 0.5 * (a - c) / (a - 2 * b + c);
    return s.first_nm + static_cast<double>(i) + offset;
}

// True when some sample within `tol` nm of `nm` is a strict local maximum.
bool local_max_near(const Spectrum& s, double nm, double tol) {
    for (int k = static_cast<int>(std::ceil(nm - tol)); k <= static_cast<int>(std::floor(nm + tol)); ++k)
        if (value_at(s, k) > value_at(s, k - 1) && value_at(s, k) > value_at(s, k + 1)) return true;
    return false;
}

// Full width at half maximum of the main peak, with linear interpolation at the half-height points.
double fwhm_nm(const Spectrum& s) {
    const auto it = std::max_element(s.values.begin(), s.values.end());
    const auto peak = static_cast<std::size_t>(it - s.values.begin());
    const double half = *it / 2;
    std::size_t lo = peak, hi = peak;
    while (lo > 0 && s.values[lo] > half) --lo;
    while (hi + 1 < s.values.size() && s.values[hi] > half) ++hi;
    const double left = static_cast<double>(lo) + (half - s.values[lo]) / (s.values[lo + 1] - s.values[lo]);
    const double right = static_cast<double>(hi - 1) + (s.values[hi - 1] - half) / (s.values[hi - 1] - s.values[hi]);
    return right - left;
}

const char* kMeasuredPhosphorToml = R"(id = "Test green:Eu2+"
abbreviation = "TG"
name = "a test powder with a measured spectrum"
use = ["led"]
model_note = "Measured on a test batch, not a model."

[emission]
model = "measured"
file = "x.csv"
source = "synthetic test data written by the test"

[absorption]
points = [[220, 1.0], [400, 0.8], [480, 0.0], [600, 0.0]]
source = "model assumption, no source"

[quantum_efficiency]
at_365_405nm = 0.8
source = "model assumption, no source"
)";

// A smooth green band in relative power per nm (a Gaussian at 520 nm, sigma 20 nm) from 400 to 700 nm.
std::string measured_csv() {
    std::string s = "wavelength_nm,spectral_power\n# synthetic\n";
    char buf[64];
    for (int nm = 400; nm <= 700; nm += 2) {
        std::snprintf(buf, sizeof buf, "%d,%.12g\n", nm, std::exp(-0.5 * std::pow((nm - 520.0) / 20.0, 2)));
        s += buf;
    }
    return s;
}

}  // namespace

TEST_CASE("phosphor library: size, unique ids, notes and sources") {
    const auto& lib = PhosphorLibrary::builtin();
    // data/phosphors/README.md lists 19 phosphors; the issue asks for at least 18. Ids unique, every
    // figure with a source text: the library's own rules (common practice, no source).
    CHECK(lib.all().size() >= 18);
    std::set<std::string> ids;
    for (const auto& p : lib.all()) {
        CAPTURE(p.id);
        CHECK(ids.insert(p.id).second);
        // The spectra are models (data/phosphors/README.md): every file must say so (common practice, no source).
        CHECK(p.model_note.find("not a measurement") != std::string::npos);
        CHECK_FALSE(p.emission_source.empty());
        CHECK_FALSE(p.absorption_source.empty());
        CHECK_FALSE(p.qe_source.empty());
        // Internal QE is photons out per photon absorbed: a fraction in (0, 1] (common practice, no source).
        CHECK((p.qe_254nm || p.qe_365_405nm));
        for (const auto& qe : {p.qe_254nm, p.qe_365_405nm})
            if (qe) {
                CHECK(*qe > 0.0);
                CHECK(*qe <= 1.0);
            }
        CHECK(p.origin.rfind("data/phosphors/", 0) == 0);
        // The emitted photon distribution is normalised to one photon (common practice, no source).
        const Spectrum n = emission_photons(p);
        double sum = 0;
        for (double v : n.values) sum += v;
        CHECK(sum == doctest::Approx(1.0).epsilon(1e-12));
    }
}

TEST_CASE("phosphor library: lamp phosphors have a 254 nm QE, led phosphors a 365-405 nm QE") {
    // Schema rule in data/phosphors/README.md: at_254nm only for lamp phosphors, at_365_405nm for led ones
    // (lamps: 253.7 nm, IUPAC Gold Book; LEDs 365-420 nm: common practice, no source).
    for (const auto& p : PhosphorLibrary::builtin().all()) {
        CAPTURE(p.id);
        const bool lamp = std::find(p.use.begin(), p.use.end(), "lamp") != p.use.end();
        const bool led = std::find(p.use.begin(), p.use.end(), "led") != p.use.end();
        CHECK((lamp || led));
        if (lamp) CHECK(p.qe_254nm.has_value());
        if (led) CHECK(p.qe_365_405nm.has_value());
        if (!lamp) CHECK_FALSE(p.qe_254nm.has_value());
        // Absorption curves cover at least 220-500 nm (data/phosphors/README.md; common practice, no source).
        REQUIRE_FALSE(p.absorption_nm.empty());
        CHECK(p.absorption_nm.front() <= 220.0);
        CHECK(p.absorption_nm.back() >= 500.0);
    }
}

TEST_CASE("phosphor library: find by id, by abbreviation, ambiguous and unknown keys") {
    const auto& lib = PhosphorLibrary::builtin();
    // Trade abbreviations YOX, LAP, BAM (data/phosphors/README.md table; common practice, no source).
    CHECK(lib.find("Y2O3:Eu3+").id == "Y2O3:Eu3+");
    CHECK(lib.find("YOX").id == "Y2O3:Eu3+");
    CHECK(lib.find("LAP").id == "LaPO4:Ce3+,Tb3+");
    CHECK(lib.find("BAM").id == "BaMgAl10O17:Eu2+");
    CHECK(lib.try_find("YOX") == &lib.find("Y2O3:Eu3+"));

    // Both halophosphates carry the abbreviation "halo": the look-up must refuse and name both
    // (common practice, no source).
    CHECK(lib.try_find("halo") == nullptr);
    try {
        (void)lib.find("halo");
        FAIL("ambiguous abbreviation accepted");
    } catch (const Error& e) {
        const std::string what = e.what();
        CHECK(what.find("Ca5(PO4)3(F,Cl):Sb3+,Mn2+ (cool)") != std::string::npos);
        CHECK(what.find("Ca5(PO4)3(F,Cl):Sb3+,Mn2+ (warm)") != std::string::npos);
    }

    CHECK(lib.try_find("Unobtainium:Xx") == nullptr);
    CHECK_THROWS_AS((void)lib.find("Unobtainium:Xx"), Error);
    try {
        (void)lib.find("Unobtainium:Xx");
    } catch (const Error& e) {
        CHECK(std::string(e.what()).find("Unobtainium:Xx") != std::string::npos);
    }
}

TEST_CASE("phosphor model: Y2O3:Eu3+ main line at 611 nm") {
    // Eu3+ main line 611-612 nm: thermal-quenching study of lamp phosphors (shared/phosphor-facts.md).
    const Spectrum s = power_of(PhosphorLibrary::builtin().find("Y2O3:Eu3+"));
    MESSAGE("YOX peak ", refined_peak_nm(s), " nm");
    CHECK(std::abs(refined_peak_nm(s) - 611.0) <= 1.0);
}

TEST_CASE("phosphor model: LaPO4:Ce3+,Tb3+ Tb3+ lines at 488, 543, 585, 620 nm") {
    // Tb3+ lines at 488, 543 (strongest), 585 and 620 nm: thermal-quenching study of lamp phosphors
    // (shared/phosphor-facts.md).
    const Spectrum s = power_of(PhosphorLibrary::builtin().find("LaPO4:Ce3+,Tb3+"));
    const double peak = refined_peak_nm(s);
    MESSAGE("LAP strongest peak ", peak, " nm");
    // The Tb3+ lines are derived from CIE FL10-FL12 with each manifold free to move by 2 nm
    // (tools/derive_lamp_phosphors.cpp); the fit put 5D4-7F5 at 544.4 nm.
    CHECK(std::abs(peak - 543.0) <= 1.5);
    CHECK(local_max_near(s, 488.0, 2.0));
    CHECK(local_max_near(s, 585.0, 2.0));
    CHECK(local_max_near(s, 620.0, 2.0));
    // No Tb3+ line near 520 nm (same study lists none there): the finder must not invent one.
    CHECK_FALSE(local_max_near(s, 520.0, 2.0));
    // 543 nm is the strongest (same study): taller than each of the other three.
    for (int nm : {488, 585, 620}) CHECK(value_at(s, 543) > value_at(s, nm));
}

TEST_CASE("phosphor model: band peaks of the power spectrum sit at the listed peak_nm") {
    // BAM about 450 nm, beta-SiAlON about 535 nm, CASN about 650 nm: from memory (shared/phosphor-facts.md).
    // The power maximum must fall on the file's peak_nm (data/phosphors/README.md, the nu0 shift).
    // (YAG, now two Ce3+ bands, has its whole-band peak and width checked in the garnet test.)
    struct Case {
        const char* id;
        double peak, fwhm;
    };
    // BAM and the Sn2+ band are derived from the CIE FL tables (tools/derive_lamp_phosphors.cpp):
    // 450.5 / 48.9 nm and 640 / 152.8 nm in their files.
    for (const Case& c : {Case{"BaMgAl10O17:Eu2+", 450.5, 48.9}, Case{"beta-SiAlON:Eu2+", 535.0, 55.0},
                          Case{"CaAlSiN3:Eu2+", 650.0, 90.0}, Case{"(Sr,Mg)3(PO4)2:Sn2+", 640.0, 152.8}}) {
        const std::string id = c.id;
        CAPTURE(id);
        const Phosphor& p = PhosphorLibrary::builtin().find(id);
        REQUIRE(p.emission_model == "bands");
        REQUIRE(p.bands.size() == 1);
        CHECK(p.bands[0].peak_nm == c.peak);
        const Spectrum s = power_of(p);
        const double peak = refined_peak_nm(s);
        MESSAGE(id, " power peak ", peak, " nm, FWHM ", fwhm_nm(s), " nm");
        CHECK(std::abs(peak - c.peak) <= 1.0);
        // BAM FWHM about 50 nm, Sn2+ about 140 nm: from memory (shared/phosphor-facts.md); the
        // README promises the power FWHM within about 2 nm of fwhm_nm.
        CHECK(std::abs(fwhm_nm(s) - c.fwhm) <= 3.0);
    }
}

TEST_CASE("phosphor model: Y2O3:Eu3+ chromaticity") {
    // Y2O3:Eu3+ chromaticity about (0.645, 0.347): thermal-quenching study of lamp phosphors
    // (shared/phosphor-facts.md).
    const auto xy = chromaticity(tristimulus(power_of(PhosphorLibrary::builtin().find("YOX"))));
    MESSAGE("YOX x ", xy.x, " y ", xy.y);
    // Known gap of the derived lines (test_blend.cpp, "Y2O3:Eu3+ alone"): x 0.659.
    CHECK(std::abs(xy.x - 0.645) <= 0.015);
    CHECK(std::abs(xy.y - 0.347) <= 0.01);
}

TEST_CASE("phosphor model: Tb3+ greens share the LAP line positions") {
    // CeMgAl11O19:Tb3+ and GdMgB5O10:Ce3+,Tb3+ show the same Tb3+ lines: from memory (shared/phosphor-facts.md).
    for (const std::string id : {"CeMgAl11O19:Tb3+", "GdMgB5O10:Ce3+,Tb3+"}) {
        CAPTURE(id);
        const Spectrum s = power_of(PhosphorLibrary::builtin().find(id));
        CHECK(std::abs(refined_peak_nm(s) - 543.0) <= 1.5);  // derived 544.4 nm (manifold shift up to 2 nm)
        for (double nm : {488.0, 585.0, 620.0}) CHECK(local_max_near(s, nm, 2.0));
    }
}

TEST_CASE("phosphor thermal data: quenching at 150 degC and held ends") {
    const auto& lib = PhosphorLibrary::builtin();
    // Y2O3:Eu3+ loses about 7 % at 150 degC, LaPO4:Ce3+,Tb3+ about 3 %: thermal-quenching study of
    // lamp phosphors (shared/phosphor-facts.md).
    CHECK(thermal_factor(lib.find("YOX"), 150.0) == doctest::Approx(0.93).epsilon(1e-9));
    CHECK(thermal_factor(lib.find("LAP"), 150.0) == doctest::Approx(0.97).epsilon(1e-9));
    CHECK(thermal_factor(lib.find("YOX"), 25.0) == doctest::Approx(1.0).epsilon(1e-12));
    // Outside the listed range the nearest end value is held (data/phosphors/README.md schema; common
    // practice, no source).
    CHECK(thermal_factor(lib.find("YOX"), 250.0) == doctest::Approx(0.93).epsilon(1e-9));
    CHECK(thermal_factor(lib.find("YOX"), -20.0) == doctest::Approx(1.0).epsilon(1e-12));
    // Linear in between: half way, half the loss (common practice, no source).
    CHECK(thermal_factor(lib.find("YOX"), 87.5) == doctest::Approx(0.965).epsilon(1e-9));
}

TEST_CASE("phosphor absorption: 254/393 nm ratio of Y2O3:Eu3+") {
    // Excitation at 254 nm about 6.9 times stronger than at 393 nm: RSC Advances 2020 (shared/phosphor-facts.md).
    const Phosphor& yox = PhosphorLibrary::builtin().find("YOX");
    const auto a254 = absorption_at(yox, 253.7), a393 = absorption_at(yox, 393.0);
    REQUIRE(a254);
    REQUIRE(a393);
    CHECK(*a254 / *a393 == doctest::Approx(6.9).epsilon(0.03));
    // No value outside the listed range (data/phosphors/README.md; common practice, no source).
    CHECK_FALSE(absorption_at(yox, 150.0).has_value());
    CHECK_FALSE(absorption_at(yox, 800.0).has_value());
}

TEST_CASE("phosphor parse: a percent QE in a phosphor file is refused with the file and line") {
    const std::string text = R"(id = "Bad:QE"
use = ["lamp"]
model_note = "test"
[emission]
model = "bands"
bands = [ { peak_nm = 450.0, fwhm_nm = 50.0, weight = 1.0 } ]
source = "test"
[absorption]
points = [[220, 1.0], [500, 0.0]]
source = "test"
[quantum_efficiency]
at_254nm = 90
source = "test"
)";
    // QE is a fraction of one (data/phosphors/README.md schema; common practice, no source).
    try {
        (void)parse_phosphor(text, "mine/bad.toml");
        FAIL("QE 90 accepted");
    } catch (const InputError& e) {
        const std::string what = e.what();
        CHECK(what.find("mine/bad.toml") != std::string::npos);
        CHECK(e.line() == 12);
        CHECK(what.find("at_254nm") != std::string::npos);
    }
}

TEST_CASE("phosphor user folder: measured spectrum loads and blends") {
    // A user's phosphor file in the library schema loads beside the built-in ones and blends
    // (data/phosphors/README.md "Adding your own phosphor"; common practice, no source).
    TempDir dir;
    dir.write("mine/test_green.toml", kMeasuredPhosphorToml);
    dir.write("mine/x.csv", measured_csv());
    const PhosphorLibrary lib = PhosphorLibrary::with_folders({(dir.path / "mine").string()});
    CHECK(lib.all().size() == PhosphorLibrary::builtin().all().size() + 1);
    const Phosphor& p = lib.find("Test green:Eu2+");
    CHECK(lib.find("TG").id == "Test green:Eu2+");
    CHECK(p.emission_model == "measured");
    CHECK(p.origin == (dir.path / "mine" / "test_green.toml").string());
    REQUIRE_FALSE(p.measured_power.values.empty());
    // The built-in ones are still there (common practice, no source).
    CHECK(lib.find("YOX").id == "Y2O3:Eu3+");

    BlendInput in;
    in.name = "measured green";
    in.excitation = Excitation::led(405.0, 12.0);
    in.components.push_back({p.id, p, 1.0, std::nullopt, std::nullopt, std::nullopt, std::nullopt, std::nullopt, std::nullopt});
    const BlendResult r = evaluate_blend(in);
    REQUIRE(r.components.size() == 1);
    CHECK(r.components[0].quantum_efficiency == doctest::Approx(0.8));
    CHECK(r.quantum_yield == doctest::Approx(0.8));
    // A measured spectrum is power per nm; the blend's power spectrum must keep its shape
    // (photons = power x lambda / hc, then back: Planck-Einstein relation, from memory).
    const double at520 = value_at(r.phosphor_spectrum, 520);
    for (int nm : {470, 500, 540, 580}) {
        const double expected = std::exp(-0.5 * std::pow((nm - 520.0) / 20.0, 2));
        CAPTURE(nm);
        CHECK(value_at(r.phosphor_spectrum, nm) / at520 == doctest::Approx(expected).epsilon(1e-5));
    }
    CHECK(std::abs(refined_peak_nm(r.phosphor_spectrum) - 520.0) <= 0.5);
    // Nothing at or below the pump peak (Stokes rule; common practice, no source) and nothing
    // outside the measured range.
    CHECK(value_at(r.phosphor_spectrum, 405) == 0.0);
    CHECK(value_at(r.phosphor_spectrum, 750) == 0.0);
}

TEST_CASE("phosphor user folder: a repeated id is an error naming both files") {
    // Ids are unique across all loaded folders; the error must name both files (common practice, no source).
    TempDir dir;
    dir.write("a/x.csv", measured_csv());
    dir.write("b/x.csv", measured_csv());
    const fs::path first = dir.write("a/green_one.toml", kMeasuredPhosphorToml);
    const fs::path second = dir.write("b/green_two.toml", kMeasuredPhosphorToml);
    try {
        (void)PhosphorLibrary::with_folders({(dir.path / "a").string(), (dir.path / "b").string()});
        FAIL("duplicate id accepted");
    } catch (const InputError& e) {
        const std::string what = e.what();
        CHECK(what.find(first.string()) != std::string::npos);
        CHECK(what.find(second.string()) != std::string::npos);
        CHECK(what.find("Test green:Eu2+") != std::string::npos);
    }

    // Re-using a built-in id is refused too, naming the built-in file (common practice, no source).
    std::string clash = kMeasuredPhosphorToml;
    clash.replace(clash.find("Test green:Eu2+"), std::string("Test green:Eu2+").size(), "Y2O3:Eu3+");
    dir.write("c/x.csv", measured_csv());
    const fs::path third = dir.write("c/my_yox.toml", clash);
    try {
        (void)PhosphorLibrary::with_folders({(dir.path / "c").string()});
        FAIL("duplicate of a built-in id accepted");
    } catch (const InputError& e) {
        const std::string what = e.what();
        CHECK(what.find(third.string()) != std::string::npos);
        CHECK(what.find("data/phosphors/Y2O3_Eu.toml") != std::string::npos);
    }

    // A folder that does not exist is an error naming it (common practice, no source).
    CHECK_THROWS_WITH_AS((void)PhosphorLibrary::with_folders({(dir.path / "nope").string()}),
                         doctest::Contains((dir.path / "nope").string().c_str()), InputError);
}

namespace {

// A valid phosphor file with `emission` as its [emission] body and `thermal` appended.
std::string phosphor_text(const std::string& emission, const std::string& thermal = "") {
    return "id = \"Test:Grid\"\nuse = [\"lamp\"]\nmodel_note = \"test\"\n[emission]\n" + emission +  // lines 1-4
           "source = \"test\"\n[absorption]\npoints = [[220, 1.0], [500, 0.0]]\nsource = \"test\"\n"
           "[quantum_efficiency]\nat_254nm = 0.9\nsource = \"test\"\n" + thermal;
}

// The InputError parse_phosphor gives for `text` (fails the test when it loads).
InputError parse_error(const std::string& text) {
    try {
        (void)parse_phosphor(text, "mine/grid.toml");
    } catch (const InputError& e) {
        return e;
    }
    FAIL("the file was accepted");
    return InputError("", 0, "");
}

}  // namespace

TEST_CASE("phosphor parse: a line or band peak outside the 300-900 nm emission grid is an InputError with the file and line") {
    // The emission grid is 300-900 nm (phosphor.hpp); light beyond it would be cut off and the
    // peak listed at the grid's edge (a line at 1000 nm listed as 300 nm).
    struct Case {
        const char* emission;
        int line;
        const char* says;
    };
    const Case cases[] = {
        {"model = \"lines\"\nline_fwhm_nm = 2\nlines = [ { nm = 611, weight = 1 }, { nm = 1000, weight = 0.1 } ]\n", 7, "1000"},
        {"model = \"lines\"\nline_fwhm_nm = 2\nlines = [ { nm = 254, weight = 1 } ]\n", 7, "254"},
        {"model = \"bands\"\nbands = [ { peak_nm = 950, fwhm_nm = 40 } ]\n", 6, "950"},
        {"model = \"bands\"\nbands = [ { peak_nm = 280, fwhm_nm = 20 } ]\n", 6, "280"},
    };
    for (const auto& c : cases) {
        const std::string emission = c.emission;
        CAPTURE(emission);
        const InputError e = parse_error(phosphor_text(c.emission));
        const std::string what = e.what();
        CAPTURE(what);
        CHECK(what.find("mine/grid.toml") != std::string::npos);
        CHECK(e.line() == static_cast<std::size_t>(c.line));
        CHECK(what.find(c.says) != std::string::npos);
        CHECK(what.find("300-900 nm") != std::string::npos);
    }
    // A measured emission spectrum with no power on the grid (950-1100 nm): the file and its line.
    const TempDir dir;
    std::string ir = "wavelength_nm,power\n";
    for (int nm = 950; nm <= 1100; nm += 5) ir += std::to_string(nm) + ",1\n";
    dir.write("ir.csv", ir);
    const std::string toml = dir.write("ir.toml", phosphor_text("model = \"measured\"\nfile = \"ir.csv\"\n"));
    try {
        (void)parse_phosphor(lwtest::slurp(toml), toml);
        FAIL("a spectrum beyond the grid was accepted");
    } catch (const InputError& e) {
        const std::string what = e.what();
        CHECK(what.find("ir.csv") != std::string::npos);
        CHECK(what.find("300-900 nm") != std::string::npos);
        CHECK(e.line() == 6);
    }
    // The edges themselves are inside.
    const Phosphor p = parse_phosphor(phosphor_text("model = \"lines\"\nline_fwhm_nm = 2\nlines = [ { nm = 300 }, { nm = 900 } ]\n"), "edge.toml");
    CHECK(p.lines.size() == 2);
}

TEST_CASE("phosphor parse: a misspelt key in any table is an InputError naming the file, the line, the key and the accepted keys") {
    // Recipes already refuse unknown keys (TomlDoc::only_keys); a typo in [thermal] used to mean
    // "no quenching" without a word.
    const std::string bands = "model = \"bands\"\nbands = [ { peak_nm = 450, fwhm_nm = 50 } ]\n";
    struct Case {
        std::string text;
        int line;
        const char* key;
        const char* known;
    };
    const Case cases[] = {
        {phosphor_text(bands, "[thermal]\nquenchng = [[25, 1.0], [150, 0.8]]\n"), 15, "quenchng", "quenching"},
        {phosphor_text(bands, "[thermal]\nquenching = [[25, 1.0], [150, 0.8]]\npeak_shift_nm_per_C = 0.05\n"), 16, "peak_shift_nm_per_C",
         "peak_shift_nm_per_K"},
        {phosphor_text("model = \"bands\"\nbands = [ { peak_nm = 450, fwhm = 50 } ]\n"), 6, "fwhm", "fwhm_nm"},
        {phosphor_text("model = \"lines\"\nline_fwhm_nm = 2\nlines = [ { nm = 611, wieght = 1 } ]\n"), 7, "wieght", "weight"},
        {phosphor_text(bands + "sauce = \"x\"\n"), 7, "sauce", "model"},
        {phosphor_text(bands, "[density]\ng_per_cm = 5.0\n"), 15, "g_per_cm", "g_per_cm3"},
    };
    for (const auto& c : cases) {
        const std::string key = c.key;
        CAPTURE(key);
        const InputError e = parse_error(c.text);
        const std::string what = e.what();
        CAPTURE(what);
        CHECK(what.find("mine/grid.toml") != std::string::npos);
        CHECK(e.line() == static_cast<std::size_t>(c.line));
        CHECK(what.find(c.key) != std::string::npos);
        CHECK(what.find(c.known) != std::string::npos);
    }
}

TEST_CASE("phosphor parse: every shipped phosphor file still loads") {
    const auto& all = PhosphorLibrary::builtin().all();
    CHECK(all.size() == 27);  // the files in data/phosphors
    for (const auto& p : all) {
        CAPTURE(p.id);
        CHECK(emission_summary(p).peak_nm > kEmissionFirstNm);
        CHECK(emission_summary(p).peak_nm < kEmissionLastNm);
    }
}

TEST_CASE("phosphor library: every built-in phosphor has thermal quenching data from 25 degC with a source") {
    // Issue 11: no built-in phosphor may be treated silently as never quenching; the data start at
    // the layer model's reference temperature, 25 degC, with relative QE 1.
    for (const auto& p : PhosphorLibrary::builtin().all()) {
        CAPTURE(p.id);
        REQUIRE(p.quench_C.size() >= 2);
        CHECK(p.quench_C.front() == 25.0);
        CHECK(p.quench_rel.front() == 1.0);
        CHECK(p.quench_C.back() >= 150.0);
        CHECK_FALSE(p.thermal_source.empty());
    }
}

TEST_CASE("phosphor library: the Ce3+ garnets are two bands whose emission lands on the published chromaticity (YAG x 0.44-0.46, LuAG x 0.36-0.40)") {
    // Ranges, from memory (shared/phosphor-facts.md, "Grain and coating figures"; issue 11): the pure
    // phosphor emission of Y3Al5O12:Ce3+ lies near x 0.44-0.46, y 0.53-0.55, that of Lu3Al5O12:Ce3+
    // near x 0.36-0.40, y 0.55-0.58. The Ce3+ 5d -> 4f emission is two bands, to 2F5/2 and 2F7/2,
    // about 2000 cm-1 apart, the long-wavelength one weaker (from memory).
    struct Garnet {
        const char* id;
        double x_lo, x_hi, y_lo, y_hi;
    };
    for (const Garnet g : {Garnet{"Y3Al5O12:Ce3+", 0.44, 0.46, 0.53, 0.55}, Garnet{"Lu3Al5O12:Ce3+", 0.36, 0.40, 0.55, 0.58}}) {
        const std::string id = g.id;
        CAPTURE(id);
        const auto& p = PhosphorLibrary::builtin().find(id);
        REQUIRE(p.bands.size() == 2);
        const double split_cm = 1e7 / p.bands[0].peak_nm - 1e7 / p.bands[1].peak_nm;
        CHECK(split_cm > 1800);
        CHECK(split_cm < 2200);
        CHECK(p.bands[1].weight / p.bands[0].weight >= 0.5);
        CHECK(p.bands[1].weight / p.bands[0].weight <= 0.7);
        const auto a = assess(power_from_photons(emission_photons(p)));
        MESSAGE(id, " x ", a.xy.x, " y ", a.xy.y, ", whole emission peak ", refined_peak_nm(power_of(p)), " nm, FWHM ", fwhm_nm(power_of(p)), " nm");
        CHECK(a.xy.x >= g.x_lo);
        CHECK(a.xy.x <= g.x_hi);
        CHECK(a.xy.y >= g.y_lo);
        CHECK(a.xy.y <= g.y_hi);
    }
    // The whole YAG emission still peaks at 550-560 nm with a FWHM of 110-120 nm (from memory,
    // shared/phosphor-facts.md).
    const Spectrum yag = power_of(PhosphorLibrary::builtin().find("YAG"));
    CHECK(refined_peak_nm(yag) >= 550.0);
    CHECK(refined_peak_nm(yag) <= 560.0);
    CHECK(fwhm_nm(yag) >= 110.0);
    CHECK(fwhm_nm(yag) <= 120.0);
}
