// lampwright qc and history on the command line: recording lots, re-runs, --lot without
// --record, and history filtered by specification.
#include "test_support.hpp"

#include <doctest/doctest.h>
#include <nlohmann/json.hpp>

#include <string>

namespace {

using lwtest::quote;
using lwtest::run_cli;
using lwtest::TempDir;

const std::string kQc = std::string(LAMPWRIGHT_SOURCE_DIR) + "/examples/qc";

}  // namespace

TEST_CASE("qc cli: three lots recorded one after another are three lots; a re-run says already recorded") {
    TempDir dir;
    const std::string db = dir.file("h.db");
    const std::string spec = quote(kQc + "/spec_F4100.toml");
    for (const char* lamp : {"lamp_01.csv", "lamp_02.csv", "lamp_03.csv"}) {
        const auto r = run_cli("qc " + spec + " " + quote(kQc + "/lot_A/" + lamp) + " --record --db " + quote(db));
        CHECK_FALSE(r.crashed);
        CHECK(r.err.find("recorded in") != std::string::npos);
    }
    const auto h = run_cli("history --db " + quote(db) + " -f json");
    REQUIRE(h.exit_code == 0);
    const auto j = nlohmann::json::parse(h.out);
    CHECK(j["lots"].size() == 3);

    const auto again = run_cli("qc " + spec + " " + quote(kQc + "/lot_A/lamp_03.csv") + " --record --db " + quote(db));
    CHECK(again.err.find("already recorded as lot " + j["lots"][2]["lot_id"].get<std::string>()) != std::string::npos);
    CHECK(nlohmann::json::parse(run_cli("history --db " + quote(db) + " -f json").out)["lots"].size() == 3);
}

TEST_CASE("qc cli: --lot without --record is a usage error") {
    TempDir dir;
    const auto r = run_cli("qc " + quote(kQc + "/spec_F4100.toml") + " " + quote(kQc + "/lot_A/lamp_01.csv") + " --lot L-1");
    CHECK(r.exit_code == 2);
    CHECK(r.err.find("add --record") != std::string::npos);
}
