// lampwright phosphors: the phosphor library.
#include "cli_common.hpp"

#include "lampwright/report/assessment_report.hpp"
#include "lampwright/report/blend_report.hpp"
#include "lampwright/phosphor/phosphor.hpp"

#include <iostream>

namespace po = boost::program_options;

namespace lampwright::cli {

int run_phosphors(int argc, char** argv) {
    po::options_description opts(std::string(R"(Usage: lampwright phosphors [options]

Lists the phosphor library: id, abbreviation, use (lamp = 254 nm, led = UV/violet pump), modelled
emission peak and FWHM, relative absorption at 254 and 405 nm, quantum efficiencies, and sources.
Emission spectra are models built from published peak positions and widths, not measurements.

)") + kSafetyNotice + "\nOptions");
    std::string format = "text";
    std::vector<std::string> folders;
    opts.add_options()("help,h", "show this help")("format,f", po::value(&format), "text | csv | json (default text)")
        ("phosphors", po::value(&folders), "a folder of your own phosphor files (*.toml) to list too; repeatable");
    po::variables_map vm;
    if (!parse_command_line(argc, argv, opts, "", nullptr, vm, "phosphors")) return kExitOk;
    const Format f = parse_format(format);
    const PhosphorLibrary lib = folders.empty() ? PhosphorLibrary::builtin() : PhosphorLibrary::with_folders(folders);
    switch (f) {
        case Format::text: std::cout << phosphor_table_text(lib.all()); break;
        case Format::csv:
            std::cout << csv_line(phosphor_columns()) << '\n';
            for (const auto& p : lib.all()) std::cout << csv_line(phosphor_values(p)) << '\n';
            break;
        case Format::json: std::cout << dump_json(phosphors_json(lib.all())) << '\n'; break;
    }
    return kExitOk;
}

}  // namespace lampwright::cli
