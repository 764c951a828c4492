#pragma once
// Lot history in SQLite: every qc run can record its lot (id, date, spec, recipe, per-lamp
// results, lot statistics). A spectrum file already recorded (same content hash) is not stored
// twice. Each lot is written in one transaction, so an interrupted import leaves the lot either
// complete or absent.
#include "lampwright/production/qc.hpp"

#include <nlohmann/json.hpp>

#include <optional>
#include <string>
#include <vector>

namespace lampwright {

inline constexpr const char* kDefaultHistoryDb = "lampwright.db";

struct LotRecord {
    std::string lot_id;        // user-given, or derived from the date and time
    std::string recorded_at;   // ISO 8601 UTC
    std::string spec_name, spec_path, recipe_path;
    std::size_t lamps = 0, passed = 0, bad_files = 0;
    double pass_rate = 0;
    double centroid_x = 0, centroid_y = 0, centroid_steps = 0;
    double mean_ra = 0, mean_r9 = 0, mean_cct_K = 0, mean_duv = 0;
    double sd_ra = 0, sd_cct_K = 0;
    // Also stored (NaN where the database holds NULL):
    std::string spec_target;                 // the spec's target description
    double sd_x = 0, sd_y = 0, sd_r9 = 0, sd_duv = 0, mean_steps = 0, sd_steps = 0;
    std::size_t outliers = 0;
    std::size_t lamp_rows = 0;               // lamp rows stored under this lot (re-imported spectra are not)
    // The lampwright version that recorded the lot (traceability); "unknown" for lots recorded
    // before the database stored it.
    std::string lampwright_version;
};

struct RecordOutcome {
    bool recorded = false;         // false when the lot id exists already, or when every lamp is already in one lot
    std::size_t lamps_added = 0;   // new lamp rows
    std::size_t lamps_skipped = 0; // spectra already in the database (same file content hash and name)
    std::string lot_id;
    // Set (and recorded false) when every lamp of the run is already stored under this one
    // existing lot of the same spec: a re-run of a recorded lot, so nothing new is written.
    std::string already_recorded_as;
};

// A default lot id: "lot-", the UTC time to the millisecond and four random hex digits, e.g.
// lot-20261203T061512.345Z-3f9a, so lots recorded within one second (or by two processes at
// the same millisecond) get different ids.
std::string default_lot_id();

// Opens (creating if needed) the database and records the run as one transaction
// (BEGIN IMMEDIATE ... COMMIT; rolled back on any error; concurrent writers wait on SQLite's
// busy timeout). An empty lot_id becomes default_lot_id(). Lamps are keyed by (file content
// hash, spectrum name): a run whose every lamp is already stored under one lot of the same spec
// records nothing (already_recorded_as names that lot). The spec and recipe files' contents are stored when their paths are given.
// Throws lampwright::Error naming the database file on any SQLite failure.
RecordOutcome record_lot(const std::string& db_path, const QcRun& run, const std::string& lot_id, const std::string& recipe_path = "");

// Lots in recording order. The database must exist (Error naming it otherwise).
std::vector<LotRecord> list_lots(const std::string& db_path);

// The lots of one specification. `wanted` is a spec name or the spec file's path as recorded;
// empty: the specification of the most recent lot. Throws Error when no lot has `wanted`.
struct SpecSelection {
    std::vector<LotRecord> lots;          // the chosen spec's lots, in recording order
    std::string spec;                     // its name
    std::size_t total_lots = 0;           // lots in the database, every spec
    std::vector<std::string> other_specs; // names of the other specs recorded (first-recorded first)
};
SpecSelection select_spec(const std::vector<LotRecord>& lots, const std::string& wanted);

// Control chart data over lots: an individuals chart on the lot values, centre line = mean
// over lots, limits = mean +- 2.66 MR-bar, MR-bar the average moving range of consecutive lots
// (Montgomery, Introduction to Statistical Quality Control, individuals chart; 2.66 = 3 / d2,
// d2 = 1.128 for ranges of two).
struct ControlChart {
    std::string quantity;
    std::vector<std::string> lot_ids;
    std::vector<double> values;
    double centre = 0, lower = 0, upper = 0;
    double average_moving_range = 0;           // MR-bar; NaN with fewer than two values
    std::vector<std::size_t> out_of_control;  // indices beyond the limits
};
std::vector<ControlChart> control_charts(const std::vector<LotRecord>& lots);

}  // namespace lampwright
