// lampwright qc: judge a lot of measured lamps against a specification.
#include "cli_common.hpp"

#include "lampwright/report/assessment_report.hpp"
#include "lampwright/core/error.hpp"
#include "lampwright/phosphor/recipe.hpp"
#include "lampwright/production/lot_correction.hpp"
#include "lampwright/production/lot_diagnosis.hpp"
#include "lampwright/production/lot_history.hpp"
#include "lampwright/production/qc.hpp"
#include "lampwright/report/drift_report.hpp"
#include "lampwright/report/qc_report.hpp"

#include <fmt/format.h>

#include <iostream>
#include <optional>

namespace po = boost::program_options;

namespace lampwright::cli {

namespace {

}  // namespace

int run_qc_command(int argc, char** argv) {
    po::options_description opts(std::string(R"(Usage: lampwright qc [options] SPEC.toml FILE_OR_FOLDER...

Judges every measured spectrum (CSV/text tables as in 'assess', multi-column files as many lamps,
IES TM-27 XML) against the specification: chromaticity region (MacAdam ellipse, ANSI C78.377
quadrangle or u'v' circle), Ra, R9, CCT and Duv limits, and for spectra in W/nm (see assess
--help) luminous flux and efficacy limits (flux_min_lm, flux_max_lm, efficacy_min_lm_per_W; a
relative spectrum fails them with "relative spectrum: no flux"). Prints each lamp's figures and verdict and
the lot statistics (means, standard deviations, centroid and its offset in MacAdam steps, the
fraction outside the region, Ppk with its 95 % interval, with and without robust outliers; no
outliers are flagged in lots of fewer than 8 lamps). Files are read in parallel.

Exit status: 0 all lamps passed; 2 usage error; otherwise the sum of 1 some files were bad (every
other lamp was judged), 4 some lamps failed, 8 the report or the database could not be written.

)") + kSafetyNotice + "\nOptions");
    std::string format = "text", report, db, lot_id, recipe, recipe_out, units;
    double power_W = 0;
    bool record = false;
    int threads = 0;  // 0 = all cores; --threads is checked by its range, so "-1" is never read as 4294967295
    std::vector<std::string> args;
    opts.add_options()("help,h", "show this help")("format,f", po::value(&format), "text | csv | json (default text)")
        ("report", po::value(&report), "write a self-contained HTML report to this file")
        ("record", po::bool_switch(&record), "record the lot in the history database")
        ("db", po::value(&db), "history database (default lampwright.db in this folder); implies --record")
        ("lot", po::value(&lot_id), "lot id for the history, with --record (default: lot-, the UTC time to the millisecond and a random suffix)")
        ("recipe", po::value(&recipe), "the recipe this lot was made with: unmix the lot against its components (which one moved), "
                                       "and print a recipe corrected from the inlier centroid with its bootstrap uncertainty and the "
                                       "predicted pass share of the corrected lot (in the JSON too)")
        ("recipe-out", po::value(&recipe_out), "with --recipe: write the corrected recipe (TOML, loadable by blend and fit)")
        ("units", po::value(&units), kUnitsHelp);
    add_number_option(opts, "power-W", &power_W, kPowerRange, kPowerHelp);
    // More than the cores is allowed (and capped): a script need not know the machine.
    add_number_option(opts, "threads", &threads, NumberRange{.min = 1, .max = 1000000, .unit = "threads", .whole = true},
                      "worker threads; at most one per core is used (default: all cores)");
    po::variables_map vm;
    if (!parse_command_line(argc, argv, opts, "input", &args, vm, "qc")) return kExitOk;
    const Format f = parse_format(format);
    SpectrumReadOptions read;
    apply_photometry_options(units, vm.count("power-W") ? std::optional<double>(power_W) : std::nullopt, read);
    if (args.size() < 2) throw UsageError{"qc: give a spec file and at least one spectrum file or folder (see lampwright qc --help)"};
    if (!recipe_out.empty() && recipe.empty()) throw UsageError{"qc: --recipe-out needs --recipe (the recipe the lot was made with)"};
    // A lot id that is not recorded would be dropped without a word: refuse it instead.
    if (vm.count("lot") && !record && db.empty()) throw UsageError{"qc: --lot names the lot in the history database; add --record (or --db PATH) to record it"};

    const std::string db_path = db.empty() ? kDefaultHistoryDb : db;
    const bool recording = record || !db.empty();
    std::vector<FileRole> files_read{{args.front(), "the specification"}, {recipe, "--recipe"}};
    add_inputs(files_read, std::vector<std::string>(args.begin() + 1, args.end()), "a lamp input");
    std::vector<FileRole> outputs{{report, "--report"}, {recipe_out, "--recipe-out"}};
    if (recording) {
        check_outputs_apart({{db_path, "the history database"}}, files_read);
        files_read.push_back({db_path, "the history database"});
    }
    check_outputs_apart(outputs, files_read);

    if (!lot_id.empty()) run_provenance().lot_id = lot_id;
    const QcSpec spec = load_qc_spec(args.front());
    for (const auto& n : spec.notes) print_note(n);
    const std::optional<Recipe> made_with = recipe.empty() ? std::nullopt : std::optional<Recipe>(load_recipe(recipe));
    if (made_with)
        for (const auto& n : made_with->notes) print_note(n);
    const std::vector<std::string> inputs(args.begin() + 1, args.end());
    const ProgressCallback progress = terminal_progress("qc", "files", 200);
    QcRun run = run_qc(spec, inputs, static_cast<unsigned>(threads), progress, read, made_with.has_value());

    for (const auto& b : run.bad_files) print_error(fmt::format("{}: {}", b.file, b.reason));
    std::optional<InlierCorrection> correction;
    std::optional<DriftDiagnosis> drift;
    if (made_with) {
        if (run.lamps.empty()) throw InputError(recipe, 0, "no lamps were read: nothing to correct");
        std::vector<SampledSpectrum> spectra;
        std::vector<std::string> names;
        std::vector<bool> use;
        for (const auto& l : run.lamps) spectra.push_back(l.spectrum), names.push_back(l.name), use.push_back(!l.outlier);
        try {
            drift = diagnose_drift(made_with->blend, spectra, names, use);
        } catch (const Error& e) {
            print_warning(fmt::format("no drift diagnosis: {}", e.what()));
        }
        correction = correct_from_inliers(run.spec, made_with->blend, run.lamps, 200, 12, static_cast<unsigned>(threads));
        if (correction->prediction.warning) print_warning(correction->prediction.warning_text);
    }
    switch (f) {
        case Format::text:
            std::cout << qc_text(run);
            if (drift) std::cout << drift_text(*drift, recipe);
            if (correction) std::cout << lot_correction_text(*correction, made_with->blend, recipe);
            break;
        case Format::csv: {
            // One row per lamp (with --recipe, its unmixed fractions at the end); the lot's drift table
            // and correction are not lamps: they go to stderr, the JSON and --recipe-out.
            auto columns = qc_lamp_columns();
            if (drift) for (auto& c : drift_lamp_columns(*drift)) columns.push_back(c);
            std::cout << csv_line(columns) << '\n';
            for (std::size_t i = 0; i < run.lamps.size(); ++i) {
                auto v = qc_lamp_values(run.lamps[i]);
                if (drift) for (auto& c : drift_lamp_values(*drift, i)) v.push_back(c);
                std::cout << csv_line(v) << '\n';
            }
            if (drift) std::cerr << drift_text(*drift, recipe);
            if (correction) std::cerr << lot_correction_text(*correction, made_with->blend, recipe);
            break;
        }
        case Format::json: {
            auto j = qc_json(run);
            if (made_with) j["drift"] = drift ? drift_json(*drift, recipe) : nlohmann::ordered_json(nullptr);
            if (correction) j["correction"] = lot_correction_json(*correction, made_with->blend, recipe);
            std::cout << dump_json(j) << '\n';
            break;
        }
    }
    const std::string correction_html =
        (drift ? drift_html(*drift, recipe) : std::string()) + (correction ? lot_correction_html(*correction, made_with->blend) : std::string());
    // The verdict's flags are kept whatever happens to the report or the database (cli_common.hpp).
    int status = kExitOk;
    if (!run.bad_files.empty()) status |= kExitBadInput;
    if (run.stats.passed < run.stats.count) status |= kExitOutOfLimits;
    if (!report.empty() && !write_document(report, qc_html_report(run, correction_html))) status |= kExitOutputNotWritten;
    if (correction && !recipe_out.empty()) {
        if (!correction->correction.feasible) {
            print_error(fmt::format("{}: no corrected recipe written: {}", recipe_out, correction->correction.message));
            status |= kExitOutputNotWritten;
        } else if (!write_output(recipe_out, lot_correction_toml(correction->correction))) {
            status |= kExitOutputNotWritten;
        }
    }
    if (recording) {
        const std::string& path = db_path;
        try {
            const RecordOutcome o = record_lot(path, run, lot_id, recipe);
            if (!o.already_recorded_as.empty())
                print_warning(fmt::format("every lamp is already recorded as lot {} in {}; nothing recorded", o.already_recorded_as, path));
            else if (o.recorded)
                print_note(fmt::format("lot {} recorded in {} ({} lamps new, {} already there)", o.lot_id, path, o.lamps_added, o.lamps_skipped));
            else
                print_warning(fmt::format("lot {} is already in {}; nothing recorded", o.lot_id, path));
        } catch (const std::exception& e) {
            print_error(fmt::format("the lot was not recorded: {}", e.what()));
            status |= kExitOutputNotWritten;
        }
    }
    return status;
}

}  // namespace lampwright::cli
