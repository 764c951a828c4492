// The `lampwright qc` command line: the --threads count, and a lot folder holding links and
// special files (bad inputs named on stderr, exit status 1, every good lamp still judged).
#include "test_support.hpp"

#include <doctest/doctest.h>
#include <nlohmann/json.hpp>

#include <sys/stat.h>
#include <unistd.h>

#include <cmath>
#include <filesystem>
#include <fstream>
#include <string>

namespace {

namespace fs = std::filesystem;

const std::string kSpec = std::string(LAMPWRIGHT_SOURCE_DIR) + "/examples/qc/spec_F4100.toml";
const std::string kLot = std::string(LAMPWRIGHT_SOURCE_DIR) + "/examples/qc/lot_A";

// The number of lamp rows in `qc --format csv` output (lines after the header).
std::size_t csv_rows(const std::string& out) {
    std::size_t n = 0;
    for (char c : out) n += c == '\n';
    return n == 0 ? 0 : n - 1;
}

}  // namespace

TEST_CASE("cli qc: --threads must be a whole number >= 1 (exit 2); a huge count is capped and the lot is judged") {
    const std::string lamp = kLot + "/lamp_01.csv";
    for (const std::string count : {"-1", "0", "4294967295", "-4294967295", "many", "2.5"}) {
        CAPTURE(count);
        const lwtest::CliRun r = lwtest::run_cli_args({"qc", "--threads", count, kSpec, lamp});
        CHECK_FALSE(r.crashed);
        CHECK(r.exit_code == 2);  // usage error, as qc --help states
        CHECK(r.err.find("threads") != std::string::npos);
        CHECK(r.out.empty());
    }
    // 100000 workers asked for: capped at the cores and the files, never std::terminate.
    const lwtest::CliRun many = lwtest::run_cli_args({"qc", "--threads", "100000", "--format", "csv", kSpec, kLot});
    CHECK_FALSE(many.crashed);
    const lwtest::CliRun one = lwtest::run_cli_args({"qc", "--threads", "1", "--format", "csv", kSpec, kLot});
    CHECK(many.exit_code == one.exit_code);
    CHECK(csv_rows(many.out) == 40);  // the 40 lamps of examples/qc/lot_A
    CHECK(many.out == one.out);       // the same verdicts whatever the thread count
}

TEST_CASE("cli qc: a link loop, a dangling link, a FIFO and a second name of a lamp are named on stderr, exit 1, the other lamps judged once") {
    const lwtest::TempDir dir("lampwright_cli_qc_links");
    fs::copy_file(kLot + "/lamp_01.csv", dir.path / "lamp_01.csv");
    fs::copy_file(kLot + "/lamp_02.csv", dir.path / "lamp_02.csv");
    fs::create_symlink("loop.csv", dir.path / "loop.csv");
    fs::create_symlink("missing.csv", dir.path / "dangling.csv");
    fs::create_symlink("lamp_02.csv", dir.path / "copy_of_02.csv");
    REQUIRE(::mkfifo((dir.path / "pipe.csv").c_str(), 0600) == 0);
    const lwtest::CliRun r = lwtest::run_cli_args({"qc", "--format", "csv", kSpec, dir.path.string()});
    CHECK_FALSE(r.crashed);
    CHECK(csv_rows(r.out) == 2);  // lamp_01 and lamp_02, each once
    CHECK(r.out.find("lamp_01") != std::string::npos);
    CHECK(r.out.find("lamp_02") != std::string::npos);
    CHECK(r.out.find("copy_of_02") == std::string::npos);
    CHECK(r.exit_code == 1);  // some files were bad, every lamp read passed (qc --help)
    CHECK(r.err.find("loop.csv: symbolic link loop") != std::string::npos);
    CHECK(r.err.find("dangling.csv: dangling symbolic link (to 'missing.csv'") != std::string::npos);
    CHECK(r.err.find("pipe.csv: is a FIFO, not a regular file") != std::string::npos);
    CHECK(r.err.find("copy_of_02.csv: is the same file as " + (dir.path / "lamp_02.csv").string()) != std::string::npos);
}

TEST_CASE("cli qc --recipe: the drift table and the inlier correction with its bootstrap and prediction, in JSON, CSV and text") {
    // The demo lot (3 robust outliers, README "Quality control of lamp lots") against its recipe.
    const std::string recipe = std::string(LAMPWRIGHT_SOURCE_DIR) + "/examples/recipes/triband_4000K.toml";
    const lwtest::CliRun j = lwtest::run_cli_args({"qc", kSpec, kLot, "--recipe", recipe, "-f", "json"});
    CHECK(j.exit_code == 4);
    const auto doc = nlohmann::json::parse(j.out);
    REQUIRE(doc.contains("drift"));
    const auto& d = doc["drift"];
    CHECK(d["lamps_used"].get<int>() == 37);
    REQUIRE(d["components"].size() == 3);
    for (const auto& c : d["components"]) {
        const std::string v = c["verdict"].get<std::string>();
        CHECK((v == "moved" || v == "within uncertainty"));
        // change = lot - recipe; the flag is |change| > 2 x uncertainty (lot_diagnosis.hpp).
        CHECK(c["change"].get<double>() == doctest::Approx(c["lot_mass_fraction"].get<double>() - c["recipe_mass_fraction"].get<double>()));
        CHECK(c["moved"].get<bool>() == (std::abs(c["change"].get<double>()) > 2 * c["uncertainty"].get<double>()));
    }
    CHECK(d["lamps"].size() == 40);
    const auto& c = doc["correction"];
    CHECK(c["centroid_from"] == "inliers");
    CHECK(c["inliers"].get<int>() == 37);
    CHECK(c["outliers"].get<int>() == 3);
    CHECK(c["bootstrap"]["resamples"].get<int>() == 200);
    CHECK(c["components"][0]["new_mass_fraction_sd"].get<double>() > 0);
    CHECK(c["prediction"]["lamps"].get<int>() == 40);
    CHECK(c["outlier_shift_steps"].get<double>() > 0);

    const lwtest::CliRun csv = lwtest::run_cli_args({"qc", kSpec, kLot, "--recipe", recipe, "-f", "csv"});
    CHECK(csv.exit_code == 4);
    const std::string header = csv.out.substr(0, csv.out.find('\n'));
    CHECK(header.find(",unmix_residual,u1_label,u1_mass_fraction,u2_label") != std::string::npos);
    CHECK(csv_rows(csv.out) == 40);
    CHECK(csv.err.find("Drift diagnosis") != std::string::npos);

    const lwtest::CliRun text = lwtest::run_cli_args({"qc", kSpec, kLot, "--recipe", recipe});
    CHECK(text.out.find("Drift diagnosis against") != std::string::npos);
    CHECK(text.out.find("from the centroid of the 37 inlier lamps") != std::string::npos);
    CHECK(text.out.find("predicted corrected lot") != std::string::npos);
}

TEST_CASE("cli qc --recipe: a corrected lot predicted below 90 % passing is warned about on stderr, in the text and in the JSON") {
    // Lot B (examples/qc/lot_B: BAM absorbing 10 % less) with the example spec's Ra limit raised to
    // 82.5: the corrected lot's lamps sit near Ra 82.5 (README "Drift diagnosis"), so about half fail
    // it; the rule is a warning below 90 % (lot_diagnosis.hpp, kPassShareWarning).
    const lwtest::TempDir dir("lampwright_qc_warn");
    const std::string spec = (dir.path / "spec.toml").string();
    {
        std::ofstream f(spec);
        f << "name = \"F4100, Ra 82.5\"\n[target]\nflamp = \"F4100\"\nsteps = 4\n[limits]\nra_min = 82.5\n";
    }
    const std::string lot = std::string(LAMPWRIGHT_SOURCE_DIR) + "/examples/qc/lot_B";
    const std::string recipe = std::string(LAMPWRIGHT_SOURCE_DIR) + "/examples/recipes/triband_4000K.toml";
    const lwtest::CliRun j = lwtest::run_cli_args({"qc", spec, lot, "--recipe", recipe, "-f", "json"});
    CHECK(j.exit_code == 4);
    const auto doc = nlohmann::json::parse(j.out);
    const auto& p = doc["correction"]["prediction"];
    CHECK(p["pass_share"].get<double>() < 0.9);
    REQUIRE(p["warning"].is_string());
    CHECK(p["warning"].get<std::string>().find("Ra") != std::string::npos);
    CHECK(p["failures"][0]["limit"] == "Ra");
    CHECK(j.err.find("below 90 %") != std::string::npos);
    const lwtest::CliRun t = lwtest::run_cli_args({"qc", spec, lot, "--recipe", recipe});
    CHECK(t.out.find("WARNING: only") != std::string::npos);
}
