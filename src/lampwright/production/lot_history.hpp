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
};

struct RecordOutcome {
    bool recorded = false;         // false when the lot id exists already
    std::size_t lamps_added = 0;   // new lamp rows
    std::size_t lamps_skipped = 0; // spectra already in the database (same file content hash and name)
    std::string lot_id;
};

// Opens (creating if needed) the database and records the run as one transaction
// (BEGIN IMMEDIATE ... COMMIT; rolled back on any error). An empty lot_id is derived from the
// date and time (UTC). The spec and recipe files' contents are stored when their paths are given.
// Throws lampwright::Error naming the database file on any SQLite failure.
RecordOutcome record_lot(const std::string& db_path, const QcRun& run, const std::string& lot_id, const std::string& recipe_path = "");

// Lots in recording order. The database must exist (Error naming it otherwise).
std::vector<LotRecord> list_lots(const std::string& db_path);

// Control chart data over lots: centre line = mean over lots, limits = mean +- 3 sd over lots
// (Shewhart individuals chart on lot means; Montgomery, Introduction to Statistical Quality Control).
struct ControlChart {
    std::string quantity;
    std::vector<std::string> lot_ids;
    std::vector<double> values;
    double centre = 0, lower = 0, upper = 0;
    std::vector<std::size_t> out_of_control;  // indices beyond the limits
};
std::vector<ControlChart> control_charts(const std::vector<LotRecord>& lots);

}  // namespace lampwright
