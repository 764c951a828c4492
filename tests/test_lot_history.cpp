// Lot history in SQLite: round trip of lot statistics, de-duplication of re-imported spectra,
// lot ids recorded once, control chart limits, and consistency after kill -9 mid-import.
#include "lampwright/colour/cie_tables.hpp"
#include "lampwright/core/error.hpp"
#include "lampwright/core/version.hpp"
#include "lampwright/colour/illuminants.hpp"
#include "lampwright/production/lot_history.hpp"
#include "lampwright/report/history_report.hpp"
#include "lampwright/production/qc.hpp"
#include "lampwright/design/targets.hpp"

#include "test_support.hpp"

#include <doctest/doctest.h>
#include <fmt/format.h>
#include <pugixml.hpp>
#include <sqlite3.h>

#include <signal.h>
#include <sys/wait.h>
#include <unistd.h>

#include <chrono>
#include <cmath>
#include <filesystem>
#include <fstream>
#include <random>
#include <string>
#include <thread>
#include <vector>

using namespace lampwright;
namespace fs = std::filesystem;

namespace {

using lwtest::TempDir;

// Direct SQL on the database, independent of the code under test.
struct Sql {
    sqlite3* db = nullptr;
    explicit Sql(const std::string& path) {
        REQUIRE(sqlite3_open_v2(path.c_str(), &db, SQLITE_OPEN_READWRITE, nullptr) == SQLITE_OK);
    }
    ~Sql() { sqlite3_close(db); }
    std::string text(const std::string& sql) const {
        sqlite3_stmt* st = nullptr;
        REQUIRE_MESSAGE(sqlite3_prepare_v2(db, sql.c_str(), -1, &st, nullptr) == SQLITE_OK, sqlite3_errmsg(db));
        std::string out = "<no row>";
        const int rc = sqlite3_step(st);
        if (rc == SQLITE_ROW) {
            const auto* p = sqlite3_column_text(st, 0);
            out = p ? reinterpret_cast<const char*>(p) : "<null>";
        }
        CHECK_MESSAGE((rc == SQLITE_ROW || rc == SQLITE_DONE), sqlite3_errmsg(db));
        sqlite3_finalize(st);
        return out;
    }
    long long integer(const std::string& sql) const { return std::stoll(text(sql)); }
};

QcSpec f4100_spec() {
    const Target t = target_ansi_c78376("F4100");
    QcSpec s;
    s.name = "F4100 4-step, Ra 80";
    s.region = QcSpec::Region::ellipse;
    s.centre = t.xy;
    s.step_ellipse = *t.ellipse;
    s.max_steps = t.ellipse_steps;
    s.target_description = t.description;
    s.ra_min = 80;
    return s;
}

// A lot of n lamps cycling through the given assessments; every lamp its own file and hash.
QcRun make_run(const QcSpec& spec, const std::vector<Assessment>& kinds, std::size_t n, const std::string& prefix) {
    QcRun run;
    run.spec = spec;
    for (std::size_t i = 0; i < n; ++i) {
        LampResult l = judge_lamp(spec, kinds[i % kinds.size()]);
        l.name = fmt::format("{}-{:05}", prefix, i);
        l.file = fmt::format("{}/{}.csv", prefix, l.name);
        l.content_hash = content_hash(l.file);
        run.lamps.push_back(std::move(l));
    }
    run.stats = lot_statistics(spec, run.lamps);
    return run;
}

const std::vector<Assessment>& fluorescent_kinds() {
    static const std::vector<Assessment> k{assess(cie_fl_illuminant(2)), assess(cie_fl_illuminant(11)), assess(planckian(4000)),
                                           assess(cie_fl_illuminant(7))};
    return k;
}

// The message of the lampwright::Error f throws ("<no error>" when it throws none).
template <class F>
std::string error_message(F f) {
    try {
        f();
    } catch (const Error& e) {
        return e.what();
    }
    return "<no error>";
}

const LotStatistics::Summary& summary(const LotStatistics& st, const std::string& q) {
    for (const auto& s : st.summaries)
        if (s.quantity == q) return s;
    FAIL("no summary " << q);
    return st.summaries.front();
}

}  // namespace

TEST_CASE("lot history: record and list round trip of the lot statistics") {
    TempDir dir;
    const std::string db = dir.file("history.db");
    QcSpec spec = f4100_spec();
    spec.path = dir.file("spec.toml");
    const std::string spec_text = "name = \"F4100 4-step, Ra 80\"\n[target]\nflamp = \"F4100\"\n[limits]\nra_min = 80\n";
    std::ofstream(spec.path) << spec_text;
    const std::string recipe = dir.file("recipe.toml");
    std::ofstream(recipe) << "# invented recipe\nname = \"test\"\n";

    QcRun run = make_run(spec, fluorescent_kinds(), 9, "lotA");
    // One lamp without a CCT: its Ra, R1..R14 and CCT are NaN and must be stored as NULL.
    Assessment no_cct = assess(planckian(4000));
    no_cct.cct.valid = false;
    no_cct.rendering.reset();
    LampResult odd = judge_lamp(spec, no_cct);
    odd.name = "no-cct";
    odd.file = "lotA/no-cct.csv";
    odd.content_hash = content_hash(odd.file);
    run.lamps.push_back(odd);
    run.bad_files.push_back({"lotA/broken.csv", "line 3: not a number"});
    run.stats = lot_statistics(spec, run.lamps);

    const RecordOutcome r = record_lot(db, run, "A-001", recipe);
    CHECK(r.recorded);
    CHECK(r.lot_id == "A-001");
    CHECK(r.lamps_added == 10);
    CHECK(r.lamps_skipped == 0);

    const auto lots = list_lots(db);
    REQUIRE(lots.size() == 1);
    const LotRecord& l = lots[0];
    const auto& st = run.stats;
    // Expected values: lot_statistics of the same run in memory (round trip, common practice, no source).
    CHECK(l.lot_id == "A-001");
    CHECK(l.spec_name == spec.name);
    CHECK(l.spec_path == spec.path);
    CHECK(l.spec_target == spec.target_description);
    CHECK(l.recipe_path == recipe);
    CHECK(l.lamps == 10);
    CHECK(l.passed == st.passed);
    CHECK(l.bad_files == 1);
    CHECK(l.lamp_rows == 10);
    CHECK(l.outliers == st.outliers);
    CHECK(l.pass_rate == doctest::Approx(st.pass_rate).epsilon(1e-12));
    CHECK(l.centroid_x == doctest::Approx(st.centroid.x).epsilon(1e-12));
    CHECK(l.centroid_y == doctest::Approx(st.centroid.y).epsilon(1e-12));
    CHECK(l.centroid_steps == doctest::Approx(st.centroid_steps).epsilon(1e-12));
    CHECK(l.mean_ra == doctest::Approx(summary(st, "Ra").mean).epsilon(1e-12));
    CHECK(l.sd_ra == doctest::Approx(summary(st, "Ra").sd).epsilon(1e-12));
    CHECK(l.mean_r9 == doctest::Approx(summary(st, "R9").mean).epsilon(1e-12));
    CHECK(l.mean_cct_K == doctest::Approx(summary(st, "cct_K").mean).epsilon(1e-12));
    CHECK(l.sd_cct_K == doctest::Approx(summary(st, "cct_K").sd).epsilon(1e-12));
    CHECK(l.mean_duv == doctest::Approx(summary(st, "duv").mean).epsilon(1e-12));
    CHECK(l.mean_steps == doctest::Approx(summary(st, "steps").mean).epsilon(1e-12));
    CHECK(l.recorded_at.size() == 20);  // ISO 8601 UTC, e.g. 2026-12-02T01:03:47Z (ISO 8601)
    CHECK(l.recorded_at.back() == 'Z');

    Sql sql(db);
    CHECK(sql.text("PRAGMA integrity_check") == "ok");  // SQLite documentation: "ok" when no problem is found
    CHECK(sql.text("PRAGMA foreign_key_check") == "<no row>");
    CHECK(sql.text("SELECT spec_toml FROM lots WHERE lot_id = 'A-001'") == spec_text);
    CHECK(sql.text("SELECT recipe_toml FROM lots WHERE lot_id = 'A-001'") == "# invented recipe\nname = \"test\"\n");
    CHECK(sql.integer("SELECT count(*) FROM lamps WHERE lot_id = 'A-001'") == 10);
    CHECK(sql.integer("SELECT count(*) FROM bad_files WHERE lot_id = 'A-001'") == 1);
    // NaN is stored as NULL (common practice, no source).
    CHECK(sql.text("SELECT ra FROM lamps WHERE name = 'no-cct'") == "<null>");
    CHECK(sql.text("SELECT cct_K FROM lamps WHERE name = 'no-cct'") == "<null>");
    CHECK(sql.text("SELECT r9 FROM lamps WHERE name = 'no-cct'") == "<null>");
    CHECK(sql.integer("SELECT count(*) FROM lamps WHERE ra IS NULL") == 1);
    // Per-lamp values as assessed (round trip).
    const auto& a0 = run.lamps[0].assessment;
    CHECK(std::stod(sql.text("SELECT x FROM lamps WHERE name = 'lotA-00000'")) == doctest::Approx(a0.xy.x).epsilon(1e-12));
    CHECK(std::stod(sql.text("SELECT r9 FROM lamps WHERE name = 'lotA-00000'")) == doctest::Approx(a0.rendering->ri[8]).epsilon(1e-12));
    CHECK(sql.integer("SELECT pass FROM lamps WHERE name = 'lotA-00000'") == (run.lamps[0].pass() ? 1 : 0));

    // A lot of one lamp has no standard deviation: NULL in the database, NaN when listed.
    QcRun one = make_run(spec, {assess(planckian(4000))}, 1, "lotB");
    CHECK(record_lot(db, one, "B-001").recorded);
    const auto lots2 = list_lots(db);
    REQUIRE(lots2.size() == 2);
    CHECK(lots2[0].lot_id == "A-001");  // recording order
    CHECK(lots2[1].lot_id == "B-001");
    CHECK(std::isnan(lots2[1].sd_ra));
    CHECK(lots2[1].recipe_path.empty());

    // An empty lot id is derived from the date and time.
    QcRun c = make_run(spec, {assess(planckian(4100))}, 1, "lotC");
    const auto rc = record_lot(db, c, "");
    CHECK(rc.recorded);
    CHECK(rc.lot_id.rfind("lot-", 0) == 0);
}

TEST_CASE("lot history: the same spectrum file twice is stored once") {
    TempDir dir;
    const std::string db = dir.file("history.db");
    const QcSpec spec = f4100_spec();
    const QcRun first = make_run(spec, fluorescent_kinds(), 6, "lotA");
    CHECK(record_lot(db, first, "A").lamps_added == 6);

    // Lot B: three files of lot A again (same content hash and name), two new ones, and one of the
    // new ones listed twice in the same run.
    QcRun second = make_run(spec, fluorescent_kinds(), 2, "lotB");
    for (int i = 0; i < 3; ++i) second.lamps.push_back(first.lamps[static_cast<std::size_t>(i)]);
    second.lamps.push_back(second.lamps[0]);
    second.stats = lot_statistics(spec, second.lamps);
    const RecordOutcome r = record_lot(db, second, "B");
    CHECK(r.recorded);
    CHECK(r.lamps_added == 2);
    CHECK(r.lamps_skipped == 4);

    Sql sql(db);
    CHECK(sql.integer("SELECT count(*) FROM lamps") == 8);
    CHECK(sql.integer("SELECT count(*) FROM lamps WHERE lot_id = 'B'") == 2);
    CHECK(sql.integer("SELECT count(*) FROM (SELECT content_hash, name FROM lamps GROUP BY content_hash, name HAVING count(*) > 1)") == 0);
    // The lot itself still counts every lamp it was judged on.
    CHECK(sql.integer("SELECT lamps FROM lots WHERE lot_id = 'B'") == 6);

    // The same name with different file content is a different spectrum.
    QcRun third = make_run(spec, fluorescent_kinds(), 1, "lotA");
    third.lamps[0].content_hash = content_hash("changed bytes");
    third.stats = lot_statistics(spec, third.lamps);
    CHECK(record_lot(db, third, "C").lamps_added == 1);
    CHECK(sql.text("PRAGMA integrity_check") == "ok");  // SQLite documentation
}

TEST_CASE("lot history: an existing lot id is not recorded twice") {
    TempDir dir;
    const std::string db = dir.file("history.db");
    const QcSpec spec = f4100_spec();
    const QcRun run = make_run(spec, fluorescent_kinds(), 5, "lotA");
    const RecordOutcome first = record_lot(db, run, "L-7");
    CHECK(first.recorded);
    CHECK(first.lamps_added == 5);

    // The same id with a different run: nothing is written, and the outcome says so.
    const QcRun other = make_run(spec, {assess(cie_fl_illuminant(1))}, 3, "lotX");
    const RecordOutcome again = record_lot(db, other, "L-7");
    CHECK_FALSE(again.recorded);
    CHECK(again.lot_id == "L-7");
    CHECK(again.lamps_added == 0);
    CHECK(again.lamps_skipped == 0);

    Sql sql(db);
    CHECK(sql.integer("SELECT count(*) FROM lots") == 1);
    CHECK(sql.integer("SELECT count(*) FROM lamps") == 5);
    CHECK(sql.integer("SELECT lamps FROM lots WHERE lot_id = 'L-7'") == 5);
    const auto lots = list_lots(db);
    REQUIRE(lots.size() == 1);
    CHECK(lots[0].mean_ra == doctest::Approx(summary(run.stats, "Ra").mean).epsilon(1e-12));
}

TEST_CASE("lot history: SQLite errors name the database file") {
    TempDir dir;
    const std::string missing = dir.file("nowhere.db");
    CHECK(error_message([&] { list_lots(missing); }).find(missing) != std::string::npos);
    CHECK_FALSE(fs::exists(missing));  // listing never creates a database

    const std::string not_db = dir.file("notes.db");
    std::ofstream(not_db) << "this is a text file, not an SQLite database, and it is long enough to have a header\n";
    const QcRun run = make_run(f4100_spec(), fluorescent_kinds(), 2, "lotA");
    try {
        record_lot(not_db, run, "A");
        FAIL("no error for a file that is not a database");
    } catch (const Error& e) {
        const std::string m = e.what();
        CHECK(m.find(not_db) != std::string::npos);
        CHECK(m.find("not a database") != std::string::npos);  // sqlite3_errmsg of SQLITE_NOTADB
    }
    CHECK(error_message([&] { list_lots(not_db); }).find(not_db) != std::string::npos);

    // A folder that does not exist.
    const std::string nowhere = dir.file("no/such/folder/h.db");
    const std::string m = error_message([&] { record_lot(nowhere, run, "A"); });
    CHECK(m.find(nowhere) != std::string::npos);
    CHECK(m.find("unable to open") != std::string::npos);  // sqlite3_errmsg of SQLITE_CANTOPEN

    // An empty database lists no lots.
    const std::string empty = dir.file("empty.db");
    std::ofstream(empty).flush();
    CHECK(list_lots(empty).empty());
}

TEST_CASE("lot history: control chart limits are the mean plus and minus 2.66 average moving ranges") {
    // Hand-computed example (individuals chart, limits mean +- 2.66 MR-bar, MR-bar the mean of
    // |x_i - x_(i-1)|; Montgomery, Introduction to Statistical Quality Control, 2.66 = 3 / 1.128):
    //   Ra:    ten lots at 80, lot 11 at 91 -> mean 81, MR-bar = 11 / 10 = 1.1; limits
    //          81 -+ 2.926 = 78.074 .. 83.926; lot 11 (91) is out of control.
    //   CCT:   ten lots at 4000 K, lot 6 at 4110 K -> mean 4010, MR-bar = 220 / 10 = 22; limits
    //          4010 -+ 58.52 = 3951.48 .. 4068.52; lot 6 is out.
    //   steps: 1, 2, 1, 2, ... 1 (six 1s, five 2s) -> mean 16/11 = 1.454545, MR-bar = 1; upper
    //          4.114545; lower 1.454545 - 2.66 < 0, set to 0 (non-negative quantity).
    std::vector<LotRecord> lots(11);
    for (std::size_t i = 0; i < lots.size(); ++i) {
        lots[i].lot_id = fmt::format("L{:02}", i + 1);
        lots[i].mean_ra = i == 10 ? 91 : 80;
        lots[i].mean_cct_K = i == 5 ? 4110 : 4000;
        lots[i].centroid_steps = i % 2 == 0 ? 1 : 2;
    }
    const auto charts = control_charts(lots);
    REQUIRE(charts.size() == 3);
    const ControlChart& steps = charts[0];
    const ControlChart& ra = charts[1];
    const ControlChart& cct = charts[2];
    CHECK(steps.quantity.find("steps") != std::string::npos);
    CHECK(ra.quantity.find("Ra") != std::string::npos);
    CHECK(cct.quantity.find("CCT") != std::string::npos);

    CHECK(ra.centre == doctest::Approx(81.0).epsilon(1e-12));
    CHECK(ra.average_moving_range == doctest::Approx(1.1).epsilon(1e-12));
    CHECK(ra.lower == doctest::Approx(78.074).epsilon(1e-12));
    CHECK(ra.upper == doctest::Approx(83.926).epsilon(1e-12));
    REQUIRE(ra.out_of_control.size() == 1);
    CHECK(ra.out_of_control[0] == 10);

    CHECK(cct.centre == doctest::Approx(4010.0).epsilon(1e-12));
    CHECK(cct.lower == doctest::Approx(3951.48).epsilon(1e-12));
    CHECK(cct.upper == doctest::Approx(4068.52).epsilon(1e-12));
    REQUIRE(cct.out_of_control.size() == 1);
    CHECK(cct.out_of_control[0] == 5);

    CHECK(steps.centre == doctest::Approx(16.0 / 11).epsilon(1e-12));
    CHECK(steps.upper == doctest::Approx(16.0 / 11 + 2.66).epsilon(1e-12));
    CHECK(steps.lower == 0.0);
    CHECK(steps.out_of_control.empty());
    CHECK(steps.lot_ids.size() == 11);

    // Text: the out-of-control lots are named.
    const std::string text = control_charts_text(charts);
    CHECK(text.find("L11") != std::string::npos);
    std::size_t marks = 0;
    for (std::size_t p = text.find("OUT OF CONTROL"); p != std::string::npos; p = text.find("OUT OF CONTROL", p + 1)) ++marks;
    CHECK(marks == 2);

    // SVG: one document, well-formed XML, a chart per quantity, the two out-of-control lots in red.
    const std::string svg = control_charts_svg(charts);
    pugi::xml_document doc;
    REQUIRE(doc.load_string(svg.c_str()));
    const pugi::xml_node root = doc.child("svg");
    REQUIRE(root);
    std::size_t nested = 0;
    for ([[maybe_unused]] const auto& chart : root.children("svg")) ++nested;
    CHECK(nested == 3);
    CHECK(root.select_nodes(".//circle[@fill='#d62728']").size() == 2);

    // Fewer than two lots: no limits, nothing out of control.
    const auto single = control_charts({lots[0]});
    CHECK(single[1].centre == 80.0);
    CHECK(std::isnan(single[1].upper));
    CHECK(single[1].out_of_control.empty());
    CHECK(control_charts({}).at(0).values.empty());

    // A sustained shift (five lots at 1 step, six at 2): the moving range stays small (MR-bar
    // 0.1), so every lot is beyond mean -+ 0.266; limits from the overall sd (+- 1.57) would flag none.
    for (std::size_t i = 0; i < lots.size(); ++i) lots[i].centroid_steps = i < 5 ? 1 : 2;
    CHECK(control_charts(lots)[0].out_of_control.size() == 11);
}

TEST_CASE("lot history: history shows one spec, the most recent lot's unless one is named") {
    std::vector<LotRecord> lots(5);
    const char* specs[] = {"S1", "S2", "S1", "S3", "S1"};
    for (std::size_t i = 0; i < lots.size(); ++i) {
        lots[i].lot_id = fmt::format("L{}", i + 1);
        lots[i].spec_name = specs[i];
        lots[i].spec_path = fmt::format("/specs/{}.toml", specs[i]);
    }
    const SpecSelection latest = select_spec(lots, "");
    CHECK(latest.spec == "S1");
    REQUIRE(latest.lots.size() == 3);
    CHECK(latest.lots[1].lot_id == "L3");
    CHECK(latest.total_lots == 5);
    CHECK(latest.other_specs == std::vector<std::string>{"S2", "S3"});
    CHECK(spec_selection_text(latest) == "showing spec 'S1' (3 of 5 lots); other specs: 'S2', 'S3'");
    CHECK(spec_selection_json(latest)["other_specs"].size() == 2);
    CHECK(control_charts_svg(control_charts(latest.lots), spec_selection_text(latest)).find("showing spec 'S1'") != std::string::npos);

    const SpecSelection by_path = select_spec(lots, "/specs/S2.toml");
    CHECK(by_path.spec == "S2");
    CHECK(by_path.lots.size() == 1);
    CHECK(select_spec(lots, "S3").lots.at(0).lot_id == "L4");
    CHECK(error_message([&] { select_spec(lots, "S9"); }).find("no lot recorded with spec 'S9'") != std::string::npos);

    // One spec only: nothing to say.
    CHECK(spec_selection_text(select_spec({lots[0], lots[2]}, "")).empty());
}

TEST_CASE("lot history: kill -9 during an import leaves the lot complete or absent") {
    // The import is killed with SIGKILL at seeded random moments while its transaction is open;
    // the database must pass PRAGMA integrity_check ("ok", SQLite documentation) and hold the lot
    // whole or not at all; a re-run records it exactly once (issue 5; common practice, no source).
    constexpr std::size_t kLamps = 20000;
    const QcSpec spec = f4100_spec();
    const QcRun big = make_run(spec, fluorescent_kinds(), kLamps, "big");
    const QcRun small = make_run(spec, fluorescent_kinds(), 7, "small");

    // How long one import takes here, to place the kills inside it.
    TempDir dir;
    double full_s = 0;
    {
        const std::string db = dir.file("timing.db");
        const auto t0 = std::chrono::steady_clock::now();
        CHECK(record_lot(db, big, "big").lamps_added == kLamps);
        full_s = std::chrono::duration<double>(std::chrono::steady_clock::now() - t0).count();
    }
    MESSAGE(fmt::format("recording {} lamps takes {:.3f} s", kLamps, full_s));

    std::mt19937 rng(20261202);
    std::uniform_real_distribution<double> fraction(0.05, 1.2);  // mostly inside the transaction, sometimes after it
    int interrupted = 0, completed = 0;
    constexpr int kRepeats = 6;
    for (int rep = 0; rep < kRepeats; ++rep) {
        const std::string db = dir.file(fmt::format("kill-{}.db", rep));
        const bool fresh = rep == 0;  // rep 0: the database does not exist yet (killed while creating it)
        if (!fresh) REQUIRE(record_lot(db, small, "small").recorded);
        const double delay_s = fraction(rng) * full_s;

        const pid_t child = fork();
        REQUIRE(child >= 0);
        if (child == 0) {
            int code = 0;
            try {
                record_lot(db, big, "big");
            } catch (...) {
                code = 3;
            }
            _exit(code);
        }
        // Parent: from the moment the rollback journal appears (the transaction has begun to
        // write), or from the fork for the fresh database, wait delay_s, then kill -9.
        const auto start = std::chrono::steady_clock::now();
        if (!fresh) {
            const std::string journal = db + "-journal";
            while (!fs::exists(journal) && std::chrono::steady_clock::now() - start < std::chrono::seconds(10)) {
                int status = 0;
                if (waitpid(child, &status, WNOHANG) == child) FAIL("the import finished before its journal was seen");
                std::this_thread::sleep_for(std::chrono::microseconds(100));
            }
        }
        std::this_thread::sleep_for(std::chrono::duration<double>(delay_s));
        kill(child, SIGKILL);
        int status = 0;
        REQUIRE(waitpid(child, &status, 0) == child);
        const bool killed = WIFSIGNALED(status) && WTERMSIG(status) == SIGKILL;
        const bool hot_journal = fs::exists(db + "-journal");  // left by a transaction cut short
        if (!killed) CHECK_MESSAGE((WIFEXITED(status) && WEXITSTATUS(status) == 0), "the import child failed");

        long long lots_big = 0, lamps_big = 0;
        if (!fs::exists(db)) {
            CHECK(fresh);  // killed before SQLite created the file
        } else {
            Sql sql(db);  // the first connection rolls back the hot journal left by the killed import
            CHECK(sql.text("PRAGMA integrity_check") == "ok");
            const bool has_tables = sql.integer("SELECT count(*) FROM sqlite_schema WHERE name = 'lots'") == 1;
            if (!fresh) CHECK(has_tables);  // only a fresh database killed before its first commit has none
            if (has_tables) {
                lots_big = sql.integer("SELECT count(*) FROM lots WHERE lot_id = 'big'");
                lamps_big = sql.integer("SELECT count(*) FROM lamps WHERE lot_id = 'big'");
            }
            if (!fresh) {
                CHECK(sql.integer("SELECT count(*) FROM lots WHERE lot_id = 'small'") == 1);
                CHECK(sql.integer("SELECT count(*) FROM lamps WHERE lot_id = 'small'") == 7);
            }
        }
        CHECK((lots_big == 0 || lots_big == 1));
        CHECK(lamps_big == lots_big * static_cast<long long>(kLamps));  // complete or absent
        (lots_big == 0 ? interrupted : completed) += 1;
        MESSAGE(fmt::format("repeat {}: kill after {:.1f} ms ({}{}): lot {}", rep, 1000 * delay_s, killed ? "killed" : "had finished",
                            hot_journal ? ", hot journal left" : "", lots_big ? "complete" : "absent"));

        // The re-run records the lot exactly once.
        const RecordOutcome again = record_lot(db, big, "big");
        CHECK(again.recorded == (lots_big == 0));
        CHECK(again.lamps_added == (lots_big == 0 ? kLamps : 0));
        Sql sql(db);
        CHECK(sql.integer("SELECT count(*) FROM lots WHERE lot_id = 'big'") == 1);
        CHECK(sql.integer("SELECT count(*) FROM lamps WHERE lot_id = 'big'") == static_cast<long long>(kLamps));
        CHECK(sql.integer("SELECT count(*) FROM lamps") == static_cast<long long>(kLamps + (fresh ? 0 : 7)));
        CHECK(sql.text("PRAGMA integrity_check") == "ok");
    }
    MESSAGE(fmt::format("{} of {} kills interrupted the import; {} found it complete", interrupted, kRepeats, completed));
    CHECK(interrupted >= 1);  // the test is only meaningful if some kill landed inside the transaction
}

TEST_CASE("lot history: default lot ids recorded within one second are all kept and unique") {
    TempDir dir;
    const std::string db = dir.file("history.db");
    const QcSpec spec = f4100_spec();
    std::vector<std::string> ids;
    for (const char* p : {"A", "B", "C"}) {
        const RecordOutcome r = record_lot(db, make_run(spec, fluorescent_kinds(), 3, p), "");
        CHECK(r.recorded);
        ids.push_back(r.lot_id);
    }
    CHECK(ids[0] != ids[1]);
    CHECK(ids[1] != ids[2]);
    // lot-YYYYMMDDTHHMMSS.mmmZ-xxxx: 4 + 15 + 5 + 5 characters.
    CHECK(ids[0].size() == 29);
    CHECK(ids[0].substr(19, 1) == ".");
    CHECK(ids[0].substr(23, 2) == "Z-");
    Sql sql(db);
    CHECK(sql.integer("SELECT count(*) FROM lots") == 3);
    CHECK(sql.integer("SELECT count(*) FROM lamps") == 9);
}

TEST_CASE("lot history: two concurrent recordings with default ids both land") {
    TempDir dir;
    const std::string db = dir.file("history.db");
    const QcSpec spec = f4100_spec();
    const QcRun a = make_run(spec, fluorescent_kinds(), 4, "A"), b = make_run(spec, fluorescent_kinds(), 4, "B");
    for (int round = 0; round < 5; ++round) {
        RecordOutcome ra, rb;
        QcRun a2 = a, b2 = b;
        for (auto& l : a2.lamps) l.content_hash += std::to_string(round);
        for (auto& l : b2.lamps) l.content_hash += std::to_string(round);
        std::thread ta([&] { ra = record_lot(db, a2, ""); });
        std::thread tb([&] { rb = record_lot(db, b2, ""); });
        ta.join();
        tb.join();
        CHECK(ra.recorded);
        CHECK(rb.recorded);
        CHECK(ra.lot_id != rb.lot_id);
    }
    Sql sql(db);
    CHECK(sql.integer("SELECT count(*) FROM lots") == 10);
    CHECK(sql.integer("SELECT count(*) FROM lamps") == 40);
}

TEST_CASE("lot history: a re-run of a recorded lot records no second, empty lot") {
    TempDir dir;
    const std::string db = dir.file("history.db");
    const QcSpec spec = f4100_spec();
    const QcRun run = make_run(spec, fluorescent_kinds(), 6, "A");
    const RecordOutcome first = record_lot(db, run, "");
    REQUIRE(first.recorded);
    const RecordOutcome again = record_lot(db, run, "");
    CHECK_FALSE(again.recorded);
    CHECK(again.already_recorded_as == first.lot_id);
    CHECK(again.lamps_added == 0);
    Sql sql(db);
    CHECK(sql.integer("SELECT count(*) FROM lots") == 1);
    CHECK(list_lots(db).size() == 1);

    // Part of the lamps new: a real new lot (the known lamps are skipped as before).
    QcRun mixed = make_run(spec, fluorescent_kinds(), 2, "B");
    mixed.lamps.push_back(run.lamps[0]);
    mixed.stats = lot_statistics(spec, mixed.lamps);
    const RecordOutcome m = record_lot(db, mixed, "");
    CHECK(m.recorded);
    CHECK(m.already_recorded_as.empty());
    CHECK(m.lamps_added == 2);

    // The same lamps under another spec are a different judgement: recorded.
    QcRun other = run;
    other.spec.name = "another spec";
    CHECK(record_lot(db, other, "").recorded);
}

TEST_CASE("lot history: every recorded lot stores the lampwright version, shown by history text and JSON") {
    TempDir dir;
    const std::string db = dir.file("history.db");
    const QcSpec spec = f4100_spec();
    REQUIRE(record_lot(db, make_run(spec, fluorescent_kinds(), 3, "lotV"), "L-V").recorded);
    Sql sql(db);
    CHECK(sql.text("SELECT lampwright_version FROM lots WHERE lot_id = 'L-V'") == std::string(kVersion));
    const auto lots = list_lots(db);
    REQUIRE(lots.size() == 1);
    CHECK(lots[0].lampwright_version == std::string(kVersion));
    CHECK(lot_json(lots[0])["lampwright_version"] == std::string(kVersion));
    const std::string text = lots_text(lots);
    CHECK(text.find("version") != std::string::npos);
    CHECK(text.find(std::string(kVersion)) != std::string::npos);
    const auto cols = lot_columns();
    CHECK(std::find(cols.begin(), cols.end(), "lampwright_version") != cols.end());
    CHECK(lot_values(lots[0]).size() == cols.size());
}

TEST_CASE("lot history: a database from before the version column gains it, and its old lots show unknown") {
    TempDir dir;
    const std::string db = dir.file("history.db");
    const QcSpec spec = f4100_spec();
    REQUIRE(record_lot(db, make_run(spec, fluorescent_kinds(), 3, "lotOld"), "L-old").recorded);
    {
        // Back to the first schema: the lots table without the version column, user_version 1.
        Sql sql(db);
        std::string create = sql.text("SELECT sql FROM sqlite_schema WHERE type = 'table' AND name = 'lots'");
        const auto col = create.find("lampwright_version TEXT");
        REQUIRE(col != std::string::npos);
        const auto comma = create.find(",", create.find("capabilities"));  // the comma ending the column before it
        create.erase(comma, col + std::string("lampwright_version TEXT").size() - comma);
        create.replace(create.find("CREATE TABLE lots"), 17, "CREATE TABLE lots_v1");
        const std::string cols = sql.text("SELECT group_concat(name) FROM pragma_table_info('lots') WHERE name <> 'lampwright_version'");
        const std::string downgrade = create + "; INSERT INTO lots_v1 SELECT " + cols +
                                      " FROM lots; PRAGMA foreign_keys = OFF; PRAGMA legacy_alter_table = ON; DROP TABLE lots; ALTER TABLE lots_v1 RENAME TO lots; PRAGMA user_version = 1;";
        char* err = nullptr;
        const int rc = sqlite3_exec(sql.db, downgrade.c_str(), nullptr, nullptr, &err);
        const std::string message = err ? err : "";
        INFO(message);
        REQUIRE(rc == SQLITE_OK);
    }
    auto lots = list_lots(db);  // read-only listing of the old schema works
    REQUIRE(lots.size() == 1);
    CHECK(lots[0].lampwright_version == "unknown");
    REQUIRE(record_lot(db, make_run(spec, fluorescent_kinds(), 3, "lotNew"), "L-new").recorded);
    lots = list_lots(db);
    REQUIRE(lots.size() == 2);
    CHECK(lots[0].lampwright_version == "unknown");
    CHECK(lots[1].lampwright_version == std::string(kVersion));
    CHECK(lot_json(lots[0])["lampwright_version"] == "unknown");
    Sql sql(db);
    CHECK(sql.integer("PRAGMA user_version") == 2);
}
