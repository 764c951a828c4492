// lampwright assess: datasheet figures of measured or computed spectra.
#include "cli_common.hpp"

#include "lampwright/colour/assessment.hpp"
#include "lampwright/report/assessment_report.hpp"
#include "lampwright/core/error.hpp"
#include "lampwright/core/interpolation.hpp"
#include "lampwright/core/parallel.hpp"
#include "lampwright/io/spectrum_io.hpp"

#include <boost/program_options.hpp>
#include <fmt/format.h>

#include <iostream>
#include <optional>

namespace po = boost::program_options;

namespace lampwright::cli {

namespace {

const char* kAssessHelp = R"(Usage: lampwright assess [options] FILE...

Computes, for every spectrum: CIE x, y and u', v'; CCT and Duv; CIE 13.3 colour rendering
(Ra, R1-R14); CIE 224:2017 colour fidelity Rf and the ANSI/IES TM-30-20 gamut index Rg with the
16 hue-bin figures (at 1 nm, or at 5 nm for data on a 5 nm grid; CSV and JSON); luminous efficacy of radiation; peak, centroid, FWHM, dominant wavelength. Spectra in absolute
units (W/nm, mW/nm, uW/nm: a '# units: W/nm' line in the file, a TM-27 SpectralQuantity of flux,
or --units) also get the luminous flux Phi_v = 683.002 lm/W x integral S V dl, and with the
electrical power ('# power_W: 12.5' in the file, or --power-W) the luminous efficacy in lm/W.

FILE is a text table: wavelength in nm in the first column, one spectrum per further column
(named by the header row, if any), separated by commas, semicolons, tabs or spaces; '#' starts a
comment. It must cover at least 380-780 nm. '-' reads standard input.

The spectra of a file are assessed in parallel (--threads, default all cores); the output keeps
their order.

Exit status: 0 all inputs fine, 1 some input bad (the rest still reported), 2 usage error.

Options)";

}  // namespace

int run_assess(int argc, char** argv) {
    po::options_description opts(kAssessHelp);
    std::string format = "text", observer = "2", cct_method = "ohno", units, cvg;
    double power_W = 0;
    int threads = 0;  // 0 = all cores
    opts.add_options()("help,h", "show this help")
        ("format,f", po::value(&format), "text | csv | json (default text)")
        ("observer", po::value(&observer), "2 | 10: observer for x, y, u', v' (CCT and Ra always use 2°)")
        ("cct-method", po::value(&cct_method), "ohno (Ohno 2014, default) | robertson (Robertson 1968)")
        ("units", po::value(&units), kUnitsHelp)
        ("ces", "CSV/JSON: add Rf of each of the 99 CIE 224 colour evaluation samples (Rf_ces01..Rf_ces99)")
        ("cvg", po::value(&cvg), "write the TM-30 colour vector graphic of every spectrum to this SVG file");
    add_number_option(opts, "power-W", &power_W, kPowerRange, kPowerHelp);
    add_number_option(opts, "threads", &threads, NumberRange{.min = 1, .max = 1000000, .unit = "threads", .whole = true},
                      "worker threads; at most one per core is used (default: all cores)");
    std::vector<std::string> files;
    po::variables_map vm;
    if (!parse_command_line(argc, argv, opts, "file", &files, vm, "assess")) return kExitOk;
    const Format fmt_out = parse_format(format);
    AssessOptions options;
    if (observer == "2") options.observer = Observer::cie1931_2deg;
    else if (observer == "10") options.observer = Observer::cie1964_10deg;
    else throw UsageError{"--observer must be 2 or 10, not '" + observer + "'"};
    if (cct_method == "ohno") options.cct_method = CctMethod::ohno2014;
    else if (cct_method == "robertson") options.cct_method = CctMethod::robertson1968;
    else throw UsageError{"--cct-method must be ohno or robertson, not '" + cct_method + "'"};
    SpectrumReadOptions read;
    apply_photometry_options(units, vm.count("power-W") ? std::optional<double>(power_W) : std::nullopt, read);
    if (files.empty()) throw UsageError{"assess: no input file (use '-' for standard input); see lampwright assess --help"};
    const bool ces = vm.count("ces") > 0;
    std::vector<FileRole> inputs;
    for (const auto& f : files)
        if (f != "-") inputs.push_back({f, "an input spectrum"});
    check_outputs_apart({{cvg, "--cvg"}}, inputs);
    std::vector<Assessment> assessed;

    int status = kExitOk;
    nlohmann::ordered_json json_out = nlohmann::ordered_json::array();
    if (fmt_out == Format::csv) {
        auto cols = assessment_columns();
        for (auto& c : fidelity_columns(ces)) cols.push_back(std::move(c));
        std::cout << csv_line(cols) << '\n';
    }
    bool first = true;
    // One assessment printed in the format asked for (the file's warnings hold for each spectrum).
    auto emit = [&](Assessment& a, const std::vector<std::string>& file_warnings) {
        for (const auto& w : a.warnings) print_warning(fmt::format("{}: {}", a.name, w));
        switch (fmt_out) {
            case Format::text:
                std::cout << (first ? "" : "\n") << assessment_text(a);
                break;
            case Format::csv: {
                auto vals = assessment_values(a);
                for (auto& v : fidelity_values(a, ces)) vals.push_back(std::move(v));
                std::cout << csv_line(vals) << '\n';
                break;
            }
            case Format::json: {
                auto j = assessment_json(a);
                add_fidelity_json(j, a, ces);
                for (const auto& w : file_warnings) j["warnings"].push_back(w);
                json_out.push_back(std::move(j));
                break;
            }
        }
        first = false;
        if (!cvg.empty()) assessed.push_back(std::move(a));
    };
    for (const auto& file : files) {
        SpectrumFile parsed;
        try {
            parsed = file == "-" ? parse_spectrum_text(std::cin, "stdin", "stdin", read) : read_spectrum_file(file, read);
        } catch (const InputError& e) {
            print_error(e.what());
            status = kExitBadInput;
            continue;
        }
        for (const auto& w : parsed.warnings) print_warning(w);
        // The file's spectra assessed in parallel, a chunk at a time (so that at most one chunk
        // of results is held), and printed in the file's order.
        const std::size_t n = parsed.spectra.size();
        constexpr std::size_t kChunk = 512;
        const unsigned workers = worker_count(static_cast<unsigned>(threads), n / 64 + 1);
        for (std::size_t start = 0; start < n; start += kChunk) {
            const std::size_t count = std::min(kChunk, n - start);
            std::vector<std::optional<Assessment>> done(count);
            std::vector<std::string> failed(count);
            parallel_for(count, workers, [&](std::size_t k) {
                auto& sampled = parsed.spectra[start + k];
                try {
                    done[k] = assess_sampled(std::move(sampled), options);  // no copy of 1 nm values; the name stays
                } catch (const Error& e) {
                    failed[k] = fmt::format("{}: spectrum '{}': {}", file == "-" ? "stdin" : file, sampled.name, e.what());
                }
            });
            for (std::size_t k = 0; k < count; ++k) {
                if (done[k]) {
                    emit(*done[k], parsed.warnings);
                } else {
                    print_error(failed[k]);
                    status = kExitBadInput;
                }
            }
        }
    }
    if (fmt_out == Format::json) std::cout << dump_json(json_out) << '\n';
    if (!cvg.empty()) {
        bool any = false;
        for (const auto& a : assessed) any = any || a.fidelity.has_value();
        if (!any) {
            print_error("--cvg: no spectrum has a CCT, so there is no colour vector graphic to write");
            status = status == kExitOk ? kExitBadInput : status;
        } else if (!write_document(cvg, colour_vector_graphic_svg(assessed))) {
            status |= kExitOutputNotWritten;
        }
    }
    return status;
}

}  // namespace lampwright::cli
