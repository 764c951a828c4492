// Output files of every command: never written over an input or the database, written whole or not
// at all, a failed write noticed (exit status 8, README "Exit status"), standard output checked.
// The expectations are the robustness rules of the project (README "Exit status"); the file-system
// behaviour relied on is POSIX.1-2017 rename(2) and the SIGXFSZ/EFBIG rule of setrlimit(2)
// RLIMIT_FSIZE.
#include "lampwright/io/output_file.hpp"

#include "test_support.hpp"

#include <doctest/doctest.h>
#include <nlohmann/json.hpp>

#include <filesystem>
#include <string>
#include <vector>

namespace {

using lwtest::quote;
using lwtest::run_cli_args;
using lwtest::slurp;
using lwtest::TempDir;

std::string source(const std::string& rel) { return std::string(LAMPWRIGHT_SOURCE_DIR) + "/" + rel; }

// Copies a shipped example into the temp folder so a faulty run can only damage the copy.
std::string copy_of(const TempDir& dir, const std::string& rel, const std::string& name) {
    const std::string to = dir.file(name);
    std::filesystem::copy(source(rel), to, std::filesystem::copy_options::recursive);
    return to;
}

// Files in `dir` whose name marks them as a left-over temporary output.
int temporaries_in(const std::string& dir) {
    int n = 0;
    for (const auto& e : std::filesystem::directory_iterator(dir))
        if (e.path().filename().string().find(".tmp-") != std::string::npos) ++n;
    return n;
}

}  // namespace

TEST_CASE("outputs: an output naming an input or the database is refused with exit 2, naming both, and the input is unchanged") {
    const TempDir dir("lampwright_outputs");
    const std::string recipe = copy_of(dir, "examples/recipes/triband_4000K.toml", "r.toml");
    const std::string spec = copy_of(dir, "examples/qc/spec_F4100.toml", "s.toml");
    const std::string lot = copy_of(dir, "examples/qc/lot_A", "lot");
    const std::string csv = copy_of(dir, "examples/spectra/triband_tube_sample.csv", "a.csv");
    const std::string recipe_text = slurp(recipe), spec_text = slurp(spec), csv_text = slurp(csv);

    // Record a lot first so there is a database to protect.
    const std::string db = dir.file("h.db");
    REQUIRE(run_cli_args({"qc", spec, lot, "--db", db, "--lot", "L1"}).exit_code == 4);  // the shipped lot has failing lamps (README, qc example)
    const std::string db_bytes = slurp(db);
    REQUIRE(!db_bytes.empty());

    struct Case {
        std::vector<std::string> args;
        std::string victim, old_text, option;
    };
    const std::string first_lamp = (std::filesystem::path(lot) / std::filesystem::directory_iterator(lot)->path().filename()).string();
    const std::string lamp_text = slurp(first_lamp);
    const std::vector<Case> cases = {
        {{"history", "--db", db, "--svg", db}, db, db_bytes, "--svg"},
        {{"qc", spec, lot, "--db", db, "--report", db}, db, db_bytes, "--report"},
        {{"blend", recipe, "--spectrum-out", recipe}, recipe, recipe_text, "--spectrum-out"},
        {{"qc", spec, lot, "--report", spec}, spec, spec_text, "--report"},
        {{"qc", spec, lot, "--report", first_lamp}, first_lamp, lamp_text, "--report"},
        {{"qc", spec, lot, "--db", spec}, spec, spec_text, "the history database"},
        {{"compare", csv, "--svg", csv}, csv, csv_text, "--svg"},
        {{"fit", recipe, "--cct", "4000", "--front", "ra-efficacy", "--points", "3", "--front-csv", recipe}, recipe, recipe_text, "--front-csv"},
        {{"fit", recipe, "--cct", "4000", "--recipe-out", recipe}, recipe, recipe_text, "--recipe-out"},
    };
    for (const auto& c : cases) {
        std::string line;
        for (const auto& a : c.args) line += a + " ";
        CAPTURE(line);
        const auto r = run_cli_args(c.args);
        CHECK(r.exit_code == 2);
        CHECK(r.err.find(c.option) != std::string::npos);
        CHECK(r.err.find("same file") != std::string::npos);
        CHECK(slurp(c.victim) == c.old_text);
    }
    // Two outputs naming one file.
    const auto two = run_cli_args({"fit", recipe, "--cct", "4000", "--front", "ra-efficacy", "--points", "3", "--front-csv", dir.file("f"),
                                   "--front-svg", dir.file("f")});
    CHECK(two.exit_code == 2);
    CHECK(two.err.find("--front-csv") != std::string::npos);
    // A symbolic link to the input is the input.
    std::filesystem::create_symlink(recipe, dir.file("link.toml"));
    const auto linked = run_cli_args({"blend", recipe, "--spectrum-out", dir.file("link.toml")});
    CHECK(linked.exit_code == 2);
    CHECK(slurp(recipe) == recipe_text);
}

TEST_CASE("outputs: a write that fails part way leaves the old file and no temporary, and exits 8") {
    const TempDir dir("lampwright_outputs");
    const std::string out = dir.write("spectrum.csv", "old content\n");
    // RLIMIT_FSIZE of 1 KiB with SIGXFSZ ignored: writes past 1 KiB fail with EFBIG, as on a full disk.
    const std::string cmd = "sh -c " + quote("trap '' XFSZ; ulimit -f 1; exec " + quote(LAMPWRIGHT_CLI) + " blend " +
                                             quote(source("examples/recipes/triband_4000K.toml")) + " --spectrum-out " + quote(out));
    const std::string err = dir.file("err.txt");
    const int status = std::system((cmd + " >/dev/null 2>" + quote(err)).c_str());
    REQUIRE(WIFEXITED(status));
    CHECK(WEXITSTATUS(status) == 8);
    CHECK(slurp(err).find(out) != std::string::npos);
    CHECK(slurp(err).find("unchanged") != std::string::npos);
    CHECK(slurp(out) == "old content\n");
    CHECK(temporaries_in(dir.path.string()) == 0);

    // Without the limit the same command replaces the file whole.
    const auto ok = run_cli_args({"blend", source("examples/recipes/triband_4000K.toml"), "--spectrum-out", out});
    CHECK(ok.exit_code == 0);
    CHECK(slurp(out).rfind("wavelength_nm,value", 0) == 0);
    CHECK(slurp(out).size() > 1024);
    CHECK(temporaries_in(dir.path.string()) == 0);
}

TEST_CASE("outputs: an output into a missing folder or onto /dev/full fails with exit 8 and a reason") {
    const TempDir dir("lampwright_outputs");
    const auto missing = run_cli_args({"compare", source("examples/spectra/triband_tube_sample.csv"), "--svg", dir.file("no/such/folder/c.svg")});
    CHECK(missing.exit_code == 8);
    CHECK(missing.err.find("no/such/folder/c.svg") != std::string::npos);
    if (std::filesystem::exists("/dev/full")) {
        const auto full = run_cli_args({"blend", source("examples/recipes/triband_4000K.toml"), "--spectrum-out", "/dev/full"});
        CHECK(full.exit_code == 8);
        CHECK(full.err.find("No space left") != std::string::npos);
        CHECK(std::filesystem::is_character_file("/dev/full"));  // the device was written, not replaced
    }
}

TEST_CASE("outputs: qc keeps the lamps-failed flag when its report cannot be written (4 + 8)") {
    const TempDir dir("lampwright_outputs");
    const auto r = run_cli_args({"qc", source("examples/qc/spec_F4100.toml"), source("examples/qc/lot_A"), "--report", dir.file("none/r.html")});
    CHECK(r.exit_code == 12);
    CHECK(r.out.find("lot statistics") != std::string::npos);
}

TEST_CASE("outputs: standard output that cannot be written is an error, exit 8") {
    if (!std::filesystem::exists("/dev/full")) return;
    const TempDir dir("lampwright_outputs");
    const std::string err = dir.file("err.txt");
    const std::string cmd = quote(LAMPWRIGHT_CLI) + " assess " + quote(source("examples/spectra/triband_tube_sample.csv")) + " >/dev/full 2>" + quote(err);
    const int status = std::system(cmd.c_str());
    REQUIRE(WIFEXITED(status));
    CHECK(WEXITSTATUS(status) == 8);
    CHECK(slurp(err).find("standard output") != std::string::npos);
}

TEST_CASE("outputs: the library's atomic writer keeps the old file's permissions and refuses a folder") {
    const TempDir dir("lampwright_outputs");
    const std::string f = dir.write("x.txt", "old");
    std::filesystem::permissions(f, std::filesystem::perms::owner_read | std::filesystem::perms::owner_write | std::filesystem::perms::group_read);
    lampwright::write_file_atomically(f, "new");
    CHECK(slurp(f) == "new");
    CHECK(std::filesystem::status(f).permissions() ==
          (std::filesystem::perms::owner_read | std::filesystem::perms::owner_write | std::filesystem::perms::group_read));
    CHECK_THROWS_AS(lampwright::write_file_atomically(dir.path.string(), "x"), lampwright::OutputError);
}

TEST_CASE("cli: --version and 'help COMMAND'") {
    const auto v = run_cli_args({"--version"});
    CHECK(v.exit_code == 0);
    CHECK(v.out.rfind("lampwright ", 0) == 0);
    const auto h = run_cli_args({"help", "assess"});
    CHECK(h.exit_code == 0);
    CHECK(h.out.find("Usage: lampwright assess") != std::string::npos);
}

TEST_CASE("outputs: every SVG and HTML report names the version, the command line and the time; the QC report also the lot") {
    const TempDir dir("lampwright_outputs");
    const std::string svg = dir.file("c.svg");
    REQUIRE(run_cli_args({"compare", source("examples/spectra/triband_tube_sample.csv"), "--svg", svg}).exit_code == 0);
    const std::string s = slurp(svg);
    CHECK(s.find("<desc>lampwright ") != std::string::npos);
    CHECK(s.find("lampwright compare ") != std::string::npos);
    CHECK(s.find("Z \xC2\xB7 ") != std::string::npos);  // the UTC time stamp, then the next field

    const std::string html = dir.file("r.html");
    REQUIRE(run_cli_args({"qc", source("examples/qc/spec_F4100.toml"), source("examples/qc/lot_A"), "--report", html, "--db", dir.file("h.db"), "--lot",
                          "LOT-7"})
                .exit_code == 4);
    const std::string h = slurp(html);
    CHECK(h.find("Made by lampwright ") != std::string::npos);
    CHECK(h.find("lot LOT-7") != std::string::npos);
    CHECK(h.find("--report") != std::string::npos);
}

TEST_CASE("qc --recipe: the correction is in the JSON, --recipe-out writes a recipe that blend loads and that lands on the target") {
    // Expected: the corrected lot lands on the spec's target (examples/qc/spec_F4100.toml, the ANSI C78.376
    // F4100 centre of data/targets), expected_steps < 0.05; the written recipe reproduces that point in blend.
    const TempDir dir("lampwright_outputs");
    const std::string out = dir.file("corrected.toml");
    const auto r = run_cli_args({"qc", source("examples/qc/spec_F4100.toml"), source("examples/qc/lot_A"), "--recipe",
                                 source("examples/recipes/triband_4000K.toml"), "-f", "json", "--recipe-out", out});
    CHECK(r.exit_code == 4);
    const auto j = nlohmann::json::parse(r.out);
    REQUIRE(j.contains("correction"));
    CHECK(j["correction"]["feasible"].get<bool>());
    CHECK(j["correction"]["expected_steps"].get<double>() < 0.05);
    CHECK(j["correction"]["components"].size() == 3);
    CHECK(r.err.find("Correction of") == std::string::npos);  // not on stderr as text any more
    const auto b = run_cli_args({"blend", out, "-f", "json"});
    REQUIRE(b.exit_code == 0);
    const auto bj = nlohmann::json::parse(b.out);
    // The correction keeps the lot's offset from the model (lot centroid - model centroid), so the
    // corrected recipe's model point plus that offset is the expected centroid (blend prints 5 decimals).
    const auto& c = j["correction"];
    for (const char* k : {"x", "y"}) {
        const double offset = c["lot_centroid"][k].get<double>() - c["model_centroid"][k].get<double>();
        CHECK(bj[k].get<double>() + offset == doctest::Approx(c["expected_centroid"][k].get<double>()).epsilon(5e-5));
    }
    // --recipe-out alone is a usage error.
    CHECK(run_cli_args({"qc", source("examples/qc/spec_F4100.toml"), source("examples/qc/lot_A"), "--recipe-out", out}).exit_code == 2);
}
