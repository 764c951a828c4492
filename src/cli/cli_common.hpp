#pragma once
// Shared pieces of the command-line front end: exit codes, output formats, messages.
#include <boost/program_options.hpp>

#include <iosfwd>
#include <string>
#include <vector>

namespace lampwright {
struct QcRun;
struct LayerFitProblem;
}

namespace lampwright::cli {

// Exit codes every command uses.
inline constexpr int kExitOk = 0;
inline constexpr int kExitBadInput = 1;  // some input was bad; every good one was still reported
inline constexpr int kExitUsage = 2;     // the command line itself is wrong

enum class Format { text, csv, json };
Format parse_format(const std::string& s);  // throws UsageError

struct UsageError {
    std::string message;
};

void print_error(const std::string& message);
void print_warning(const std::string& message);

// Parses a sub-command's options; `positional` (may be empty) collects the bare arguments.
// Returns false when --help was given (the help has been printed).
bool parse_command_line(int argc, char** argv, const boost::program_options::options_description& visible,
                        const std::string& positional, std::vector<std::string>* bare,
                        boost::program_options::variables_map& vm, const std::string& command);

// The usual cautions of the trade, printed by --help and beside results where they apply.
extern const char* const kSafetyNotice;

// Prints the corrected recipe for a QC lot (text when `text`), returns an HTML fragment for the report.
std::string print_lot_correction(const QcRun& run, const std::string& recipe_path, bool text);

// fit on an LED layer design (called by run_fit).
int run_layer_fit(const LayerFitProblem& problem, Format format, const std::string& design_out);

int run_assess(int argc, char** argv);
int run_phosphors(int argc, char** argv);
int run_blend(int argc, char** argv);
int run_fit(int argc, char** argv);
int run_layer(int argc, char** argv);
int run_qc_command(int argc, char** argv);
int run_history(int argc, char** argv);
int run_compare(int argc, char** argv);

}  // namespace lampwright::cli
