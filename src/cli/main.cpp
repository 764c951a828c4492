// lampwright: the command-line front end. It parses, calls the library, and prints.
#include "cli_common.hpp"

#include "lampwright/core/error.hpp"
#include "lampwright/core/version.hpp"
#include "lampwright/io/output_file.hpp"

#include <fmt/format.h>

#include <cerrno>
#include <cstdio>
#include <cstring>
#include <exception>
#include <iostream>
#include <string>

namespace {

const char* kUsage = R"(lampwright - design and check phosphor-converted light sources

Usage: lampwright COMMAND [options] ...

Commands:
  assess     colorimetry, CCT/Duv, CIE 13.3 colour rendering and efficacy of spectra
  phosphors  list the phosphor library
  blend      predict the spectrum and figures of a phosphor blend recipe
  fit        solve a recipe's mass fractions for a target white
  unmix      decompose measured spectra into phosphors and discharge lines, back to mass fractions
  calibrate  fit the blend model's absorption factors and line fractions on trial lamps
  layer      model a phosphor conversion layer on an LED pump (360-470 nm)
  compare    layer designs, recipes and spectra side by side
  qc         judge a lot of measured lamps against a specification
  history    recorded lots, their statistics and control charts
  serve      the interactive formulation page on this machine (a local web server)

Run 'lampwright COMMAND --help' (or 'lampwright help COMMAND') for the options of a command;
'lampwright --version' prints the version.

)";

// Runs one sub-command; every error becomes a message and an exit status (cli_common.hpp).
int run_command(const std::string& command, int argc, char** argv) {
    using namespace lampwright::cli;
    try {
        if (command == "assess") return run_assess(argc, argv);
        if (command == "phosphors") return run_phosphors(argc, argv);
        if (command == "blend") return run_blend(argc, argv);
        if (command == "fit") return run_fit(argc, argv);
        if (command == "unmix") return run_unmix(argc, argv);
        if (command == "layer") return run_layer(argc, argv);
        if (command == "compare") return run_compare(argc, argv);
        if (command == "qc") return run_qc_command(argc, argv);
        if (command == "history") return run_history(argc, argv);
        if (command == "calibrate") return run_calibrate(argc, argv);
        if (command == "serve") return run_serve(argc, argv);
        print_error("unknown command '" + command + "'");
        std::cerr << kUsage;
        return kExitUsage;
    } catch (const UsageError& e) {
        print_error(e.message);
        return kExitUsage;
    } catch (const lampwright::OutputError& e) {
        print_error(e.what());
        return kExitOutputNotWritten;
    } catch (const lampwright::InputError& e) {
        print_error(e.what());
        return kExitBadInput;
    } catch (const std::exception& e) {
        print_error(e.what());
        return kExitBadInput;
    }
}

// Standard output is checked before exiting: a full disk or a closed pipe behind it must not end
// in exit 0 with the results lost (fflush and ferror, ISO C 7.21).
int with_stdout_checked(int status) {
    using namespace lampwright::cli;
    std::cout.flush();
    const bool failed = !std::cout.good() || std::fflush(stdout) != 0 || std::ferror(stdout) != 0;
    if (!failed) return status;
    print_error(fmt::format("standard output could not be written completely: {}", std::strerror(errno)));
    return status == kExitUsage ? status : (status | kExitOutputNotWritten);
}

}  // namespace

int main(int argc, char** argv) {
    using namespace lampwright::cli;
    if (argc < 2) {
        std::cerr << kUsage;
        return kExitUsage;
    }
    const std::string command = argv[1];
    set_run_provenance(argc, argv);
    if (command == "--version" || command == "version") {
        std::cout << "lampwright " << lampwright::kVersion << '\n';
        return with_stdout_checked(kExitOk);
    }
    if (command == "--help" || command == "-h" || command == "help") {
        // 'help COMMAND' is the command's own help.
        if (command == "help" && argc > 2) {
            char help_flag[] = "--help";
            char* sub_argv[] = {argv[2], help_flag, nullptr};
            return with_stdout_checked(run_command(argv[2], 2, sub_argv));
        }
        std::cout << kUsage << '\n' << kSafetyNotice;
        return with_stdout_checked(kExitOk);
    }
    return with_stdout_checked(run_command(command, argc - 1, argv + 1));
}
