// Machine-readable output on the command line (docs/output-schemas.md): JSON types of every
// command, CSV headers that do not depend on the result, names with invalid UTF-8 bytes, the name
// of a fitted layer, and the two efficiencies of a layer.
#include "test_support.hpp"

#include <doctest/doctest.h>
#include <nlohmann/json.hpp>
#include <sqlite3.h>

#include <fstream>
#include <sstream>
#include <string>
#include <vector>

namespace {

using lwtest::csv_cells;
using lwtest::cell;
using lwtest::quote;
using lwtest::text_lines;
using lwtest::run_cli;
using lwtest::TempDir;
using nlohmann::json;

const std::string kSource = LAMPWRIGHT_SOURCE_DIR;
const std::string kTriband = kSource + "/examples/recipes/triband_4000K.toml";
const std::string kLayer80 = kSource + "/examples/layers/module395_80um.toml";
const std::string kQcSpec = kSource + "/examples/qc/spec_F4100.toml";
const std::string kLotA = kSource + "/examples/qc/lot_A";
const std::string kReplacement = "\xEF\xBF\xBD";  // U+FFFD in UTF-8

json parse_json(const std::string& text) {
    json j;
    REQUIRE_NOTHROW(j = json::parse(text));
    return j;
}




void check_warnings_array(const json& j) {
    REQUIRE(j.contains("warnings"));
    CHECK(j["warnings"].is_array());
    for (const auto& w : j["warnings"]) CHECK(w.is_string());
}

// A design file like the 80 um example with another thickness.
std::string layer_with_thickness(const TempDir& dir, const std::string& thickness) {
    std::ifstream in(kLayer80);
    std::stringstream ss;
    ss << in.rdbuf();
    std::string t = ss.str();
    const std::string key = "thickness_um = 80";
    const auto at = t.find(key);
    REQUIRE(at != std::string::npos);
    t.replace(at, key.size(), "thickness_um = " + thickness);
    return dir.write("layer_" + thickness + ".toml", t);
}

}  // namespace

TEST_CASE("schema: assess, blend and phosphors JSON give numbers as numbers, missing values as null, and a warnings array") {
    const auto a = run_cli("assess -f json " + quote(kSource + "/tests/data/good/planck_4000K.txt"));
    REQUIRE(a.exit_code == 0);
    const json aj = parse_json(a.out);
    REQUIRE(aj.is_array());
    REQUIRE(aj.size() == 1);
    const json& s = aj[0];
    CHECK(s["name"].is_string());
    for (const char* k : {"x", "y", "u_prime", "v_prime", "cct_K", "duv", "Ra", "R9", "ler_lm_per_W", "X", "Y", "Z", "peak_nm", "purity"})
        CHECK_MESSAGE(s[k].is_number(), k);
    CHECK(s["cct_K"].get<double>() == doctest::Approx(4000).epsilon(1e-3));
    CHECK(s["reference"].is_string());
    check_warnings_array(s);

    const auto b = run_cli("blend -f json " + quote(kTriband));
    REQUIRE(b.exit_code == 0);
    const json bj = parse_json(b.out);
    for (const char* k : {"quantum_yield", "stokes_efficiency", "radiant_efficiency", "efficacy_lm_per_W_absorbed", "pump_leak_W_per_W"})
        CHECK_MESSAGE(bj[k].is_number(), k);
    REQUIRE(bj["components"].size() == 3);
    CHECK(bj["components"][0]["id"].is_string());
    CHECK(bj["components"][0]["mass_fraction"].is_number());
    check_warnings_array(bj);

    // The library as JSON: "peak_nm": 447.0, not "447.0"; a phosphor without a 254 nm QE has null.
    const auto p = run_cli("phosphors -f json");
    REQUIRE(p.exit_code == 0);
    const json pj = parse_json(p.out);
    REQUIRE(pj.is_array());
    REQUIRE(pj.size() > 5);
    bool some_null_qe = false;
    for (const auto& ph : pj) {
        CHECK(ph["id"].is_string());
        CHECK(ph["peak_nm"].is_number());
        CHECK(ph["fwhm_nm"].is_number());
        for (const char* k : {"absorption_254nm", "absorption_405nm", "qe_254nm", "qe_365_405nm", "density_g_per_cm3"})
            CHECK_MESSAGE((ph[k].is_number() || ph[k].is_null()), k);
        some_null_qe = some_null_qe || ph["qe_254nm"].is_null();
    }
    CHECK(some_null_qe);
    const auto yag = std::find_if(pj.begin(), pj.end(), [](const json& ph) { return ph["id"] == "Y3Al5O12:Ce3+"; });
    REQUIRE(yag != pj.end());
    CHECK((*yag)["qe_254nm"].is_null());
}

TEST_CASE("schema: fit JSON (one fit, front, choose, tolerance run) has booleans as booleans and a warnings array") {
    const auto f = run_cli("fit -f json " + quote(kTriband) + " --cct 4000");
    REQUIRE(f.exit_code == 0);
    const json fj = parse_json(f.out);
    CHECK(fj["feasible"].is_boolean());
    CHECK(fj["feasible"].get<bool>());
    CHECK(fj["objective_value"].is_number());
    CHECK(fj["delta_uv_prime"].is_number());
    CHECK(fj["fitted_fractions"][0]["mass_fraction"].is_number());
    CHECK(fj["constraints"][0]["satisfied"].is_boolean());
    CHECK(fj["evaluations"].is_number_integer());
    check_warnings_array(fj);
    check_warnings_array(fj["blend"]);

    const auto fr = run_cli("fit -f json " + quote(kTriband) + " --cct 4000 --front ra-efficacy --points 3");
    REQUIRE(fr.exit_code == 0);
    const json frj = parse_json(fr.out);
    REQUIRE(frj["points"].size() == 3);
    CHECK(frj["points"][0]["feasible"].is_boolean());
    CHECK(frj["points"][0]["floor"].is_number());
    CHECK(frj["solves"].is_number_integer());
    check_warnings_array(frj);

    const auto ch = run_cli("fit -f json " + quote(kSource + "/examples/recipes/multiband_5000K.toml") + " --cct 5000 --choose 3");
    REQUIRE(ch.exit_code == 0);
    const json chj = parse_json(ch.out);
    REQUIRE(chj["subsets"].size() == 4);
    CHECK(chj["subsets"][0]["feasible"].is_boolean());
    CHECK(chj["subsets"][0]["best"].is_boolean());
    check_warnings_array(chj);

    const auto t = run_cli("fit -f json " + quote(kTriband) + " --cct 4000 --tolerance-run --qe-sigma 0.01 --draws 200");
    REQUIRE(t.exit_code == 0);
    const json tj = parse_json(t.out);
    CHECK(tj["tolerance"]["draws"] == 200);
    CHECK(tj["tolerance"]["inside_share"].is_number());
    CHECK(tj["tolerance"]["weighing_relative"].is_boolean());
}

TEST_CASE("schema: layer and layer-fit JSON carry each loading and the thickness, booleans as booleans, warnings with the caution") {
    const auto l = run_cli("layer -f json " + quote(kLayer80));
    REQUIRE(l.exit_code == 0);
    const json lj = parse_json(l.out);
    CHECK(lj["thickness_um"] == 80.0);
    REQUIRE(lj["components"].size() == 3);
    CHECK(lj["components"][0]["id"] == "BaMgAl10O17:Eu2+");
    CHECK(lj["components"][0]["loading"].get<double>() == doctest::Approx(0.12));
    // The loadings of examples/layers/module395_80um.toml.
    CHECK(lj["components"][1]["loading"].get<double>() == doctest::Approx(0.0374));
    CHECK(lj["components"][2]["loading"].get<double>() == doctest::Approx(0.0167));
    for (const char* k : {"temperature_C", "pump_leak_fraction", "converted_efficiency", "total_efficiency", "pump_power_W", "shift_macadam_steps",
                          "package_loss_W", "photons_package"})
        CHECK_MESSAGE(lj[k].is_number(), k);
    CHECK(lj["method"] == "two-flux");
    CHECK(lj["monte_carlo_photons"].is_null());
    check_warnings_array(lj);
    // The photobiological caution printed on stderr is in the JSON's warnings too.
    REQUIRE(lj["caution"].is_string());
    bool caution_in_warnings = false;
    for (const auto& w : lj["warnings"]) caution_in_warnings = caution_in_warnings || w.get<std::string>().find("IEC 62471") != std::string::npos;
    CHECK(caution_in_warnings);

    const auto f = run_cli("fit -f json " + quote(kLayer80) + " --cct 4000 --fit-thickness");
    REQUIRE(f.exit_code == 0);
    const json fj = parse_json(f.out);
    CHECK(fj["fit_feasible"].is_boolean());
    CHECK(fj["fit_feasible"].get<bool>());
    CHECK(fj["fit_delta_uv_prime"].is_number());
    CHECK(fj["fit_thickness_um"].is_number());
    CHECK(fj["thickness_um"].get<double>() == doctest::Approx(fj["fit_thickness_um"].get<double>()));
    for (const auto& c : fj["components"]) {
        REQUIRE(c["loading"].is_number());
        CHECK(c["loading"].get<double>() == doctest::Approx(fj["fit_loadings"][c["id"].get<std::string>()].get<double>()));
    }
    check_warnings_array(fj);
}

TEST_CASE("schema: qc and history JSON have booleans, numbers and a warnings array") {
    const TempDir dir;
    const std::string db = dir.file("h.db");
    const auto q = run_cli("qc -f json " + quote(kQcSpec) + " " + quote(kLotA) + " --db " + quote(db));
    REQUIRE_FALSE(q.crashed);
    REQUIRE((q.exit_code & ~4) == 0);  // 4: some lamps failed, which is a result, not an error
    const json qj = parse_json(q.out);
    CHECK(qj["count"].is_number_integer());
    CHECK(qj["pass_rate"].is_number());
    REQUIRE(qj["lamps"].size() > 0);
    CHECK(qj["lamps"][0]["pass"].is_boolean());
    CHECK(qj["lamps"][0]["inside_region"].is_boolean());
    CHECK(qj["lamps"][0]["steps"].is_number());
    CHECK(qj["lamps"][0]["Ra"].is_number());
    check_warnings_array(qj["lamps"][0]);
    check_warnings_array(qj);

    const auto h = run_cli("history -f json --db " + quote(db));
    REQUIRE(h.exit_code == 0);
    const json hj = parse_json(h.out);
    REQUIRE(hj["lots"].size() == 1);
    CHECK(hj["lots"][0]["lot_id"].is_string());
    CHECK(hj["lots"][0]["lamps"] == qj["count"]);
    CHECK(hj["lots"][0]["pass_rate"].is_number());
    CHECK(hj["lots"][0]["centroid_steps"].is_number());
    check_warnings_array(hj);
}

TEST_CASE("schema: an infeasible blend fit prints the same CSV header as a feasible one, with true/false and empty cells") {
    for (const std::string extra : {"", " --tolerance-run --qe-sigma 0.01 --draws 100"}) {
        CAPTURE(extra);
        const auto ok = run_cli("fit -f csv " + quote(kTriband) + " --cct 4000" + extra);
        const auto bad = run_cli("fit -f csv " + quote(kTriband) + " --xy 0.2,0.6" + extra);  // outside the blend's triangle
        REQUIRE(ok.exit_code == 0);
        REQUIRE(bad.exit_code == 1);
        const auto okl = text_lines(ok.out), badl = text_lines(bad.out);
        REQUIRE(okl.size() == 2);
        REQUIRE(badl.size() == 2);
        CHECK(badl[0] == okl[0]);
        const auto header = csv_cells(okl[0]);
        CHECK(csv_cells(badl[1]).size() == header.size());
        CHECK(csv_cells(okl[1]).size() == header.size());
        for (const char* k : {"c1_id", "c2_id", "c3_id", "c3_mass_fraction", "c3_stokes_efficiency"})
            CHECK_MESSAGE(std::find(header.begin(), header.end(), k) != header.end(), k);
        CHECK(cell(header, csv_cells(okl[1]), "fit_feasible") == "true");
        CHECK(cell(header, csv_cells(badl[1]), "fit_feasible") == "false");
        if (!extra.empty()) {
            CHECK(std::find(header.begin(), header.end(), "tol_inside_share") != header.end());
            CHECK(cell(header, csv_cells(badl[1]), "tol_inside_share").empty());  // no tolerance run of an infeasible fit
            CHECK_FALSE(cell(header, csv_cells(okl[1]), "tol_inside_share").empty());
        }
    }
    // Layer fits and fronts write booleans the same way.
    const auto lf = run_cli("fit -f csv " + quote(kLayer80) + " --cct 4000");
    REQUIRE(lf.exit_code == 0);
    const auto lfl = text_lines(lf.out);
    REQUIRE(lfl.size() == 2);
    CHECK(cell(csv_cells(lfl[0]), csv_cells(lfl[1]), "fit_feasible") == "true");
    const auto fr = run_cli("fit -f csv " + quote(kTriband) + " --cct 4000 --front ra-efficacy --points 3");
    REQUIRE(fr.exit_code == 0);
    const auto frl = text_lines(fr.out);
    REQUIRE(frl.size() == 4);
    CHECK(cell(csv_cells(frl[0]), csv_cells(frl[1]), "feasible") == "true");
    // compare: a blend has no pump leak fraction: an empty cell, not "-".
    const auto cmp = run_cli("compare -f csv " + quote(kLayer80) + " " + quote(kTriband));
    REQUIRE(cmp.exit_code == 0);
    const auto cl = text_lines(cmp.out);
    REQUIRE(cl.size() == 3);
    CHECK(cell(csv_cells(cl[0]), csv_cells(cl[2]), "kind") == "blend");
    CHECK(cell(csv_cells(cl[0]), csv_cells(cl[2]), "pump_leak_fraction").empty());
    CHECK(std::stod(cell(csv_cells(cl[0]), csv_cells(cl[1]), "pump_leak_fraction")) > 0);
}

TEST_CASE("utf8: a header byte 0xFF and a file name byte 0xFE pass assess, qc --record and history as JSON, shown as U+FFFD") {
    const TempDir dir;
    // Rows of a real-looking spectrum (the demo tube), written under two names.
    std::ifstream in(kSource + "/examples/spectra/triband_tube_sample.csv");
    std::string rows, line;
    while (std::getline(in, line))
        if (!line.empty() && line[0] >= '0' && line[0] <= '9') rows += line + "\n";
    REQUIRE(rows.size() > 1000);
    std::string two_columns;
    {
        std::istringstream r(rows);
        while (std::getline(r, line)) two_columns += line + "," + line.substr(line.find(',') + 1) + "\n";
    }
    const std::string folder = (dir.path / "lot").string();
    dir.write("lot/multi.csv", "wavelength_nm,lamp\xFF" "A,lampB\n" + two_columns);
    dir.write("lot/tube\xFE.csv", "wavelength_nm,value\n" + rows);

    const auto a = run_cli("assess -f json " + quote(folder + "/multi.csv") + " " + quote(folder + "/tube\xFE.csv"));
    CHECK(a.exit_code == 0);
    const json aj = parse_json(a.out);
    REQUIRE(aj.size() == 3);
    CHECK(aj[0]["name"] == "lamp" + kReplacement + "A");
    CHECK(aj[1]["name"] == "lampB");
    CHECK(aj[2]["name"] == "tube" + kReplacement);
    CHECK(aj[0]["Ra"].is_number());

    const std::string db = dir.file("h.db");
    const auto q = run_cli("qc -f json --record --db " + quote(db) + " " + quote(kQcSpec) + " " + quote(folder));
    REQUIRE_FALSE(q.crashed);
    CHECK((q.exit_code & ~4) == 0);
    const json qj = parse_json(q.out);
    REQUIRE(qj["lamps"].size() == 3);
    std::vector<std::string> names, files;
    for (const auto& l : qj["lamps"]) names.push_back(l["name"]), files.push_back(l["file"]);
    CHECK(std::find(names.begin(), names.end(), "lamp" + kReplacement + "A") != names.end());
    CHECK(std::find(names.begin(), names.end(), "tube" + kReplacement) != names.end());
    CHECK(std::find(files.begin(), files.end(), folder + "/tube" + kReplacement + ".csv") != files.end());
    CHECK(q.err.find("recorded in") != std::string::npos);

    // CSV is valid UTF-8 as well.
    const auto qc_csv = run_cli("qc -f csv " + quote(kQcSpec) + " " + quote(folder));
    CHECK(qc_csv.out.find("lamp" + kReplacement + "A") != std::string::npos);
    CHECK(qc_csv.out.find("\xFF") == std::string::npos);

    const auto h = run_cli("history -f json --db " + quote(db));
    REQUIRE(h.exit_code == 0);
    const json hj = parse_json(h.out);
    REQUIRE(hj["lots"].size() == 1);
    CHECK(hj["lots"][0]["lamps"] == 3);

    // A database that already holds bad bytes (written before names were cleaned) still lists as JSON.
    sqlite3* handle = nullptr;
    REQUIRE(sqlite3_open(db.c_str(), &handle) == SQLITE_OK);
    CHECK(sqlite3_exec(handle, "UPDATE lots SET spec_path = CAST(X'73706563FF2E746F6D6C' AS TEXT)", nullptr, nullptr, nullptr) == SQLITE_OK);
    sqlite3_close(handle);
    const auto h2 = run_cli("history -f json --db " + quote(db));
    REQUIRE(h2.exit_code == 0);
    const json h2j = parse_json(h2.out);
    CHECK(h2j["lots"][0]["spec_path"] == "spec" + kReplacement + ".toml");
}

TEST_CASE("layer fit: the fitted design is named '<name> (fitted)' in text, JSON and the written design, as blend fits are") {
    const TempDir dir;
    const std::string out = dir.file("fitted.toml");
    const auto f = run_cli("fit -f json " + quote(kLayer80) + " --cct 4000 --recipe-out " + quote(out));
    REQUIRE(f.exit_code == 0);
    const json fj = parse_json(f.out);
    CHECK(fj["name"] == "395 nm module, 80 um layer (fitted)");
    CHECK(lwtest::slurp(out).find("name = \"395 nm module, 80 um layer (fitted)\"") != std::string::npos);
    const auto t = run_cli("fit " + quote(kLayer80) + " --cct 4000");
    REQUIRE(t.exit_code == 0);
    CHECK(t.out.find("Fit of layer '395 nm module, 80 um layer'") != std::string::npos);
    CHECK(t.out.find("\n395 nm module, 80 um layer (fitted)   (LED pump") != std::string::npos);
    // The written design loads, under its new name.
    const auto l = run_cli("layer -f json " + quote(out));
    REQUIRE(l.exit_code == 0);
    CHECK(parse_json(l.out)["name"] == "395 nm module, 80 um layer (fitted)");
}

TEST_CASE("layer: a 0.15 um layer leaking 99.8 % of the pump reports converted efficiency near 0 and total near 1, in text, CSV and JSON") {
    const TempDir dir;
    const std::string thin = layer_with_thickness(dir, "0.15");
    const auto j = run_cli("layer -f json " + quote(thin));
    REQUIRE(j.exit_code == 0);
    const json lj = parse_json(j.out);
    CHECK(lj["pump_leak_fraction"].get<double>() > 0.995);
    const double converted = lj["converted_efficiency"], total = lj["total_efficiency"];
    // converted = converted light / pump; total = (converted + leaked pump) / pump, both per W of pump.
    CHECK(converted == doctest::Approx(lj["converted_W"].get<double>() / lj["pump_power_W"].get<double>()).epsilon(1e-5));
    CHECK(total == doctest::Approx((lj["converted_W"].get<double>() + lj["leaked_pump_W"].get<double>()) / lj["pump_power_W"].get<double>()).epsilon(1e-5));
    CHECK(converted < 0.01);
    CHECK(total > 0.99);
    CHECK_FALSE(lj.contains("conversion_efficiency"));

    const auto c = run_cli("layer -f csv " + quote(thin));
    REQUIRE(c.exit_code == 0);
    const auto cl = text_lines(c.out);
    REQUIRE(cl.size() == 2);
    const auto header = csv_cells(cl[0]), row = csv_cells(cl[1]);
    CHECK(std::stod(cell(header, row, "converted_efficiency")) < 0.01);
    CHECK(std::stod(cell(header, row, "total_efficiency")) > 0.99);

    const auto t = run_cli("layer " + quote(thin));
    REQUIRE(t.exit_code == 0);
    // Total 0.993, not 0.999: the top surface reflects ((1.41 - 1) / 2.41)^2 = 2.9 % of the beam
    // back (Fresnel, normal incidence) and the package reflector (0.9) absorbs part of it.
    CHECK(t.out.find("efficiency: converted 0.002 W/W, total 0.993 W/W (leaked pump included)") != std::string::npos);

    // A thick layer: the two differ by the leaked pump alone.
    const auto k = run_cli("layer -f json " + quote(kLayer80));
    REQUIRE(k.exit_code == 0);
    const json kj = parse_json(k.out);
    CHECK(kj["total_efficiency"].get<double>() - kj["converted_efficiency"].get<double>() ==
          doctest::Approx(kj["leaked_pump_W"].get<double>() / kj["pump_power_W"].get<double>()).epsilon(1e-4));
}
