#include "lampwright/production/lot_history.hpp"

#include "lampwright/core/statistics.hpp"

#include "lampwright/core/format.hpp"
#include "lampwright/core/error.hpp"
#include "lampwright/core/text_encoding.hpp"
#include "lampwright/core/version.hpp"
#include "lampwright/io/toml_access.hpp"

#include <fmt/format.h>
#include <sqlite3.h>

#include <algorithm>
#include <chrono>
#include <cmath>
#include <ctime>
#include <filesystem>
#include <random>

namespace lampwright {

namespace {

// Journal mode: SQLite's default rollback journal (DELETE) with synchronous=FULL (its default).
// A lot is one BEGIN IMMEDIATE ... COMMIT; if the process dies mid-transaction the hot journal
// left beside the database is rolled back by the next connection, so the lot is absent, never
// half there. WAL would be equally atomic; the rollback journal is chosen because the database
// stays one self-contained file between runs (easy to copy, mail, or keep on a network share,
// where WAL's shared-memory index does not work), and the tool has one writer at a time
// (busy_timeout covers the rare concurrent qc/history). Schema version in PRAGMA user_version.
// Version 2 added lots.lampwright_version; a version-1 database gains the column (NULL for its
// old lots, listed as "unknown") the next time a lot is recorded into it.
constexpr int kSchemaVersion = 2;
constexpr int kBusyTimeoutMs = 10000;

const char* const kSchema = R"sql(
CREATE TABLE IF NOT EXISTS lots (
    lot_id         TEXT PRIMARY KEY NOT NULL,
    recorded_at    TEXT NOT NULL,            -- ISO 8601 UTC
    spec_name      TEXT,
    spec_path      TEXT,
    spec_target    TEXT,
    spec_toml      TEXT,                     -- the spec file's content
    recipe_path    TEXT,
    recipe_toml    TEXT,                     -- the recipe file's content
    lamps          INTEGER NOT NULL,
    passed         INTEGER NOT NULL,
    bad_files      INTEGER NOT NULL,
    outliers       INTEGER NOT NULL,
    pass_rate      REAL,
    centroid_x     REAL,
    centroid_y     REAL,
    centroid_steps REAL,
    mean_x REAL, sd_x REAL, mean_y REAL, sd_y REAL,
    mean_cct_K REAL, sd_cct_K REAL, mean_duv REAL, sd_duv REAL,
    mean_ra REAL, sd_ra REAL, mean_r9 REAL, sd_r9 REAL,
    mean_steps REAL, sd_steps REAL,
    capabilities   TEXT,                     -- JSON: [{quantity, lower, upper, n, mean, sd, ppk, ppk_ci95, without_outliers}]; before ppk: cpk
    -- the lampwright version that recorded the lot (schema 2; NULL for lots recorded before)
    lampwright_version TEXT
);
CREATE TABLE IF NOT EXISTS lamps (
    lamp_id      INTEGER PRIMARY KEY,
    lot_id       TEXT NOT NULL REFERENCES lots(lot_id),
    file         TEXT,
    name         TEXT NOT NULL,
    content_hash TEXT,                       -- FNV-1a 64 of the file's bytes; NULL: not from a file
    x REAL, y REAL, u_prime REAL, v_prime REAL,
    cct_K REAL, duv REAL, ra REAL,
    r1 REAL, r2 REAL, r3 REAL, r4 REAL, r5 REAL, r6 REAL, r7 REAL,
    r8 REAL, r9 REAL, r10 REAL, r11 REAL, r12 REAL, r13 REAL, r14 REAL,
    ler REAL,
    steps REAL,
    inside_region INTEGER NOT NULL,
    pass         INTEGER NOT NULL,
    failures     TEXT,                       -- JSON array of the limits not met
    outlier      INTEGER NOT NULL,
    outlier_note TEXT,
    UNIQUE (content_hash, name)
);
CREATE INDEX IF NOT EXISTS lamps_by_lot ON lamps(lot_id);
CREATE TABLE IF NOT EXISTS bad_files (
    lot_id TEXT NOT NULL REFERENCES lots(lot_id),
    file   TEXT NOT NULL,
    reason TEXT
);
CREATE INDEX IF NOT EXISTS bad_files_by_lot ON bad_files(lot_id);
)sql";

// One connection; every failure becomes an Error naming the database and SQLite's message.
class Database {
public:
    Database(const std::string& path, bool create) : path_(path) {
        const int flags = SQLITE_OPEN_READWRITE | (create ? SQLITE_OPEN_CREATE : 0);
        const int rc = sqlite3_open_v2(path.c_str(), &db_, flags, nullptr);
        if (rc != SQLITE_OK) {
            const std::string msg = db_ ? sqlite3_errmsg(db_) : sqlite3_errstr(rc);
            sqlite3_close(db_);
            db_ = nullptr;
            throw Error(fmt::format("lot history database {}: cannot open: {}", path_, msg));
        }
        sqlite3_extended_result_codes(db_, 1);
        check(sqlite3_busy_timeout(db_, kBusyTimeoutMs), "setting busy_timeout");
        exec("PRAGMA foreign_keys = ON", "enabling foreign keys");
    }
    ~Database() { sqlite3_close(db_); }
    Database(const Database&) = delete;
    Database& operator=(const Database&) = delete;

    sqlite3* handle() const { return db_; }
    const std::string& path() const { return path_; }

    [[noreturn]] void fail(const std::string& what) const {
        throw Error(fmt::format("lot history database {}: {}: {}", path_, what, sqlite3_errmsg(db_)));
    }
    void check(int rc, const std::string& what) const {
        if (rc != SQLITE_OK) fail(what);
    }
    void exec(const char* sql, const std::string& what) const {
        char* err = nullptr;
        if (sqlite3_exec(db_, sql, nullptr, nullptr, &err) != SQLITE_OK) {
            const std::string msg = err ? err : sqlite3_errmsg(db_);
            sqlite3_free(err);
            throw Error(fmt::format("lot history database {}: {}: {}", path_, what, msg));
        }
    }

private:
    std::string path_;
    sqlite3* db_ = nullptr;
};

// A prepared statement with bound parameters (1-based, as SQLite counts them).
class Statement {
public:
    Statement(const Database& db, const char* sql) : db_(db) {
        if (sqlite3_prepare_v2(db.handle(), sql, -1, &st_, nullptr) != SQLITE_OK) db.fail("preparing a statement");
    }
    ~Statement() { sqlite3_finalize(st_); }
    Statement(const Statement&) = delete;
    Statement& operator=(const Statement&) = delete;

    // Text goes in and comes out as valid UTF-8 (a path or lamp name in another encoding gets
    // U+FFFD for its bad bytes), so a recorded lot can always be shown as JSON, also from a
    // database written before names were cleaned.
    Statement& text(int i, const std::string& raw) {
        const std::string s = sanitize_utf8(raw);
        db_.check(sqlite3_bind_text(st_, i, s.data(), static_cast<int>(s.size()), SQLITE_TRANSIENT), "binding a value");
        return *this;
    }
    Statement& text_or_null(int i, const std::string& s) { return s.empty() ? null(i) : text(i, s); }
    Statement& text_or_null(int i, const std::optional<std::string>& s) { return s ? text(i, *s) : null(i); }
    Statement& real(int i, double v) {  // NaN and infinities are stored as NULL
        db_.check(std::isfinite(v) ? sqlite3_bind_double(st_, i, v) : sqlite3_bind_null(st_, i), "binding a value");
        return *this;
    }
    Statement& integer(int i, long long v) {
        db_.check(sqlite3_bind_int64(st_, i, v), "binding a value");
        return *this;
    }
    Statement& null(int i) {
        db_.check(sqlite3_bind_null(st_, i), "binding a value");
        return *this;
    }
    // true: a row is ready; false: done.
    bool step(const std::string& what) {
        const int rc = sqlite3_step(st_);
        if (rc == SQLITE_ROW) return true;
        if (rc == SQLITE_DONE) return false;
        db_.fail(what);
    }
    void run(const std::string& what) {
        step(what);
        reset();
    }
    void reset() {
        sqlite3_reset(st_);
        sqlite3_clear_bindings(st_);
    }
    double col_real(int i) const { return sqlite3_column_type(st_, i) == SQLITE_NULL ? NAN : sqlite3_column_double(st_, i); }
    long long col_int(int i) const { return sqlite3_column_int64(st_, i); }
    std::string col_text(int i) const {
        const auto* p = sqlite3_column_text(st_, i);
        return p ? sanitize_utf8(std::string_view(reinterpret_cast<const char*>(p), static_cast<std::size_t>(sqlite3_column_bytes(st_, i)))) : std::string();
    }

private:
    const Database& db_;
    sqlite3_stmt* st_ = nullptr;
};

// BEGIN IMMEDIATE on construction; ROLLBACK unless commit() was reached.
class Transaction {
public:
    explicit Transaction(const Database& db) : db_(db) { db_.exec("BEGIN IMMEDIATE", "starting the transaction"); }
    ~Transaction() {
        if (!done_) sqlite3_exec(db_.handle(), "ROLLBACK", nullptr, nullptr, nullptr);
    }
    Transaction(const Transaction&) = delete;
    Transaction& operator=(const Transaction&) = delete;
    void commit() {
        db_.exec("COMMIT", "committing the lot");
        done_ = true;
    }

private:
    const Database& db_;
    bool done_ = false;
};

// Creates the tables on first use (inside the caller's transaction) and checks the version.
void ensure_schema(const Database& db) {
    Statement v(db, "PRAGMA user_version");
    v.step("reading the schema version");
    const long long version = v.col_int(0);
    if (version > kSchemaVersion)
        throw Error(fmt::format("lot history database {}: schema version {} is newer than this lampwright understands ({})", db.path(), version,
                                kSchemaVersion));
    if (version == kSchemaVersion) return;
    if (version == 1) {
        db.exec("ALTER TABLE lots ADD COLUMN lampwright_version TEXT", "adding the lampwright_version column (schema 1 to 2)");
    } else {
        db.exec(kSchema, "creating the lot history tables");
    }
    db.exec("PRAGMA user_version = 2", "setting the schema version");
}

std::string utc_now(const char* format) {
    const std::time_t t = std::chrono::system_clock::to_time_t(std::chrono::system_clock::now());
    std::tm tm{};
    gmtime_r(&t, &tm);
    char buf[32];
    std::strftime(buf, sizeof buf, format, &tm);
    return buf;
}

// The one existing lot (same spec content, or same spec name when no content is stored) that
// already holds every lamp of the run; empty when there is none.
std::string lot_holding_every_lamp(const Database& db, const QcRun& run, const std::optional<std::string>& spec_toml) {
    if (run.lamps.empty()) return {};
    Statement q(db, "SELECT lot_id FROM lamps WHERE content_hash IS ?1 AND name = ?2");
    std::string lot;
    for (const auto& l : run.lamps) {
        q.text_or_null(1, l.content_hash).text(2, l.name);
        if (!q.step("looking up a lamp")) return {};
        const std::string id = q.col_text(0);
        q.reset();
        if (lot.empty())
            lot = id;
        else if (id != lot)
            return {};
    }
    Statement s(db, "SELECT spec_name, spec_toml FROM lots WHERE lot_id = ?1");
    s.text(1, lot);
    if (!s.step("looking up the lot")) return {};
    const std::string stored_toml = s.col_text(1);
    const bool same_spec = (spec_toml && !stored_toml.empty()) ? stored_toml == *spec_toml : s.col_text(0) == run.spec.name;
    return same_spec ? lot : std::string();
}

const LotStatistics::Summary* summary(const LotStatistics& st, const char* quantity) {
    for (const auto& s : st.summaries)
        if (s.quantity == quantity) return &s;
    return nullptr;
}
double stat_mean(const LotStatistics& st, const char* q) { const auto* s = summary(st, q); return s ? s->mean : NAN; }
double stat_sd(const LotStatistics& st, const char* q) { const auto* s = summary(st, q); return s ? s->sd : NAN; }


}  // namespace

std::string default_lot_id() {
    const auto now = std::chrono::system_clock::now();
    const std::time_t t = std::chrono::system_clock::to_time_t(now);
    const auto ms = std::chrono::duration_cast<std::chrono::milliseconds>(now.time_since_epoch()).count() % 1000;
    std::tm tm{};
    gmtime_r(&t, &tm);
    char buf[32];
    std::strftime(buf, sizeof buf, "%Y%m%dT%H%M%S", &tm);
    // The random suffix separates two processes recording in the same millisecond.
    static thread_local std::mt19937 rng{std::random_device{}()};
    const unsigned suffix = std::uniform_int_distribution<unsigned>(0, 0xffff)(rng);
    return fmt::format("lot-{}.{:03}Z-{:04x}", buf, ms, suffix);
}

RecordOutcome record_lot(const std::string& db_path, const QcRun& run, const std::string& lot_id, const std::string& recipe_path) {
    RecordOutcome out;
    out.lot_id = lot_id.empty() ? default_lot_id() : lot_id;
    // The files' contents are read before the transaction starts, so a bad path leaves nothing.
    std::optional<std::string> spec_toml, recipe_toml;
    if (!run.spec.path.empty()) {
        std::error_code ec;
        if (std::filesystem::is_regular_file(run.spec.path, ec)) spec_toml = read_text_file(run.spec.path);
    }
    if (!recipe_path.empty()) recipe_toml = read_text_file(recipe_path);

    Database db(db_path, true);
    Transaction tx(db);
    ensure_schema(db);
    {
        Statement exists(db, "SELECT 1 FROM lots WHERE lot_id = ?1");
        exists.text(1, out.lot_id);
        if (exists.step("looking up the lot id")) return out;  // recorded already: nothing to do (rolled back, nothing written)
    }
    // Checked inside the same IMMEDIATE transaction, so two concurrent re-runs cannot both pass it.
    out.already_recorded_as = lot_holding_every_lamp(db, run, spec_toml);
    if (!out.already_recorded_as.empty()) return out;
    const auto& st = run.stats;
    nlohmann::ordered_json caps = nlohmann::ordered_json::array();
    for (const auto& c : st.capabilities)
        caps.push_back({{"quantity", c.quantity}, {"lower", c.lower ? number_or_null(*c.lower) : nullptr},
                        {"upper", c.upper ? number_or_null(*c.upper) : nullptr}, {"n", c.all.n}, {"mean", number_or_null(c.all.mean)},
                        {"sd", number_or_null(c.all.sd)}, {"ppk", number_or_null(c.all.ppk)},
                        {"ppk_ci95", {number_or_null(c.all.ppk_ci_low), number_or_null(c.all.ppk_ci_high)}},
                        {"without_outliers", {{"n", c.without_outliers.n}, {"ppk", number_or_null(c.without_outliers.ppk)},
                                              {"ppk_ci95", {number_or_null(c.without_outliers.ppk_ci_low), number_or_null(c.without_outliers.ppk_ci_high)}}}}});
    {
        Statement ins(db, R"sql(INSERT INTO lots (lot_id, recorded_at, spec_name, spec_path, spec_target, spec_toml, recipe_path, recipe_toml,
            lamps, passed, bad_files, outliers, pass_rate, centroid_x, centroid_y, centroid_steps,
            mean_x, sd_x, mean_y, sd_y, mean_cct_K, sd_cct_K, mean_duv, sd_duv, mean_ra, sd_ra, mean_r9, sd_r9, mean_steps, sd_steps, capabilities,
            lampwright_version)
            VALUES (?1, ?2, ?3, ?4, ?5, ?6, ?7, ?8, ?9, ?10, ?11, ?12, ?13, ?14, ?15, ?16, ?17, ?18, ?19, ?20, ?21, ?22, ?23, ?24, ?25, ?26,
                    ?27, ?28, ?29, ?30, ?31, ?32))sql");
        ins.text(1, out.lot_id).text(2, utc_now("%Y-%m-%dT%H:%M:%SZ"));
        ins.text_or_null(3, run.spec.name).text_or_null(4, run.spec.path).text_or_null(5, run.spec.target_description).text_or_null(6, spec_toml);
        ins.text_or_null(7, recipe_path).text_or_null(8, recipe_toml);
        ins.integer(9, static_cast<long long>(run.lamps.size())).integer(10, static_cast<long long>(st.passed));
        ins.integer(11, static_cast<long long>(run.bad_files.size())).integer(12, static_cast<long long>(st.outliers));
        ins.real(13, st.pass_rate).real(14, st.centroid.x).real(15, st.centroid.y).real(16, st.centroid_steps);
        int i = 17;
        for (const char* q : {"x", "y", "cct_K", "duv", "Ra", "R9", "steps"}) {
            ins.real(i++, stat_mean(st, q));
            ins.real(i++, stat_sd(st, q));
        }
        ins.text(31, dump_json(caps, -1));
        ins.text(32, kVersion);
        ins.run("recording the lot");
    }
    {
        Statement ins(db, R"sql(INSERT INTO lamps (lot_id, file, name, content_hash, x, y, u_prime, v_prime, cct_K, duv, ra,
            r1, r2, r3, r4, r5, r6, r7, r8, r9, r10, r11, r12, r13, r14, ler, steps, inside_region, pass, failures, outlier, outlier_note)
            VALUES (?1, ?2, ?3, ?4, ?5, ?6, ?7, ?8, ?9, ?10, ?11, ?12, ?13, ?14, ?15, ?16, ?17, ?18, ?19, ?20, ?21, ?22, ?23, ?24, ?25,
                    ?26, ?27, ?28, ?29, ?30, ?31, ?32)
            ON CONFLICT (content_hash, name) DO NOTHING)sql");
        for (const auto& l : run.lamps) {
            const auto& a = l.assessment;
            ins.text(1, out.lot_id).text_or_null(2, l.file).text(3, l.name).text_or_null(4, l.content_hash);
            ins.real(5, a.xy.x).real(6, a.xy.y).real(7, a.uv_prime.u).real(8, a.uv_prime.v);
            ins.real(9, a.cct.valid ? a.cct.cct_K : NAN).real(10, a.cct.duv).real(11, a.rendering ? a.rendering->ra : NAN);
            for (int k = 0; k < 14; ++k) ins.real(12 + k, a.rendering ? a.rendering->ri[static_cast<std::size_t>(k)] : NAN);
            ins.real(26, a.ler_lm_per_W).real(27, l.steps).integer(28, l.inside_region ? 1 : 0).integer(29, l.pass() ? 1 : 0);
            ins.text(30, dump_json(nlohmann::json(l.failures))).integer(31, l.outlier ? 1 : 0).text_or_null(32, l.outlier_note);
            ins.step("recording a lamp");
            if (sqlite3_changes(db.handle()) > 0)
                ++out.lamps_added;
            else
                ++out.lamps_skipped;
            ins.reset();
        }
    }
    {
        Statement ins(db, "INSERT INTO bad_files (lot_id, file, reason) VALUES (?1, ?2, ?3)");
        for (const auto& b : run.bad_files) {
            ins.text(1, out.lot_id).text(2, b.file).text_or_null(3, b.reason);
            ins.run("recording a bad file");
        }
    }
    tx.commit();
    out.recorded = true;
    return out;
}

std::vector<LotRecord> list_lots(const std::string& db_path) {
    std::error_code ec;
    if (!std::filesystem::is_regular_file(db_path, ec))
        throw Error(fmt::format("lot history database {}: no such file (qc records lots into it)", db_path));
    Database db(db_path, false);
    {
        Statement v(db, "SELECT count(*) FROM sqlite_schema WHERE type = 'table' AND name = 'lots'");
        v.step("reading the schema");
        if (v.col_int(0) == 0) return {};  // an empty database: no lot recorded yet
    }
    // Listing does not migrate (it only reads): a schema-1 database has no version column yet.
    bool has_version = false;
    {
        Statement c(db, "SELECT count(*) FROM pragma_table_info('lots') WHERE name = 'lampwright_version'");
        c.step("reading the schema");
        has_version = c.col_int(0) > 0;
    }
    const std::string sql = std::string(R"sql(SELECT lot_id, recorded_at, spec_name, spec_path, recipe_path, lamps, passed, bad_files, pass_rate,
        centroid_x, centroid_y, centroid_steps, mean_ra, mean_r9, mean_cct_K, mean_duv, sd_ra, sd_cct_K,
        spec_target, sd_x, sd_y, sd_r9, sd_duv, mean_steps, sd_steps, outliers,
        (SELECT count(*) FROM lamps WHERE lamps.lot_id = lots.lot_id), )sql") +
                            (has_version ? "lampwright_version" : "NULL") + " FROM lots ORDER BY recorded_at, rowid";
    Statement q(db, sql.c_str());
    std::vector<LotRecord> lots;
    while (q.step("listing the lots")) {
        LotRecord r;
        r.lot_id = q.col_text(0);
        r.recorded_at = q.col_text(1);
        r.spec_name = q.col_text(2);
        r.spec_path = q.col_text(3);
        r.recipe_path = q.col_text(4);
        r.lamps = static_cast<std::size_t>(q.col_int(5));
        r.passed = static_cast<std::size_t>(q.col_int(6));
        r.bad_files = static_cast<std::size_t>(q.col_int(7));
        r.pass_rate = q.col_real(8);
        r.centroid_x = q.col_real(9);
        r.centroid_y = q.col_real(10);
        r.centroid_steps = q.col_real(11);
        r.mean_ra = q.col_real(12);
        r.mean_r9 = q.col_real(13);
        r.mean_cct_K = q.col_real(14);
        r.mean_duv = q.col_real(15);
        r.sd_ra = q.col_real(16);
        r.sd_cct_K = q.col_real(17);
        r.spec_target = q.col_text(18);
        r.sd_x = q.col_real(19);
        r.sd_y = q.col_real(20);
        r.sd_r9 = q.col_real(21);
        r.sd_duv = q.col_real(22);
        r.mean_steps = q.col_real(23);
        r.sd_steps = q.col_real(24);
        r.outliers = static_cast<std::size_t>(q.col_int(25));
        r.lamp_rows = static_cast<std::size_t>(q.col_int(26));
        r.lampwright_version = q.col_text(27);
        if (r.lampwright_version.empty()) r.lampwright_version = "unknown";
        lots.push_back(std::move(r));
    }
    return lots;
}

SpecSelection select_spec(const std::vector<LotRecord>& lots, const std::string& wanted) {
    SpecSelection sel;
    sel.total_lots = lots.size();
    if (lots.empty()) {
        if (!wanted.empty()) throw Error(fmt::format("no lot recorded with spec '{}' (the database holds no lots)", wanted));
        return sel;
    }
    auto same_path = [](const std::string& a, const std::string& b) {
        if (a.empty() || b.empty()) return false;
        std::error_code e1, e2;
        const auto ca = std::filesystem::weakly_canonical(a, e1), cb = std::filesystem::weakly_canonical(b, e2);
        return a == b || (!e1 && !e2 && ca == cb);
    };
    if (wanted.empty()) {
        sel.spec = lots.back().spec_name;
    } else {
        bool found = false;
        for (const auto& l : lots)
            if (!found && l.spec_name == wanted) sel.spec = wanted, found = true;
        for (auto it = lots.rbegin(); it != lots.rend() && !found; ++it)
            if (same_path(it->spec_path, wanted)) sel.spec = it->spec_name, found = true;
        if (!found) {
            std::string names;
            for (const auto& l : lots)
                if (names.find("'" + l.spec_name + "'") == std::string::npos) names += (names.empty() ? "'" : ", '") + l.spec_name + "'";
            throw Error(fmt::format("no lot recorded with spec '{}' (a spec name or the spec file's path); specs recorded: {}", wanted, names));
        }
    }
    for (const auto& l : lots) {
        if (l.spec_name == sel.spec)
            sel.lots.push_back(l);
        else if (std::find(sel.other_specs.begin(), sel.other_specs.end(), l.spec_name) == sel.other_specs.end())
            sel.other_specs.push_back(l.spec_name);
    }
    return sel;
}

// ---- control charts ----

std::vector<ControlChart> control_charts(const std::vector<LotRecord>& lots) {
    struct Quantity {
        const char* name;
        double (*get)(const LotRecord&);
        bool non_negative;
    };
    const Quantity quantities[] = {
        {"centroid MacAdam steps", [](const LotRecord& l) { return l.centroid_steps; }, true},
        {"mean Ra", [](const LotRecord& l) { return l.mean_ra; }, false},
        {"mean CCT (K)", [](const LotRecord& l) { return l.mean_cct_K; }, false},
    };
    std::vector<ControlChart> charts;
    for (const auto& q : quantities) {
        ControlChart c;
        c.quantity = q.name;
        std::vector<double> finite;
        for (const auto& l : lots) {
            c.lot_ids.push_back(l.lot_id);
            c.values.push_back(q.get(l));
            if (std::isfinite(c.values.back())) finite.push_back(c.values.back());
        }
        // Individuals chart on the lot values (Montgomery, Introduction to Statistical Quality
        // Control, individuals chart): centre = mean, limits = mean +- 3 sigma with sigma
        // estimated as MR-bar / d2 (d2 = 1.128 for moving ranges of two), i.e. mean +- 2.66 MR-bar.
        // The moving range follows short-term variation, so a drifting process widens the limits
        // less than the overall standard deviation would. A lower limit below zero is set to
        // zero for a non-negative quantity, as for the R and s charts there.
        c.centre = mean(finite);
        c.lower = c.upper = c.average_moving_range = NAN;
        if (finite.size() >= 2) {
            double sum = 0;
            for (std::size_t i = 1; i < finite.size(); ++i) sum += std::abs(finite[i] - finite[i - 1]);
            c.average_moving_range = sum / static_cast<double>(finite.size() - 1);
            c.lower = c.centre - 2.66 * c.average_moving_range;
            c.upper = c.centre + 2.66 * c.average_moving_range;
            if (q.non_negative && c.lower < 0) c.lower = 0;
            // Rounding noise (lots with equal values) is not a signal.
            const double tol = 1e-9 * std::max(1.0, std::abs(c.centre));
            for (std::size_t i = 0; i < c.values.size(); ++i)
                if (std::isfinite(c.values[i]) && (c.values[i] > c.upper + tol || c.values[i] < c.lower - tol)) c.out_of_control.push_back(i);
        }
        charts.push_back(std::move(c));
    }
    return charts;
}

}  // namespace lampwright
