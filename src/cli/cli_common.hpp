#pragma once
// Shared pieces of the command-line front end: exit codes, output formats, messages.
#include "lampwright/core/error.hpp"
#include "lampwright/core/text_encoding.hpp"  // dump_json for every --format json
#include "lampwright/design/tradeoff.hpp"
#include "lampwright/led/layer_tolerance.hpp"
#include "lampwright/io/output_file.hpp"
#include "lampwright/report/provenance.hpp"

#include <boost/program_options.hpp>

#include <functional>
#include <optional>
#include <iosfwd>
#include <string>
#include <string_view>
#include <vector>

namespace lampwright {
struct QcRun;
struct SpectrumReadOptions;
struct LayerFitProblem;
}

namespace lampwright::cli {

// Exit status of every command (README, "Exit status"): 0 success; 2 the command line is wrong and
// nothing was done; otherwise the sum of the flags below that apply, so no one failure hides another.
inline constexpr int kExitOk = 0;
inline constexpr int kExitBadInput = 1;        // some input was bad; every good one was still reported
inline constexpr int kExitUsage = 2;           // the command line itself is wrong (alone, never summed)
inline constexpr int kExitOutOfLimits = 4;     // qc: some lamps failed their specification
inline constexpr int kExitOutputNotWritten = 8;  // an output file, the database or standard output could not be written

enum class Format { text, csv, json };
Format parse_format(const std::string& s);  // throws UsageError

struct UsageError {
    std::string message;
};

// Runs `work`; a lampwright::Error it throws (other than an InputError, which already names its
// file) becomes an InputError naming `path`, so the message says which input was impossible.
template <class Work>
auto naming_input(const std::string& path, Work&& work, const std::string& what = "") -> decltype(work()) {
    try {
        return work();
    } catch (const InputError&) {
        throw;
    } catch (const Error& e) {
        throw InputError(path, 0, what + e.what());
    }
}

// A progress line on standard error for long runs ("\rlampwright qc: 120/400 files (30 %)"), shown
// only on a terminal and only when the run has at least `min_total` steps; at most ten updates a second.
std::function<void(std::size_t, std::size_t)> terminal_progress(const std::string& label, const std::string& unit, std::size_t min_total);

void print_error(const std::string& message);

// --units and --power-W (assess, qc): checked (UsageError naming the option) into read options
// for files that declare no unit or power of their own.
void apply_photometry_options(const std::string& units, const std::optional<double>& power_W, lampwright::SpectrumReadOptions& read);
extern const char* const kUnitsHelp;

// Refuses (UsageError, exit 2, naming both) an output that is the same file as an input, the
// database or another output; call it before any work. Inputs that are folders cover their files.
void check_outputs_apart(const std::vector<FileRole>& outputs, const std::vector<FileRole>& inputs);
// Every input of a command given by the user's paths, with the role named in messages.
void add_inputs(std::vector<FileRole>& inputs, const std::vector<std::string>& paths, const std::string& role);

// Writes an output file atomically (io/output_file.hpp); false, with the error printed, when it
// could not be written (the old file, if any, is unchanged).
[[nodiscard]] bool write_output(const std::string& path, std::string_view content);
// Writes an output file atomically or throws OutputError (the command then exits with kExitOutputNotWritten).
void write_output_or_throw(const std::string& path, std::string_view content);
// The same for an SVG or HTML document, stamped first with the run's provenance (report/provenance.hpp).
[[nodiscard]] bool write_document(const std::string& path, const std::string& document);
void write_document_or_throw(const std::string& path, const std::string& document);

// This run's version, command line and start time (set once by main); qc adds the lot id.
RunProvenance& run_provenance();
void set_run_provenance(int argc, char** argv);
// Every message to standard error goes through these three, so they share one prefix:
// "lampwright: error: ", "lampwright: warning: ", "lampwright: note: " (what was done, e.g. a lot recorded).
void print_warning(const std::string& message);
void print_note(const std::string& message);

// The accepted range of a numeric option. Every numeric option of every command is declared with
// add_number_option, so the help states the range and a bad value (not a number, "nan", "inf",
// outside the range, a fraction for a whole number) is one UsageError (exit 2) naming the option,
// the range and the unit. The ranges are those a lighting engineer would type; they are written in
// each option's help and in README, "Numeric options".
struct NumberRange {
    double min = 0, max = 0;
    std::string unit{};          // "K", "nm", "MacAdam steps", "lm/W", ...; "" for a pure number
    bool min_exclusive = false;  // the minimum itself is refused ("above 0 up to 20")
    bool whole = false;          // a whole number (counts, seeds, classes)
    std::string note{};          // e.g. "a fraction: 0.01 = 1 %", added in parentheses
    std::string describe() const;  // "a number from 1000 to 25000 K", "a whole number from 1 to 8 components"
};

// `text` as a number within `range`, or UsageError "--option must be <range>, not 'text'".
double parse_number(const std::string& text, const std::string& option, const NumberRange& range);
// `value` within `range`, or that UsageError.
void check_number(double value, const std::string& option, const NumberRange& range);
// A comma-separated list of numbers each within `range` ("0.005" or "0.005,0.01,0.002").
std::vector<double> parse_number_list(const std::string& text, const std::string& option, const NumberRange& range);

// Adds `--name` to `opts`: the value is parsed with parse_number(range) when the command line is
// read (parse_command_line) and stored in *store; the help gets the range appended.
template <class T>
void add_number_option(boost::program_options::options_description& opts, const std::string& name, T* store, const NumberRange& range,
                       const std::string& help) {
    auto* value = boost::program_options::value<std::string>()->value_name(range.whole ? "N" : "X")->notifier(
        [store, name, range](const std::string& text) { *store = static_cast<T>(parse_number(text, name, range)); });
    opts.add_options()(name.c_str(), value, (help + " [" + range.describe() + "]").c_str());
}

// --power-W (assess, qc): the electrical input power of lamps whose file states none.
extern const char* const kPowerHelp;
extern const NumberRange kPowerRange;

// Parses a sub-command's options; `positional` (may be empty) collects the bare arguments.
// Returns false when --help was given (the help has been printed).
bool parse_command_line(int argc, char** argv, const boost::program_options::options_description& visible,
                        const std::string& positional, std::vector<std::string>* bare,
                        boost::program_options::variables_map& vm, const std::string& command);

// The usual cautions of the trade, printed by --help and beside results where they apply.
extern const char* const kSafetyNotice;


// fit on an LED layer design (called by run_fit), with what else was asked for.
struct LayerFitExtras {
    struct Front {
        FrontKind kind;
        int points;
        std::string csv_path, svg_path;
    };
    std::optional<Front> front;                       // --front: the trade-off front instead of one fit
    int choose = 0;                                   // --choose K (0: all components)
    bool sensitivity = false;                         // --sensitivity
    std::optional<LayerToleranceProblem> tolerance;   // --tolerance-run: sigmas, draws, seed, steps (design and ellipse filled in later)
};
int run_layer_fit(const LayerFitProblem& problem, Format format, const std::string& design_out, const LayerFitExtras& extras = {});
// Prints a trade-off front in the format and writes --front-csv / --front-svg; an error (naming
// `input`) when no point is feasible.
int print_front(const TradeoffFront& front, Format format, double ms, const std::string& csv_path, const std::string& svg_path,
                const std::string& input);

int run_assess(int argc, char** argv);
int run_phosphors(int argc, char** argv);
int run_blend(int argc, char** argv);
int run_fit(int argc, char** argv);
int run_layer(int argc, char** argv);
int run_qc_command(int argc, char** argv);
int run_history(int argc, char** argv);
int run_compare(int argc, char** argv);
int run_unmix(int argc, char** argv);
int run_calibrate(int argc, char** argv);
int run_serve(int argc, char** argv);

}  // namespace lampwright::cli
