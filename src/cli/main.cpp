// lampwright: the command-line front end. It parses, calls the library, and prints.
#include "cli_common.hpp"

#include "lampwright/core/error.hpp"

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
  layer      model a phosphor conversion layer on a UV/violet LED
  compare    layer designs, recipes and spectra side by side
  qc         judge a lot of measured lamps against a specification
  history    recorded lots, their statistics and control charts

Run 'lampwright COMMAND --help' for the options of a command.

)";

}  // namespace

int main(int argc, char** argv) {
    using namespace lampwright::cli;
    if (argc < 2) {
        std::cerr << kUsage;
        return kExitUsage;
    }
    const std::string command = argv[1];
    if (command == "--help" || command == "-h" || command == "help") {
        std::cout << kUsage << '\n' << kSafetyNotice;
        return kExitOk;
    }
    try {
        if (command == "assess") return run_assess(argc - 1, argv + 1);
        if (command == "phosphors") return run_phosphors(argc - 1, argv + 1);
        if (command == "blend") return run_blend(argc - 1, argv + 1);
        if (command == "fit") return run_fit(argc - 1, argv + 1);
        if (command == "layer") return run_layer(argc - 1, argv + 1);
        if (command == "compare") return run_compare(argc - 1, argv + 1);
        if (command == "qc") return run_qc_command(argc - 1, argv + 1);
        if (command == "history") return run_history(argc - 1, argv + 1);
        print_error("unknown command '" + command + "'");
        std::cerr << kUsage;
        return kExitUsage;
    } catch (const UsageError& e) {
        print_error(e.message);
        return kExitUsage;
    } catch (const lampwright::InputError& e) {
        print_error(e.what());
        return kExitBadInput;
    } catch (const std::exception& e) {
        print_error(e.what());
        return kExitBadInput;
    }
}
