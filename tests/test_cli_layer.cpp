// The `lampwright layer`, `fit` (on a layer design) and `compare` commands on layers, run as the user
// runs them (LAMPWRIGHT_CLI): the warning for a phosphor without quenching data.
#include "test_support.hpp"

#include <doctest/doctest.h>
#include <nlohmann/json.hpp>

#include <string>

namespace {

using lwtest::run_cli_args;
using lwtest::TempDir;

const std::string kFixtures = LAMPWRIGHT_SOURCE_DIR "/tests/data/phosphors_thermal";
const std::string kWarning = "no quenching data for TestGreen:NoThermal: treated as constant with temperature";

// The shipped 80 um module with its green phosphor replaced by a fixture phosphor, at `t_C`.
std::string design(const TempDir& dir, const std::string& green_id, double t_C) {
    return dir.write("design.toml", "name = \"thermal test\"\n[pump]\npeak_nm = 395\nfwhm_nm = 12\n[layer]\nthickness_um = 80\n"
                                    "[operating]\ntemperature_C = " + std::to_string(t_C) + "\n"
                                    "[[component]]\nphosphor = \"BaMgAl10O17:Eu2+\"\nloading = 0.12\n"
                                    "[[component]]\nphosphor = \"" + green_id + "\"\nloading = 0.06\n"
                                    "[[component]]\nphosphor = \"CaAlSiN3:Eu2+\"\nloading = 0.047\n");
}

bool json_has_warning(const std::string& out, const std::string& text) {
    const auto j = nlohmann::json::parse(out);
    for (const auto& w : j.at("warnings"))
        if (w.get<std::string>() == text) return true;
    return false;
}

}  // namespace

TEST_CASE("cli layer: a phosphor without quenching data at 100 degC warns in text, in JSON warnings and on stderr") {
    const TempDir dir;
    const std::string d = design(dir, "TestGreen:NoThermal", 100);
    const auto text = run_cli_args({"layer", d, "--phosphors", kFixtures});
    REQUIRE(text.exit_code == 0);
    CHECK(text.out.find(kWarning) != std::string::npos);
    CHECK(text.err.find(kWarning) != std::string::npos);
    const auto json = run_cli_args({"layer", d, "--phosphors", kFixtures, "-f", "json"});
    REQUIRE(json.exit_code == 0);
    CHECK(json_has_warning(json.out, kWarning));
    CHECK(json.err.find(kWarning) != std::string::npos);
}

TEST_CASE("cli layer: at the reference temperature 25 degC, and for a phosphor with quenching data, no quenching warning") {
    const TempDir dir;
    for (const auto& [id, t] : {std::pair<std::string, double>{"TestGreen:NoThermal", 25.0}, {"TestGreen:WithThermal", 100.0}}) {
        CAPTURE(id);
        const std::string d = design(dir, id, t);
        const auto text = run_cli_args({"layer", d, "--phosphors", kFixtures});
        REQUIRE(text.exit_code == 0);
        CHECK(text.out.find("no quenching data") == std::string::npos);
        CHECK(text.err.find("no quenching data") == std::string::npos);
        const auto json = run_cli_args({"layer", d, "--phosphors", kFixtures, "-f", "json"});
        REQUIRE(json.exit_code == 0);
        CHECK(json.out.find("no quenching data") == std::string::npos);
    }
}

TEST_CASE("cli fit on a layer design: a phosphor without quenching data at 100 degC warns in text, in JSON warnings and on stderr") {
    const TempDir dir;
    const std::string d = design(dir, "TestGreen:NoThermal", 100);
    const auto text = run_cli_args({"fit", d, "--cct", "5000", "--phosphors", kFixtures});
    REQUIRE(text.exit_code == 0);
    CHECK(text.out.find(kWarning) != std::string::npos);
    CHECK(text.err.find(kWarning) != std::string::npos);
    const auto json = run_cli_args({"fit", d, "--cct", "5000", "--phosphors", kFixtures, "-f", "json"});
    REQUIRE(json.exit_code == 0);
    CHECK(json_has_warning(json.out, kWarning));
    CHECK(json.err.find(kWarning) != std::string::npos);
}

TEST_CASE("cli compare: a layer whose phosphor lacks quenching data at 100 degC warns in the table and on stderr") {
    const TempDir dir;
    const auto r = run_cli_args({"compare", design(dir, "TestGreen:NoThermal", 100), "--phosphors", kFixtures});
    REQUIRE(r.exit_code == 0);
    CHECK(r.out.find(kWarning) != std::string::npos);
    CHECK(r.err.find(kWarning) != std::string::npos);
    const auto csv = run_cli_args({"compare", design(dir, "TestGreen:NoThermal", 100), "--phosphors", kFixtures, "-f", "csv"});
    REQUIRE(csv.exit_code == 0);
    CHECK(csv.err.find(kWarning) != std::string::npos);  // CSV stays a table; the note goes to stderr
    const auto quiet = run_cli_args({"compare", design(dir, "TestGreen:WithThermal", 100), "--phosphors", kFixtures});
    CHECK(quiet.out.find("no quenching data") == std::string::npos);
    CHECK(quiet.err.find("no quenching data") == std::string::npos);
}

TEST_CASE("cli layer: --method monte-carlo is reproducible for a seed, says so in text and JSON, and --photons needs it") {
    // Seeded photon Monte Carlo (README "LED layer physics", item 4; common practice, no source).
    const std::string d = LAMPWRIGHT_SOURCE_DIR "/examples/layers/module395_80um.toml";
    const auto a = run_cli_args({"layer", d, "--method", "monte-carlo", "--photons", "5000", "--seed", "4", "-f", "json"});
    const auto b = run_cli_args({"layer", d, "--method", "monte-carlo", "--photons", "5000", "--seed", "4", "-f", "json"});
    REQUIRE(a.exit_code == 0);
    CHECK(a.out == b.out);
    const auto j = nlohmann::json::parse(a.out);
    CHECK(j.at("method") == "monte-carlo");
    CHECK(j.at("monte_carlo_photons") == 5000);
    // Photon balance of the Monte Carlo: exact counts, printed to 6 decimals.
    CHECK(j.at("photons_leaked").get<double>() + j.at("photons_escaping").get<double>() + j.at("photons_lost").get<double>() +
              j.at("photons_package").get<double>() ==
          doctest::Approx(1.0).epsilon(1e-5));
    const auto t = run_cli_args({"layer", d, "--method", "monte-carlo", "--photons", "5000"});
    CHECK(t.out.find("transport: photon Monte Carlo, 5000 photons, seed 1") != std::string::npos);
    CHECK(run_cli_args({"layer", d, "--photons", "5000"}).exit_code != 0);
    CHECK(run_cli_args({"layer", d, "--method", "exact"}).exit_code != 0);
}

TEST_CASE("cli layer: the removed path factors are refused naming the file, the line and the reason") {
    const TempDir dir;
    const std::string path = dir.write("old.toml", "name = 'x'\n[pump]\npeak_nm = 395\nfwhm_nm = 12\n[layer]\nthickness_um = 80\n"
                                                   "pump_path_factor = 1.5\n[[component]]\nphosphor = 'BAM'\nloading = 0.12\n");
    const auto r = run_cli_args({"layer", path});
    CHECK(r.exit_code != 0);
    CHECK(r.err.find(path) != std::string::npos);
    CHECK(r.err.find(":7") != std::string::npos);
    CHECK(r.err.find("pump_path_factor") != std::string::npos);
    CHECK(r.err.find("scattering") != std::string::npos);
}

TEST_CASE("cli layer: the blue example's JSON carries the package fields, and a 480 nm pump is refused naming file and line") {
    // docs/output-schemas.md (issue 14 fields); the project's bad-input contract (common practice, no source).
    const std::string blue = LAMPWRIGHT_SOURCE_DIR "/examples/layers/module450_4000K.toml";
    const auto json = run_cli_args({"layer", blue, "-f", "json"});
    REQUIRE(json.exit_code == 0);
    const auto j = nlohmann::json::parse(json.out);
    CHECK(j.at("top") == "flat");
    CHECK(j.at("junction_temperature_C").get<double>() == doctest::Approx(95));
    CHECK(j.at("pump_peak_nm_25C").get<double>() == doctest::Approx(450));
    CHECK(j.at("chip_loss_W").get<double>() > 0);
    CHECK(j.at("chip_loss_W").get<double>() < j.at("package_loss_W").get<double>());
    CHECK(j.at("blue_share").get<double>() > j.at("uv_share").get<double>());
    CHECK(json.err.find("365-405 nm excitation only") != std::string::npos);  // the QE data's range, said
    const TempDir dir;
    const std::string bad = dir.write("d.toml", "name = 'x'\n[pump]\npeak_nm = 480\nfwhm_nm = 20\n[layer]\nthickness_um = 50\n"
                                                "[[component]]\nphosphor = 'CASN'\nloading = 0.05\n");
    const auto r = run_cli_args({"layer", bad});
    CHECK(r.exit_code != 0);
    CHECK(r.err.find(bad + ":3") != std::string::npos);
    CHECK(r.err.find("360-470 nm") != std::string::npos);
    CHECK(r.out.empty());
}

TEST_CASE("cli compare: layer designs show pump, thickness, leak and the colour shift; --format json and csv agree with layer") {
    // The compare figures of a layer are those `layer` reports for the same design (one model,
    // one evaluation; common practice, no source); a blend recipe has none of the layer figures.
    const std::string d = LAMPWRIGHT_SOURCE_DIR "/examples/layers/module395_80um.toml";
    const std::string recipe = LAMPWRIGHT_SOURCE_DIR "/examples/recipes/triband_4000K.toml";
    const auto layer = run_cli_args({"layer", d, "-f", "json"});
    REQUIRE(layer.exit_code == 0);
    const auto lj = nlohmann::json::parse(layer.out);
    const auto js = run_cli_args({"compare", d, recipe, "-f", "json"});
    REQUIRE(js.exit_code == 0);
    const auto cj = nlohmann::json::parse(js.out);
    REQUIRE(cj.size() == 2);
    const auto& l = cj.at(0);
    CHECK(l.at("kind") == "layer");
    CHECK(l.at("pump_peak_nm").get<double>() == 395);  // the design file's [pump] peak_nm
    CHECK(l.at("thickness_um").get<double>() == 80);   // the design file's thickness
    CHECK(l.at("shift_steps").get<double>() == doctest::Approx(lj.at("shift_macadam_steps").get<double>()).epsilon(1e-6));
    CHECK(l.at("pump_leak_fraction").get<double>() == doctest::Approx(lj.at("pump_leak_fraction").get<double>()).epsilon(1e-6));
    CHECK(l.at("x").get<double>() == doctest::Approx(lj.at("x").get<double>()).epsilon(1e-4));  // layer JSON gives x to 5 decimals
    CHECK(l.at("operating_temperature_C").get<double>() == doctest::Approx(lj.at("temperature_C").get<double>()));
    const auto& b = cj.at(1);
    CHECK(b.at("kind") == "blend");
    CHECK(b.at("pump_peak_nm").is_null());
    CHECK(b.at("shift_steps").is_null());
    // CSV: the same columns, the layer figures last, empty for the blend.
    const auto csv = run_cli_args({"compare", d, recipe, "-f", "csv"});
    REQUIRE(csv.exit_code == 0);
    const auto rows = lwtest::text_lines(csv.out);
    REQUIRE(rows.size() == 3);
    const auto h = lwtest::csv_cells(rows[0]);
    CHECK(h.back() == "shift_steps");
    CHECK(lwtest::csv_cells(rows[2]).back().empty());
    // Text: the layer table with the pump and the shift.
    const auto text = run_cli_args({"compare", d, recipe});
    REQUIRE(text.exit_code == 0);
    CHECK(text.out.find("shift steps") != std::string::npos);
}
