// Tests of the 'blend' and 'phosphors' commands, run as the user runs them (LAMPWRIGHT_CLI).
#include "test_support.hpp"

#include <doctest/doctest.h>
#include <nlohmann/json.hpp>

#include <cmath>
#include <cstdlib>
#include <sstream>
#include <string>
#include <vector>

namespace {

using lwtest::slurp;
using lwtest::TempDir;
using Run = lwtest::CliRun;

// Runs lampwright with the arguments (each quoted for the shell), capturing stdout and stderr.
using lwtest::run_cli_args;

std::vector<std::string> lines_of(const std::string& text) {
    std::vector<std::string> lines;
    std::istringstream in(text);
    std::string line;
    while (std::getline(in, line))
        if (!line.empty()) lines.push_back(line);
    return lines;
}

// One CSV record (RFC 4180 quoting; no line breaks inside fields).
std::vector<std::string> csv_cells(const std::string& line) {
    std::vector<std::string> cells;
    std::string cell;
    bool quoted = false;
    for (std::size_t i = 0; i < line.size(); ++i) {
        const char c = line[i];
        if (quoted) {
            if (c == '"' && i + 1 < line.size() && line[i + 1] == '"') {
                cell += '"';
                ++i;
            } else if (c == '"') {
                quoted = false;
            } else {
                cell += c;
            }
        } else if (c == '"') {
            quoted = true;
        } else if (c == ',') {
            cells.push_back(cell);
            cell.clear();
        } else {
            cell += c;
        }
    }
    cells.push_back(cell);
    return cells;
}

std::string cell(const std::vector<std::string>& header, const std::vector<std::string>& row, const std::string& column) {
    for (std::size_t i = 0; i < header.size() && i < row.size(); ++i)
        if (header[i] == column) return row[i];
    FAIL("no column " << column);
    return "";
}

std::string source_file(const std::string& rel) { return std::string(LAMPWRIGHT_SOURCE_DIR) + "/" + rel; }

}  // namespace

TEST_CASE("cli blend: csv output has the assess columns and one row named by the recipe") {
    const Run r = run_cli_args({"blend", source_file("examples/recipes/triband_4000K.toml"), "--format", "csv"});
    CAPTURE(r.err);
    REQUIRE(r.exit_code == 0);
    const auto lines = lines_of(r.out);
    REQUIRE(lines.size() == 2);
    const auto header = csv_cells(lines[0]);
    const auto row = csv_cells(lines[1]);
    CHECK(header.size() == row.size());
    // Same leading columns as 'lampwright assess' (README): colorimetry (CIE 15:2004), CCT/Duv,
    // Ra and R1-R14 (CIE 13.3-1995), then luminous efficacy of radiation.
    std::vector<std::string> expected{"name", "x", "y", "u_prime", "v_prime", "cct_K", "duv", "Ra"};
    for (int i = 1; i <= 14; ++i) expected.push_back("R" + std::to_string(i));
    expected.push_back("ler_lm_per_W");
    REQUIRE(header.size() >= expected.size());
    for (std::size_t i = 0; i < expected.size(); ++i) CHECK(header[i] == expected[i]);
    CHECK(row[0] == "T8 tri-band 4000 K (line 2)");
    // Per-component columns for the three phosphors, in recipe order (common practice, no source).
    CHECK(cell(header, row, "c1_id") == "Y2O3:Eu3+");
    CHECK(cell(header, row, "c3_id") == "BaMgAl10O17:Eu2+");
    const double x = std::stod(cell(header, row, "x")), y = std::stod(cell(header, row, "y"));
    MESSAGE("tri-band demo: x ", x, " y ", y, " CCT ", cell(header, row, "cct_K"), " Ra ", cell(header, row, "Ra"), " LER ",
            cell(header, row, "ler_lm_per_W"));
    // A white light: inside the usual white region of the CIE 1931 diagram (common practice, no source).
    CHECK(x > 0.3);
    CHECK(x < 0.45);
    CHECK(y > 0.3);
    CHECK(y < 0.45);
}

TEST_CASE("cli blend: --spectrum-out writes a spectrum that 'assess' reads back to the same x, y") {
    TempDir dir;
    const std::string spd = dir.file("blend_spd.csv");
    const Run b = run_cli_args({"blend", source_file("examples/recipes/triband_4000K.toml"), "--format", "csv", "--spectrum-out", spd});
    CAPTURE(b.err);
    REQUIRE(b.exit_code == 0);
    const auto spd_lines = lines_of(slurp(spd));
    REQUIRE(spd_lines.size() > 400);
    CHECK(spd_lines[0] == "wavelength_nm,value");
    // Rows of two numbers at 1 nm steps, the 1 nm grid of CIE 15:2004 summation.
    double previous = -1;
    for (std::size_t i = 1; i < spd_lines.size(); ++i) {
        const auto c = csv_cells(spd_lines[i]);
        REQUIRE(c.size() == 2);
        const double nm = std::stod(c[0]);
        if (previous >= 0) CHECK(nm == doctest::Approx(previous + 1));
        previous = nm;
        CHECK(std::stod(c[1]) >= 0.0);
    }
    const Run a = run_cli_args({"assess", spd, "--format", "csv"});
    CAPTURE(a.err);
    REQUIRE(a.exit_code == 0);
    const auto bl = lines_of(b.out), al = lines_of(a.out);
    REQUIRE(bl.size() == 2);
    REQUIRE(al.size() >= 2);
    const auto bh = csv_cells(bl[0]), br = csv_cells(bl[1]), ah = csv_cells(al[0]), ar = csv_cells(al[1]);
    // The same spectrum must give the same chromaticity (CIE 15:2004) whichever command computes it.
    CHECK(std::abs(std::stod(cell(ah, ar, "x")) - std::stod(cell(bh, br, "x"))) <= 1e-4);
    CHECK(std::abs(std::stod(cell(ah, ar, "y")) - std::stod(cell(bh, br, "y"))) <= 1e-4);
}

TEST_CASE("cli blend: a bad recipe exits 1 and names the file") {
    // Exit 1 for bad input, message on stderr naming the file (lampwright CLI contract; common practice, no source).
    TempDir dir;
    const std::string bad = dir.write("bad_recipe.toml", "name = \"bad\"\nexcitation_nm = 253.7\n\n[[component]]\n"
                                                         "phosphor = \"Unobtainium:Eu\"\nmass_fraction = 0.5\n");
    const Run r = run_cli_args({"blend", bad});
    CHECK(r.exit_code == 1);
    CHECK(r.err.find(bad) != std::string::npos);
    CHECK(r.err.find("Unobtainium:Eu") != std::string::npos);
    CHECK(r.out.empty());

    const Run missing = run_cli_args({"blend", dir.file("no_such.toml")});
    CHECK(missing.exit_code == 1);
    CHECK(missing.err.find(dir.file("no_such.toml")) != std::string::npos);
}

TEST_CASE("cli blend: json output parses and lists the components") {
    // JSON per RFC 8259, one entry per recipe component (common practice, no source).
    const Run r = run_cli_args({"blend", source_file("examples/recipes/led395_module.toml"), "--format", "json"});
    CAPTURE(r.err);
    REQUIRE(r.exit_code == 0);
    const auto j = nlohmann::json::parse(r.out);
    REQUIRE(j.contains("components"));
    CHECK(j["components"].size() == 4);
    CHECK(j["components"][0]["id"] == "BaMgAl10O17:Eu2+");
    // absorbed_fraction 0.98: (1 - 0.98) / 0.98 W leak per W absorbed (energy conservation; common practice, no source).
    CHECK(j["pump_leak_W_per_W"].get<double>() == doctest::Approx(0.02 / 0.98).epsilon(1e-9));
    double shares = 0;
    for (const auto& c : j["components"]) shares += c["photon_share"].get<double>();
    CHECK(shares == doctest::Approx(1.0).epsilon(1e-9));
}

TEST_CASE("cli blend: --help carries the safety notice") {
    const Run r = run_cli_args({"blend", "--help"});
    CHECK(r.exit_code == 0);
    // Fluorescent lamps contain mercury; phosphor powders are a dust hazard (common practice, no source).
    CHECK(r.out.find("mercury") != std::string::npos);
    CHECK(r.out.find("dust") != std::string::npos);
}

TEST_CASE("cli phosphors: csv lists the library") {
    // One row per library phosphor, at least 18 (the issue); RFC 4180 CSV (common practice, no source).
    const Run r = run_cli_args({"phosphors", "--format", "csv"});
    CAPTURE(r.err);
    REQUIRE(r.exit_code == 0);
    const auto lines = lines_of(r.out);
    REQUIRE(lines.size() >= 19);
    const auto header = csv_cells(lines[0]);
    CHECK(header[0] == "id");
    CHECK(lines.size() - 1 >= 18);
    bool yox = false;
    for (std::size_t i = 1; i < lines.size(); ++i) {
        const auto row = csv_cells(lines[i]);
        CHECK(row.size() == header.size());
        if (row[0] == "Y2O3:Eu3+") {
            yox = true;
            CHECK(cell(header, row, "abbreviation") == "YOX");
            // Eu3+ main line 611 nm: thermal-quenching study of lamp phosphors (shared/phosphor-facts.md).
            CHECK(std::abs(std::stod(cell(header, row, "peak_nm")) - 611.0) <= 1.0);
        }
    }
    CHECK(yox);
}

TEST_CASE("cli phosphors: json parses, every entry says it is a model") {
    // The spectra are models, and every entry carries its sources (data/phosphors/README.md; common
    // practice, no source).
    const Run r = run_cli_args({"phosphors", "--format", "json"});
    CAPTURE(r.err);
    REQUIRE(r.exit_code == 0);
    const auto j = nlohmann::json::parse(r.out);
    REQUIRE(j.is_array());
    CHECK(j.size() >= 18);
    for (const auto& p : j) {
        CAPTURE(p.dump());
        CHECK(p["id"].is_string());
        CHECK(p["model_note"].get<std::string>().find("not a measurement") != std::string::npos);
        CHECK_FALSE(p["source"].get<std::string>().empty());
    }
}
