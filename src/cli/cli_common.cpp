#include "cli_common.hpp"

#include <fmt/format.h>

#include "lampwright/core/version.hpp"
#include "lampwright/io/spectrum_io.hpp"

#include <cmath>

#include <charconv>
#include <chrono>
#include <cmath>
#include <ctime>
#include <iostream>
#include <memory>

#include <unistd.h>

namespace lampwright::cli {

Format parse_format(const std::string& s) {
    if (s == "text") return Format::text;
    if (s == "csv") return Format::csv;
    if (s == "json") return Format::json;
    throw UsageError{"--format must be text, csv or json, not '" + s + "'"};
}

const char* const kSafetyNotice =
    "Safety: fluorescent lamps contain mercury (handle breakage and disposal as local rules require);\n"
    "phosphor powders are a dust hazard (avoid inhaling; use extraction and a suitable mask);\n"
    "UV sources used to excite samples injure eyes and skin (shield them, wear UV-rated eyewear);\n"
    "lamp circuits carry mains voltage. Follow local codes and licensed practice.\n";

namespace {

// A range bound as typed: whole values without an exponent (100000000, not 1e+08).
std::string bound_text(double v) {
    if (v == std::floor(v) && std::abs(v) < 1e15) return fmt::format("{:.0f}", v);
    return fmt::format("{:g}", v);
}

bool within(double v, const NumberRange& r) {
    return std::isfinite(v) && (r.min_exclusive ? v > r.min : v >= r.min) && v <= r.max && (!r.whole || v == std::floor(v));
}

}  // namespace

std::string NumberRange::describe() const {
    std::string s = whole ? "a whole number from " + bound_text(min) + " to " + bound_text(max)
                    : min_exclusive ? "a number above " + bound_text(min) + " up to " + bound_text(max)
                                    : "a number from " + bound_text(min) + " to " + bound_text(max);
    if (!unit.empty()) s += " " + unit;
    if (!note.empty()) s += " (" + note + ")";
    return s;
}

void check_number(double value, const std::string& option, const NumberRange& r) {
    if (!within(value, r)) throw UsageError{fmt::format("--{} must be {}, not {}", option, r.describe(), bound_text(value))};
}

double parse_number(const std::string& text, const std::string& option, const NumberRange& r) {
    // std::from_chars: locale-independent, no leading blanks; a leading '+' is allowed here.
    // It reads "nan" and "inf" as numbers, which within() then refuses as not finite.
    const char* first = text.data();
    const char* last = text.data() + text.size();
    if (first != last && *first == '+') ++first;
    double v = 0;
    const auto [end, ec] = std::from_chars(first, last, v);
    const bool ok = first != last && end == last && ec == std::errc() && within(v, r);
    if (!ok) throw UsageError{fmt::format("--{} must be {}, not '{}'", option, r.describe(), text)};
    return v;
}

std::vector<double> parse_number_list(const std::string& text, const std::string& option, const NumberRange& r) {
    std::vector<double> out;
    std::size_t start = 0;
    while (true) {
        const auto comma = text.find(',', start);
        const std::string item = text.substr(start, comma == std::string::npos ? std::string::npos : comma - start);
        try {
            out.push_back(parse_number(item, option, r));
        } catch (const UsageError&) {
            throw UsageError{fmt::format("--{} takes {}, or one per component separated by commas, not '{}'", option, r.describe(), text)};
        }
        if (comma == std::string::npos) break;
        start = comma + 1;
    }
    return out;
}

bool parse_command_line(int argc, char** argv, const boost::program_options::options_description& visible,
                        const std::string& positional, std::vector<std::string>* bare,
                        boost::program_options::variables_map& vm, const std::string& command) {
    namespace po = boost::program_options;
    po::options_description all;
    all.add(visible);
    po::positional_options_description pos;
    if (!positional.empty()) {
        po::options_description hidden;
        hidden.add_options()(positional.c_str(), po::value(bare));
        all.add(hidden);
        pos.add(positional.c_str(), -1);
    }
    try {
        po::store(po::command_line_parser(argc, argv).options(all).positional(pos).run(), vm);
        po::notify(vm);  // runs add_number_option's range checks
    } catch (const po::error& e) {
        throw UsageError{command + ": " + e.what() + " (see lampwright " + command + " --help)"};
    } catch (const UsageError& e) {
        throw UsageError{command + ": " + e.message};
    }
    // A net for any number option not declared with add_number_option: never a NaN or an
    // infinity into the library (std::from_chars and lexical_cast both read "nan" and "inf").
    for (const auto& [name, v] : vm) {
        const boost::any& a = v.value();
        const double* d = boost::any_cast<double>(&a);
        const float* f = boost::any_cast<float>(&a);
        if ((d && !std::isfinite(*d)) || (f && !std::isfinite(*f)))
            throw UsageError{fmt::format("{}: --{} must be a finite number (see lampwright {} --help)", command, name, command)};
    }
    if (vm.count("help")) {
        std::cout << visible << '\n';
        return false;
    }
    return true;
}

std::function<void(std::size_t, std::size_t)> terminal_progress(const std::string& label, const std::string& unit, std::size_t min_total) {
    if (isatty(STDERR_FILENO) == 0) return {};
    auto last = std::make_shared<std::chrono::steady_clock::time_point>(std::chrono::steady_clock::now());
    return [=](std::size_t done, std::size_t total) {
        if (total < min_total) return;
        const auto now = std::chrono::steady_clock::now();
        if (done != total && now - *last < std::chrono::milliseconds(100)) return;
        *last = now;
        std::cerr << fmt::format("\rlampwright {}: {}/{} {} ({:.0f} %)", label, done, total, unit,
                                 100.0 * static_cast<double>(done) / static_cast<double>(total))
                  << (done == total ? "\n" : "") << std::flush;
    };
}

const char* const kUnitsHelp =
    "W/nm | mW/nm | uW/nm | relative: the unit of spectra whose file declares none (a file's '# units:' line or TM-27 "
    "SpectralQuantity; a different one there is refused). Absolute spectra get luminous flux in lm";
const char* const kPowerHelp = "electrical input power of lamps whose file gives none ('# power_W:'): luminous efficacy in lm/W";
// From a pilot lamp to a high-bay fixture; 0 would make the efficacy infinite.
const NumberRange kPowerRange{.min = 0, .max = 100000, .unit = "W", .min_exclusive = true};

void apply_photometry_options(const std::string& units, const std::optional<double>& power_W, lampwright::SpectrumReadOptions& read) {
    if (!units.empty() && !spectral_unit_to_W_per_nm(units))
        throw UsageError{fmt::format("--units must be {}, not '{}'", kSpectralUnitsAccepted, units)};
    if (power_W && !(std::isfinite(*power_W) && *power_W > 0))
        throw UsageError{fmt::format("--power-W must be a positive number of watts, not {}", *power_W)};
    read.units = units;
    read.power_W = power_W;
}

void print_error(const std::string& message) { std::cerr << "lampwright: error: " << message << '\n'; }
void print_warning(const std::string& message) { std::cerr << "lampwright: warning: " << message << '\n'; }
void print_note(const std::string& message) { std::cerr << "lampwright: note: " << message << '\n'; }

void check_outputs_apart(const std::vector<FileRole>& outputs, const std::vector<FileRole>& inputs) {
    try {
        lampwright::refuse_output_over_input(outputs, inputs);
    } catch (const OutputError& e) {
        throw UsageError{e.what()};
    }
}

void add_inputs(std::vector<FileRole>& inputs, const std::vector<std::string>& paths, const std::string& role) {
    for (const auto& p : paths) inputs.push_back({p, role});
}

RunProvenance& run_provenance() {
    static RunProvenance p;
    return p;
}

void set_run_provenance(int argc, char** argv) {
    RunProvenance& p = run_provenance();
    p.version = kVersion;
    std::string line;
    for (int i = 0; i < argc; ++i) {
        std::string a = i == 0 ? std::string("lampwright") : std::string(argv[i]);
        const bool plain = !a.empty() && a.find_first_of(" \t\n'\"\\$`*?;&|<>()#~") == std::string::npos;
        if (!plain) {
            std::string q = "'";
            for (char c : a) q += c == '\'' ? std::string("'\\''") : std::string(1, c);
            a = q + "'";
        }
        line += (i ? " " : "") + a;
    }
    p.command_line = line;
    const std::time_t now = std::time(nullptr);
    std::tm utc{};
    gmtime_r(&now, &utc);
    char buf[32];
    std::strftime(buf, sizeof buf, "%Y-%m-%dT%H:%M:%SZ", &utc);
    p.time_utc = buf;
}

bool write_document(const std::string& path, const std::string& document) { return write_output(path, stamp_document(document, run_provenance())); }
void write_document_or_throw(const std::string& path, const std::string& document) {
    write_output_or_throw(path, stamp_document(document, run_provenance()));
}

void write_output_or_throw(const std::string& path, std::string_view content) { write_file_atomically(path, content); }

bool write_output(const std::string& path, std::string_view content) {
    try {
        write_file_atomically(path, content);
        return true;
    } catch (const OutputError& e) {
        print_error(e.what());
        return false;
    }
}

}  // namespace lampwright::cli
