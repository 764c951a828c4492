// CIE 224 / TM-30 on the command line: assess text, CSV (with --ces) and JSON, --cvg, and Rf, Rg
// appended to blend, layer and compare rows (docs/output-schemas.md).
#include "test_support.hpp"

#include "lampwright/colour/cie_tables.hpp"

#include <doctest/doctest.h>
#include <nlohmann/json.hpp>

#include <fmt/format.h>

#include <algorithm>
#include <sstream>
#include <string>
#include <vector>

namespace {

using lwtest::cell;
using lwtest::csv_cells;
using lwtest::text_lines;
using lwtest::quote;
using lwtest::run_cli;
using lwtest::TempDir;

const std::string kSource = LAMPWRIGHT_SOURCE_DIR;



// CIE FL2 (CIE 15:2004 Table T.6, the embedded 5 nm table) as a one-spectrum file.
std::string write_fl2(const TempDir& dir) {
    const auto t = lampwright::cie_fl_table(2);
    std::string text = "wavelength_nm,FL2\n";
    for (std::size_t i = 0; i < t.values.size(); ++i) text += fmt::format("{},{}\n", t.wavelengths_nm[i], t.values[i]);
    return dir.write("fl2.csv", text);
}

}  // namespace

TEST_CASE("cli tm30: assess prints Rf and Rg in text, the TM-30 columns in CSV (Rf_ces with --ces) and JSON") {
    const TempDir dir;
    const std::string fl2 = write_fl2(dir);
    // FL2: CIE 224 calculator Rf 70.1, TM-30-18 calculator Rg 86 (from memory).
    const auto text = run_cli("assess " + quote(fl2));
    REQUIRE(text.exit_code == 0);  // exit status as assess --help states; common practice, no source
    CHECK(text.out.find("colour fidelity (CIE 224)  Rf 70.") != std::string::npos);  // CIE 224 calculator, from memory
    CHECK(text.out.find("reference: mix") != std::string::npos);  // CIE 224:2017, 4.3: 4000-5000 K
    CHECK(text.out.find("10°, 5 nm") != std::string::npos);       // the 5 nm table computed at 5 nm (CIE 224:2017, 4.1)
    // The same spectrum at 1 nm (Sprague-resampled, CIE 167:2005) is computed at 1 nm.
    {
        const lampwright::Spectrum s1 = lampwright::cie_fl_illuminant(2);
        std::string t1 = "wavelength_nm,FL2\n";
        for (std::size_t i = 0; i < s1.values.size(); ++i) t1 += fmt::format("{},{:.17g}\n", s1.first_nm + static_cast<int>(i), s1.values[i]);
        const auto one = run_cli("assess " + quote(dir.write("fl2_1nm.csv", t1)));
        REQUIRE(one.exit_code == 0);
        CHECK(one.out.find("10°, 1 nm") != std::string::npos);
    }

    const auto csv = run_cli("assess --format csv --ces " + quote(fl2));
    REQUIRE(csv.exit_code == 0);  // common practice, no source
    const auto rows = text_lines(csv.out);
    REQUIRE(rows.size() == 2);  // header and one row; common practice, no source
    const auto h = csv_cells(rows[0]), v = csv_cells(rows[1]);
    CHECK(h.size() == v.size());  // RFC 4180 rows of equal length
    // docs/output-schemas.md: the assessment columns keep their places; the new ones follow.
    CHECK(h[7] == "Ra");
    const auto at = [&h](const std::string& n) { return std::find(h.begin(), h.end(), n) - h.begin(); };
    CHECK(at("efficacy_lm_per_W") + 1 == at("Rf"));  // docs/output-schemas.md order
    CHECK(at("Rf") + 1 == at("Rg"));
    CHECK(at("Rf_h1") + 16 == at("Rcs_h1"));
    CHECK(at("Rcs_h1") + 16 == at("Rhs_h1"));
    CHECK(at("Rhs_h16") + 1 == at("x10"));
    CHECK(h.back() == "Rf_ces99");
    CHECK(std::abs(std::stod(cell(h, v, "Rf")) - 70.1) <= 0.1);  // CIE 224 calculator, from memory
    CHECK(std::abs(std::stod(cell(h, v, "Rg")) - 86) <= 0.5);    // TM-30-18 calculator, from memory
    CHECK(cell(h, v, "fidelity_reference") == "mix");             // CIE 224:2017, 4.3
    CHECK(cell(h, v, "fidelity_interval_nm") == "5");              // a 5 nm table, computed at 5 nm (CIE 224:2017, 4.1; README)
    // x10, y10 of FL2 with the 10-degree observer lie close to its 2-degree x, y (0.3721, 0.3751,
    // CIE 15:2004 Table T.8); common practice, no source, for the size of the difference.
    CHECK(std::abs(std::stod(cell(h, v, "x10")) - 0.3721) <= 0.01);
    CHECK(std::abs(std::stod(cell(h, v, "y10")) - 0.3751) <= 0.01);
    const auto no_ces = run_cli("assess --format csv " + quote(fl2));
    CHECK(csv_cells(text_lines(no_ces.out)[0]).size() + 99 == h.size());  // --ces adds 99 columns

    const auto js = run_cli("assess --format json " + quote(fl2));
    REQUIRE(js.exit_code == 0);  // common practice, no source
    const auto j = nlohmann::ordered_json::parse(js.out).at(0);
    CHECK(j["Rf"].is_number());
    CHECK(j["Rcs_h1"].is_number());
    CHECK(j["fidelity_reference"] == "mix");
    CHECK(j["fidelity_interval_nm"] == 5);
    CHECK(!j.contains("Rf_ces01"));  // only with --ces
    CHECK(std::prev(j.end()).key() == "warnings");  // docs/output-schemas.md: warnings last
}

TEST_CASE("cli tm30: assess --cvg writes a stamped SVG with Rf, Rg, CCT and Duv; without a CCT it is refused") {
    const TempDir dir;
    const std::string fl2 = write_fl2(dir);
    const std::string svg = dir.file("cvg.svg");
    const auto r = run_cli("assess --cvg " + quote(svg) + " " + quote(fl2));
    REQUIRE(r.exit_code == 0);  // common practice, no source
    const std::string doc = lwtest::slurp(svg);
    CHECK(doc.rfind("<svg", 0) == 0);
    CHECK(doc.find("lampwright") != std::string::npos);   // provenance stamp (report/provenance.hpp)
    CHECK(doc.find("Rf 70") != std::string::npos);         // CIE 224 calculator, from memory
    CHECK(doc.find("Rg 86") != std::string::npos);         // TM-30-18 calculator, from memory
    CHECK(doc.find("CCT 422") != std::string::npos);       // TM-30-18 calculator 4225 K, from memory
    CHECK(doc.find("Duv +0.001") != std::string::npos);    // TM-30-18 calculator 0.0019, from memory (0.0018 here)
    // Far from the locus: a narrow green band has no CCT, so there is no graphic to draw.
    std::string green = "wavelength_nm,green\n";
    for (int nm = 380; nm <= 780; nm += 5) green += fmt::format("{},{}\n", nm, std::abs(nm - 530) <= 10 ? 1.0 : 0.0);
    const std::string gfile = dir.write("green.csv", green);
    const std::string svg2 = dir.file("none.svg");
    const auto g = run_cli("assess --cvg " + quote(svg2) + " " + quote(gfile));
    CHECK(g.exit_code == 1);  // bad input (assess --help)
    CHECK(g.err.find("--cvg") != std::string::npos);
    CHECK_FALSE(lwtest::file_exists(svg2));  // nothing half-written
}

TEST_CASE("cli tm30: blend, layer and compare append Rf and Rg to their CSV rows") {
    // docs/output-schemas.md: new fields at the end of a row; Rf within 0-100 (CIE 224:2017 eq. 10).
    const std::string recipe = kSource + "/examples/recipes/triband_4000K.toml";
    const std::string layer = kSource + "/examples/layers/module395_80um.toml";
    for (const std::string& args : {"blend --format csv " + quote(recipe), "layer --format csv " + quote(layer), "compare --format csv " + quote(recipe)}) {
        CAPTURE(args);
        const auto r = run_cli(args);
        REQUIRE(r.exit_code == 0);  // common practice, no source
        const auto rows = text_lines(r.out);
        REQUIRE(rows.size() >= 2);
        auto h = csv_cells(rows[0]);
        const auto v = csv_cells(rows[1]);
        // layer: the issue-14 package columns come after Rf, Rg (appended later).
        if (args.rfind("layer", 0) == 0) {
            const std::vector<std::string> later{"junction_temperature_C", "pump_peak_nm", "pump_fwhm_nm", "top", "chip_area_fraction",
                                                 "chip_loss_W", "photons_chip", "uv_share", "blue_share", "pump_peak_nm_25C"};
            REQUIRE(h.size() >= later.size() + 2);
            CHECK(std::vector<std::string>(h.end() - static_cast<std::ptrdiff_t>(later.size()), h.end()) == later);
            h.resize(h.size() - later.size());
        }
        REQUIRE(h.size() >= 2);
        // compare: after its 12 columns of before issue 13, and before the layer columns of issue 14.
        const std::size_t at = args.rfind("compare", 0) == 0 ? 12 : h.size() - 2;
        REQUIRE(h.size() > at + 1);
        CHECK(h[at] == "Rf");
        CHECK(h[at + 1] == "Rg");
        const double rf = std::stod(v[at]);
        CHECK(rf > 0);
        CHECK(rf <= 100.001);  // CIE 224:2017 eq. 10: Rf <= 10 ln(e^10 + 1)
    }
    const auto j = run_cli("blend --format json " + quote(recipe));
    const auto bj = nlohmann::ordered_json::parse(j.out);
    CHECK(bj["Rf"].is_number());
    CHECK(std::prev(bj.end()).key() == "Rg");  // appended last
}

TEST_CASE("cli tm30: fit --maximize rf and --min-rf on a blend; --min-rf is refused for an LED layer design") {
    // fit --help: --min-rf applies to blend recipes; a floor the fit meets is listed as met.
    const std::string recipe = kSource + "/examples/recipes/multiband_5000K.toml";
    const auto r = run_cli("fit " + quote(recipe) + " --cct 5000 --maximize rf");
    REQUIRE(r.exit_code == 0);  // common practice, no source
    CHECK(r.out.find("maximum Rf (CIE 224)") != std::string::npos);
    CHECK(r.out.find("Rf, Rg") != std::string::npos);
    const auto m = run_cli("fit " + quote(recipe) + " --cct 5000 --min-rf 70 --format json");
    REQUIRE(m.exit_code == 0);
    const auto j = nlohmann::ordered_json::parse(m.out);
    bool met = false;
    for (const auto& c : j["constraints"]) met |= c["name"] == "Rf >=" && c["satisfied"] == true;
    CHECK(met);
    const auto bad = run_cli("fit " + quote(recipe) + " --cct 5000 --min-rf 101");
    CHECK(bad.exit_code == 2);  // usage error: CIE 224 Rf lies in 0-100
    const auto layer = run_cli("fit " + quote(kSource + "/examples/layers/module395_80um.toml") + " --cct 5000 --min-rf 70");
    CHECK(layer.exit_code == 2);  // usage error
    CHECK(layer.err.find("--min-rf") != std::string::npos);
}

TEST_CASE("cli tm30: fit --min-rg, --max-rg and --rcs-h1 are constraints in the list; bad ranges are usage errors") {
    // Exit 2 for a usage error and 0 for a met fit (common practice, no source); the names are
    // the ones docs/output-schemas.md lists for `constraints`.
    const std::string recipe = kSource + "/examples/recipes/multiband_5000K.toml";
    const auto m = run_cli("fit " + quote(recipe) + " --cct 5000 --maximize efficacy --min-rg 60 --max-rg 140 --rcs-h1 -60,60 --format json");
    REQUIRE(m.exit_code == 0);
    const auto j = nlohmann::ordered_json::parse(m.out);
    int met = 0;
    for (const auto& c : j["constraints"])
        for (const char* n : {"Rg >=", "Rg <=", "Rcs,h1 >=", "Rcs,h1 <="}) met += c["name"] == n && c["satisfied"] == true;
    CHECK(met == 4);
    for (const std::string bad : {"--min-rg 0", "--max-rg 201", "--min-rg 110 --max-rg 100", "--rcs-h1 10,-10", "--rcs-h1 -101,5",
                                  "--rcs-h1 5", "--rcs-h1 a,b"}) {
        const auto b = run_cli("fit " + quote(recipe) + " --cct 5000 " + bad);
        CHECK_MESSAGE(b.exit_code == 2, bad);
        CHECK_MESSAGE(b.err.find(bad.substr(0, bad.find(' '))) != std::string::npos, bad);
    }
    const auto layer = run_cli("fit " + quote(kSource + "/examples/layers/module395_80um.toml") + " --cct 5000 --rcs-h1 -5,5");
    CHECK(layer.exit_code == 2);
    CHECK(layer.err.find("--rcs-h1") != std::string::npos);
}
