// lampwright history: the lots recorded by qc, their statistics, and control charts.
#include "cli_common.hpp"

#include "lampwright/report/assessment_report.hpp"
#include "lampwright/core/error.hpp"
#include "lampwright/production/lot_history.hpp"
#include "lampwright/report/history_report.hpp"

#include <filesystem>
#include <iostream>

namespace po = boost::program_options;

namespace lampwright::cli {

int run_history(int argc, char** argv) {
    po::options_description opts(std::string(R"(Usage: lampwright history [options]

Lists the lots recorded in the lot history database (by 'lampwright qc') with their statistics:
lamps, pass rate, bad files, chromaticity centroid and its offset from the target in MacAdam
steps, mean and standard deviation of CCT, Duv, Ra and R9. With text output it also prints
control charts over the lots (recording order) of the centroid's MacAdam steps, the mean Ra and
the mean CCT: centre line = mean over lots, limits = mean +- 2.66 x the average moving range of
consecutive lots (individuals chart; Montgomery, Introduction to Statistical Quality Control);
lots beyond a limit are marked. One specification at a time: --spec, or else the specification
of the most recent lot (the output says which, and names the others).

)") + "Options");
    std::string format = "text", db = kDefaultHistoryDb, svg, spec;
    opts.add_options()("help,h", "show this help")("db", po::value(&db), "the lot history database (default lampwright.db in this folder)")
        ("svg", po::value(&svg), "write the control charts as one SVG file")
        ("spec", po::value(&spec), "only the lots of this specification (its name, or its file's path as recorded)")
        ("format,f", po::value(&format), "text | csv | json (default text)");
    po::variables_map vm;
    if (!parse_command_line(argc, argv, opts, "", nullptr, vm, "history")) return kExitOk;
    const Format f = parse_format(format);

    check_outputs_apart({{svg, "--svg"}}, {{db, "the history database"}});
    std::error_code ec;
    if (!std::filesystem::exists(db, ec))
        throw InputError(db, 0, "no lot history database here (record lots with 'lampwright qc', or name one with --db PATH)");
    if (std::filesystem::is_directory(db, ec)) throw InputError(db, 0, "is a folder, not a lot history database");
    const auto all_lots = list_lots(db);
    SpecSelection selection;
    try {
        selection = select_spec(all_lots, spec);
    } catch (const Error& e) {
        throw InputError(db, 0, e.what());
    }
    const auto& lots = selection.lots;
    const auto charts = control_charts(lots);
    const std::string shown = spec_selection_text(selection);
    if (!svg.empty()) write_document_or_throw(svg, control_charts_svg(charts, shown));
    switch (f) {
        case Format::text:
            std::cout << "Lot history: " << db << " (" << all_lots.size() << (all_lots.size() == 1 ? " lot" : " lots") << ")\n";
            if (!shown.empty()) std::cout << shown << '\n';
            std::cout << '\n' << lots_text(lots);
            if (!lots.empty()) std::cout << '\n' << control_charts_text(charts);
            break;
        case Format::csv:
            // The rows are one spec's lots (their spec_name column); the choice goes to stderr.
            if (!shown.empty()) print_error(shown);
            std::cout << csv_line(lot_columns()) << '\n';
            for (const auto& l : lots) std::cout << csv_line(lot_values(l)) << '\n';
            break;
        case Format::json: {
            nlohmann::ordered_json j;
            j["database"] = db;
            j["spec_selection"] = spec_selection_json(selection);
            // What text and CSV output say beside the table (lots of other specs not shown).
            j["warnings"] = shown.empty() ? nlohmann::ordered_json::array() : nlohmann::ordered_json::array({shown});
            j["lots"] = nlohmann::ordered_json::array();
            for (const auto& l : lots) j["lots"].push_back(lot_json(l));
            j["control_charts"] = control_charts_json(charts);
            std::cout << dump_json(j) << '\n';
            break;
        }
    }
    return kExitOk;
}

}  // namespace lampwright::cli
