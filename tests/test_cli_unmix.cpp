// The 'unmix' command run as the user runs it (LAMPWRIGHT_CLI): forward blends (blend
// --spectrum-out of the example recipes) back to their fractions, CIE 15:2004 FL1-FL12
// (data/cie/cie_fl_series.csv, Table T.6) decomposed into the library's lamp phosphors, the CSV,
// JSON, --spectrum-out and --svg outputs, and refusals of bad input with their exit codes.
#include "lampwright/phosphor/phosphor.hpp"
#include "lampwright/phosphor/recipe.hpp"
#include "test_support.hpp"

#include <doctest/doctest.h>
#include <nlohmann/json.hpp>

#include <algorithm>
#include <cmath>
#include <sstream>
#include <string>
#include <vector>

namespace {

using lwtest::cell;
using lwtest::csv_cells;
using lwtest::run_cli_args;
using lwtest::slurp;
using lwtest::TempDir;

const std::string kSource = LAMPWRIGHT_SOURCE_DIR;

std::vector<std::string> lines_of(const std::string& text) {
    std::vector<std::string> v;
    std::istringstream in(text);
    for (std::string l; std::getline(in, l);)
        if (!l.empty()) v.push_back(l);
    return v;
}



// The blend's spectrum (blend --spectrum-out) and its CSV row (mass fractions by the forward model).
struct Forward {
    std::string spectrum;
    std::vector<std::string> header, row;
};

Forward forward(const TempDir& dir, const std::string& recipe) {
    Forward f;
    f.spectrum = dir.file(recipe + ".csv");
    const auto r = run_cli_args({"blend", lwtest::example_recipe(recipe), "--format", "csv", "--spectrum-out", f.spectrum});
    REQUIRE(r.exit_code == 0);
    const auto l = lines_of(r.out);
    REQUIRE(l.size() == 2);
    f.header = csv_cells(l[0]);
    f.row = csv_cells(l[1]);
    return f;
}

}  // namespace

TEST_CASE("unmix cli: the tri-band and four-component example blends (blend --spectrum-out) are unmixed to their fractions within 1e-3") {
    // Source: examples/recipes/triband_4000K.toml and multiband_5000K.toml through 'blend'.
    const TempDir dir;
    for (const std::string recipe : {"triband_4000K.toml", "multiband_5000K.toml"}) {
        CAPTURE(recipe);
        const Forward f = forward(dir, recipe);
        const auto r = run_cli_args({"unmix", f.spectrum, "--recipe", lwtest::example_recipe(recipe), "--format", "csv"});
        REQUIRE(r.exit_code == 0);
        const auto l = lines_of(r.out);
        REQUIRE(l.size() == 2);
        const auto h = csv_cells(l[0]), row = csv_cells(l[1]);
        CHECK(std::stod(cell(h, row, "residual")) < 1e-5);
        CHECK(std::abs(std::stod(cell(h, row, "discharge_line_fraction")) - std::stod(cell(f.header, f.row, "mercury_line_fraction"))) < 1e-3);
        for (int i = 1; i <= (recipe == "triband_4000K.toml" ? 3 : 4); ++i) {
            const std::string c = "c" + std::to_string(i) + "_";
            CHECK(cell(h, row, c + "id") == cell(f.header, f.row, c + "id"));
            CHECK(std::abs(std::stod(cell(h, row, c + "mass_fraction")) - std::stod(cell(f.header, f.row, c + "mass_fraction"))) <= 1e-3);
            CHECK(std::abs(std::stod(cell(h, row, c + "photon_share")) - std::stod(cell(f.header, f.row, c + "photon_share"))) <= 1e-3);
            CHECK(std::abs(std::stod(cell(h, row, c + "radiant_share")) - std::stod(cell(f.header, f.row, c + "radiant_share"))) <= 1e-3);
        }
    }
}

TEST_CASE("unmix cli: without --components the tri-band blend's three phosphors are chosen (BIC), in 4 padded column groups") {
    const TempDir dir;
    const Forward f = forward(dir, "triband_4000K.toml");
    const auto r = run_cli_args({"unmix", f.spectrum, "--format", "csv"});
    REQUIRE(r.exit_code == 0);
    const auto l = lines_of(r.out);
    REQUIRE(l.size() == 2);
    const auto h = csv_cells(l[0]), row = csv_cells(l[1]);
    CHECK(cell(h, row, "components") == "3");
    std::vector<std::string> got{cell(h, row, "c1_id"), cell(h, row, "c2_id"), cell(h, row, "c3_id")};
    std::sort(got.begin(), got.end());
    CHECK(got == std::vector<std::string>{"BaMgAl10O17:Eu2+", "LaPO4:Ce3+,Tb3+", "Y2O3:Eu3+"});
    CHECK(cell(h, row, "c4_id").empty());
    CHECK(cell(h, row, "c4_mass_fraction").empty());
    // The last component group, then the CIE 224 / TM-30 columns appended for issue 13.
    REQUIRE(h.size() >= 5);
    CHECK(h[h.size() - 5] == "c4_width_change");
    CHECK(std::vector<std::string>(h.end() - 4, h.end()) == std::vector<std::string>{"fit_Rf", "fit_Rg", "Rf", "Rg"});
    CHECK(row.size() == h.size());
    const auto text = run_cli_args({"unmix", f.spectrum});
    REQUIRE(text.exit_code == 0);
    CHECK(text.out.find("best subset by BIC, exhaustive") != std::string::npos);
    CHECK(text.out.find("Schwarz 1978") != std::string::npos);
    CHECK(text.out.find("Lawson and Hanson 1974") != std::string::npos);
}

TEST_CASE("unmix cli: CIE 15:2004 FL1-FL12 are decomposed into the library's lamp phosphors with residual <= 0.05 each") {
    // Source: CIE 15:2004 Table T.6, data/cie/cie_fl_series.csv (5 nm, a 5 nm bandpass modelled);
    // every library phosphor with use "lamp" as --components, as tests/test_real_lamps.cpp does.
    std::string ids;
    for (const auto& p : lampwright::PhosphorLibrary::builtin().all())
        if (std::find(p.use.begin(), p.use.end(), "lamp") != p.use.end()) ids += (ids.empty() ? "" : ",") + p.id;
    const auto r = run_cli_args({"unmix", kSource + "/data/cie/cie_fl_series.csv", "--components", ids, "--format", "csv"});
    REQUIRE(r.exit_code == 0);
    const auto l = lines_of(r.out);
    REQUIRE(l.size() == 13);
    const auto h = csv_cells(l[0]);
    for (int k = 1; k <= 12; ++k) {
        const auto row = csv_cells(l[static_cast<std::size_t>(k)]);
        CAPTURE(k);
        CHECK(cell(h, row, "name") == "FL" + std::to_string(k));
        const double residual = std::stod(cell(h, row, "residual"));
        MESSAGE("FL", k, " residual ", residual, " Ra ", cell(h, row, "Ra"), " fit_Ra ", cell(h, row, "fit_Ra"));
        CHECK(residual <= 0.05);
        CHECK(std::abs(std::stod(cell(h, row, "x")) - std::stod(cell(h, row, "fit_x"))) < 0.005);
    }
}

TEST_CASE("unmix cli: an LED blend (led395_module.toml) is unmixed with --excitation 395 --pump-fwhm 12 and with --recipe, fractions within 1e-3") {
    // Source: examples/recipes/led395_module.toml (395 nm pump, 12 nm FWHM, 98 % absorbed) through 'blend'.
    const TempDir dir;
    const Forward f = forward(dir, "led395_module.toml");
    const std::string ids = "BAM,beta-SiAlON:Eu2+,(Sr,Ca)AlSiN3:Eu2+,CaAlSiN3:Eu2+";
    for (const auto& args : {std::vector<std::string>{"unmix", f.spectrum, "--excitation", "395", "--pump-fwhm", "12", "--components", ids, "--format", "csv"},
                             std::vector<std::string>{"unmix", f.spectrum, "--recipe", lwtest::example_recipe("led395_module.toml"), "--format", "csv"}}) {
        CAPTURE(args[2]);
        const auto r = run_cli_args(args);
        REQUIRE(r.exit_code == 0);
        const auto l = lines_of(r.out);
        REQUIRE(l.size() == 2);
        const auto h = csv_cells(l[0]), row = csv_cells(l[1]);
        CHECK(std::stod(cell(h, row, "residual")) < 1e-5);
        CHECK(std::stod(cell(h, row, "discharge_line_fraction")) > 0);  // the leaked pump
        for (int i = 1; i <= 4; ++i) {
            const std::string c = "c" + std::to_string(i) + "_";
            CHECK(cell(h, row, c + "id") == cell(f.header, f.row, c + "id"));
            CHECK(std::abs(std::stod(cell(h, row, c + "mass_fraction")) - std::stod(cell(f.header, f.row, c + "mass_fraction"))) <= 1e-3);
        }
    }
}

TEST_CASE("unmix cli: JSON has a schema version and the CSV's content; --spectrum-out and --svg are written") {
    const TempDir dir;
    const Forward f = forward(dir, "triband_4000K.toml");
    const std::string out = dir.file("model.csv"), svg = dir.file("plot.svg");
    const auto r = run_cli_args({"unmix", f.spectrum, f.spectrum, "--recipe", lwtest::example_recipe("triband_4000K.toml"), "--format", "json",
                                 "--spectrum-out", out, "--svg", svg});
    REQUIRE(r.exit_code == 0);
    nlohmann::json j;
    REQUIRE_NOTHROW(j = nlohmann::json::parse(r.out));
    CHECK(j["schema_version"] == 1);
    CHECK(j["command"] == "unmix");
    REQUIRE(j["spectra"].size() == 2);
    const auto& s = j["spectra"][0];
    CHECK(s["residual"].get<double>() < 1e-5);
    CHECK(s["mercury_line_power"].is_array());
    CHECK(s["pump_power"].is_null());
    CHECK(s["warnings"].is_array());
    REQUIRE(s["components"].size() == 3);
    CHECK(s["components"][0]["id"] == "Y2O3:Eu3+");
    // The blend's own YOX fraction (the spectrum was made from the recipe by blend).
    const double yox = lampwright::load_recipe(lwtest::example_recipe("triband_4000K.toml")).blend.components[0].mass_fraction;
    CHECK(std::abs(s["components"][0]["mass_fraction"].get<double>() - yox) < 1e-3);
    CHECK(s["components"][0]["mass_fraction_sd"].is_number());
    CHECK(s["components"][0]["band_emitter"] == false);
    CHECK(std::abs(s["fit_x"].get<double>() - s["x"].get<double>()) < 1e-5);
    // The reconstructed spectra: wavelength then one column per spectrum, at the measured grid.
    const auto rows = lines_of(slurp(out));
    REQUIRE(rows.size() == 602);  // header + 300-900 nm at 1 nm
    const auto h = csv_cells(rows[0]);
    CHECK(h.size() == 3);
    CHECK(h[0] == "wavelength_nm");
    const auto at_611 = csv_cells(rows[1 + 311]);
    CHECK(at_611[0] == "611");
    CHECK(std::stod(at_611[1]) > 0);
    CHECK(at_611[1] == at_611[2]);
    const std::string plot = slurp(svg);
    CHECK(plot.find("<svg") != std::string::npos);
    CHECK(plot.find("measured vs reconstructed") != std::string::npos);
    CHECK(plot.find("LaPO4:Ce3+,Tb3+") != std::string::npos);
}

TEST_CASE("unmix cli: an unknown phosphor id, a spectrum off a uniform grid and an empty spectrum are refused with exit 1 and the problem named") {
    const TempDir dir;
    const Forward f = forward(dir, "triband_4000K.toml");
    const auto unknown = run_cli_args({"unmix", f.spectrum, "--components", "BAM,NoSuchPhosphor"});
    CHECK(unknown.exit_code == 1);
    CHECK(unknown.err.find("--components") != std::string::npos);
    CHECK(unknown.err.find("NoSuchPhosphor") != std::string::npos);

    std::string uneven = "wavelength_nm,lamp\n";
    for (int nm = 380; nm <= 780; nm += (nm < 600 ? 5 : 7)) uneven += std::to_string(nm) + ",1.0\n";
    uneven += "785,1.0\n";
    const std::string uneven_path = dir.write("uneven.csv", uneven);
    const auto u = run_cli_args({"unmix", uneven_path, f.spectrum});
    CHECK(u.exit_code == 1);
    CHECK(u.err.find(uneven_path) != std::string::npos);
    CHECK(u.err.find("uniform wavelength step") != std::string::npos);
    CHECK(u.err.find("600 to 607 nm") != std::string::npos);
    CHECK(u.out.find(f.spectrum.substr(f.spectrum.rfind('/') + 1, 8)) != std::string::npos);  // the good file is still reported

    std::string half = "wavelength_nm,lamp\n";
    for (int nm = 379; nm <= 780; ++nm) half += std::to_string(nm) + ".5,1.0\n";
    const auto h = run_cli_args({"unmix", dir.write("half.csv", half)});
    CHECK(h.exit_code == 1);
    CHECK(h.err.find("whole-nm") != std::string::npos);

    const std::string empty = dir.write("empty.csv", "wavelength_nm,lamp\n");
    const auto e = run_cli_args({"unmix", empty});
    CHECK(e.exit_code == 1);
    CHECK(e.err.find(empty) != std::string::npos);
    CHECK(e.err.find("no spectral data") != std::string::npos);

    const auto both = run_cli_args({"unmix", f.spectrum, "--components", "BAM", "--recipe", lwtest::example_recipe("triband_4000K.toml")});
    CHECK(both.exit_code == 2);
    const auto led = run_cli_args({"unmix", f.spectrum, "--excitation", "395"});
    CHECK(led.exit_code == 2);
    CHECK(led.err.find("--pump-fwhm") != std::string::npos);
    const auto gap = run_cli_args({"unmix", f.spectrum, "--excitation", "300"});
    CHECK(gap.exit_code == 2);
}

TEST_CASE("unmix cli: --width-pct fits each band emitter's width (CSV c<i>_width_change, JSON settings); beyond 0-30 % it is refused") {
    // Source of the expectation: the forward model's own blend (blend --spectrum-out), whose bands
    // are the library's: the width search must find no change there (common practice, no source).
    const TempDir dir;
    const Forward f = forward(dir, "triband_4000K.toml");
    const auto r = run_cli_args({"unmix", f.spectrum, "--recipe", lwtest::example_recipe("triband_4000K.toml"), "--width-pct", "10",
                                 "--format", "csv"});
    REQUIRE(r.exit_code == 0);
    const auto l = lines_of(r.out);
    REQUIRE(l.size() == 2);
    const auto h = csv_cells(l[0]), row = csv_cells(l[1]);
    for (const char* k : {"c1_width_change", "c2_width_change", "c3_width_change"}) {
        CAPTURE(k);
        CHECK(std::abs(std::stod(cell(h, row, k))) < 1e-3);
    }
    const auto j = run_cli_args({"unmix", f.spectrum, "--recipe", lwtest::example_recipe("triband_4000K.toml"), "--width-pct", "10",
                                 "--format", "json"});
    REQUIRE(j.exit_code == 0);
    CHECK(nlohmann::json::parse(j.out)["settings"]["max_width_change"].get<double>() == doctest::Approx(0.1));
    const auto text = run_cli_args({"unmix", f.spectrum, "--recipe", lwtest::example_recipe("triband_4000K.toml"), "--width-pct", "10"});
    CHECK(text.out.find("FWHM could change by up to 10 %") != std::string::npos);
    const auto wide = run_cli_args({"unmix", f.spectrum, "--width-pct", "40"});
    CHECK(wide.exit_code == 2);
    CHECK(wide.err.find("--width-pct") != std::string::npos);
    CHECK(wide.err.find("30") != std::string::npos);
}
