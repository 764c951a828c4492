// The `lampwright qc` command line: the --threads count, and a lot folder holding links and
// special files (bad inputs named on stderr, exit status 1, every good lamp still judged).
#include "test_support.hpp"

#include <doctest/doctest.h>

#include <sys/stat.h>
#include <unistd.h>

#include <filesystem>
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
