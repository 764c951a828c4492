// lampwright qc: judge a lot of measured lamps against a specification.
#include "cli_common.hpp"

#include "lampwright/report/assessment_report.hpp"
#include "lampwright/core/error.hpp"
#include "lampwright/production/lot_history.hpp"
#include "lampwright/production/qc.hpp"
#include "lampwright/report/qc_report.hpp"

#include <fmt/format.h>

#include <fstream>
#include <iostream>

namespace po = boost::program_options;

namespace lampwright::cli {

namespace {

// Exit codes of qc (README): all lamps passed; some files bad; some lamps failed; both.
constexpr int kQcAllPassed = 0;
constexpr int kQcBadFiles = 1;
constexpr int kQcLampsFailed = 3;
constexpr int kQcBoth = 4;


void write_file(const std::string& path, const std::string& content) {
    std::ofstream out(path, std::ios::binary);
    if (!out || !(out << content)) throw InputError(path, 0, "cannot be written");
}

}  // namespace

int run_qc_command(int argc, char** argv) {
    po::options_description opts(std::string(R"(Usage: lampwright qc [options] SPEC.toml FILE_OR_FOLDER...

Judges every measured spectrum (CSV/text tables as in 'assess', multi-column files as many lamps,
IES TM-27 XML) against the specification: chromaticity region (MacAdam ellipse, ANSI C78.377
quadrangle or u'v' circle), Ra, R9, CCT and Duv limits. Prints each lamp's figures and verdict and
the lot statistics (means, standard deviations, centroid and its offset in MacAdam steps, the
fraction outside the region, Ppk with its 95 % interval, with and without robust outliers; no
outliers are flagged in lots of fewer than 8 lamps). Files are read in parallel.

Exit status: 0 all lamps passed; 1 some files were bad (every lamp read passed); 3 some lamps
failed (every file read); 4 both; 2 usage error.

)") + kSafetyNotice + "\nOptions");
    std::string format = "text", report, db, lot_id, recipe;
    bool record = false;
    unsigned threads = 0;
    std::vector<std::string> args;
    opts.add_options()("help,h", "show this help")("format,f", po::value(&format), "text | csv | json (default text)")
        ("report", po::value(&report), "write a self-contained HTML report to this file")
        ("record", po::bool_switch(&record), "record the lot in the history database")
        ("db", po::value(&db), "history database (default lampwright.db in this folder); implies --record")
        ("lot", po::value(&lot_id), "lot id for the history, with --record (default: lot-, the UTC time to the millisecond and a random suffix)")
        ("recipe", po::value(&recipe), "the recipe this lot was made with: print a corrected recipe")
        ("threads", po::value(&threads), "worker threads (default: all cores)");
    po::variables_map vm;
    if (!parse_command_line(argc, argv, opts, "input", &args, vm, "qc")) return kExitOk;
    const Format f = parse_format(format);
    if (args.size() < 2) throw UsageError{"qc: give a spec file and at least one spectrum file or folder (see lampwright qc --help)"};
    // A lot id that is not recorded would be dropped without a word: refuse it instead.
    if (vm.count("lot") && !record && db.empty()) throw UsageError{"qc: --lot names the lot in the history database; add --record (or --db PATH) to record it"};

    const QcSpec spec = load_qc_spec(args.front());
    const std::vector<std::string> inputs(args.begin() + 1, args.end());
    const ProgressCallback progress = terminal_progress("qc", "files", 200);
    QcRun run = run_qc(spec, inputs, threads, progress);

    for (const auto& b : run.bad_files) print_error(fmt::format("{}: {}", b.file, b.reason));
    switch (f) {
        case Format::text: std::cout << qc_text(run); break;
        case Format::csv:
            std::cout << csv_line(qc_lamp_columns()) << '\n';
            for (const auto& l : run.lamps) std::cout << csv_line(qc_lamp_values(l)) << '\n';
            break;
        case Format::json: std::cout << qc_json(run).dump(2) << '\n'; break;
    }
    std::string correction_html;
    if (!recipe.empty()) correction_html = print_lot_correction(run, recipe, f == Format::text);
    if (!report.empty()) write_file(report, qc_html_report(run, correction_html));
    if (record || !db.empty()) {
        const std::string path = db.empty() ? kDefaultHistoryDb : db;
        const RecordOutcome o = record_lot(path, run, lot_id, recipe);
        if (!o.already_recorded_as.empty())
            std::cerr << fmt::format("lampwright qc: every lamp is already recorded as lot {} in {}; nothing recorded\n", o.already_recorded_as, path);
        else if (o.recorded)
            std::cerr << fmt::format("lampwright qc: lot {} recorded in {} ({} lamps new, {} already there)\n", o.lot_id, path, o.lamps_added,
                                     o.lamps_skipped);
        else
            std::cerr << fmt::format("lampwright qc: lot {} is already in {}; nothing recorded\n", o.lot_id, path);
    }
    const bool bad = !run.bad_files.empty();
    const bool failed = run.stats.passed < run.stats.count;
    if (bad && failed) return kQcBoth;
    if (bad) return kQcBadFiles;
    if (failed) return kQcLampsFailed;
    return kQcAllPassed;
}

}  // namespace lampwright::cli
